"""ISO 286-1 grades and limit deviations against published table values.

Sources beside each check:
- [PC5] ../shared/reference/published-checks.md §5: ISO 286-1 IT table and worked limits as
  reproduced in handbooks [S2].
- [DME6] DME technical reference "Tables for Determining Metric Tolerances", Table 6, tolerances
  for inside dimensions (holes), reproducing ISO 286-2 [S2].
- [MD15.3] Narayana, Kannaiah, Reddy, Machine Drawing, Table 15.3 (holes A–N) and its footnote on
  M6 [S2].
"""

from __future__ import annotations

import pytest

from qc.errors import ToleranceError
from qc.tolerances.iso286 import fit_limits, it_grade

# [PC5] table of IT5–IT11 in µm, one row per step, keyed by a size inside the step.
PC5_GRADES = {
    2: (4, 6, 10, 14, 25, 40, 60),
    5: (5, 8, 12, 18, 30, 48, 75),
    8: (6, 9, 15, 22, 36, 58, 90),
    15: (8, 11, 18, 27, 43, 70, 110),
    25: (9, 13, 21, 33, 52, 84, 130),
    40: (11, 16, 25, 39, 62, 100, 160),
    65: (13, 19, 30, 46, 74, 120, 190),
    100: (15, 22, 35, 54, 87, 140, 220),
    150: (18, 25, 40, 63, 100, 160, 250),
    200: (20, 29, 46, 72, 115, 185, 290),
    300: (23, 32, 52, 81, 130, 210, 320),
    350: (25, 36, 57, 89, 140, 230, 360),  # IT10/IT11 here are [M] in PC5: from memory
    450: (27, 40, 63, 97, 155, 250, 400),  # IT10/IT11 here are [M] in PC5: from memory
}


@pytest.mark.parametrize("size", sorted(PC5_GRADES))
def test_it_grades_match_published_table(size: float) -> None:
    got = tuple(round(it_grade(size, g) * 1000, 3) for g in range(5, 12))
    assert got == PC5_GRADES[size]  # [PC5] ISO 286-1 Table 1


@pytest.mark.parametrize(
    ("size", "it7_um"),
    [(18, 18), (18.01, 21), (30, 21), (30.01, 25), (3, 10), (3.001, 12), (500, 63)],
)
def test_size_steps_are_over_a_up_to_and_including_b(size: float, it7_um: float) -> None:
    # [PC5] "Ø18 is in 10–18, Ø30 in 18–30"; IT7 values from the same table
    assert it_grade(size, "IT7") * 1000 == pytest.approx(it7_um)


def test_it7_up_to_3mm_is_the_table_value_not_the_formula() -> None:
    # [PC5] "IT7 up to 3 mm: formula 8.7, table 10"
    assert it_grade(2.0, 7) == pytest.approx(0.010)


@pytest.mark.parametrize(
    ("size", "code", "upper_um", "lower_um"),
    [
        (25, "H7", 21, 0), (25, "g6", -7, -20), (25, "h6", 0, -13), (25, "k6", 15, 2),
        (25, "p6", 35, 22), (25, "f7", -20, -41), (50, "H8", 39, 0), (10, "H7", 15, 0),
        (100, "H7", 35, 0), (6, "H11", 75, 0), (18, "H7", 18, 0), (30, "H7", 21, 0),
    ],
)
def test_worked_limits(size: float, code: str, upper_um: float, lower_um: float) -> None:
    # [PC5] worked limits from handbook tables reproducing ISO 286-2
    lo, hi = fit_limits(size, code)
    assert (round(hi * 1000, 4), round(lo * 1000, 4)) == (upper_um, lower_um)


