"""Results written back into the original workbook, with every other part kept.

Independent checks: openpyxl and python-calamine (two general-purpose readers written apart
from this project) read the output back; package structure is checked against ECMA-376 Part 2
(Open Packaging Conventions) with the standard library's XML parser.
"""

from __future__ import annotations

import itertools
import re
import zipfile
from pathlib import Path

import numpy as np
import openpyxl
import pandas as pd
import pytest
from python_calamine import CalamineWorkbook

from qc.io.writeback import SheetTable, write_back
from tests.writers.workbooks import (
    DATA_ROWS,
    HEADER_ROW,
    LAST_COLUMN,
    SHEET,
    inspection_workbook,
    package_problems,
)

#: Members the brief allows to change when sheets are added; all others must be byte-identical.
EDITED = {
    "xl/worksheets/sheet1.xml",
    "xl/styles.xml",
    "xl/workbook.xml",
    "xl/_rels/workbook.xml.rels",
    "[Content_Types].xml",
    "docProps/app.xml",
}
INJECTION = ['=HYPERLINK("http://example.invalid","x")', "+1+1", "-2+3", "@SUM(A1:A3)"]


def results() -> pd.DataFrame:
    """Invented results for the four readings (mm, µm), including an empty (NaN) size."""
    return pd.DataFrame(
        {
            "size_at_20c": [25.01196, 25.00955, np.nan, 24.99834],
            "expanded_uncertainty": [0.0021, 0.0021, 0.0024, 0.0022],
            "effective_dof": [16, 50, 8, 24],
            "verdict": ["conforms", "nonconforming", "borderline", "not evaluated"],
            "message": INJECTION,
            "unit": ["mm"] * 4,
        }
    )


@pytest.fixture
def written(tmp_path: Path) -> tuple[Path, Path, object]:
    src = inspection_workbook(tmp_path / "batch.xlsx")
    out = tmp_path / "batch.checked.xlsx"
    summary = pd.DataFrame({"verdict": ["conforms", "nonconforming"], "count": [1, 1]})
    report = write_back(
        src,
        out,
        sheet=SHEET,
        header_row=HEADER_ROW,
        data_rows=DATA_ROWS,
        last_column=LAST_COLUMN,
        results=results(),
        column_formats={"size_at_20c": "0.0000", "expanded_uncertainty": "0.0000"},
        extra_sheets=[SheetTable("Summary", summary, title_lines=["Batch 7 (invented)"])],
    )
    return src, out, report


def test_untouched_members_are_byte_identical(written) -> None:
    src, out, _ = written
    with zipfile.ZipFile(src) as a, zipfile.ZipFile(out) as b:
        before = {n: a.read(n) for n in a.namelist()}
        after = {n: b.read(n) for n in b.namelist()}
    assert set(before) <= set(after)
    same = [n for n in before if n not in EDITED]
    assert same  # the image, chart, comments, drawings, theme, other sheet ...
    assert [n for n in same if before[n] != after[n]] == []
    assert "xl/media/image1.png" in same and "xl/charts/chart1.xml" in same


def test_package_structure_is_sound(written) -> None:
    # ECMA-376 Part 2: content types for every part, relationship targets exist
    _, out, _ = written
    assert package_problems(out) == []


def test_edited_sheet_keeps_validation_formatting_and_drawings(written) -> None:
    _, out, _ = written
    with zipfile.ZipFile(out) as zf:
        xml = zf.read("xl/worksheets/sheet1.xml").decode()
    for tag in ("<dataValidations", "<conditionalFormatting", "<drawing ", "<legacyDrawing "):
        assert tag in xml, tag
    assert "<f>" not in xml.split('<c r="F', 1)[1]  # no formula among the new cells
    # ECMA-376 Part 1, 18.3.1.35: <dimension> covers the used range, now to column K
    assert '<dimension ref="A1:K7"/>' in xml


def test_original_content_read_back_with_openpyxl(written) -> None:
    _, out, _ = written
    wb = openpyxl.load_workbook(out)
    ws = wb[SHEET]
    assert ws["B4"].comment.text == "checked twice"
    assert [str(dv.sqref) for dv in ws.data_validations.dataValidation] == ["B4:B7"]
    assert [str(r.sqref) for r in ws.conditional_formatting] == ["C4:C7"]
    assert len(ws._images) == 1 and len(ws._charts) == 1
    assert wb.defined_names["bore_sizes"].attr_text == "Readings!$B$4:$B$7"
    assert wb.sheetnames == ["Readings", "Notes", "Summary"]
    assert wb["Notes"]["A1"].value == "Gauge: invented plug gauge 25 mm"
    assert ws["A5"].value == "=1+2" and ws["A5"].data_type == "s"


