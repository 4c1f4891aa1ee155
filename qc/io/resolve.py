"""Calls into the tolerance parser and the material and instrument libraries, per distinct value.

Each function takes whole columns, groups them by distinct value (or distinct combination),
calls the library once per group and spreads the answer back; failures come back as
:class:`~qc.io.values.Problem` by row index, never as exceptions.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
import pandas as pd

from qc.errors import QcError, UnknownNameError
from qc.io.values import Problem

__all__ = ["GeneralTolerances", "MaterialCte", "general_tolerances", "material_cte",
           "parse_tolerances"]

_TOL_UNITS = {"millimeter": "mm", "micrometer": "µm", "inch": "in"}


@dataclass
class MaterialCte:
    """Expansion coefficient (1/K) and its standard uncertainty per row; NaN where unknown."""

    cte: np.ndarray
    cte_u: np.ndarray
    problems: dict[int, Problem]


def material_cte(names: np.ndarray) -> MaterialCte:
    """Look each distinct material name up in the material library."""
    n = len(names)
    cte, u = np.full(n, np.nan), np.full(n, np.nan)
    problems: dict[int, Problem] = {}
    s = pd.Series(names, dtype=object)
    filled = (s != "").to_numpy()
    if not filled.any():
        return MaterialCte(cte, u, problems)
    from qc.library.materials import load_materials

    lib = load_materials()
    codes, distinct = pd.factorize(s, use_na_sentinel=False)
    by_code = np.full((len(distinct), 2), np.nan)  # (cte, cte_u) per distinct name
    for j, name in enumerate(distinct):
        if name == "":
            continue
        try:
            m = lib.get(name)
        except UnknownNameError as exc:
            hint = ("did you mean " + " or ".join(repr(x) for x in exc.suggestions) + "?"
                    if exc.suggestions else "add it to your materials file or give the CTE")
            for i in np.flatnonzero(codes == j):
                problems[int(i)] = Problem(name, "a known material", hint)
            continue
        by_code[j] = float(m.cte), float(m.cte_u)
    cte, u = by_code[codes, 0], by_code[codes, 1]
    return MaterialCte(cte, u, problems)


def parse_tolerances(
    texts: np.ndarray, nominals: np.ndarray, features: np.ndarray, units: np.ndarray,
    decimal: str,
) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray, dict[int, Problem]]:
    """Limits and nominal in mm (NaN where not given) and descriptions, per row unit group."""
    from qc.tolerances import parse_tolerance_column
    from qc.units import length_factor

    n = len(texts)
    lo, hi, nom = np.full(n, np.nan), np.full(n, np.nan), np.full(n, np.nan)
    desc = np.full(n, "", dtype=object)
    problems: dict[int, Problem] = {}
    for unit in pd.unique(pd.Series(units, dtype=object)):
        idx = np.flatnonzero(units == unit)
        f = length_factor(unit)
        tol_unit = _TOL_UNITS.get(unit, f)
        group = pd.Series(features[idx], dtype=object)
        feats = np.where(group.isin(("hole", "shaft")).to_numpy(), group.to_numpy(), None)
        lower, upper, nominal, descr, errs = parse_tolerance_column(
            texts[idx].astype(object), nominals[idx] / f, features=feats, unit=tol_unit,
            decimal=decimal)
        lo[idx] = np.asarray(lower, dtype=float) * f
        hi[idx] = np.asarray(upper, dtype=float) * f
        nom[idx] = np.asarray(nominal, dtype=float) * f
        descr = np.asarray(descr, dtype=object)
        desc[idx] = np.where(np.equal(descr, None), "", descr)  # None: no description
        for j, e in errs.items():
            problems[int(idx[j])] = Problem(texts[idx[j]], "a tolerance", str(e))
    return lo, hi, nom, desc, problems


@dataclass
class GeneralTolerances:
    """± half-width in mm from an ISO 2768-1 class, per row (NaN where none applies)."""

    half: np.ndarray
    problems: dict[int, Problem]


def general_tolerances(nominal_mm: np.ndarray, classes: np.ndarray) -> GeneralTolerances:
    """ISO 2768-1 Table 1 half-widths for linear sizes, one library call per distinct pair."""
    from qc.tolerances.iso2768 import general_tolerance

    n = len(classes)
    half = np.full(n, np.nan)
    problems: dict[int, Problem] = {}
    cache: dict[tuple[float, str], float | Problem] = {}
    for i in np.flatnonzero(classes != ""):
        nom = float(nominal_mm[i])
        if not math.isfinite(nom):
            continue
        key = (nom, str(classes[i]))
        r = cache.get(key)
        if r is None:
            try:
                r = general_tolerance(nom, key[1])
            except QcError as exc:
                r = Problem(key[1], "an ISO 2768-1 general tolerance that applies", str(exc))
            cache[key] = r
        if isinstance(r, Problem):
            problems[int(i)] = r
        else:
            half[i] = r
    return GeneralTolerances(half, problems)
