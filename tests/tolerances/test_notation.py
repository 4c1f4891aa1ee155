"""Every accepted notation parses to the expected limits; malformed ones give exact messages.

The notations themselves are drawing practice (common practice, no source); the ISO 286 values
in the fit-code cases come from ../shared/reference/published-checks.md §5 [S2], cited as [PC5].
"""

from __future__ import annotations

import math

import pytest

from qc.errors import ToleranceError
from qc.tolerances import ACCEPTED, from_deviations, from_limits, parse_tolerance

NAN = math.nan


def limits(text: str, **kw: object) -> tuple[float, float]:
    tol = parse_tolerance(text, **kw)
    return tol.lower_limit, tol.upper_limit


def same(got: tuple[float, float], want: tuple[float, float]) -> bool:
    return all(
        (math.isnan(g) and math.isnan(w)) or math.isclose(g, w, rel_tol=0, abs_tol=1e-12)
        for g, w in zip(got, want, strict=True)
    )


# (text, keyword arguments, expected lower and upper limit, expected kind)
CASES = [
    ("±0.05", {"nominal": 12}, (11.95, 12.05), "symmetric"),
    ("+/-0.05", {"nominal": 12}, (11.95, 12.05), "symmetric"),
    ("± 0.05", {"nominal": 12}, (11.95, 12.05), "symmetric"),
    ("+0.02/-0.01", {"nominal": 10}, (9.99, 10.02), "deviations"),
    ("0/-0.05", {"nominal": 10}, (9.95, 10.0), "deviations"),
    ("+0.02 -0.01", {"nominal": 10}, (9.99, 10.02), "deviations"),
    ("-0.01/+0.02", {"nominal": 10}, (9.99, 10.02), "deviations"),
    ("0 -0.05", {"nominal": 10}, (9.95, 10.0), "deviations"),
    ("\u22120.01/+0.02", {"nominal": 10}, (9.99, 10.02), "deviations"),  # Unicode minus
    ("±0,05", {"nominal": 12, "decimal": ","}, (11.95, 12.05), "symmetric"),
    ("+0,02/-0,01", {"nominal": 10, "decimal": ","}, (9.99, 10.02), "deviations"),
    ("12,00–12,05", {"decimal": ","}, (12.0, 12.05), "limits"),
    ("12.00–12.05", {}, (12.0, 12.05), "limits"),
    ("12.00-12.05", {}, (12.0, 12.05), "limits"),
    ("12.00 - 12.05", {}, (12.0, 12.05), "limits"),
    ("12.00/12.05", {}, (12.0, 12.05), "limits"),
    ("12.00 … 12.05", {}, (12.0, 12.05), "limits"),
    ("12.00...12.05", {}, (12.0, 12.05), "limits"),
    ("12.05–12.00", {}, (12.0, 12.05), "limits"),
    ("-0.05–0.05", {}, (-0.05, 0.05), "limits"),
    ("12.05 max", {}, (NAN, 12.05), "max"),
    ("MAX 12.05", {}, (NAN, 12.05), "max"),
    ("max. 12.05", {}, (NAN, 12.05), "max"),
    ("MIN 11.98", {}, (11.98, NAN), "min"),
    ("11.98 min", {}, (11.98, NAN), "min"),
    ("≤ 12.05", {}, (NAN, 12.05), "max"),
    ("<= 12.05", {}, (NAN, 12.05), "max"),
    ("≥ 11.98", {}, (11.98, NAN), "min"),
    (">= 11.98", {}, (11.98, NAN), "min"),
    ("max", {"nominal": 0.8}, (NAN, 0.8), "max"),
    ("MIN", {"nominal": 5}, (5, NAN), "min"),
    ("12 ±0.05", {}, (11.95, 12.05), "symmetric"),
    ("12 ±0.05", {"nominal": 12.0}, (11.95, 12.05), "symmetric"),
    ("Ø25 +0.02/0", {}, (25.0, 25.02), "deviations"),
    ("25 0/-0.05", {}, (24.95, 25.0), "deviations"),
    ("⌀25 +0.1 -0.2", {}, (24.8, 25.1), "deviations"),
    ("±5 µm", {"nominal": 3}, (2.995, 3.005), "symmetric"),
    ("+20/-10 um", {"nominal": 3}, (2.99, 3.02), "deviations"),
    ("12.00-12.05 mm", {"unit": "in"}, (12.0 / 25.4, 12.05 / 25.4), "limits"),
    ("1.000 ±.002", {"unit": "in"}, (0.998, 1.002), "symmetric"),
    ("12 mm max", {}, (NAN, 12.0), "max"),
    # ISO 286 fit codes, values [PC5]
    ("Ø25 H7", {}, (25.0, 25.021), "iso286"),
    ("25 H7", {}, (25.0, 25.021), "iso286"),
    ("25h6", {}, (24.987, 25.0), "iso286"),
    ("25M7", {}, (24.979, 25.0), "iso286"),  # M7 at 18–30 mm: 0/-21 µm (DME Table 6 [S2])
    ("25m6", {}, (25.008, 25.021), "iso286"),  # ei = +8 µm (Machine Drawing Table 15.2 [S2])
    ("H7", {"nominal": 25}, (25.0, 25.021), "iso286"),
    ("g6", {"nominal": 25}, (24.980, 24.993), "iso286"),
    ("Ø25 H7/g6", {"feature": "hole"}, (25.0, 25.021), "iso286"),
    ("Ø25 H7/g6", {"feature": "shaft"}, (24.980, 24.993), "iso286"),
    ("H7/k6", {"nominal": 25, "feature": "Shaft"}, (25.002, 25.015), "iso286"),
    ("js6", {"nominal": 25}, (25 - 0.0065, 25 + 0.0065), "iso286"),  # ±IT6/2, IT6 = 13 µm
    ("JS7", {"nominal": 25}, (25 - 0.0105, 25 + 0.0105), "iso286"),  # ±IT7/2, IT7 = 21 µm
    # 1 in = 25.4 mm lies in 18–30 mm: H7 = +21/0 µm [PC5]
    ("H7", {"nominal": 1.0, "unit": "in"}, (1.0, 1.0 + 0.021 / 25.4), "iso286"),
    ("ISO 2768-m", {"nominal": 25}, (24.8, 25.2), "iso2768"),  # ISO 2768-1 Table 1 [PC6]
    ("ISO 2768-mK", {"nominal": 25}, (24.8, 25.2), "iso2768"),
    ("2768 f", {"nominal": 25}, (24.9, 25.1), "iso2768"),
]