def test_results_on_their_rows_openpyxl(written) -> None:
    _, out, report = written
    assert report.mode == "beside data" and report.first_result_column == "F"
    ws = openpyxl.load_workbook(out)[SHEET]
    assert ws["E3"].value is None  # the gap column
    header = [ws.cell(HEADER_ROW, c).value for c in range(6, 12)]
    assert header == list(results().columns)
    assert ws["F4"].value == 25.01196 and ws["F4"].number_format == "0.0000"
    assert ws["F6"].value is None  # NaN is an empty cell
    assert ws["H5"].value == 50
    assert [ws[f"I{r}"].value for r in DATA_ROWS] == list(results()["verdict"])
    for r, text in zip(DATA_ROWS, INJECTION, strict=True):
        cell = ws[f"J{r}"]
        assert cell.value == text and cell.data_type == "s"  # text, not a formula


def test_results_on_their_rows_calamine(written) -> None:
    _, out, _ = written
    rows = CalamineWorkbook.from_path(str(out)).get_sheet_by_name(SHEET).to_python()
    assert rows[HEADER_ROW - 1][5:11] == list(results().columns)
    got = [rows[r - 1][5:11] for r in DATA_ROWS]
    assert got[0][0] == 25.01196 and got[2][0] == ""
    assert [g[3] for g in got] == list(results()["verdict"])
    assert [g[4] for g in got] == INJECTION
    assert rows[4][0] == "=1+2"


def test_new_sheet_with_title_and_data(written) -> None:
    _, out, report = written
    assert report.added_sheets == ("Summary",)
    ws = openpyxl.load_workbook(out)["Summary"]
    assert ws["A1"].value == "Batch 7 (invented)" and ws["A1"].font.b
    assert [ws["A3"].value, ws["B3"].value] == ["verdict", "count"]
    assert [ws["A4"].value, ws["B4"].value, ws["A5"].value] == ["conforms", 1, "nonconforming"]
    assert ws.freeze_panes == "A4"


def test_header_cells_styled(written) -> None:
    _, out, _ = written
    ws = openpyxl.load_workbook(out)[SHEET]
    cell = ws["F3"]
    assert cell.font.b and cell.border.bottom.style == "medium"
    assert not ws["A3"].font.b  # the original header keeps its own style


def _luma(argb: str) -> float:
    """Relative luma of an ARGB colour, ITU-R BT.601: Y = 0.299 R + 0.587 G + 0.114 B."""
    r, g, b = (int(argb[i : i + 2], 16) / 255 for i in (2, 4, 6))
    return 0.299 * r + 0.587 * g + 0.114 * b


def test_verdict_marking_reads_in_grayscale(written) -> None:
    _, out, _ = written
    ws = openpyxl.load_workbook(out)[SHEET]
    looks = {}
    for r in DATA_ROWS:
        c = ws[f"I{r}"]
        fill = c.fill
        looks[c.value] = (
            fill.patternType,
            round(_luma(fill.fgColor.rgb), 2),
            bool(c.font.b),
            bool(c.font.i),
            c.border.left.style,
        )
    assert len(looks) == 4
    # no two verdicts share fill pattern and lightness, nor font, nor border line
    assert len({(v[0], v[1]) for v in looks.values()}) == 4
    assert len({v[4] for v in looks.values()}) == 4
    assert len({(v[2], v[3]) for v in looks.values()}) == 4
    # solid fills at least 0.15 apart in luma; the failing verdict darkest, the passing lightest
    solid = sorted(v[1] for v in looks.values() if v[0] == "solid")
    assert len(solid) == 3 and min(b - a for a, b in itertools.pairwise(solid)) >= 0.15
    assert looks["nonconforming"][1] == solid[0] and looks["conforms"][1] == solid[-1]
    assert looks["not evaluated"][0] not in ("solid", None, "none")  # a hatch pattern


def test_input_never_modified(tmp_path: Path) -> None:
    src = inspection_workbook(tmp_path / "batch.xlsx")
    before, stat = src.read_bytes(), src.stat()
    write_back(
        src,
        tmp_path / "out.xlsx",
        sheet=SHEET,
        header_row=HEADER_ROW,
        data_rows=DATA_ROWS,
        last_column=LAST_COLUMN,
        results=results(),
    )
    assert src.read_bytes() == before and src.stat().st_mtime_ns == stat.st_mtime_ns


def test_empty_styled_cells_give_way_and_order_is_kept(tmp_path: Path) -> None:
    # G4 and K4 carry a fill but no value: nothing is lost by writing there
    src = inspection_workbook(tmp_path / "b.xlsx", styled_empty=True)
    out = tmp_path / "o.xlsx"
    res = results()[["size_at_20c", "verdict"]]
    report = write_back(
        src,
        out,
        sheet=SHEET,
        header_row=HEADER_ROW,
        data_rows=DATA_ROWS,
        last_column=LAST_COLUMN,
        results=res,
    )
    assert report.mode == "beside data"
    with zipfile.ZipFile(out) as zf:
        row4 = re.search(r'<row r="4".*?</row>', zf.read("xl/worksheets/sheet1.xml").decode())
    refs = re.findall(r'<c r="([A-Z]+4)"', row4.group(0))
    # ECMA-376 Part 1, 18.3.1.73: cells of a row in column order
    assert refs == ["A4", "B4", "C4", "D4", "F4", "G4", "K4"]
    ws = openpyxl.load_workbook(out)[SHEET]
    assert ws["G4"].value == "conforms" and ws["K4"].fill.fgColor.rgb.endswith("DDEEFF")


