"""Long tables: split at the sheet's row limit, built chunk by chunk, numbers exact.

References: a worksheet holds at most 1 048 576 rows (ECMA-376 Part 1, 18.3.1.73, the row's
``r`` attribute; Excel specifications and limits — from memory), checked against the same limit
in xlsxwriter (``Worksheet.xls_rowmax``), a general-purpose library written apart from this
project. Numbers: the text of a double must read back as the same double (IEEE 754 binary64
round trip); Python's ``repr`` gives the shortest such text (Python 3.1 "What's New", repr of a
float), so no cell text may be longer. Outputs are read back with openpyxl and python-calamine;
package structure is checked against ECMA-376 Part 2.

The tests patch the row limit down to a few rows so they stay fast.
"""

from __future__ import annotations

import io
import math
import shutil
import subprocess
import zipfile
from collections.abc import Iterator
from datetime import datetime
from pathlib import Path

import numpy as np
import openpyxl
import pandas as pd
import pyarrow as pa
import pytest
import xlsxwriter.worksheet
from hypothesis import given, settings
from hypothesis import strategies as st
from python_calamine import CalamineWorkbook

from qc.errors import ConfigError, OutputError
from qc.io import writeback_cells, writeback_sheets
from qc.io.writeback import SheetTable, write_back, write_new_workbook
from qc.io.writeback_cells import (
    CellNotes,
    column_cells,
    number_text,
    row_numbers,
    string_bytes,
)
from qc.io.writeback_sheets import table_sheet
from qc.io.writeback_styles import MINIMAL_STYLES, StyleBook
from qc.io.xlsx_package import Package
from tests.writers.workbooks import (
    DATA_ROWS,
    HEADER_ROW,
    LAST_COLUMN,
    SHEET,
    inspection_workbook,
    package_problems,
)

TITLES = ["Uncertainty budget of an invented batch", "second title line"]

#: Doubles whose text is easy to get wrong: repeating binary fractions, the smallest subnormal,
#: the largest finite double, signed zero, integers beyond 2**53, exponents at print switches.
TRICKY = [
    0.1,
    1 / 3,
    5e-324,
    1.7976931348623157e308,
    -0.0,
    2.0**53 + 2,
    1e16,
    1e-5,
    25.0123,
    -24.9987,
    123456789.12345679,
    1e22,
    0.000123,
]


def _budget(n: int) -> pd.DataFrame:
    """An invented budget: one row per contribution, with text, category, numbers and gaps."""
    i = np.arange(n)
    return pd.DataFrame(
        {
            "source_row": i + 4,
            "quantity": pd.Categorical(np.where(i % 2, "repeatability", "CTE of part")),
            "estimate": np.where(i % 5 == 3, np.nan, 25.0 + i / 7),
            "dof": pd.Series(np.where(i % 3 == 0, "∞", None), dtype=object).where(i % 3 != 1, 9.0),
            "note": np.where(i % 4 == 0, "=1+2 & <x>", None),
        }
    )


def _sheet_rows(path: Path, name: str) -> list[list[object]]:
    return [list(r) for r in openpyxl.load_workbook(path)[name].iter_rows(values_only=True)]


def test_row_limit_is_the_one_other_libraries_use() -> None:
    assert writeback_sheets.MAX_SHEET_ROWS == 1048576  # ECMA-376 / Excel limit, from memory
    assert xlsxwriter.worksheet.Worksheet().xls_rowmax == writeback_sheets.MAX_SHEET_ROWS


def _check_split(out: Path, names: list[str], frame: pd.DataFrame, header_row: int) -> None:
    """Each sheet has the titles and header, at most the limit of rows, and together all data."""
    got: list[list[object]] = []
    for name in names:
        rows = _sheet_rows(out, name)
        assert len(rows) <= writeback_sheets.MAX_SHEET_ROWS
        assert [r[0] for r in rows[: header_row - 2]] == TITLES
        assert list(rows[header_row - 1]) == list(frame.columns)
        got += rows[header_row:]
        calamine = CalamineWorkbook.from_path(str(out)).get_sheet_by_name(name).to_python()
        assert calamine[header_row - 1] == list(frame.columns)
    assert len(got) == len(frame)
    assert [r[0] for r in got] == frame["source_row"].tolist()
    assert [r[1] for r in got] == frame["quantity"].astype(str).tolist()
    expected = [None if math.isnan(v) else v for v in frame["estimate"]]
    assert [r[2] for r in got] == expected
    assert [r[3] for r in got] == frame["dof"].tolist()
    assert [r[4] for r in got] == [None if pd.isna(v) else v for v in frame["note"]]
    assert package_problems(out) == []


