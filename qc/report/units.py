"""Length units for display: each row's own unit converted once per column to the report unit.

The inch is exactly 25.4 mm (international yard and pound agreement, 1959; NIST SP 811, B.8).
Sizes print to 0.1 µm in millimetres and to 10 µin in inches; small quantities (corrections,
uncertainty contributions) print in µm or µin so they read as whole numbers.
"""

from __future__ import annotations

import math

import numpy as np
import pandas as pd

from qc.errors import UnknownNameError

__all__ = ["DisplayUnit", "display_unit", "to_display"]

MM_PER_INCH = 25.4


class DisplayUnit:
    """The unit the report prints lengths in, with its decimals and its small unit."""

    def __init__(
        self, name: str, long_name: str, mm_per_unit: float, decimals: int, small: str
    ) -> None:
        self.name = name
        self.long_name = long_name
        self.mm_per_unit = mm_per_unit
        self.decimals = decimals
        self.small = small  # "µm" or "µin": one millionth of the unit

    def size(self, value: float) -> str:
        """A size or limit, with the unit's usual decimals; a dash where there is none."""
        if value is None or not math.isfinite(value):
            return "–"
        return f"{value:.{self.decimals}f}"

    def small_value(self, value: float, decimals: int = 1) -> str:
        """A small length given in the report unit, printed in millionths (µm or µin)."""
        if value is None or not math.isfinite(value):
            return "–"
        return f"{self.to_small(value):.{decimals}f}"

    def to_small(self, value: np.ndarray | float) -> np.ndarray | float:
        """A length in the report unit expressed in its millionth unit (mm → µm, in → µin)."""
        return value * (1e3 if self.name == "mm" else 1e6)


_UNITS = {
    "mm": DisplayUnit("mm", "millimetres", 1.0, 4, "µm"),
    "in": DisplayUnit("in", "inches", MM_PER_INCH, 5, "µin"),
}


_ALIASES = {"millimetre": "mm", "millimetres": "mm", "millimeter": "mm", "millimeters": "mm",
            "inch": "in", "inches": "in", '"': "in"}  # fmt: skip


def display_unit(name: str) -> DisplayUnit:
    """The display unit called ``name``: "mm" or "in" (or their words, "inch", "millimetre")."""
    key = str(name).strip().lower()
    try:
        return _UNITS[_ALIASES.get(key, key)]
    except KeyError:
        raise UnknownNameError("length unit", str(name), list(_UNITS)) from None


def to_display(values: pd.Series, row_units: pd.Series, unit: DisplayUnit) -> np.ndarray:
    """Lengths given in each row's own unit, converted to ``unit`` as one float array."""
    factor = row_units.map({k: u.mm_per_unit for k, u in _UNITS.items()}).to_numpy(float)
    return pd.to_numeric(values, errors="coerce").to_numpy(float) * factor / unit.mm_per_unit
