"""The fast bulk paths of the reader give the cells and values of the slow, obvious ones.

References:
- Python's ``csv`` module (standard library, Excel dialect: ``"`` quotes, a doubled quote inside
  a quoted field is one quote) is the oracle for splitting delimited text; the fast path splits
  with ``pyarrow.csv`` and must give the same cells.
- Python language reference, "Value comparisons": ``True == 1 == 1.0`` and they hash alike
  (bool is a subclass of int), so grouping cells by distinct value must keep the types apart.
- Python's ``float()`` of the shortest ``repr`` round-trips every IEEE 754 binary64 value
  (Python documentation, "Floating Point Arithmetic: Issues and Limitations").
- The rest is common practice, no source: parsing a column must give, row by row, what
  parsing each of its cells alone gives.
"""

from __future__ import annotations

import csv
import datetime as dt
import io
import math
import tempfile
from pathlib import Path

import numpy as np
from hypothesis import given, settings
from hypothesis import strategies as st

from qc.errors import FileReadError
from qc.io.csvfile import read_delimited
from qc.io.grid import Grid
from qc.io.values import CellMarker, is_blank, parse_dates, parse_numbers, parse_texts


def _csv_module_cells(text: str, delimiter: str) -> np.ndarray:
    """Cells as the standard-library csv module splits ``text``, rows padded with ''."""
    rows = list(csv.reader(io.StringIO(text), delimiter=delimiter))
    width = max((len(r) for r in rows), default=0)
    cells = np.empty((len(rows), width), dtype=object)
    cells[:] = ""
    for i, r in enumerate(rows):
        cells[i, : len(r)] = r
    return cells


def _read(text: str, delimiter: str, name: str = "t.csv", encoding: str = "utf-8") -> Grid:
    with tempfile.TemporaryDirectory() as d:
        p = Path(d) / name
        p.write_bytes(text.encode(encoding))
        return read_delimited(p, delimiter=delimiter, decimal=".")


def _fresh_blank(cells: np.ndarray) -> np.ndarray:
    return Grid(file="x.csv", sheet=None, cells=cells).blank()


_PIECES = st.sampled_from(["a", "b", "1.5", "x y", "é", " ", ",", ";", ",", '"', '"', '""',
                           "\n", "\r\n", "\n\n", "\t"])
_TITLES = st.sampled_from(["", "", "Title\n", "Title;x,y;z\n", "\n", 'T "q"\n', '"two\nlines"\n'])


@settings(max_examples=300, deadline=None)
@given(st.tuples(_TITLES, st.lists(_PIECES, min_size=1, max_size=40).map("".join))
       .map("".join), st.sampled_from([",", ";"]))
def test_cells_equal_the_csv_module(text: str, delimiter: str) -> None:
    # Python csv module as the reference splitter (either path may be taken here)
    if text.isspace():
        return
    try:
        expected = _csv_module_cells(text, delimiter)
    except csv.Error:
        return
    grid = _read(text, delimiter)
    assert grid.cells.shape == expected.shape
    assert (grid.cells == expected).all()
    assert (grid.blank() == _fresh_blank(expected)).all()


def test_regular_file_takes_the_fast_path_with_the_same_cells() -> None:
    # Python csv module as the reference; quoted delimiter, doubled quote, quoted line break,
    # CRLF line ends, an empty line (csv: [] → a row of '' here) and a whitespace-only field
    text = ('"Part","Note","Reading"\r\n"P1","a, b","12.5"\r\n"P2","say ""hi""","12.6"\r\n'
            '\r\n"P3","two\r\nlines","  "\r\n')
    grid = _read(text, ",")
    assert grid._blank is not None  # the blank mask came with the fast split
    expected = _csv_module_cells(text, ",")
    assert grid.cells.tolist() == expected.tolist()
    assert grid.cells.tolist()[2] == ["P2", 'say "hi"', "12.6"]
    assert grid.cells.tolist()[4] == ["P3", "two\r\nlines", "  "]
    assert (grid.blank() == _fresh_blank(expected)).all()
    assert grid.blank()[3].all() and grid.blank()[4, 2] and not grid.blank()[4, 1]


def test_windows_1252_file_is_split_like_the_csv_module() -> None:
    # Python csv module as the reference, on the text decoded as Windows-1252
    text = "Teil;Temp (°C);Prüfer\nP1;20,5;Müller\nP2;21,0;Jürgens\n"
    grid = _read(text, ";", encoding="cp1252")
    assert grid.cells.tolist() == _csv_module_cells(text, ";").tolist()
    assert grid.notes == ["t.csv: not UTF-8; read as Windows-1252 (Western European)"]


