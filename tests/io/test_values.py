"""Value parsing, column-wise: numbers as text, units in cells, conventions, spreadsheet errors.

Expected values are hand-computed from the text (common practice, no source) and use the exact
unit factors checked in test_units.py (NIST SP 811).
"""

import datetime as dt

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st

from qc.io.values import CellMarker, is_blank, parse_dates, parse_numbers, parse_texts


def one(text: object, **kw: object):
    p = parse_numbers(np.array([text], dtype=object), kind=kw.pop("kind", "length"), **kw)
    return p.first[0], p.units[0], p.problems.get(0)


@pytest.mark.parametrize(("text", "value", "unit"), [
    ("12.02", 12.02, None), ("12.02 mm", 12.02, "millimeter"), ("0.4725 in", 0.4725, "inch"),
    ('0.4725"', 0.4725, "inch"), ("−0.012", -0.012, None), ("–0.012", -0.012, None),
    ("+0.5", 0.5, None), ("1 250.5", 1250.5, None), ("1,250.5", 1250.5, None),
    ("12,02", 12.02, None),  # a comma not followed by three digits can only be a decimal mark
    ("3 µm", 3.0, "micrometer"), ("2.5e-3", 2.5e-3, None), (".5", 0.5, None),
])
def test_point_convention(text: str, value: float, unit: str | None) -> None:
    v, u, problem = one(text)
    assert problem is None
    assert v == pytest.approx(value)
    assert u == unit


@pytest.mark.parametrize(("text", "value"), [
    ("12,02", 12.02), ("1,250", 1.25), ("1.250,5", 1250.5), ("−0,01", -0.01), ("20,000", 20.0),
])
def test_comma_convention(text: str, value: float) -> None:
    v, _, problem = one(text, decimal=",")
    assert problem is None
    assert v == pytest.approx(value)


def test_grouping_is_ambiguous_under_point_convention() -> None:
    _, _, problem = one("1,250")
    assert problem is not None
    assert problem.expected == "a number without comma grouping"
    assert problem.hint == ("ambiguous: could be 1250 or 1.25; set decimal and thousands in the "
                            "layout file")
    v, _, problem = one("1,250", thousands=",")
    assert problem is None and v == 1250.0


def test_point_grouping_is_ambiguous_under_comma_convention() -> None:
    _, _, problem = one("1.250", decimal=",")
    assert problem is not None and problem.expected == "a number without point grouping"
    v, _, _ = one("1.250", decimal=",", thousands=".")
    assert v == 1250.0


@pytest.mark.parametrize(("text", "value", "unit"), [
    ("68 °F", 68.0, "degF"), ("68F", 68.0, "degF"), ("20 C", 20.0, "degC"),
    ("293.15 K", 293.15, "kelvin"), ("20°C", 20.0, "degC"),
])
def test_temperatures_with_units(text: str, value: float, unit: str) -> None:
    v, u, problem = one(text, kind="temperature")
    assert problem is None and v == pytest.approx(value) and u == unit


def test_several_values_in_one_cell() -> None:
    p = parse_numbers(np.array(["12.01; 12.02; 12.01", "12.01 12.03", 12.0], dtype=object),
                      kind="length", multi=True)
    assert p.counts.tolist() == [3, 2, 1]
    assert p.values[0].tolist() == [12.01, 12.02, 12.01]
    assert p.values[1, :2].tolist() == [12.01, 12.03]
    single = parse_numbers(np.array(["12.01; 12.02"], dtype=object), kind="length")
    assert single.problems[0].expected == "a single number"


@pytest.mark.parametrize(("cell", "expected", "hint"), [
    ("#N/A", "a number", "the cell holds the spreadsheet error #N/A"),
    (CellMarker("error", "#VALUE!"), "a number", "the cell holds the spreadsheet error #VALUE!"),
    (CellMarker("formula", "B6*3"), "a number",
     "formula without a saved result; open and save the file in the spreadsheet program so it "
     "computes the value"),
    ("twenty", "a number", ""),
    ("12 furlong", "a number with a length unit (mm, µm, in, thou)", ""),
    ("±0.002", "a single value, not a ± range", ""),
    (True, "a number", ""),
    (dt.datetime(2026, 1, 12), "a number",
     "the cell is formatted as a date or time; format it as a number"),
    ("12 mm; 13 in", "values in one unit", ""),
    ("inf", "a number", ""),
])
def test_problems(cell: object, expected: str, hint: str) -> None:
    p = parse_numbers(np.array([cell], dtype=object), kind="length", multi=True)
    assert 0 in p.problems
    assert (p.problems[0].expected, p.problems[0].hint) == (expected, hint)
    assert np.isnan(p.first[0])


def test_blanks_are_nan_without_problem() -> None:
    p = parse_numbers(np.array(["", None, "  ", "-", "n/a"], dtype=object), kind="length")
    assert not p.problems
    assert np.isnan(p.first).all()


def test_each_distinct_text_parsed_once() -> None:
    # 10^5 cells of three spellings: the column is parsed through three regex calls
    cells = np.array(["12,5 mm", "1,3 in", "x"] * 33_334, dtype=object)
    p = parse_numbers(cells, kind="length", decimal=",")
    assert p.first[0] == 12.5 and p.units[1] == "inch"
    assert len(p.problems) == 33_334


def test_dates() -> None:
    cells = np.array([dt.datetime(2026, 1, 5, 9, 30), "2026-01-05", "05.01.2026 10:30",
                      "13/1/2026", "1/5/2026", 46027.5, "", "soon"], dtype=object)
    out, problems = parse_dates(cells)
    assert str(out[0]) == "2026-01-05T09:30:00"
    assert str(out[1]) == "2026-01-05T00:00:00"
    assert str(out[2]) == "2026-01-05T10:30:00"
    assert str(out[3]) == "2026-01-13T00:00:00"
    # Excel 1900 date system: serial 46027 = 2026-01-05 (hand-computed from 1899-12-30)
    assert str(out[5]) == "2026-01-05T12:00:00"
    assert np.isnat(out[6])
    assert problems[4].hint == ("day and month order is ambiguous; write 2026-01-05 or set "
                                "date_order in the layout file")
    assert problems[7].expected == "a date such as 2026-01-05 or 2026-01-05 14:30"
    out, problems = parse_dates(np.array(["1/5/2026"], dtype=object), date_order="mdy")
    assert str(out[0]) == "2026-01-05T00:00:00" and not problems


def test_texts() -> None:
    out, problems = parse_texts(np.array([" P-1 ", 7.0, None, CellMarker("error", "#REF!")],
                                         dtype=object))
    assert out.tolist() == ["P-1", "7", "", ""]
    assert problems[3].hint == "the cell holds the spreadsheet error #REF!"


@given(st.lists(st.one_of(st.floats(allow_nan=False, allow_infinity=False), st.text(max_size=12),
                          st.integers(-10**6, 10**6), st.none(), st.booleans()), max_size=40))
def test_every_cell_gives_a_value_a_blank_or_a_problem(cells: list) -> None:
    # rows in equals rows out; no exception escapes, whatever the cells hold
    arr = np.empty(len(cells), dtype=object)
    arr[:] = cells
    p = parse_numbers(arr, kind="length", multi=True)
    assert len(p.first) == len(cells)
    blank = is_blank(arr)
    for i in range(len(cells)):
        if i in p.problems:  # a problem: no value
            assert p.counts[i] == 0 and np.isnan(p.first[i])
        elif p.counts[i] > 0:  # a value: finite
            assert np.isfinite(p.values[i, : p.counts[i]]).all()
        else:  # neither: the cell was blank
            assert blank[i]