@pytest.mark.parametrize(("text", "kw", "want", "kind"), CASES)
def test_accepted_notations(text: str, kw: dict, want: tuple[float, float], kind: str) -> None:
    tol = parse_tolerance(text, **kw)
    assert same((tol.lower_limit, tol.upper_limit), want), (tol.lower_limit, tol.upper_limit)
    assert tol.kind == kind


def test_relative_notation_without_nominal_keeps_deviations() -> None:
    tol = parse_tolerance("+0.02/-0.01")
    assert tol.nominal is None and math.isnan(tol.lower_limit) and math.isnan(tol.upper_limit)
    assert (tol.lower_deviation, tol.upper_deviation) == (-0.01, 0.02)


def test_absolute_limits_without_nominal_have_no_deviations() -> None:
    tol = parse_tolerance("12.00-12.05")
    assert tol.nominal is None and tol.lower_deviation is None and tol.upper_deviation is None


def test_limits_with_nominal_give_deviations() -> None:
    tol = parse_tolerance("12.00-12.05", nominal=12.0)
    assert (tol.lower_deviation, tol.upper_deviation) == pytest.approx((0.0, 0.05))


def test_fit_code_record() -> None:
    tol = parse_tolerance("Ø25 H7")
    assert tol.code == "H7" and tol.nominal == 25.0
    assert (tol.lower_deviation, tol.upper_deviation) == pytest.approx((0.0, 0.021))  # [PC5]
    assert tol.description == "Ø25 H7: +0.021/0 mm (ISO 286-1)"


@pytest.mark.parametrize(
    ("text", "kw", "description"),
    [
        ("±0.05", {"nominal": 12}, "12 ±0.05 mm"),
        ("-0.01/+0.02", {}, "+0.02/-0.01 mm"),
        ("12.00-12.05", {}, "12–12.05 mm"),
        ("12.05 max", {}, "≤ 12.05 mm"),
        (">= 11.98", {}, "≥ 11.98 mm"),
        ("Ø25 H7/g6", {"feature": "shaft"}, "Ø25 H7/g6: -0.007/-0.02 mm (g6, ISO 286-1)"),
        ("js6", {"nominal": 25}, "25 js6: ±0.0065 mm (ISO 286-1)"),
        ("ISO 2768-m", {"nominal": 25}, "25 ISO 2768-m: ±0.2 mm (ISO 2768-1)"),
    ],
)
def test_descriptions(text: str, kw: dict, description: str) -> None:
    assert parse_tolerance(text, **kw).description == description


MALFORMED = [
    ("", {}, "the text is empty"),
    ("abc", {}, "unexpected word 'abc'"),
    ("12 #", {}, "unexpected character '#'"),
    ("±", {}, "± must be followed by the value"),
    ("+0.02", {}, "only one deviation; write both, e.g. +0.02/0"),
    ("12", {}, "a number alone is not a tolerance"),
    ("+0.02/0.01", {}, "the deviation 0.01 has no sign; write +0.01 or -0.01"),
    ("±-0.05", {}, "write ± and the value without another sign"),
    ("0.05 0.02", {}, "two numbers without signs; write deviations with their signs "
                      "(+0.02/-0.01) or limits with a dash (12.00-12.05)"),
    ("+0.1-0.05", {}, "signs around a hyphen are ambiguous; write deviations with a slash "
                      "(+0.1/-0.05) or limits with '–' or '...'"),
    ("12,05 max", {}, "a comma inside a number; if the sheet writes decimal commas, set the "
                      "decimal convention to comma"),
    ("H7", {}, "H7 needs the nominal size (in the text or the row)"),
    ("Ø25 g6/H7", {"feature": "hole"}, "a fit is written hole/shaft, e.g. H7/g6 "
                                        "(capital letter first)"),
    ("max", {}, "a lone 'max' needs the row's nominal size"),
    ("12 max 3", {}, "this arrangement is not a known notation"),
    ("Ø", {}, "Ø must be followed by the nominal size"),
    ("mm", {}, "the unit 'mm' must follow a number"),
    ("ISO 2768-m", {}, "a general tolerance class needs the row's nominal size"),
    ("ISO 2768-x", {"nominal": 4}, "unknown ISO 2768-1 class; write ISO 2768-f, -m, -c or -v"),
    ("25 12.00-12.05", {}, "this arrangement is not a known notation"),
]