# [DME6] hole limit deviations, µm (upper, lower), for sizes inside the named steps.
DME6 = {
    2: "J6 +2 -4 J7 +4 -6 J8 +6 -8 K6 0 -6 K7 0 -10 K8 0 -14 M6 -2 -8 M7 -2 -12 M8 -2 -16 "
       "N6 -4 -10 N7 -4 -14 N8 -4 -18 R7 -10 -20",
    5: "J6 +5 -3 J7 +6 -6 J8 +10 -8 K6 +2 -6 K7 +3 -9 K8 +5 -13 M6 -1 -9 M7 0 -12 M8 +2 -16 "
       "N6 -5 -13 N7 -4 -16 N8 -2 -20 R7 -11 -23",
    8: "J6 +5 -4 J7 +8 -7 J8 +12 -10 K6 +2 -7 K7 +5 -10 K8 +6 -16 M6 -3 -12 M7 0 -15 M8 +1 -21 "
       "N6 -7 -16 N7 -4 -19 N8 -3 -25 R7 -13 -28",
    15: "J6 +6 -5 J7 +10 -8 J8 +15 -12 K6 +2 -9 K7 +6 -12 K8 +8 -19 M6 -4 -15 M7 0 -18 "
        "M8 +2 -25 N6 -9 -20 N7 -5 -23 N8 -3 -30 R7 -16 -34",
    25: "J6 +8 -5 J7 +12 -9 J8 +20 -13 K6 +2 -11 K7 +6 -15 K8 +10 -23 M6 -4 -17 M7 0 -21 "
        "M8 +4 -29 N6 -11 -24 N7 -7 -28 N8 -3 -36 R7 -20 -41 JS6 +6.5 -6.5 JS7 +10.5 -10.5",
    40: "J7 +14 -11 K6 +3 -13 K7 +7 -18 K8 +12 -27 M6 -4 -20 M7 0 -25 M8 +5 -34 N7 -8 -33 "
        "R7 -25 -50",
    60: "J8 +28 -18 K7 +9 -21 M7 0 -30 M8 +5 -41 N6 -14 -33 N7 -9 -39 N8 -4 -50 R7 -30 -60",
    70: "R7 -32 -62",
    90: "J6 +16 -6 K6 +4 -18 K7 +10 -25 K8 +16 -38 M6 -6 -28 M7 0 -35 N7 -10 -45 R7 -38 -73",
    150: "J7 +26 -14 K7 +12 -28 M6 -8 -33 M8 +8 -55 N6 -20 -45 N7 -12 -52 N8 -4 -67 R7 -50 -90",
    200: "J6 +22 -7 K6 +5 -24 K7 +13 -33 K8 +22 -50 M7 0 -46 M8 +9 -63 N7 -14 -60 R7 -60 -106",
}
DME6_CASES = [
    (size, t[i], float(t[i + 1]), float(t[i + 2]))
    for size, text in DME6.items()
    for t in [text.split()]
    for i in range(0, len(t), 3)
]


@pytest.mark.parametrize(("size", "code", "upper_um", "lower_um"), DME6_CASES)
def test_hole_limits_incl_special_rule_delta(
    size: float, code: str, upper_um: float, lower_um: float
) -> None:
    # [DME6]; K, M, N up to IT8 and R7 use the Δ of ISO 286-1:2010 Table 3
    lo, hi = fit_limits(size, code)
    assert (round(hi * 1000, 4), round(lo * 1000, 4)) == (upper_um, lower_um)


def test_m6_special_case_250_to_315() -> None:
    # [MD15.3] footnote: "for the hole M6, ES = -9 from 250 to 315 (instead of -11)"
    assert fit_limits(300, "M6")[1] == pytest.approx(-0.009)
    assert fit_limits(250, "M6")[1] == pytest.approx(-0.017 + 0.009)  # 180–250: -17 + Δ6 = 9


def test_j_holes_from_the_hole_table() -> None:
    # [MD15.3] J6/J7/J8 upper deviations for 120–180 mm: +18, +26, +41
    assert [round(fit_limits(150, c)[1] * 1000) for c in ("J6", "J7", "J8")] == [18, 26, 41]


def test_js_is_exactly_half_it_also_for_odd_values() -> None:
    # [DME6] JS7 at 18–30 mm is ±10.5 µm (no rounding); js follows the same rule (ISO 286-1)
    assert fit_limits(25, "js7") == pytest.approx((-0.0105, 0.0105))
    assert fit_limits(25, "js6") == pytest.approx((-0.0065, 0.0065))


def test_hole_is_mirror_of_shaft_for_a_to_h() -> None:
    # ISO 286-1:2010, 5.3.2: EI = -es for A to H; F7 at 25 mm = +20/+41 (mirror of f7 in [PC5])
    assert fit_limits(25, "F7") == pytest.approx((0.020, 0.041))


@pytest.mark.parametrize(
    ("size", "code", "message"),
    [
        (3151, "H7", "nominal size 3151 mm is above 3150 mm, the largest size ISO 286-1 covers"),
        (0, "H7", "the nominal size must be above 0 mm, got 0"),
        (2, "t6", "ISO 286-1 gives no fundamental deviation t for 2 mm"),
        (12, "v6", "ISO 286-1 gives no fundamental deviation v for 12 mm"),
        (0.8, "a11", "shafts a are not used up to 1 mm (ISO 286-1 Table 2)"),
        (0.8, "B11", "holes B are not used up to 1 mm (ISO 286-1 Table 2)"),
        (25, "j9", "j9: ISO 286-1 gives j for grades 5 to 8 only; use js9"),
        (25, "J9", "J9: ISO 286-1 gives J for grades 6 to 8 up to 500 mm only; use JS9"),
        (25, "K9", "K9: ISO 286-1 gives K above IT8 for sizes up to 3 mm only"),
        (25, "H", "'H' is not an ISO 286 tolerance class; write a letter and a grade, "
                   "e.g. H7, g6, js6"),
        (25, "IT7", "'IT7': 'IT' is not an ISO 286 fundamental deviation; holes use A–ZC "
                    "(capitals), shafts a–zc (small letters)"),
        (25, "Q7", "'Q7': 'Q' is not an ISO 286 fundamental deviation; holes use A–ZC "
                   "(capitals), shafts a–zc (small letters)"),
        (600, "za7", "ISO 286-1 gives no fundamental deviation za for 600 mm"),
        (25, "P2", "P2: the special rule needs Δ, which ISO 286-1 gives for IT3 to IT8 only"),
    ],
)
def test_outside_the_tables_is_a_clear_error(size: float, code: str, message: str) -> None:
    with pytest.raises(ToleranceError) as info:
        fit_limits(size, code)
    assert str(info.value) == message


