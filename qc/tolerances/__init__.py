"""Tolerances: the notations drawings use, ISO 286-1 fit codes and ISO 2768-1 general tolerances.

Everything returns limits in the row's unit; see docs/tolerances.md for the accepted notations
and the sources of the bundled tables.
"""

from __future__ import annotations

from qc.errors import ToleranceError
from qc.tolerances import iso286, iso2768
from qc.tolerances.column import parse_tolerance_column
from qc.tolerances.model import Tolerance, from_deviations, from_limits, unit_to_mm
from qc.tolerances.notation import ACCEPTED, from_general_class, parse_tolerance

__all__ = [
    "ACCEPTED",
    "Tolerance",
    "ToleranceError",
    "from_deviations",
    "from_general_class",
    "from_limits",
    "iso286",
    "iso2768",
    "parse_tolerance",
    "parse_tolerance_column",
    "unit_to_mm",
]
