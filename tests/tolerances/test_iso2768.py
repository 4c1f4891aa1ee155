"""ISO 2768-1 general tolerances against the standard's tables.

[PC6] ../shared/reference/published-checks.md §6 (ISO 2768-1:1989 Table 1, classes f and m) [S2].
Table 3 (angles) as reproduced on camcut-group.com, "General tolerances for angular dimensions",
and a second web reproduction [S2]. Classes c and v of Tables 1 and 2 rest on memory of
ISO 2768-1:1989 (two Table 1 cells confirmed by an open tabulation); those checks say so.
"""

from __future__ import annotations

import pytest

from qc.errors import ToleranceError, UnknownNameError
from qc.tolerances import from_general_class
from qc.tolerances.iso2768 import general_tolerance

# (size inside each step, f, m) from [PC6]; None where the class gives no value
PC6 = [(0.5, 0.05, 0.1), (3, 0.05, 0.1), (5, 0.05, 0.1), (6, 0.05, 0.1), (10, 0.1, 0.2),
       (30, 0.1, 0.2), (50, 0.15, 0.3), (200, 0.2, 0.5), (400, 0.2, 0.5), (700, 0.3, 0.8),
       (1500, 0.5, 1.2), (3000, None, 2)]


@pytest.mark.parametrize(("size", "f", "m"), PC6)
def test_linear_f_and_m(size: float, f: float | None, m: float) -> None:
    assert general_tolerance(size, "m") == pytest.approx(m)  # [PC6]
    if f is None:
        with pytest.raises(ToleranceError):
            general_tolerance(size, "f")
    else:
        assert general_tolerance(size, "f") == pytest.approx(f)  # [PC6]


@pytest.mark.parametrize(
    ("size", "c", "v"),
    # ISO 2768-1:1989 Table 1, from memory; an open tabulation confirms c at 3 mm = 0.2 and
    # v at 200 mm = 2.5
    [(2, 0.2, None), (5, 0.3, 0.5), (20, 0.5, 1), (100, 0.8, 1.5), (200, 1.2, 2.5),
     (800, 2, 4), (1500, 3, 6), (3000, 4, 8)],
)
def test_linear_c_and_v(size: float, c: float, v: float | None) -> None:
    assert general_tolerance(size, "c") == pytest.approx(c)
    if v is None:
        with pytest.raises(ToleranceError) as info:
            general_tolerance(size, "v")
        assert str(info.value) == (
            "ISO 2768-1 class v (very coarse) gives no tolerance for linear sizes of 2 mm"
        )
    else:
        assert general_tolerance(size, "v") == pytest.approx(v)


@pytest.mark.parametrize(
    ("leg", "fm", "c", "v"),
    # ISO 2768-1:1989 Table 3 [S2: camcut-group.com], degrees: ±1°, ±0°30', ±0°20', ±0°10', ±0°5'
    # for f and m; c ±1°30' … ±0°10'; v ±3° … ±0°20'
    [(10, 1, 1.5, 3), (10.5, 0.5, 1, 2), (50, 0.5, 1, 2), (100, 20 / 60, 0.5, 1),
     (400, 10 / 60, 15 / 60, 0.5), (500, 5 / 60, 10 / 60, 20 / 60)],
)
def test_angular_by_shorter_leg(leg: float, fm: float, c: float, v: float) -> None:
    for cls, want in (("f", fm), ("m", fm), ("c", c), ("v", v)):
        assert general_tolerance(0, cls, angle=True, shorter_leg_mm=leg) == pytest.approx(want)


def test_broken_edges() -> None:
    # ISO 2768-1:1989 Table 2: f/m ±0.2, ±0.5, ±1 [S2: a web reproduction for class m];
    # c/v ±0.4, ±1, ±2 from memory
    got = [general_tolerance(x, k, broken_edge=True) for k in "mc" for x in (1, 4, 10)]
    assert got == pytest.approx([0.2, 0.5, 1, 0.4, 1, 2])


def test_below_half_a_millimetre_is_an_error() -> None:
    with pytest.raises(ToleranceError) as info:
        general_tolerance(0.4, "m")
    assert str(info.value) == (
        "ISO 2768-1 gives no general tolerance below 0.5 mm (nominal 0.4 mm); "
        "the drawing must state the tolerance"
    )


def test_unknown_class_suggests() -> None:
    with pytest.raises(UnknownNameError) as info:
        general_tolerance(10, "mm")
    assert str(info.value) == "unknown ISO 2768-1 tolerance class 'mm'; did you mean 'm'?"


def test_angle_needs_the_leg() -> None:
    with pytest.raises(ToleranceError) as info:
        general_tolerance(30, "m", angle=True)
    assert str(info.value) == (
        "an ISO 2768-1 angle tolerance needs the length of the shorter leg in mm, above 0"
    )


def test_from_general_class_in_inches() -> None:
    # 1 in = 25.4 mm lies in 6–30 mm: class m ±0.2 mm [PC6] = ±0.2/25.4 in
    tol = from_general_class(1.0, "m", unit="in")
    assert (tol.lower_limit, tol.upper_limit) == pytest.approx((1 - 0.2 / 25.4, 1 + 0.2 / 25.4))
    assert tol.kind == "iso2768" and tol.code == "m"


def test_from_general_class_angle() -> None:
    # ISO 2768-1 Table 3 [S2: camcut-group.com]: class m, shorter leg 30 mm: ±0°30'
    tol = from_general_class(90.0, "m", angle=True, shorter_leg=30.0)
    assert (tol.lower_limit, tol.upper_limit) == pytest.approx((89.5, 90.5))
    assert tol.description == "90 ISO 2768-m: ±0.5° (ISO 2768-1)"
