"""The :class:`Tolerance` record, the row-unit helpers and the two column combiners.

Values are in the row's unit (mm normally). A missing side of a one-sided tolerance is NaN,
so a comparison with it is simply false and the side is never checked.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from qc.errors import ToleranceError

__all__ = ["Tolerance", "fmt_number", "from_deviations", "from_limits", "unit_to_mm"]

KINDS = ("symmetric", "deviations", "limits", "max", "min", "iso286", "iso2768")

_UNIT_MM = {"mm": 1.0, "µm": 1e-3, "μm": 1e-3, "um": 1e-3, "in": 25.4, "inch": 25.4, '"': 25.4}


@dataclass(frozen=True)
class Tolerance:
    """A tolerance as limits and (where a nominal is known) deviations, in the row's unit.

    ``lower_limit``/``upper_limit`` are NaN on the open side of a one-sided tolerance (and both
    NaN for deviations whose nominal is not known yet). ``lower_deviation``/``upper_deviation``
    are ``None`` when the tolerance was written as absolute limits without a nominal.
    """

    nominal: float | None
    lower_limit: float
    upper_limit: float
    lower_deviation: float | None
    upper_deviation: float | None
    kind: str
    code: str | None
    description: str


def unit_to_mm(unit: str | float) -> float:
    """Millimetres per row unit: a unit name ("mm", "in", "µm") or the factor itself."""
    if isinstance(unit, bool):
        raise ToleranceError(f"unknown length unit {unit!r}; use 'mm', 'in' or 'µm'")
    if isinstance(unit, int | float):
        if not (math.isfinite(unit) and unit > 0):
            raise ToleranceError(f"the unit factor must be a positive number of mm, got {unit!r}")
        return float(unit)
    factor = _UNIT_MM.get(str(unit).strip().lower().rstrip("."))
    if factor is None:
        raise ToleranceError(f"unknown length unit {unit!r}; use 'mm', 'in' or 'µm'")
    return factor


def unit_name(unit: str | float) -> str:
    """Short label of the row unit for descriptions."""
    if isinstance(unit, str):
        name = unit.strip().lower().rstrip(".")
        return {"inch": "in", '"': "in", "um": "µm", "μm": "µm"}.get(name, name)
    return "mm" if unit == 1.0 else "in" if unit == 25.4 else f"×{unit:g} mm"


def fmt_number(x: float, signed: bool = False) -> str:
    """A number without float noise (9 significant digits), '+' in front when ``signed``."""
    if x == 0:
        return "0"
    text = f"{x:.9g}"
    return ("+" + text) if signed and x > 0 else text


def from_deviations(
    nominal: float, lower_dev: float, upper_dev: float, *, unit: str | float = "mm"
) -> Tolerance:
    """A tolerance from separate lower/upper deviation columns (row unit); lower <= upper."""
    nominal, lower_dev, upper_dev = (_finite(v, what) for v, what in (
        (nominal, "nominal"), (lower_dev, "lower deviation"), (upper_dev, "upper deviation")))
    if lower_dev > upper_dev:
        raise ToleranceError(
            f"lower deviation {fmt_number(lower_dev, True)} is above upper deviation "
            f"{fmt_number(upper_dev, True)}; swap the two columns"
        )
    u = unit_name(unit)
    return Tolerance(
        nominal, nominal + lower_dev, nominal + upper_dev, lower_dev, upper_dev, "deviations", None,
        f"{fmt_number(nominal)} {fmt_number(upper_dev, True)}/{fmt_number(lower_dev, True)} {u}",
    )


def from_limits(
    lower: float, upper: float, *, nominal: float | None = None, unit: str | float = "mm"
) -> Tolerance:
    """A tolerance from separate lower/upper limit columns (row unit); lower <= upper."""
    lower, upper = _finite(lower, "lower limit"), _finite(upper, "upper limit")
    if lower > upper:
        raise ToleranceError(
            f"lower limit {fmt_number(lower)} is above upper limit {fmt_number(upper)}; "
            "swap the two columns"
        )
    nom = None if nominal is None or math.isnan(nominal) else float(nominal)
    lo_dev = None if nom is None else lower - nom
    hi_dev = None if nom is None else upper - nom
    return Tolerance(nom, lower, upper, lo_dev, hi_dev, "limits", None,
                     f"{fmt_number(lower)}–{fmt_number(upper)} {unit_name(unit)}")


def _finite(value: float, what: str) -> float:
    try:
        v = float(value)
    except (TypeError, ValueError):
        raise ToleranceError(f"the {what} must be a number, got {value!r}") from None
    if not math.isfinite(v):
        raise ToleranceError(f"the {what} must be a finite number, got {value!r}")
    return v