def test_long_table_continues_on_more_sheets(tmp_path: Path, monkeypatch) -> None:
    monkeypatch.setattr(writeback_sheets, "MAX_SHEET_ROWS", 10)
    src = inspection_workbook(tmp_path / "in.xlsx")
    out = tmp_path / "out.xlsx"
    budget = _budget(15)  # 2 titles, a gap and the header leave 6 data rows a sheet
    report = write_back(
        src,
        out,
        sheet=SHEET,
        header_row=HEADER_ROW,
        data_rows=DATA_ROWS,
        last_column=LAST_COLUMN,
        results=pd.DataFrame({"verdict": ["conforms"] * 4}),
        extra_sheets=[
            SheetTable("Budget", budget, title_lines=TITLES),
            SheetTable("Summary", pd.DataFrame({"n": [15]})),
        ],
    )
    assert report.added_sheets == ("Budget", "Budget (2)", "Budget (3)", "Summary")
    assert report.notes == (
        "The table 'Budget' has 15 rows, more than one sheet holds (10 rows with its title and "
        "header); it continues over the sheets 'Budget', 'Budget (2)' and 'Budget (3)', each "
        "with the same title and header.",
    )
    _check_split(out, ["Budget", "Budget (2)", "Budget (3)"], budget, header_row=4)
    assert [len(_sheet_rows(out, n)) for n in report.added_sheets[:3]] == [10, 10, 7]
    assert openpyxl.load_workbook(out)["Budget (2)"].freeze_panes == "A5"


def test_a_table_that_fits_exactly_stays_on_one_sheet(tmp_path: Path, monkeypatch) -> None:
    monkeypatch.setattr(writeback_sheets, "MAX_SHEET_ROWS", 10)
    src = inspection_workbook(tmp_path / "in.xlsx")
    out = tmp_path / "out.xlsx"
    report = write_back(
        src,
        out,
        sheet=SHEET,
        header_row=HEADER_ROW,
        data_rows=DATA_ROWS,
        last_column=LAST_COLUMN,
        results=pd.DataFrame({"verdict": ["conforms"] * 4}),
        extra_sheets=[SheetTable("Budget", _budget(6), title_lines=TITLES)],
    )
    assert report.added_sheets == ("Budget",) and report.notes == ()
    assert len(_sheet_rows(out, "Budget")) == 10


def test_new_workbook_splits_data_and_extra_sheets(tmp_path: Path, monkeypatch) -> None:
    monkeypatch.setattr(writeback_sheets, "MAX_SHEET_ROWS", 10)
    out = tmp_path / "new.xlsx"
    data = pd.DataFrame({"Part": [f"P{i}" for i in range(12)], "verdict": ["conforms"] * 12})
    budget = _budget(7)
    report = write_new_workbook(
        out,
        data=data,
        sheet_name="Results",
        extra_sheets=[SheetTable("Budget", budget, title_lines=TITLES)],
    )
    assert report.results_sheet == "Results"
    assert report.added_sheets == ("Results (2)", "Budget", "Budget (2)")
    assert report.notes == (
        "The table 'Results' has 12 rows, more than one sheet holds (10 rows with its title and "
        "header); it continues over the sheets 'Results' and 'Results (2)', each with the same "
        "title and header.",
        "The table 'Budget' has 7 rows, more than one sheet holds (10 rows with its title and "
        "header); it continues over the sheets 'Budget' and 'Budget (2)', each with the same "
        "title and header.",
    )
    first, second = _sheet_rows(out, "Results"), _sheet_rows(out, "Results (2)")
    assert len(first) == 10 and first[0] == ["Part", "verdict"] and second[0] == first[0]
    assert [r[0] for r in first[1:] + second[1:]] == data["Part"].tolist()
    _check_split(out, ["Budget", "Budget (2)"], budget, header_row=4)


