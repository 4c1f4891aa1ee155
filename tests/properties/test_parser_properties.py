"""Fuzzing the value, unit and tolerance parsers: junk never crashes, every failure is explained.

References: Python's float ``repr`` is the shortest text that round-trips (IEEE 754 binary64;
Python documentation, "Floating Point Arithmetic: Issues and Limitations"); unit factors are
compared with pint's own definitions (a general-purpose unit library); 1 in = 25.4 mm exactly
(NIST SP 811, B.9); t_C = (t_F − 32)·5/9 (NIST SP 811, 4.2.1.1); ISO 286-1 IT7 over 18 up to
30 mm is 21 µm and H7 has lower deviation 0 (ISO 286-1 table, reproduced in
shared/reference/published-checks.md section 5 [S2]).
"""

from __future__ import annotations

import datetime as dt
import math

import numpy as np
from hypothesis import given, settings
from hypothesis import strategies as st

from qc.errors import QcError, ToleranceError
from qc.io.values import CellMarker, parse_dates, parse_numbers, parse_texts
from qc.tolerances import parse_tolerance
from qc.units import (
    LENGTH_SPELLINGS,
    Q_,
    canonical_unit,
    length_factor,
    temperature_to_c,
)
from tests.properties.strategies import junk_text, text_cells

FUZZ = settings(derandomize=True, max_examples=150, deadline=None)
FEW = settings(derandomize=True, max_examples=60, deadline=None)

cells = st.one_of(
    st.none(), st.booleans(), st.integers(-10**20, 10**20),
    st.floats(allow_nan=True, allow_infinity=True), text_cells, junk_text,
    st.datetimes(min_value=dt.datetime(1900, 1, 2), max_value=dt.datetime(2200, 1, 1)),
    st.builds(CellMarker, st.sampled_from(["error", "formula"]), st.sampled_from(
        ["#N/A", "#DIV/0!", "A1*2", ""])),
)
kinds = st.sampled_from([None, "length", "temperature", "cte"])


@FUZZ
@given(st.lists(cells, max_size=12), kinds, st.sampled_from([".", ","]), st.booleans())
def test_parse_numbers_explains_every_failure(values: list[object], kind, decimal, multi) -> None:
    arr = np.empty(len(values), dtype=object)
    arr[:] = values
    p = parse_numbers(arr, kind=kind, decimal=decimal, multi=multi)
    assert p.values.shape[0] == len(values)
    for i, v in enumerate(values):
        if i in p.problems:
            prob = p.problems[i]
            assert prob.expected.startswith(("a ", "an ", "one ")), prob
            assert np.all(np.isnan(p.values[i]))
        else:
            assert not np.any(np.isinf(p.values[i]))  # infinities are always problems
            if isinstance(v, str) and v.strip() and not any(ch.isdigit() for ch in v):
                # digit-free text is a number in no convention: only blank words pass silently
                assert np.all(np.isnan(p.values[i]))


@FUZZ
@given(st.lists(junk_text, min_size=1, max_size=8), kinds)
def test_junk_is_always_a_problem(values: list[str], kind) -> None:
    arr = np.array(values, dtype=object)
    p = parse_numbers(arr, kind=kind)
    assert sorted(p.problems) == list(range(len(values)))
    assert [p.problems[i].value for i in range(len(values))] == values


@FUZZ
@given(st.floats(-1e12, 1e12, allow_nan=False), st.sampled_from([".", ","]))
def test_number_text_round_trips(x: float, decimal: str) -> None:
    text = repr(x) if decimal == "." else repr(x).replace(".", ",")
    p = parse_numbers(np.array([text], dtype=object), kind=None, decimal=decimal)
    if p.problems:  # only an exponent written with a decimal comma may be refused
        assert decimal == "," and "e" in text.lower(), (text, p.problems)
        assert p.problems[0].expected.startswith("a "), p.problems
    else:
        assert p.first[0] == x


