"""A new workbook for a CSV input: text stays text, verdicts marked as in a write-back.

Read back with openpyxl and python-calamine.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import openpyxl
import pandas as pd
from python_calamine import CalamineWorkbook

from qc.io.writeback import SheetTable, write_new_workbook
from tests.writers.workbooks import package_problems

DATA = pd.DataFrame(
    {
        "Part": ["=1+2", "HX-2", "@cmd", "-HX"],
        "Size (mm)": [25.0123, 25.0098, 25.0211, 24.9987],
        "size_at_20c": [25.01196, np.nan, 25.02071, 24.99834],
        "measured_at": pd.to_datetime(
            ["2026-01-05 08:30", "2026-01-05 08:41", None, "2026-01-05 09:02"]
        ),
        "verdict": ["conforms", "nonconforming", "borderline", "not evaluated"],
    }
)


def test_new_workbook_text_numbers_dates_and_marking(tmp_path: Path) -> None:
    out = tmp_path / "batch.checked.xlsx"
    report = write_new_workbook(
        out,
        data=DATA,
        sheet_name="Readings",
        column_formats={"size_at_20c": "0.0000"},
        extra_sheets=[SheetTable("Readings", pd.DataFrame({"n": [4]}), title_lines=["About"])],
    )
    assert report.mode == "new workbook"
    assert report.results_sheet == "Readings" and report.added_sheets == ("Readings (2)",)
    assert package_problems(out) == []
    wb = openpyxl.load_workbook(out)
    ws = wb["Readings"]
    assert [c.value for c in ws[1]] == list(DATA.columns)
    assert ws["A2"].value == "=1+2" and ws["A2"].data_type == "s"  # never a formula
    assert ws["A4"].value == "@cmd" and ws["A5"].value == "-HX"
    assert ws["C2"].value == 25.01196 and ws["C2"].number_format == "0.0000"
    assert ws["C3"].value is None
    assert ws["D2"].value == pd.Timestamp("2026-01-05 08:30").to_pydatetime()
    assert ws["D4"].value is None
    assert ws["E3"].font.b and ws["E3"].fill.fgColor.rgb.endswith("7B1C1C")
    assert ws["E4"].font.i and ws["E5"].fill.patternType == "lightGray"
    assert ws.freeze_panes == "A2"
    extra = wb["Readings (2)"]
    assert extra["A1"].value == "About" and extra["A3"].value == "n" and extra["A4"].value == 4
    rows = CalamineWorkbook.from_path(str(out)).get_sheet_by_name("Readings").to_python()
    assert [r[0] for r in rows[1:]] == ["=1+2", "HX-2", "@cmd", "-HX"]
    assert [r[4] for r in rows[1:]] == DATA["verdict"].tolist()
