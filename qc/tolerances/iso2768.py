"""ISO 2768-1:1989 general tolerances (classes f, m, c, v) for sizes without their own tolerance.

The table lives in ``qc/data/iso2768.toml`` (Table 1 linear sizes, Table 2 broken edges, Table 3
angles by the shorter leg). Steps are "over a up to and including b"; the first linear step
includes 0.5 mm. Below 0.5 mm the standard gives no general tolerance.
"""

from __future__ import annotations

import math
import tomllib
from dataclasses import dataclass
from functools import cache
from importlib import resources
from itertools import pairwise

from qc.errors import DataFileError, ToleranceError, UnknownNameError

__all__ = ["CLASSES", "general_tolerance"]

CLASSES = ("f", "m", "c", "v")
_CLASS_NAMES = {"f": "fine", "m": "medium", "c": "coarse", "v": "very coarse"}


@dataclass(frozen=True)
class _Table:
    steps: tuple[tuple[float, float], ...]
    values: dict[str, tuple[float, ...]]
    source: str


@cache
def _tables() -> dict[str, _Table]:
    raw = tomllib.loads(resources.files("qc").joinpath("data", "iso2768.toml").read_text("utf-8"))
    if raw.get("format") != "qc-iso2768 1":
        found = raw.get("format")
        raise DataFileError(f"iso2768.toml: expected format 'qc-iso2768 1', found {found!r}")
    out = {}
    for name in ("linear", "broken_edge", "angular"):
        sec = raw.get(name)
        if not isinstance(sec, dict) or not str(sec.get("source", "")).strip():
            raise DataFileError(f"iso2768.toml: table [{name}] is missing or has no source")
        steps = tuple((float(a), float(b)) for a, b in sec["steps_mm"])
        if any(b <= a for a, b in steps) or any(s[1] != t[0] for s, t in pairwise(steps)):
            raise DataFileError(f"iso2768.toml: [{name}] steps must follow on without gaps")
        values = {}
        for c in CLASSES:
            row = tuple(float(v) for v in sec.get(c, ()))
            if len(row) != len(steps):
                raise DataFileError(f"iso2768.toml: [{name}] class {c} needs {len(steps)} values")
            values[c] = row
        out[name] = _Table(steps, values, sec["source"])
    return out


def _step(steps: tuple[tuple[float, float], ...], x: float, first_inclusive: bool) -> int | None:
    for i, (lo, hi) in enumerate(steps):
        if (lo < x or (i == 0 and first_inclusive and x == lo)) and x <= hi:
            return i
    return None


def general_tolerance(
    nominal_mm: float,
    tolerance_class: str,
    *,
    angle: bool = False,
    shorter_leg_mm: float | None = None,
    broken_edge: bool = False,
) -> float:
    """The ± general tolerance: mm for sizes (Table 1) and broken edges (Table 2), ° for angles.

    For an angle (``angle=True``) the step is chosen by ``shorter_leg_mm`` (Table 3) and
    ``nominal_mm`` is not used. Reference: ISO 2768-1:1989, Tables 1–3.
    """
    cls = str(tolerance_class).strip().lower()
    if cls not in CLASSES:
        raise UnknownNameError("ISO 2768-1 tolerance class", str(tolerance_class), list(CLASSES))
    tabs = _tables()
    if angle:
        if shorter_leg_mm is None or not (math.isfinite(shorter_leg_mm) and shorter_leg_mm > 0):
            raise ToleranceError(
                "an ISO 2768-1 angle tolerance needs the length of the shorter leg in mm, above 0"
            )
        i = _step(tabs["angular"].steps, float(shorter_leg_mm), first_inclusive=False)
        if i is None:  # the last step is open-ended, so only a damaged table gets here
            raise DataFileError("iso2768.toml: [angular] steps do not cover every leg length")
        return tabs["angular"].values[cls][i] / 60.0
    size = float(nominal_mm)
    if not math.isfinite(size):
        raise ToleranceError(f"the nominal size must be a number, got {nominal_mm!r}")
    size = abs(size)
    if size < 0.5:
        raise ToleranceError(
            f"ISO 2768-1 gives no general tolerance below 0.5 mm (nominal {size:g} mm); "
            "the drawing must state the tolerance"
        )
    table = tabs["broken_edge" if broken_edge else "linear"]
    i = _step(table.steps, size, first_inclusive=True)
    value = math.nan if i is None else table.values[cls][i]
    if math.isnan(value):
        what = "broken edges" if broken_edge else "linear sizes"
        raise ToleranceError(
            f"ISO 2768-1 class {cls} ({_CLASS_NAMES[cls]}) gives no tolerance for {what} "
            f"of {size:g} mm"
        )
    return value
