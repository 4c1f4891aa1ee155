"""Statistics per characteristic on the sizes at 20 °C, with process capability where n allows.

Capability follows ISO 22514-2 with the sample standard deviation s (n − 1 in the divisor):
Cp = (USL − LSL)/(6s); Cpk = min(USL − x̄, x̄ − LSL)/(3s); with one limit only, Cpk is the
one-sided index of that limit and Cp is not defined. Below ``MIN_N_CAPABILITY`` parts no index
is stated; below ``CAUTION_N`` it is stated with a caution, since the estimate of s from a
small sample is itself uncertain (its relative standard uncertainty is about 1/√(2(n − 1))).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

__all__ = ["CAUTION_N", "MIN_N_CAPABILITY", "CharacteristicStats", "capability", "describe"]

MIN_N_CAPABILITY = 25
CAUTION_N = 50


@dataclass(frozen=True)
class CharacteristicStats:
    """n, mean, s, min, max (report unit) and Cp, Cpk (NaN when not stated) with a note."""

    n: int
    mean: float
    std: float
    minimum: float
    maximum: float
    cp: float
    cpk: float
    note: str


def capability(
    mean: float, std: float, lower: float, upper: float
) -> tuple[float, float]:
    """Cp and Cpk (ISO 22514-2) from a mean, a sample standard deviation and the limits.

    Pass NaN for a missing limit. Returns NaN where an index is not defined.
    """
    if not (std > 0):
        return math.nan, math.nan
    has_low, has_up = math.isfinite(lower), math.isfinite(upper)
    cp = (upper - lower) / (6 * std) if has_low and has_up else math.nan
    sides = []
    if has_up:
        sides.append((upper - mean) / (3 * std))
    if has_low:
        sides.append((mean - lower) / (3 * std))
    cpk = min(sides) if sides else math.nan
    return cp, cpk


def describe(sizes: np.ndarray, lower: np.ndarray, upper: np.ndarray) -> CharacteristicStats:
    """Statistics of one characteristic's sizes at 20 °C (NaN sizes left out).

    ``lower`` and ``upper`` are the limits row by row; capability is stated only when every
    row has the same limits, since Cp and Cpk compare one spread with one tolerance.
    """
    keep = np.isfinite(sizes)
    x = sizes[keep]
    n = int(x.size)
    if n == 0:
        nan = math.nan
        return CharacteristicStats(0, nan, nan, nan, nan, nan, nan, "no corrected size")
    mean = float(x.mean())
    std = float(x.std(ddof=1)) if n > 1 else math.nan
    cp = cpk = math.nan
    lo, up = _common(lower[keep]), _common(upper[keep])
    if n < MIN_N_CAPABILITY:
        note = f"Cp, Cpk not stated: n = {n} is below {MIN_N_CAPABILITY}"
    elif lo is None or up is None:
        note = "Cp, Cpk not stated: the limits differ between parts"
    elif not math.isfinite(lo) and not math.isfinite(up):
        note = "Cp, Cpk not stated: no limits"
    elif not (std > 0):
        note = "Cp, Cpk not stated: all sizes are equal"
    else:
        cp, cpk = capability(mean, std, lo, up)
        one_sided = not (math.isfinite(lo) and math.isfinite(up))
        note = "one-sided limit: Cpk of that limit only" if one_sided else ""
        if n < CAUTION_N:
            caution = f"caution: n = {n} is below {CAUTION_N}, the indices are uncertain"
            note = f"{note}; {caution}" if note else caution
    return CharacteristicStats(n, mean, std, float(x.min()), float(x.max()), cp, cpk, note)


def _common(values: np.ndarray) -> float | None:
    """The single value all rows share (NaN when all are missing), or None when they differ."""
    finite = values[np.isfinite(values)]
    if finite.size == 0:
        return math.nan
    if finite.size != values.size:
        return None
    if np.ptp(finite) > 1e-9 * max(1.0, float(np.abs(finite).max())):
        return None
    return float(finite[0])