def test_too_many_title_lines_for_a_sheet(tmp_path: Path, monkeypatch) -> None:
    monkeypatch.setattr(writeback_sheets, "MAX_SHEET_ROWS", 4)
    with pytest.raises(ConfigError) as err:
        write_new_workbook(
            tmp_path / "t.xlsx",
            data=pd.DataFrame({"a": [1]}),
            sheet_name="Results",
            extra_sheets=[SheetTable("Budget", _budget(3), title_lines=TITLES * 2)],
        )
    assert (
        str(err.value)
        == "a sheet of 4 rows has no room left for data below 6 title and header rows"
    )


def _streamed(frame: pd.DataFrame, monkeypatch, chunk: int) -> tuple[list[bytes], CellNotes]:
    monkeypatch.setattr(writeback_sheets, "CHUNK_ROWS", chunk)
    notes = CellNotes()
    styles = StyleBook(MINIMAL_STYLES.encode(), "xl/styles.xml")
    part = table_sheet(
        frame,
        styles,
        header_row=1,
        data_rows=range(2, 2 + len(frame)),
        column_formats={},
        column_widths={},
        notes=notes,
    )
    return [bytes(c) for c in part.body()], notes


def test_rows_are_built_in_chunks_with_the_same_result(monkeypatch) -> None:
    frame = _budget(23)
    small, notes_small = _streamed(frame, monkeypatch, 5)
    whole, notes_whole = _streamed(frame, monkeypatch, 1000)
    assert len(small) == 5 and len(whole) == 1  # ceil(23 / 5) chunks: memory per chunk only
    assert b"".join(small) == b"".join(whole)
    assert b"".join(small).count(b"<row ") == 23
    assert notes_small == notes_whole == CellNotes()


def test_a_chunk_too_big_for_one_string_array_is_halved(monkeypatch) -> None:
    """Arrow string arrays hold at most 2 GiB of text; a chunk beyond that is built in halves."""
    frame = _budget(23)
    whole, _ = _streamed(frame, monkeypatch, 1000)
    real_join = writeback_sheets.join_cells

    def limited(cells, prefix=(), suffix=""):
        if len(cells[0]) > 4:  # stands in for more than 2 GiB of text
            raise pa.ArrowCapacityError("array cannot contain more than 2147483646 bytes")
        return real_join(cells, prefix, suffix)

    monkeypatch.setattr(writeback_sheets, "join_cells", limited)
    halves, notes = _streamed(frame, monkeypatch, 1000)
    assert b"".join(halves) == b"".join(whole) and len(halves) > 1
    assert notes == CellNotes()


def test_numbers_read_back_exactly_and_as_short_as_repr(tmp_path: Path) -> None:
    values = pd.Series([*TRICKY, np.nan, np.inf, -np.inf])
    notes = CellNotes()
    cells = column_cells(values, "B", row_numbers(range(2, 2 + len(values))), None, notes=notes)
    texts = [c.split("<v>")[1].split("</v>")[0] for c in cells.to_pylist()[: len(TRICKY)]]
    _check_number_texts(TRICKY, texts)
    assert cells[len(TRICKY)].as_py() is None  # NaN: an empty cell
    assert notes.infinite == 2
    out = tmp_path / "n.xlsx"
    write_new_workbook(
        out,
        data=pd.DataFrame({"a": [0]}),
        sheet_name="R",
        extra_sheets=[SheetTable("N", pd.DataFrame({"x": values}))],
    )
    assert [r[0] for r in _sheet_rows(out, "N")[1 : 1 + len(TRICKY)]] == TRICKY
    # and through the package writer
    src = inspection_workbook(tmp_path / "in.xlsx")
    out2 = tmp_path / "o.xlsx"
    write_back(
        src,
        out2,
        sheet=SHEET,
        header_row=HEADER_ROW,
        data_rows=DATA_ROWS,
        last_column=LAST_COLUMN,
        results=pd.DataFrame({"v": [1] * 4}),
        extra_sheets=[SheetTable("N", pd.DataFrame({"x": values}))],
    )
    got = [r[0] for r in _sheet_rows(out2, "N")[1:]]
    assert got[: len(TRICKY)] == TRICKY and got[len(TRICKY) :] == [None, "inf", "-inf"]
    calamine = CalamineWorkbook.from_path(str(out2)).get_sheet_by_name("N").to_python()
    assert [r[0] for r in calamine[1 : 1 + len(TRICKY)]] == TRICKY


def _digits(text: str) -> str:
    """The significant digits of a number's text: no sign, point, exponent or outer zeros."""
    mantissa = text.lower().lstrip("-").split("e")[0].replace(".", "")
    return mantissa.strip("0") or "0"