def test_title_lines_above_the_header_are_split_like_the_csv_module() -> None:
    # rows of other widths above the header are read apart; the body takes the fast split
    text = 'Inspection of batch 7\n\nMachine;Lathe 2;"shift ""B"""\nPart;Reading\nPX;1\nPY;"2;3"\n'
    grid = _read(text, ";")
    assert grid._blank is not None
    assert grid.cells.tolist() == _csv_module_cells(text, ";").tolist()
    assert grid.cells.tolist()[:3] == [["Inspection of batch 7", "", ""], ["", "", ""],
                                       ["Machine", "Lathe 2", 'shift "B"']]
    assert grid.cells.tolist()[5] == ["PY", "2;3", ""]
    assert (grid.blank() == _fresh_blank(grid.cells)).all()


def test_ragged_rows_are_split_like_the_csv_module() -> None:
    # a row of another width below the header: the csv module's own split (the reference)
    text = "Inspection of batch 7\nPart;Reading\nPX;1\nPY;2;extra\nPZ;3\n"
    grid = _read(text, ";")
    assert grid.cells.tolist() == [["Inspection of batch 7", "", ""], ["Part", "Reading", ""],
                                   ["PX", "1", ""], ["PY", "2", "extra"], ["PZ", "3", ""]]
    assert (grid.blank() == _fresh_blank(grid.cells)).all()


def test_bare_carriage_returns_keep_the_csv_module_message() -> None:
    # the csv module refuses a bare CR in text read without newline translation; same message
    try:
        _read("Part;Reading\rPX;1\rPY;2\r", ";", name="cr.csv")
    except FileReadError as e:
        msg = str(e)
    else:
        msg = ""
    try:
        list(csv.reader(io.StringIO("Part;Reading\rPX;1\r"), delimiter=";"))
    except csv.Error as e:
        reason = str(e)
    assert msg == f"cr.csv: cannot be read as delimited text ({reason}); look for an unclosed quote"


def test_decimal_sniffed_from_the_fast_split() -> None:
    with tempfile.TemporaryDirectory() as d:
        p = Path(d) / "c.csv"
        p.write_text('"Part";"Reading"\n"P1";"12,02"\n"P2";"12,03"\n', encoding="utf-8")
        grid = read_delimited(p)
    assert grid.decimal == ","
    assert grid.notes == ["c.csv: fields separated by semicolon (detected)",
                          "c.csv: decimal comma (detected)"]


# --- columns parsed by distinct value --------------------------------------------------------

_CELLS = st.one_of(
    st.sampled_from(["12.5", " 12.5 ", "12.5 mm", "0.4725 in", "1,250", "12.01; 12.02", "n/a",
                     "", "  ", "-", "abc", "1e999", "nan", "2026-01-05", "05/01/2026",
                     "01/02/2026", "#N/A", "±0.02", "12 mm; 13 in", "3"]),
    st.sampled_from([True, False, 1, 0, 1.0, 0.0, -0.0, 3, 12.5, math.nan, None, np.float64(2.0),
                     np.int64(7), math.inf]),
    st.sampled_from([dt.datetime(2026, 1, 5, 14, 30), dt.date(2026, 1, 5), dt.time(8, 15),
                     CellMarker("error", "#DIV/0!"), CellMarker("formula", "A1+1"),
                     46027.5]),
    st.floats(allow_nan=False, allow_infinity=False).map(repr),
)


def _col(values: list[object]) -> np.ndarray:
    out = np.empty(len(values), dtype=object)
    out[:] = values
    return out


def _same(a: object, b: object) -> bool:
    if isinstance(a, float) and isinstance(b, float) and math.isnan(a) and math.isnan(b):
        return True
    return type(a) is type(b) and a == b


@settings(max_examples=200, deadline=None)
@given(st.lists(_CELLS, min_size=1, max_size=30), st.sampled_from([".", ","]), st.booleans())
def test_numbers_column_equals_each_cell_alone(cells: list[object], decimal: str,
                                               multi: bool) -> None:
    col = parse_numbers(_col(cells), kind="length", decimal=decimal, multi=multi)
    assert len(col.first) == len(cells)
    for i, c in enumerate(cells):
        alone = parse_numbers(_col([c]), kind="length", decimal=decimal, multi=multi)
        k = alone.values.shape[1]
        np.testing.assert_array_equal(col.values[i, :k], alone.values[0])
        assert np.isnan(col.values[i, k:]).all()
        assert col.units[i] == alone.units[0]
        assert col.counts[i] == alone.counts[0]
        assert (col.problems.get(i) is None) == (alone.problems.get(0) is None)
        if i in col.problems:
            p, q = col.problems[i], alone.problems[0]
            assert (p.expected, p.hint) == (q.expected, q.hint)
            assert _same(p.value, q.value) or (p.value is q.value)


