"""Reading a whole column of tolerance texts: each distinct combination is parsed once.

A sheet with 10^6 rows usually holds a few dozen distinct tolerance texts, so the texts,
nominals, features and units are factorised into integer codes, :func:`parse_tolerance` runs once
per distinct combination, and the results are spread back to the rows with numpy indexing.
"""

from __future__ import annotations

import math
from collections.abc import Sequence

import numpy as np

from qc.errors import QcError, ToleranceError
from qc.tolerances.model import unit_to_mm
from qc.tolerances.notation import from_general_class, parse_tolerance

__all__ = ["parse_tolerance_column"]


def _codes(values: Sequence[object] | np.ndarray, n: int, what: str) -> tuple[np.ndarray, list]:
    """Integer code per row and the distinct values (hashing only; no parsing per row)."""
    if isinstance(values, str) or values is None or np.ndim(values) == 0:
        return np.zeros(n, dtype=np.intp), [None if values is None else values]
    arr = np.asarray(values, dtype=object) if not isinstance(values, np.ndarray) else values
    if len(arr) != n:
        raise ToleranceError(f"{what} has {len(arr)} entries for {n} rows")
    if arr.dtype.kind in "fiu":
        uniq, inv = np.unique(np.asarray(arr, dtype=float), return_inverse=True)
        return inv.reshape(-1), [None if math.isnan(u) else float(u) for u in uniq]
    items = arr.tolist()
    # distinct values in order of first appearance, then one C-level look-up per row: hashing,
    # not parsing, and no Python call per row
    distinct = list(dict.fromkeys(items))
    position = {v: j for j, v in enumerate(distinct)}
    keys: dict[object, int] = {}
    remap = np.empty(len(distinct), dtype=np.intp)
    for j, v in enumerate(distinct):  # blanks (None, NaN) share one code
        remap[j] = keys.setdefault(_key(v), len(keys))
    codes = remap[np.fromiter(map(position.__getitem__, items), dtype=np.intp, count=n)]
    return codes, list(keys)


def _key(v: object) -> object:
    if v is None or (isinstance(v, float) and math.isnan(v)):
        return None
    return v


def parse_tolerance_column(
    texts: Sequence[object] | np.ndarray,
    nominals: Sequence[float] | np.ndarray | None,
    *,
    features: Sequence[object] | str | None = None,
    unit: Sequence[object] | str | float = "mm",
    decimal: str = ".",
    general_class: str | None = None,
) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray, dict[int, ToleranceError]]:
    """Limits for every row: (lower, upper, nominal, descriptions, errors by 0-based row position).

    Blank texts take the ISO 2768-1 ``general_class`` when one is declared. A row that cannot be
    read gets NaN limits, an empty description and an entry in ``errors``; nothing is raised for it.
    """
    n = len(texts)
    nom = np.full(n, np.nan) if nominals is None else np.asarray(nominals, dtype=float).reshape(-1)
    if len(nom) != n:
        raise ToleranceError(f"nominals has {len(nom)} entries for {n} rows")
    t_code, t_vals = _codes(texts, n, "texts")
    n_code, n_vals = _codes(nom, n, "nominals")
    f_code, f_vals = _codes(features, n, "features")
    u_code, u_vals = _codes(unit if not isinstance(unit, int | float) else [unit] * n, n, "unit")
    sizes = (len(t_vals), len(n_vals), len(f_vals), len(u_vals))
    key = ((t_code * sizes[1] + n_code) * sizes[2] + f_code) * sizes[3] + u_code
    combos, first, inverse = np.unique(key, return_index=True, return_inverse=True)
    inverse = inverse.reshape(-1)

    lo = np.full(len(combos), np.nan)
    hi = np.full(len(combos), np.nan)
    nm = np.full(len(combos), np.nan)
    desc = [""] * len(combos)
    failed: dict[int, ToleranceError] = {}
    for c, row in enumerate(first):
        text = t_vals[t_code[row]]
        nominal = n_vals[n_code[row]]
        feature = f_vals[f_code[row]]
        row_unit = u_vals[u_code[row]]
        try:
            tol = _one(text, nominal, feature, row_unit, decimal, general_class)
        except QcError as exc:
            failed[c] = exc if isinstance(exc, ToleranceError) else ToleranceError(str(exc))
            continue
        if math.isnan(tol.lower_limit) and math.isnan(tol.upper_limit):
            failed[c] = ToleranceError(
                f"the tolerance {text!r} is relative to a nominal size, but the row has none"
            )
            continue
        lo[c], hi[c], desc[c] = tol.lower_limit, tol.upper_limit, tol.description
        nm[c] = math.nan if tol.nominal is None else tol.nominal
    errors: dict[int, ToleranceError] = {}
    if failed:
        bad = np.flatnonzero(np.isin(inverse, np.fromiter(failed, dtype=np.intp)))
        errors = {int(r): failed[int(inverse[r])] for r in bad}
    descriptions = np.asarray(desc, dtype=object)[inverse]
    return lo[inverse], hi[inverse], nm[inverse], descriptions, errors


def _one(text: object, nominal: float | None, feature: object, unit: object, decimal: str,
         general_class: str | None):
    if isinstance(unit, str | float | int):
        unit_to_mm(unit)
    else:
        raise ToleranceError(f"unknown length unit {unit!r}; use 'mm', 'in' or 'µm'")
    blank = text is None or (isinstance(text, str) and not text.strip())
    if blank:
        if general_class is None:
            raise ToleranceError("no tolerance given and no ISO 2768-1 general class declared")
        if nominal is None:
            raise ToleranceError("a general tolerance class needs the row's nominal size")
        return from_general_class(nominal, general_class, unit=unit)
    if not isinstance(text, str):
        text = str(text)
    feat = feature if isinstance(feature, str) else None
    return parse_tolerance(text, nominal=nominal, feature=feat, unit=unit, decimal=decimal)
