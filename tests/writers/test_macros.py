"""A macro-enabled workbook: the macro part is copied byte for byte, never run.

Content types per ECMA-376 Part 2 and the [MS-OFFMACRO2] / [MS-OE376] content type
``application/vnd.ms-excel.sheet.macroEnabled.main+xml`` for a macro-enabled workbook part.
"""

from __future__ import annotations

import zipfile
from pathlib import Path

import openpyxl
import pandas as pd
from python_calamine import CalamineWorkbook

from qc.io.writeback import write_back
from tests.writers.workbooks import (
    DATA_ROWS,
    HEADER_ROW,
    LAST_COLUMN,
    SHEET,
    add_fake_macros,
    inspection_workbook,
    package_problems,
)

MACRO_MAIN = "application/vnd.ms-excel.sheet.macroEnabled.main+xml"
PLAIN_MAIN = "application/vnd.openxmlformats-officedocument.spreadsheetml.sheet.main+xml"
RESULTS = pd.DataFrame({"verdict": ["conforms", "borderline", "conforms", "nonconforming"]})


def _xlsm(tmp_path: Path) -> tuple[Path, bytes]:
    plain = inspection_workbook(tmp_path / "plain.xlsx")
    src = tmp_path / "batch.xlsm"
    return src, add_fake_macros(plain, src)


def _write(src: Path, out: Path):
    return write_back(
        src,
        out,
        sheet=SHEET,
        header_row=HEADER_ROW,
        data_rows=DATA_ROWS,
        last_column=LAST_COLUMN,
        results=RESULTS,
    )


def _main_type(path: Path) -> str:
    with zipfile.ZipFile(path) as zf:
        ct = zf.read("[Content_Types].xml").decode()
    start = ct.index('PartName="/xl/workbook.xml"')
    return ct[start:].split('ContentType="', 1)[1].split('"', 1)[0]


def test_xlsm_keeps_macro_part_and_content_type(tmp_path: Path) -> None:
    src, vba = _xlsm(tmp_path)
    out = tmp_path / "batch.checked.xlsm"
    report = _write(src, out)
    with zipfile.ZipFile(out) as zf:
        assert zf.read("xl/vbaProject.bin") == vba
    assert _main_type(out) == MACRO_MAIN
    assert report.notes == ()
    assert package_problems(out) == []
    assert openpyxl.load_workbook(out, keep_vba=True)[SHEET]["F5"].value == "borderline"
    rows = CalamineWorkbook.from_path(str(out)).get_sheet_by_name(SHEET).to_python()
    assert rows[6][5] == "nonconforming"


def test_xlsm_to_xlsx_drops_macros_and_says_so(tmp_path: Path) -> None:
    src, _ = _xlsm(tmp_path)
    out = tmp_path / "batch.checked.xlsx"
    report = _write(src, out)
    with zipfile.ZipFile(out) as zf:
        assert "xl/vbaProject.bin" not in zf.namelist()
        assert b"vbaProject" not in zf.read("xl/_rels/workbook.xml.rels")
    assert _main_type(out) == PLAIN_MAIN
    assert report.notes == (
        "The macros of the original were left out because the output is .xlsx; "
        "write to .xlsm to keep them (they are copied, never run).",
    )
    assert package_problems(out) == []


def test_xlsx_to_xlsm_gets_the_macro_enabled_type(tmp_path: Path) -> None:
    src = inspection_workbook(tmp_path / "plain.xlsx")
    out = tmp_path / "o.xlsm"
    _write(src, out)
    assert _main_type(out) == MACRO_MAIN
