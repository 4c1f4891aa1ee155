"""ISO 286-1:2010 limits of tolerance classes such as H7, g6, js6 or K7, from the bundled tables.

All sizes and results are in millimetres; the tables are in micrometres. Nothing here uses the
tolerance-factor formula: every value comes from the transcribed tables (``qc/data/iso286_*.csv``).

Conventions
- Size steps are "over a, up to and including b": 18 mm is in 10–18, 18.01 mm in 18–30.
- js / JS: exactly ±IT/2, also for odd IT values (js7 at 25 mm is ±10.5 µm); the optional
  rounding of older editions for js7–js11 is not applied.
- Holes A–H: EI = −es of the same shaft letter; K–ZC: ES = −ei, plus Δ (Table 3) for K, M, N
  up to IT8 and P–ZC up to IT7 ("special rule", ISO 286-1:2010, 5.3.2). Above 500 mm Δ = 0.
"""

from __future__ import annotations

import math
import re

from qc.errors import ToleranceError
from qc.tolerances import tables

__all__ = ["HOLE_LETTERS", "SHAFT_LETTERS", "fit_limits", "it_grade", "split_code"]

SHAFT_LETTERS = ("a", "b", "c", "cd", "d", "e", "ef", "f", "fg", "g", "h", "js", "j", "k", "m",
                 "n", "p", "r", "s", "t", "u", "v", "x", "y", "z", "za", "zb", "zc")
HOLE_LETTERS = tuple(s.upper() for s in SHAFT_LETTERS)
GRADES = ("01", "0", *(str(n) for n in range(1, 19)))

_CODE = re.compile(r"(?P<letter>[A-Za-z]{1,2})(?P<grade>01|0|1[0-8]|[1-9])")
_MAX_MM = 3150.0


def split_code(code: str) -> tuple[str, str, bool]:
    """(letter, grade, is_hole) of a code like 'H7' or 'js6'; uppercase letters are holes."""
    m = _CODE.fullmatch(code.strip())
    if not m:
        raise ToleranceError(
            f"{code!r} is not an ISO 286 tolerance class; write a letter and a grade, "
            "e.g. H7, g6, js6"
        )
    letter, grade = m["letter"], m["grade"]
    if letter in HOLE_LETTERS:
        return letter, grade, True
    if letter in SHAFT_LETTERS:
        return letter, grade, False
    raise ToleranceError(
        f"{code!r}: {letter!r} is not an ISO 286 fundamental deviation; holes use A–ZC "
        "(capitals), shafts a–zc (small letters)"
    )


def _check_size(nominal_mm: float) -> float:
    try:
        size = float(nominal_mm)
    except (TypeError, ValueError):
        raise ToleranceError(f"the nominal size must be a number, got {nominal_mm!r}") from None
    if not (math.isfinite(size) and size > 0):
        raise ToleranceError(f"the nominal size must be above 0 mm, got {nominal_mm!r}")
    if size > _MAX_MM:
        raise ToleranceError(
            f"nominal size {size:g} mm is above 3150 mm, the largest size ISO 286-1 covers"
        )
    return size


def it_grade(nominal_mm: float, grade: int | str) -> float:
    """Standard tolerance ITn in mm for a nominal size in mm (ISO 286-1:2010 Table 1, Annex A)."""
    size = _check_size(nominal_mm)
    g = str(grade).strip().upper().removeprefix("IT")
    if g not in GRADES:
        raise ToleranceError(f"unknown tolerance grade {grade!r}; use IT01, IT0, IT1 … IT18")
    value = tables.grades().value(f"IT{g}", size)
    if math.isnan(value):
        raise ToleranceError(f"IT{g} is not given for {size:g} mm (IT01 and IT0 stop at 500 mm)")
    return value / 1000.0


def _cell(column: str, size: float, what: str) -> float:
    value = tables.shafts().value(column, size)
    if math.isnan(value):
        raise ToleranceError(f"ISO 286-1 gives no fundamental deviation {what} for {size:g} mm")
    return value