@settings(max_examples=200, deadline=None)
@given(st.lists(_CELLS, min_size=1, max_size=30))
def test_text_date_blank_columns_equal_each_cell_alone(cells: list[object]) -> None:
    texts, tp = parse_texts(_col(cells))
    dates, dp = parse_dates(_col(cells))
    blank = is_blank(_col(cells))
    for i, c in enumerate(cells):
        t1, tp1 = parse_texts(_col([c]))
        d1, dp1 = parse_dates(_col([c]))
        assert _same(texts[i], t1[0])
        assert (i in tp) == (0 in tp1)
        assert (np.isnat(dates[i]) and np.isnat(d1[0])) or dates[i] == d1[0]
        assert (i in dp) == (0 in dp1)
        if i in dp:
            assert (dp[i].expected, dp[i].hint) == (dp1[0].expected, dp1[0].hint)
        assert blank[i] == is_blank(_col([c]))[0]


def test_equal_values_of_other_types_stay_apart() -> None:
    # True == 1 == 1.0 in Python (language reference, "Value comparisons"): each keeps its type
    col = _col([True, 1, 1.0, "1", 1.0, True])
    p = parse_numbers(col, kind=None)
    assert p.first[1:5].tolist() == [1.0, 1.0, 1.0, 1.0]
    assert sorted(p.problems) == [0, 5]
    assert p.problems[0].value is True and p.problems[0].expected == "a number"
    texts, _ = parse_texts(col)
    assert texts.tolist() == ["True", "1", "1", "1", "1", "True"]


def test_problems_name_the_cell_as_written() -> None:
    # each row's problem carries its own cell text, also when several rows share one text
    col = _col(["abc", " 12.5 ", "abc ", "abc", "1e999"])
    p = parse_numbers(col, kind="length")
    assert sorted(p.problems) == [0, 2, 3, 4]
    assert [p.problems[i].value for i in (0, 2, 3, 4)] == ["abc", "abc ", "abc", "1e999"]
    assert [p.problems[i].expected for i in (0, 4)] == ["a number", "a finite number"]
    assert p.first[1] == 12.5 and p.counts.tolist() == [0, 1, 0, 0, 0]


@settings(max_examples=100, deadline=None)
@given(st.lists(st.floats(allow_nan=False, allow_infinity=False), min_size=1, max_size=50))
def test_plain_decimals_round_trip(xs: list[float]) -> None:
    # float(repr(x)) == x for every binary64 value (Python documentation, see module docstring)
    p = parse_numbers(_col([repr(x) for x in xs]), kind=None)
    assert p.first.tolist() == xs
    assert not p.problems


def test_multi_value_cells_spread_to_their_rows() -> None:
    # hand-computed: "12.01; 12.02" holds two values, other rows one or none
    col = _col(["12.01; 12.02", "12.5", "", "12.01; 12.02", "1; 2; 3"])
    p = parse_numbers(col, kind="length", multi=True)
    assert p.values.shape == (5, 3)
    np.testing.assert_array_equal(p.values[0], [12.01, 12.02, np.nan])
    np.testing.assert_array_equal(p.values[3], [12.01, 12.02, np.nan])
    np.testing.assert_array_equal(p.values[4], [1.0, 2.0, 3.0])
    assert p.counts.tolist() == [2, 1, 0, 2, 3]


def test_field_over_the_csv_limit_keeps_the_csv_module_message() -> None:
    # the csv module refuses a field longer than csv.field_size_limit(); a well-formed file
    # with one such field gets the same message as before, not a silent read
    limit = csv.field_size_limit()
    ok = _read(f'Part;Note\nP1;"{"x" * limit}"\n', ";")
    assert len(ok.cells[1, 1]) == limit
    text = f'Part;Note\nP1;"{"x" * (limit + 1)}"\nP2;b\n'
    try:
        list(csv.reader(io.StringIO(text), delimiter=";"))
    except csv.Error as e:
        reason = str(e)
    try:
        _read(text, ";", name="long.csv")
    except FileReadError as e:
        msg = str(e)
    else:
        msg = ""
    assert msg == (f"long.csv: cannot be read as delimited text ({reason}); "
                   "look for an unclosed quote")