@FEW
@given(st.floats(0.001, 1e4, allow_nan=False), st.sampled_from(sorted(LENGTH_SPELLINGS)))
def test_length_with_unit_matches_pint(x: float, spelling: str) -> None:
    p = parse_numbers(np.array([f"{x!r} {spelling}"], dtype=object), kind="length")
    unit = LENGTH_SPELLINGS[spelling]
    if p.problems:  # some spellings (a bare 'in' after a number is fine; '"' too) must be read
        raise AssertionError((spelling, p.problems))
    assert p.units[0] == unit
    want = Q_(x, unit).to("millimeter").magnitude  # pint as the outside reference
    assert math.isclose(p.first[0] * length_factor(unit), want, rel_tol=1e-12)


def test_inch_is_exactly_25_4_mm() -> None:
    assert length_factor("inch") == 25.4  # NIST SP 811, B.9
    assert canonical_unit("in", "length") == "inch"


@FEW
@given(st.floats(-100.0, 300.0, allow_nan=False))
def test_fahrenheit_matches_pint(t: float) -> None:
    got = float(temperature_to_c(np.array([t]), "degF")[0])
    want = Q_(t, "degF").to("degC").magnitude
    assert math.isclose(got, want, rel_tol=1e-12, abs_tol=1e-9)
    assert math.isclose(got, (t - 32) * 5 / 9, rel_tol=1e-12, abs_tol=1e-9)  # NIST SP 811


@FUZZ
@given(st.text(max_size=20), st.sampled_from(["length", "temperature", "cte"]))
def test_canonical_unit_never_raises(text: str, kind) -> None:
    u = canonical_unit(text, kind)
    assert u is None or Q_(1.0, u).magnitude == 1.0  # a name pint knows


@FUZZ
@given(st.lists(cells, max_size=10))
def test_dates_and_texts_never_raise(values: list[object]) -> None:
    arr = np.empty(len(values), dtype=object)
    arr[:] = values
    out, problems = parse_dates(arr)
    assert len(out) == len(values)
    for i, prob in problems.items():
        assert prob.expected.startswith("a date"), prob
        assert np.isnat(out[i])
    texts, tproblems = parse_texts(arr)
    assert len(texts) == len(values)
    for i in tproblems:
        assert isinstance(values[i], CellMarker)


@FUZZ
@given(st.one_of(text_cells, junk_text, st.text(max_size=40)),
       st.one_of(st.none(), st.floats(0.5, 3000.0)), st.sampled_from([None, "hole", "shaft"]),
       st.sampled_from([".", ","]))
def test_parse_tolerance_fails_only_with_a_qc_error(text: str, nominal, feature, decimal) -> None:
    try:
        tol = parse_tolerance(text, nominal=nominal, feature=feature, decimal=decimal)
    except ToleranceError as exc:
        msg = str(exc)
        assert "tolerance" in msg.lower() or "nominal" in msg.lower(), msg
        return
    except QcError as exc:  # pragma: no cover - any other qc error must still be a message
        assert str(exc)
        return
    lo, hi = tol.lower_limit, tol.upper_limit
    assert not (math.isfinite(lo) and math.isfinite(hi) and lo > hi), tol


@FEW
@given(st.floats(1.0, 500.0).map(lambda x: round(x, 3)),
       st.floats(0.001, 2.0).map(lambda x: round(x, 3)))
def test_symmetric_tolerance_limits(nominal: float, t: float) -> None:
    tol = parse_tolerance(f"±{t}", nominal=nominal)
    assert math.isclose(tol.lower_limit, nominal - t, abs_tol=1e-9)
    assert math.isclose(tol.upper_limit, nominal + t, abs_tol=1e-9)


@FEW
@given(st.floats(18.001, 30.0))
def test_h7_width_is_it7_over_18_to_30(nominal: float) -> None:
    # ISO 286-1: IT7 over 18 up to 30 mm = 21 µm; H: lower deviation 0 (published-checks §5)
    tol = parse_tolerance("H7", nominal=nominal)
    assert math.isclose(tol.lower_limit, nominal, abs_tol=1e-12)
    assert math.isclose(tol.upper_limit - tol.lower_limit, 0.021, abs_tol=1e-9)