def _delta(grade: int, size: float, code: str) -> float:
    if size > 500.0:
        return 0.0
    if grade < 3:
        raise ToleranceError(
            f"{code}: the special rule needs Δ, which ISO 286-1 gives for IT3 to IT8 only"
        )
    return tables.holes().value(f"delta{grade}", size)


def _shaft_um(letter: str, g: str, size: float, it: float) -> tuple[float, float]:
    """(ei, es) in µm."""
    grade = -1 if g == "01" else int(g)
    if letter == "h":
        return -it, 0.0
    if letter == "js":
        return -it / 2, it / 2
    if letter in ("a", "b") and size <= 1.0:
        raise ToleranceError(f"shafts {letter} are not used up to 1 mm (ISO 286-1 Table 2)")
    if letter in ("a", "b", "c", "cd", "d", "e", "ef", "f", "fg", "g"):
        es = _cell(letter, size, letter)
        return es - it, es
    if letter == "j":
        column = {5: "j5", 6: "j6", 7: "j7", 8: "j8"}.get(grade)
        if column is None:
            raise ToleranceError(f"j{g}: ISO 286-1 gives j for grades 5 to 8 only; use js{g}")
        ei = _cell(column, size, f"j{g}")
    elif letter == "k":
        ei = _cell("k4_7" if 4 <= grade <= 7 else "k", size, f"k{g}")
    else:
        ei = _cell(letter, size, letter)
    return ei, ei + it


def _hole_um(letter: str, g: str, size: float, it: float, code: str) -> tuple[float, float]:
    """(EI, ES) in µm."""
    grade = -1 if g == "01" else int(g)
    if letter == "H":
        return 0.0, it
    if letter == "JS":
        return -it / 2, it / 2
    if letter in ("A", "B") and size <= 1.0:
        raise ToleranceError(f"holes {letter} are not used up to 1 mm (ISO 286-1 Table 2)")
    if letter in ("A", "B", "C", "CD", "D", "E", "EF", "F", "FG", "G"):
        ei = -_cell(letter.lower(), size, letter)
        return ei, ei + it
    if letter == "J":
        value = tables.holes().value(f"J{grade}", size) if grade in (6, 7, 8) else math.nan
        if math.isnan(value):
            raise ToleranceError(
                f"{code}: ISO 286-1 gives J for grades 6 to 8 up to 500 mm only; use JS{g}"
            )
        return value - it, value
    if letter == "K":
        if grade > 8 and size > 3.0:
            raise ToleranceError(f"{code}: ISO 286-1 gives K above IT8 for sizes up to 3 mm only")
        es = -_cell("k4_7", size, "K") + _delta(grade, size, code) if grade <= 8 else 0.0
    elif letter == "M":
        m = _cell("m", size, "M")
        if grade == 6 and 250.0 < size <= 315.0:
            es = -9.0  # special case printed in ISO 286-1:2010 Table 3 (not −11)
        else:
            es = -m + _delta(grade, size, code) if grade <= 8 else -m
    elif letter == "N":
        n = _cell("n", size, "N")
        if grade <= 8:
            es = -n + _delta(grade, size, code)
        elif size <= 1.0 or size > 500.0:
            raise ToleranceError(f"{code}: N above IT8 is not given for {size:g} mm")
        else:
            es = -n if size <= 3.0 else 0.0
    else:
        ei = _cell(letter.lower(), size, letter)
        es = -ei + _delta(grade, size, code) if grade <= 7 else -ei
    return es - it, es


def fit_limits(nominal_mm: float, code: str) -> tuple[float, float]:
    """(lower, upper) limit deviation in mm of tolerance class ``code`` at ``nominal_mm``.

    Reference: ISO 286-1:2010, 5.3 and Tables 1–3. Raises ToleranceError outside the tables.
    """
    letter, g, is_hole = split_code(code)
    size = _check_size(nominal_mm)
    it = it_grade(size, g) * 1000.0
    if is_hole:
        lo, hi = _hole_um(letter, g, size, it, code.strip())
    else:
        lo, hi = _shaft_um(letter, g, size, it)
    # "+ 0.0" turns a negative zero into 0 so that descriptions never show "-0".
    return round(lo, 4) / 1000.0 + 0.0, round(hi, 4) / 1000.0 + 0.0
