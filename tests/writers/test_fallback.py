"""When results cannot go beside the data, they go to a results sheet that points back.

Checked with openpyxl and python-calamine reading the output back.
"""

from __future__ import annotations

import zipfile
from pathlib import Path

import openpyxl
import pandas as pd
import pytest
from python_calamine import CalamineWorkbook

from qc.io.writeback import write_back
from tests.writers.workbooks import (
    DATA_ROWS,
    HEADER_ROW,
    LAST_COLUMN,
    SHEET,
    inspection_workbook,
    package_problems,
)

RESULTS = pd.DataFrame(
    {"size_at_20c": [25.012, 25.0096, 25.021, 24.9983], "verdict": ["conforms"] * 4}
)


def _write(src: Path, out: Path, sheet: str = SHEET, **kw):
    return write_back(
        src,
        out,
        sheet=sheet,
        header_row=HEADER_ROW,
        data_rows=DATA_ROWS,
        last_column=LAST_COLUMN,
        results=RESULTS,
        **kw,
    )


def test_occupied_cell_sends_results_to_a_results_sheet(tmp_path: Path) -> None:
    src = inspection_workbook(tmp_path / "b.xlsx", occupied=True)
    out = tmp_path / "o.xlsx"
    report = _write(src, out)
    assert report.mode == "results sheet"
    assert report.results_sheet == "Readings results"
    assert report.notes[0] == (
        "The results are on the new sheet 'Readings results', not beside the data in "
        "'Readings', because cell G4 already holds a value where results would go. Each result "
        "row stands on the same row number as its original row; the columns source_sheet and "
        "source_row point back to it."
    )
    with zipfile.ZipFile(src) as a, zipfile.ZipFile(out) as b:
        # the original sheet is not edited at all
        assert a.read("xl/worksheets/sheet1.xml") == b.read("xl/worksheets/sheet1.xml")
    wb = openpyxl.load_workbook(out)
    assert wb[SHEET]["G4"].value == "remark kept here"
    ws = wb["Readings results"]
    assert [ws.cell(HEADER_ROW, c).value for c in range(1, 5)] == [
        "source_sheet",
        "source_row",
        "size_at_20c",
        "verdict",
    ]
    for r in DATA_ROWS:  # rows line up with the original rows
        assert ws[f"A{r}"].value == SHEET and ws[f"B{r}"].value == r
    assert ws["C7"].value == 24.9983
    sheet = CalamineWorkbook.from_path(str(out)).get_sheet_by_name("Readings results")
    first_row = sheet.start[0] + 1  # calamine's range starts at the first used row
    rows = sheet.to_python()
    assert rows[4 - first_row][:4] == [SHEET, 4.0, 25.012, "conforms"]
    assert rows[HEADER_ROW - first_row][1] == "source_row"
    assert package_problems(out) == []


@pytest.mark.filterwarnings("ignore:File may not be readable")  # openpyxl, empty table headers
def test_table_over_the_result_columns_falls_back(tmp_path: Path) -> None:
    src = inspection_workbook(tmp_path / "b.xlsx", table_ref="A3:G7")
    report = _write(src, tmp_path / "o.xlsx")
    assert report.mode == "results sheet"
    assert "because a table at A3:G7 covers the columns for the results" in report.notes[0]


def test_table_over_the_data_only_stays_in_place(tmp_path: Path) -> None:
    src = inspection_workbook(tmp_path / "b.xlsx", table_ref="A3:D7")
    out = tmp_path / "o.xlsx"
    report = _write(src, out)
    assert report.mode == "beside data"
    wb = openpyxl.load_workbook(out)
    assert list(wb[SHEET].tables) == ["Readings_table"]
    assert wb[SHEET]["G5"].value == "conforms"


def test_merged_cells_over_the_result_columns_fall_back(tmp_path: Path) -> None:
    src = tmp_path / "b.xlsx"
    inspection_workbook(src)
    wb = openpyxl.load_workbook(src)
    wb[SHEET].merge_cells("F5:H5")
    wb.save(src)
    report = _write(src, tmp_path / "o.xlsx")
    assert report.mode == "results sheet"
    assert "because merged cells at F5:H5 cover the columns for the results" in report.notes[0]


def test_chartsheet_target_falls_back(tmp_path: Path) -> None:
    from openpyxl.chart import BarChart, Reference

    src = tmp_path / "b.xlsx"
    inspection_workbook(src)
    wb = openpyxl.load_workbook(src)
    chart = BarChart()
    chart.add_data(Reference(wb[SHEET], min_col=2, min_row=3, max_row=7), titles_from_data=True)
    wb.create_chartsheet("Plot").add_chart(chart)
    wb.save(src)
    out = tmp_path / "o.xlsx"
    report = _write(src, out, sheet="Plot")
    assert report.mode == "results sheet" and report.results_sheet == "Plot results"
    assert "because 'Plot' is a chart sheet" in report.notes[0]
    assert package_problems(out) == []
    assert openpyxl.load_workbook(out)["Plot results"]["B4"].value == 4


def test_results_sheet_name_is_unique(tmp_path: Path) -> None:
    src = tmp_path / "b.xlsx"
    inspection_workbook(src, occupied=True)
    wb = openpyxl.load_workbook(src)
    wb.create_sheet("readings RESULTS")  # sheet names compare case-insensitively
    wb.save(src)
    report = _write(src, tmp_path / "o.xlsx")
    assert report.results_sheet == "Readings results (2)"