def _check_number_texts(values: list[float], texts: list[str]) -> None:
    for v, text in zip(values, texts, strict=True):
        back = float(text)
        assert back == v and math.copysign(1, back) == math.copysign(1, v), (v, text)
        assert _digits(text) == _digits(repr(v)), (v, text)  # as few digits as repr


@settings(max_examples=300, deadline=None)
@given(st.lists(st.floats(allow_nan=False, allow_infinity=False), min_size=1, max_size=40))
def test_number_text_round_trips_with_the_fewest_digits(values: list[float]) -> None:
    _check_number_texts(values, number_text(np.array(values, dtype=float)).to_pylist())


def test_number_text_falls_back_to_repr_when_a_text_would_not_round_trip(monkeypatch) -> None:
    """The read-back check is live: a cast that loses digits is caught and repaired."""
    real_cast = writeback_cells.pc.cast

    def lossy(arr, target, *args, **kwargs):
        out = real_cast(arr, target, *args, **kwargs)
        if target == pa.string():  # keep 6 characters only, as a too-short format would
            return writeback_cells.pc.utf8_slice_codeunits(out, 0, 6)
        return out

    monkeypatch.setattr(writeback_cells.pc, "cast", lossy)
    values = [1 / 3, 2.5, 25.0123456789]
    assert number_text(np.array(values)).to_pylist() == [repr(1 / 3), "2.5", "25.0123456789"]


def test_mixed_columns_keep_each_kind(tmp_path: Path) -> None:
    """Text with gaps takes the text path; mixed columns keep numbers, truth values and dates."""
    when = pd.Timestamp("2026-01-05 08:30")
    mixed = pd.Series(["x", 2.5, None, True, when, np.nan, 7, "∞"], dtype=object)
    gaps = pd.Series(["a", None, "conforms", np.nan, "a", pd.NA, "b", ""], dtype=object)
    src = inspection_workbook(tmp_path / "in.xlsx")
    out = tmp_path / "o.xlsx"
    write_back(
        src,
        out,
        sheet=SHEET,
        header_row=HEADER_ROW,
        data_rows=DATA_ROWS,
        last_column=LAST_COLUMN,
        results=pd.DataFrame({"v": [1] * 4}),
        extra_sheets=[SheetTable("M", pd.DataFrame({"mixed": mixed, "verdict": gaps}))],
    )
    # Excel's 1900 date system: day 0 is 1899-12-30 for dates after 1900-02-28 (ECMA-376
    # Part 1, 18.17.4.1, from memory); without a date format the cell shows that serial number
    serial = (when.to_pydatetime() - datetime(1899, 12, 30)).total_seconds() / 86400
    wb = openpyxl.load_workbook(out)
    ws = wb["M"]
    assert [c.value for c in ws["A"][1:]] == [
        "x",
        2.5,
        None,
        True,
        serial,
        None,
        7,
        "∞",
    ]
    # an empty text stays a text cell holding "" (missing values give no cell at all)
    assert [c.value for c in ws["B"][1:]] == ["a", None, "conforms", None, "a", None, "b", ""]
    assert ws["B4"].fill.fgColor.rgb != ws["B2"].fill.fgColor.rgb  # verdict marking kept
    assert package_problems(out) == []


def test_long_texts_are_counted_per_cell(tmp_path: Path) -> None:
    src = inspection_workbook(tmp_path / "in.xlsx")
    out = tmp_path / "o.xlsx"
    long = "y" * 40000
    report = write_back(
        src,
        out,
        sheet=SHEET,
        header_row=HEADER_ROW,
        data_rows=DATA_ROWS,
        last_column=LAST_COLUMN,
        results=pd.DataFrame({"m": [long] * 3 + ["ok"]}),
    )
    assert report.notes == (
        "3 text value(s) longer than 32 767 characters were cut to fit a cell.",
    )
    assert len(openpyxl.load_workbook(out)[SHEET]["F5"].value) == 32767