@pytest.mark.parametrize(("text", "kw", "reason"), MALFORMED)
def test_malformed_messages(text: str, kw: dict, reason: str) -> None:
    with pytest.raises(ToleranceError) as info:
        parse_tolerance(text, **kw)
    assert str(info.value) == f"cannot read tolerance {text!r}: {reason}; {ACCEPTED}"


def test_accepted_list_text() -> None:
    assert ACCEPTED == (
        "accepted: ±0.05, +0.02/-0.01, 0/-0.05, 12.00-12.05, 12.05 max, MIN 11.98, ≤ 12.05, "
        "12 ±0.05, Ø25 H7, 25h6, H7/g6, ISO 2768-m (see docs/tolerances.md)"
    )


def test_fit_needs_the_feature() -> None:
    with pytest.raises(ToleranceError) as info:
        parse_tolerance("Ø25 H7/g6")
    assert str(info.value) == (
        "'Ø25 H7/g6' is a fit of a hole and a shaft; say whether this row is the 'hole' or the "
        "'shaft'"
    )


def test_nominal_in_text_must_match_the_row() -> None:
    with pytest.raises(ToleranceError) as info:
        parse_tolerance("12.00 ±0.05", nominal=12.5)
    assert str(info.value) == (
        "the tolerance '12.00 ±0.05' names the nominal 12, but the row's nominal is 12.5; "
        "correct one of them"
    )


def test_long_text_is_cut_in_the_message() -> None:
    with pytest.raises(ToleranceError) as info:
        parse_tolerance("x" * 300)
    assert str(info.value) == (
        f"cannot read tolerance '{'x' * 57}...': longer than 200 characters; {ACCEPTED}"
    )


def test_non_text_and_bad_options() -> None:
    with pytest.raises(ToleranceError) as info:
        parse_tolerance(0.05)  # type: ignore[arg-type]
    assert str(info.value) == f"a tolerance must be text, got 0.05; {ACCEPTED}"
    with pytest.raises(ToleranceError) as info:
        parse_tolerance("±0.05", decimal=";")
    assert str(info.value) == "the decimal convention must be '.' or ',', got ';'"
    with pytest.raises(ToleranceError) as info:
        parse_tolerance("±0.05", unit="furlong")
    assert str(info.value) == "unknown length unit 'furlong'; use 'mm', 'in' or 'µm'"


def test_from_deviations_and_limits() -> None:
    tol = from_deviations(10.0, -0.01, 0.02)
    assert (tol.lower_limit, tol.upper_limit) == pytest.approx((9.99, 10.02))
    assert tol.description == "10 +0.02/-0.01 mm"
    tol = from_limits(11.98, 12.02, nominal=12.0)
    assert (tol.lower_deviation, tol.upper_deviation) == pytest.approx((-0.02, 0.02))
    with pytest.raises(ToleranceError) as info:
        from_deviations(10.0, 0.02, -0.01)
    assert str(info.value) == (
        "lower deviation +0.02 is above upper deviation -0.01; swap the two columns"
    )
    with pytest.raises(ToleranceError) as info:
        from_limits(12.05, 12.0)
    assert str(info.value) == "lower limit 12.05 is above upper limit 12; swap the two columns"
    with pytest.raises(ToleranceError) as info:
        from_limits(float("nan"), 12.0)
    assert str(info.value) == "the lower limit must be a finite number, got nan"


def test_code_must_fit_the_marked_feature() -> None:
    with pytest.raises(ToleranceError) as info:
        parse_tolerance("g6", nominal=25, feature="hole")
    assert str(info.value) == (
        "g6 is a shaft (small letter) tolerance class, but the row is marked as a hole"
    )
    assert parse_tolerance("g6", nominal=25, feature="shaft").code == "g6"


def test_non_ascii_digits_are_not_numbers() -> None:
    # found by a longer fuzz run: a Rumi numeral passes str.isdigit but is no decimal digit
    with pytest.raises(ToleranceError) as info:
        parse_tolerance("\U00010e60")
    assert str(info.value) == f"cannot read tolerance '\U00010e60': unexpected character " \
                              f"'\U00010e60'; {ACCEPTED}"
