"""The one pint unit registry of `qc`, and the unit spellings found in shop spreadsheets.

Values are converted at the edge, once per column: each distinct unit spelling is looked up
once, pint gives the factor, and numpy applies it to the whole column. Three kinds matter:

* lengths, to millimetres (1 in = 25.4 mm exactly: NIST SP 811, 2008, B.9; 1 thou = 0.001 in);
* temperatures, to degrees Celsius, as *absolute* values (°F: (t − 32)·5/9, K: T − 273.15)
  or as *differences* (an accuracy of 0.9 °F is 0.5 °C: ×5/9, no offset) — NIST SP 811, 4.2.1.1;
* expansion coefficients, to 1/K (1/°F = 1.8/K; ppm/K = µm/(m·K) = 1e-6/K).

Spreadsheet spellings are mapped to pint names here because pint reads some of them otherwise:
pint's ``mil`` is an angle, and ``"`` or ``F`` alone mean nothing to it.
"""

from __future__ import annotations

import re
from functools import cache
from typing import Literal

import numpy as np
import pint

__all__ = [
    "CTE_SPELLINGS",
    "LENGTH_SPELLINGS",
    "MM_PER_UNIT",
    "Q_",
    "TEMPERATURE_SPELLINGS",
    "UnitKind",
    "canonical_unit",
    "cte_factor",
    "length_factor",
    "normalise_spelling",
    "temperature_difference_to_c",
    "temperature_to_c",
    "ureg",
]

ureg = pint.UnitRegistry()
Q_ = ureg.Quantity

#: Millimetres per length unit of the result columns (each row keeps its own unit); the inch
#: is exactly 25.4 mm (NIST SP 811, B.8).
MM_PER_UNIT = {"mm": 1.0, "in": 25.4, "µm": 1e-3, "thou": 0.0254, "cm": 10.0, "m": 1000.0}

UnitKind = Literal["length", "temperature", "cte"]

# normalised spelling -> pint unit name. Keys are lower case, without spaces or dots
# (see normalise_spelling). "µ" (micro sign) and "μ" (Greek mu) both occur.
LENGTH_SPELLINGS: dict[str, str] = {
    "mm": "millimeter",
    "millimetre": "millimeter",
    "millimeter": "millimeter",
    "millimetres": "millimeter",
    "millimeters": "millimeter",
    "µm": "micrometer",
    "μm": "micrometer",
    "um": "micrometer",
    "micron": "micrometer",
    "microns": "micrometer",
    "micrometre": "micrometer",
    "micrometer": "micrometer",
    "cm": "centimeter",
    "m": "meter",
    "in": "inch",
    "inch": "inch",
    "inches": "inch",
    '"': "inch",
    "''": "inch",
    "″": "inch",
    "thou": "thou",
    "mil": "thou",  # pint's "mil" is an angle; in a shop it is a thousandth of an inch
    "mils": "thou",
    "thousandths": "thou",
}

TEMPERATURE_SPELLINGS: dict[str, str] = {
    "°c": "degC",
    "ºc": "degC",
    "℃": "degC",
    "c": "degC",
    "degc": "degC",
    "degreesc": "degC",
    "celsius": "degC",
    "°f": "degF",
    "ºf": "degF",
    "℉": "degF",
    "f": "degF",
    "degf": "degF",
    "degreesf": "degF",
    "fahrenheit": "degF",
    "k": "kelvin",
    "kelvin": "kelvin",
}