def test_a_failing_sheet_leaves_no_output(tmp_path: Path) -> None:
    src = inspection_workbook(tmp_path / "in.xlsx")
    pkg = Package.read(src)

    def rows():
        yield b"<worksheet>"
        raise OutputError("disk full while writing")

    pkg.add_stream("xl/worksheets/sheet9.xml", rows)
    with pytest.raises(OutputError, match="disk full while writing"):
        pkg.write(io.BytesIO())

    from qc.io import xlsx_package

    built: list[int] = []

    def many() -> Iterator[bytes]:
        for i in range(1000):
            built.append(i)
            yield b"a"

    # the writer fails on its first chunk: the builder thread stops instead of building on
    ahead = xlsx_package._Prefetch([("a.xml", many)])
    with pytest.raises(OSError, match="no space left"), ahead:
        for _chunk in ahead.chunks("a.xml"):
            raise OSError("no space left on device")
    assert not ahead._thread.is_alive() and len(built) < 1000


def test_streamed_part_bytes_match_get(tmp_path: Path) -> None:
    src = inspection_workbook(tmp_path / "in.xlsx")
    pkg = Package.read(src)
    pkg.add_stream("xl/extra.xml", lambda: iter([b"<a>", memoryview(b"b"), b"</a>"]))
    assert pkg.get("xl/extra.xml") == b"<a>b</a>" and pkg.has("xl/extra.xml")
    buf = io.BytesIO()
    pkg.write(buf)
    with zipfile.ZipFile(buf) as zf:
        assert zf.read("xl/extra.xml") == b"<a>b</a>"
        assert zf.read("xl/workbook.xml") == zipfile.ZipFile(src).read("xl/workbook.xml")


def test_a_part_beyond_plain_zip_sizes_gets_zip64(tmp_path: Path, monkeypatch) -> None:
    """PKWARE APPNOTE 4.5.3: sizes past the 32-bit fields need the ZIP64 extra field; the
    standard library's zipfile is the reference reader (its limit patched down to 1 000 bytes)."""
    src = inspection_workbook(tmp_path / "in.xlsx")
    pkg = Package.read(src)
    body = [b"<a>", b"x" * 5000, b"</a>"]
    pkg.add_stream("xl/big.xml", lambda: iter(body))
    monkeypatch.setattr(zipfile, "ZIP64_LIMIT", 1000)
    out = tmp_path / "big.zip"
    with open(out, "wb") as fh:
        pkg.write(fh)
    with zipfile.ZipFile(out) as zf:
        assert zf.testzip() is None
        assert zf.read("xl/big.xml") == b"".join(body)
        assert zf.getinfo("xl/big.xml").extra[:2] == b"\x01\x00"  # the ZIP64 extra field id
        assert zf.read("xl/workbook.xml") == zipfile.ZipFile(src).read("xl/workbook.xml")


def test_string_bytes_of_a_slice() -> None:
    arr = pa.array(["ab", None, "cde", "f"]).slice(1)
    assert bytes(string_bytes(arr)) == b"cdef"
    assert bytes(string_bytes(pa.array([], pa.string()))) == b""


@pytest.mark.skipif(shutil.which("soffice") is None, reason="LibreOffice not installed")
def test_libreoffice_opens_a_split_workbook(tmp_path: Path, monkeypatch) -> None:
    """A third reader, written apart from this project: LibreOffice prints both outputs to PDF."""
    monkeypatch.setattr(writeback_sheets, "MAX_SHEET_ROWS", 10)
    src = inspection_workbook(tmp_path / "in.xlsx")
    out = tmp_path / "split.xlsx"
    write_back(
        src,
        out,
        sheet=SHEET,
        header_row=HEADER_ROW,
        data_rows=DATA_ROWS,
        last_column=LAST_COLUMN,
        results=pd.DataFrame({"verdict": ["conforms"] * 4}),
        extra_sheets=[SheetTable("Budget", _budget(15), title_lines=TITLES)],
    )
    new = tmp_path / "new.xlsx"
    write_new_workbook(
        new,
        data=_budget(12),
        sheet_name="Results",
        extra_sheets=[SheetTable("Budget", _budget(15), title_lines=TITLES)],
    )
    pdf_dir = tmp_path / "pdf"
    subprocess.run(
        [
            "soffice",
            "--headless",
            "--convert-to",
            "pdf",
            "--outdir",
            str(pdf_dir),
            str(out),
            str(new),
        ],
        check=True,
        capture_output=True,
        timeout=180,
    )
    assert (pdf_dir / "split.pdf").stat().st_size > 1000
    assert (pdf_dir / "new.pdf").stat().st_size > 1000