def test_it01_stops_at_500mm() -> None:
    # ISO 286-1:2010 Annex A: IT01 and IT0 are given up to 500 mm
    assert it_grade(450, "IT01") == pytest.approx(0.004)
    with pytest.raises(ToleranceError) as info:
        it_grade(600, "IT01")
    assert str(info.value) == "IT01 is not given for 600 mm (IT01 and IT0 stop at 500 mm)"


def test_large_sizes_up_to_3150() -> None:
    # DME technical reference Table 5 (fundamental deviations over 500 mm) [S2]: f at 500–630
    # is -76 µm; ISO 286-1 Table 1 IT7 at 2500–3150 mm is 210 µm (open tabulations [S2])
    assert fit_limits(600, "f7") == pytest.approx((-0.076 - 0.070, -0.076))
    assert it_grade(3150, 7) == pytest.approx(0.210)


# [MD15.2] Narayana, Kannaiah, Reddy, Machine Drawing, Table 15.2 (shafts m to zc, lower
# deviation ei in µm, all grades) [S2]: rows 14–18 mm and 140–160 mm.
MD152 = {
    15: {"m": 7, "n": 12, "p": 18, "r": 23, "s": 28, "u": 33, "v": 39, "x": 45, "z": 60,
         "za": 77, "zb": 108, "zc": 150},
    150: {"m": 15, "n": 27, "p": 43, "r": 65, "s": 100, "t": 134, "u": 190, "v": 228, "x": 280,
          "y": 340, "z": 415, "za": 535, "zb": 700, "zc": 900},
}


@pytest.mark.parametrize(
    ("size", "letter", "ei_um"), [(s, k, v) for s, d in MD152.items() for k, v in d.items()]
)
def test_shaft_lower_deviations_m_to_zc(size: float, letter: str, ei_um: float) -> None:
    lo, hi = fit_limits(size, f"{letter}7")
    assert round(lo * 1000, 4) == ei_um  # [MD15.2]
    assert round((hi - lo) * 1000, 4) == round(it_grade(size, 7) * 1000, 4)


def test_v_starts_above_14mm() -> None:
    # [MD15.2]: v is blank for 10–14 mm and +39 µm for 14–18 mm
    with pytest.raises(ToleranceError):
        fit_limits(14, "v6")
    assert fit_limits(14.01, "v6")[0] == pytest.approx(0.039)


# [MD15.2] Table 15.2 (shafts a to k, µm) [S2]: es of a–g and ei of j5/j6, j7 and k4–k7.
MD152_AK = {
    190: {"a": -660, "b": -340, "c": -240},
    210: {"a": -740, "b": -380, "c": -260, "d": -170, "e": -100, "f": -50, "g": -15},
    260: {"a": -920, "b": -480, "c": -300, "d": -190, "e": -110, "f": -56, "g": -17},
    330: {"a": -1200, "b": -600, "c": -360, "d": -210, "e": -125, "f": -62, "g": -18},
    420: {"a": -1500, "b": -760, "c": -440, "d": -230, "e": -135, "f": -68, "g": -20},
    480: {"a": -1650, "b": -840, "c": -480},
}


@pytest.mark.parametrize(
    ("size", "letter", "es_um"), [(s, k, v) for s, d in MD152_AK.items() for k, v in d.items()]
)
def test_shaft_upper_deviations_a_to_g(size: float, letter: str, es_um: float) -> None:
    assert round(fit_limits(size, f"{letter}9")[1] * 1000, 4) == es_um  # [MD15.2]


@pytest.mark.parametrize(
    ("size", "j6_ei", "j7_ei", "k6_ei"),
    [(210, -13, -21, 4), (260, -16, -26, 4), (330, -18, -28, 4), (420, -20, -32, 5)],
)
def test_shaft_j_and_k_lower_deviations(size: float, j6_ei: float, j7_ei: float,
                                        k6_ei: float) -> None:
    # [MD15.2]: j5/j6, j7 and k (grades 4 to 7) columns; k above IT7 is 0
    assert round(fit_limits(size, "j6")[0] * 1000, 4) == j6_ei
    assert round(fit_limits(size, "j7")[0] * 1000, 4) == j7_ei
    assert round(fit_limits(size, "k6")[0] * 1000, 4) == k6_ei
    assert fit_limits(size, "k8")[0] == 0
