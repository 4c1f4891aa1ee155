"""Maximum permissible error notations: ``0.002``, ``±2 µm``, ``1.5 + L/333 µm``.

The length-dependent form follows the usual MPE = A + L/K notation (ISO 10360-2 style): A and
MPE in the unit written, L in millimetres. Both terms are returned in mm as (A, K') with
MPE = A + L/K', L in mm; K' is infinite when there is no length term.
"""

from __future__ import annotations

import re

import numpy as np
import pandas as pd

from qc.io.values import Problem, is_blank, parse_numbers
from qc.units import canonical_unit, length_factor

__all__ = ["parse_mpe"]

_FORM = re.compile(
    r"^\s*(?:±|\+/-|\+-)?\s*\(?\s*(?P<a>[0-9]+(?:[.,][0-9]+)?)\s*(?P<u1>[^\d\s+()/]*)\s*"
    r"(?:\+\s*L\s*/\s*(?P<k>[0-9]+(?:[.,][0-9]+)?)\s*)?\)?\s*(?P<u2>[^\d\s+()/]*)\s*$"
)


def _one(text: str, default_unit: str) -> tuple[float, float] | Problem:
    m = _FORM.match(text.replace("−", "-"))
    if not m:
        return Problem(text, "an MPE such as 0.002 mm, ±2 µm or 1.5 + L/333 µm")
    unit_text = m["u2"] or m["u1"]
    unit = canonical_unit(unit_text, "length") if unit_text else default_unit
    if unit is None:
        return Problem(text, "an MPE with a length unit (mm, µm, in)")
    f = length_factor(unit)
    a = float(m["a"].replace(",", ".")) * f
    k = np.inf if m["k"] is None else float(m["k"].replace(",", ".")) / f
    return a, k


def parse_mpe(
    cells: np.ndarray, units: np.ndarray, decimal: str = "."
) -> tuple[np.ndarray, np.ndarray, dict[int, Problem]]:
    """Per row (A mm, K' dimensionless) of MPE = A + L/K'; ``units`` is each row's length unit."""
    s = pd.Series(np.asarray(cells, dtype=object), dtype=object)
    n = len(s)
    a = np.full(n, np.nan)
    k = np.full(n, np.nan)
    blank = is_blank(s.to_numpy())
    plain = parse_numbers(s.to_numpy(), kind="length", decimal=decimal, allow_pm=True)
    problems: dict[int, Problem] = {}
    ok = (plain.counts == 1) & ~blank
    if ok.any():
        facs = np.array([length_factor(u or d) for u, d in zip(plain.units[ok], units[ok],
                                                                strict=True)])
        a[ok] = np.abs(plain.first[ok]) * facs
        k[ok] = np.inf
    cache: dict[tuple[str, str], tuple[float, float] | Problem] = {}
    for i in np.flatnonzero(~ok & ~blank):
        v = s.iat[i]
        if not isinstance(v, str):
            problems[int(i)] = plain.problems.get(int(i), Problem(v, "an MPE"))
            continue
        key = (v, units[i])
        r = cache.get(key)
        if r is None:
            r = cache[key] = _one(v, units[i])
        if isinstance(r, Problem):
            problems[int(i)] = r
        else:
            a[i], k[i] = r
    return a, k, problems