# each maps to the pint expression of the coefficient's unit
CTE_SPELLINGS: dict[str, str] = {
    "1/k": "1/kelvin",
    "/k": "1/kelvin",
    "k^-1": "1/kelvin",
    "k-1": "1/kelvin",
    "k⁻¹": "1/kelvin",
    "1/°c": "1/kelvin",
    "/°c": "1/kelvin",
    "1/c": "1/kelvin",
    "ppm/k": "ppm/kelvin",
    "ppm/°c": "ppm/kelvin",
    "ppm/c": "ppm/kelvin",
    "1e-6/k": "ppm/kelvin",
    "10^-6/k": "ppm/kelvin",
    "10⁻⁶/k": "ppm/kelvin",
    "µm/(m·k)": "micrometer/(meter*kelvin)",
    "µm/(mk)": "micrometer/(meter*kelvin)",
    "µm/m/k": "micrometer/(meter*kelvin)",
    "µm/m·k": "micrometer/(meter*kelvin)",
    "µm/m°c": "micrometer/(meter*kelvin)",
    "µm/(m·°c)": "micrometer/(meter*kelvin)",
    "um/(m·k)": "micrometer/(meter*kelvin)",
    "um/(mk)": "micrometer/(meter*kelvin)",
    "um/m/k": "micrometer/(meter*kelvin)",
    "um/mk": "micrometer/(meter*kelvin)",
    "µm/mk": "micrometer/(meter*kelvin)",
    "1/°f": "1/delta_degF",
    "/°f": "1/delta_degF",
    "1/f": "1/delta_degF",
    "/f": "1/delta_degF",
    "ppm/°f": "ppm/delta_degF",
    "ppm/f": "ppm/delta_degF",
    "in/in/°f": "1/delta_degF",
    "in/in/f": "1/delta_degF",
    "µin/in/°f": "ppm/delta_degF",
    "µin/(in·°f)": "ppm/delta_degF",
    "uin/in/f": "ppm/delta_degF",
}

_SPELLINGS: dict[str, dict[str, str]] = {
    "length": LENGTH_SPELLINGS,
    "temperature": TEMPERATURE_SPELLINGS,
    "cte": CTE_SPELLINGS,
}

_SPACES = re.compile(r"[\s.]+")
_DEG = re.compile(r"deg(?:rees?)?\s*(?=[cf]\b)")


def normalise_spelling(text: str) -> str:
    """Lower case, Greek mu as micro sign, ``deg``/``degree`` kept, spaces and dots removed."""
    t = text.strip().lower().replace("μ", "µ").replace("º", "°").replace("⋅", "·")
    t = _DEG.sub("°", t.replace("*", "·"))
    return _SPACES.sub("", t)


def canonical_unit(text: str, kind: UnitKind) -> str | None:
    """The pint name of a spreadsheet unit spelling of the given kind, or None if unknown."""
    key = normalise_spelling(text)
    table = _SPELLINGS[kind]
    if key in table:
        return table[key]
    alt = key.replace("µ", "u")
    for k, v in table.items():
        if k.replace("µ", "u") == alt:
            return v
    return None


@cache
def length_factor(unit: str) -> float:
    """Millimetres per one ``unit`` (a pint length name), e.g. 25.4 for inch."""
    if unit == "inch":  # exact by definition (NIST SP 811, B.9); pint's float agrees to 1 ulp
        return 25.4
    if unit == "thou":
        return 0.0254
    return float(Q_(1.0, unit).to("millimeter").magnitude)


@cache
def cte_factor(unit: str) -> float:
    """Per-kelvin value of one ``unit`` of expansion coefficient, e.g. 1.8 for 1/°F."""
    return float(Q_(1.0, unit).to("1/kelvin").magnitude)


def temperature_to_c(values: np.ndarray, unit: str) -> np.ndarray:
    """Absolute temperatures in ``unit`` (degC, degF, kelvin) as °C (NIST SP 811, 4.2.1.1)."""
    v = np.asarray(values, dtype=float)
    if unit == "degC":
        return v
    if unit == "degF":
        return (v - 32.0) * 5.0 / 9.0
    if unit == "kelvin":
        return v - 273.15
    raise ValueError(f"not a temperature unit: {unit!r}")


def temperature_difference_to_c(values: np.ndarray, unit: str) -> np.ndarray:
    """Temperature differences (accuracies, spans) in ``unit`` as °C: °F ×5/9, no offset."""
    v = np.asarray(values, dtype=float)
    if unit in ("degC", "kelvin"):
        return v
    if unit == "degF":
        return v * 5.0 / 9.0
    raise ValueError(f"not a temperature unit: {unit!r}")