def test_missing_row_is_created_in_order(tmp_path: Path) -> None:
    src = inspection_workbook(tmp_path / "b.xlsx", skip_row=6)
    out = tmp_path / "o.xlsx"
    write_back(
        src,
        out,
        sheet=SHEET,
        header_row=HEADER_ROW,
        data_rows=DATA_ROWS,
        last_column=LAST_COLUMN,
        results=results(),
    )
    with zipfile.ZipFile(out) as zf:
        xml = zf.read("xl/worksheets/sheet1.xml").decode()
    assert re.findall(r'<row r="(\d+)"', xml) == ["1", "3", "4", "5", "6", "7"]
    rows = CalamineWorkbook.from_path(str(out)).get_sheet_by_name(SHEET).to_python()
    assert rows[5][0] == "" and rows[5][8] == "borderline"


def test_xlsxwriter_input_with_shared_strings_and_properties(tmp_path: Path) -> None:
    # a second, independent writer of the input: shared strings, spans, full app.xml
    import xlsxwriter

    src = tmp_path / "x.xlsx"
    book = xlsxwriter.Workbook(str(src))
    ws = book.add_worksheet(SHEET)
    ws.write_row(0, 0, ["Part", "Size (mm)"])
    ws.write_row(1, 0, ["HX-1", 25.003])
    ws.write_row(2, 0, ["HX-2", 25.011])
    book.add_worksheet("Notes").write_string(0, 0, "invented")
    book.close()
    out = tmp_path / "o.xlsx"
    report = write_back(
        src,
        out,
        sheet=SHEET,
        header_row=1,
        data_rows=[2, 3],
        last_column=2,
        results=pd.DataFrame({"verdict": ["conforms", "borderline"]}),
        extra_sheets=[SheetTable("Notes", pd.DataFrame({"a": [1]}))],
    )
    with zipfile.ZipFile(src) as a, zipfile.ZipFile(out) as b:
        assert a.read("xl/sharedStrings.xml") == b.read("xl/sharedStrings.xml")
        app = b.read("docProps/app.xml").decode()
    assert "<vt:lpstr>Notes (2)</vt:lpstr>" in app and "<vt:i4>3</vt:i4>" in app
    assert package_problems(out) == []
    assert report.notes == (
        "The sheet 'Notes' was named 'Notes (2)' (names must be unique, at most 31 characters, "
        "without []:*?/\\).",
    )
    wb = openpyxl.load_workbook(out)
    assert wb.sheetnames == [SHEET, "Notes", "Notes (2)"]
    assert wb[SHEET]["D3"].value == "borderline" and wb[SHEET]["A3"].value == "HX-2"


def test_hundred_thousand_rows_scale(tmp_path: Path) -> None:
    """20 000 rows × 8 result columns well under the time a 100 000-row sheet may take."""
    import time

    import xlsxwriter

    n = 20_000
    src = tmp_path / "big.xlsx"
    book = xlsxwriter.Workbook(str(src), {"constant_memory": True})
    ws = book.add_worksheet(SHEET)
    ws.write_row(0, 0, ["Part", "Size (mm)"])
    for i in range(n):
        ws.write_string(i + 1, 0, f"P{i}")
        ws.write_number(i + 1, 1, 25 + i * 1e-6)
    book.close()
    rng = np.random.default_rng(7)
    res = pd.DataFrame({f"x{j}": rng.normal(size=n) for j in range(6)})
    res["verdict"] = rng.choice(["conforms", "nonconforming"], n)
    res["message"] = rng.choice(["", "=check"], n)
    start = time.perf_counter()
    write_back(
        src,
        tmp_path / "o.xlsx",
        sheet=SHEET,
        header_row=1,
        data_rows=range(2, n + 2),
        last_column=2,
        results=res,
    )
    assert time.perf_counter() - start < 4.0
    rows = CalamineWorkbook.from_path(str(tmp_path / "o.xlsx")).get_sheet_by_name(SHEET).to_python()
    assert len(rows) == n + 1
    assert rows[-1][3] == res["x0"].iloc[-1] and rows[-1][10] == res["message"].iloc[-1]


@pytest.mark.skipif(
    __import__("shutil").which("soffice") is None, reason="LibreOffice not installed"
)
def test_libreoffice_converts_the_output(written, tmp_path: Path) -> None:
    """A third, independent reader: LibreOffice opens the output and prints it to PDF."""
    import subprocess

    _, out, _ = written
    pdf_dir = tmp_path / "pdf"
    subprocess.run(
        ["soffice", "--headless", "--convert-to", "pdf", "--outdir", str(pdf_dir), str(out)],
        check=True,
        capture_output=True,
        timeout=120,
    )
    assert (pdf_dir / (out.stem + ".pdf")).stat().st_size > 1000
