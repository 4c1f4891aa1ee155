"""Calls into the tolerance parser and the material and instrument libraries, per distinct value.

Each function takes whole columns, groups them by distinct value (or distinct combination),
calls the library once per group and spreads the answer back; failures come back as
:class:`~qc.io.values.Problem` by row index, never as exceptions.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

from qc.errors import QcError, UnknownNameError
from qc.io.values import Coded, Problem, joint_codes

__all__ = ["GeneralTolerances", "MaterialCte", "general_tolerances", "material_cte",
           "parse_tolerances"]

_TOL_UNITS = {"millimeter": "mm", "micrometer": "µm", "inch": "in"}


def _coded(values: np.ndarray | Coded) -> Coded:
    return values if isinstance(values, Coded) else Coded.of(values)


@dataclass
class MaterialCte:
    """Expansion coefficient (1/K) and its standard uncertainty per row; NaN where unknown."""

    cte: np.ndarray
    cte_u: np.ndarray
    problems: dict[int, Problem]


def material_cte(names: np.ndarray | Coded) -> MaterialCte:
    """Look each distinct material name up in the material library ('' for none)."""
    names = _coded(names)
    n = len(names)
    problems: dict[int, Problem] = {}
    filled = ~names.is_("")
    if not filled.any():
        return MaterialCte(np.full(n, np.nan), np.full(n, np.nan), problems)
    from qc.library.materials import load_materials

    lib = load_materials()
    by_code = np.full((len(names.values), 2), np.nan)  # (cte, cte_u) per distinct name
    for j in names.in_use():
        name = names.values[j]
        if name == "":
            continue
        try:
            m = lib.get(name)
        except UnknownNameError as exc:
            hint = ("did you mean " + " or ".join(repr(x) for x in exc.suggestions) + "?"
                    if exc.suggestions else "add it to your materials file or give the CTE")
            for i in np.flatnonzero(names.codes == j):
                problems[int(i)] = Problem(name, "a known material", hint)
            continue
        by_code[j] = float(m.cte), float(m.cte_u)
    return MaterialCte(by_code[names.codes, 0], by_code[names.codes, 1], problems)


def parse_tolerances(
    texts: np.ndarray | Coded, nominals: np.ndarray, features: np.ndarray | Coded,
    units: np.ndarray | Coded, decimal: str,
) -> tuple[np.ndarray, np.ndarray, np.ndarray, Coded, dict[int, Problem]]:
    """Limits and nominal in mm (NaN where not given) and descriptions, per row unit group.

    A row's answer depends only on its text, nominal, feature and unit, so each distinct
    combination is parsed once (on its first row) and the answers are spread back.
    """
    from qc.tolerances import parse_tolerance_column
    from qc.units import length_factor

    texts, features, units = _coded(texts), _coded(features), _coded(units)
    nominals = np.asarray(nominals, dtype=float)
    nom_codes, _ = pd.factorize(nominals)  # NaN: code -1, shifted to a code of its own
    combo, rep = joint_codes(texts.codes, nom_codes + 1, features.codes, units.codes)
    k = len(rep)
    lo, hi, nom = np.full(k, np.nan), np.full(k, np.nan), np.full(k, np.nan)
    desc = np.full(k, "", dtype=object)
    failed: dict[int, Problem] = {}
    rep_texts = texts.values[texts.codes[rep]]
    rep_units = units.values[units.codes[rep]]
    rep_features = features.values[features.codes[rep]]
    for unit in pd.unique(pd.Series(rep_units, dtype=object)):
        idx = np.flatnonzero(rep_units == unit)
        f = length_factor(unit)
        tol_unit = _TOL_UNITS.get(unit, f)
        group = pd.Series(rep_features[idx], dtype=object)
        feats = np.where(group.isin(("hole", "shaft")).to_numpy(), group.to_numpy(), None)
        lower, upper, nominal, descr, errs = parse_tolerance_column(
            rep_texts[idx].astype(object), nominals[rep[idx]] / f, features=feats,
            unit=tol_unit, decimal=decimal)
        lo[idx] = np.asarray(lower, dtype=float) * f
        hi[idx] = np.asarray(upper, dtype=float) * f
        nom[idx] = np.asarray(nominal, dtype=float) * f
        descr = np.asarray(descr, dtype=object)
        desc[idx] = np.where(np.equal(descr, None), "", descr)  # None: no description
        for j, e in errs.items():
            failed[int(idx[j])] = Problem(rep_texts[idx[j]], "a tolerance", str(e))
    problems: dict[int, Problem] = {}
    if failed:
        bad = np.flatnonzero(np.isin(combo, np.fromiter(failed, dtype=np.intp)))
        problems = {int(r): failed[int(combo[r])] for r in bad}
    return lo[combo], hi[combo], nom[combo], Coded(combo, desc), problems


@dataclass
class GeneralTolerances:
    """± half-width in mm from an ISO 2768-1 class, per row (NaN where none applies)."""

    half: np.ndarray
    problems: dict[int, Problem]


def general_tolerances(nominal_mm: np.ndarray, classes: np.ndarray | Coded) -> GeneralTolerances:
    """ISO 2768-1 Table 1 half-widths for linear sizes, one library call per distinct pair."""
    from qc.tolerances.iso2768 import general_tolerance

    classes = _coded(classes)
    nominal_mm = np.asarray(nominal_mm, dtype=float)
    n = len(classes)
    half = np.full(n, np.nan)
    problems: dict[int, Problem] = {}
    idx = np.flatnonzero(~classes.is_("") & np.isfinite(nominal_mm))
    if not len(idx):
        return GeneralTolerances(half, problems)
    nom_codes, _ = pd.factorize(nominal_mm[idx])
    combo, rep = joint_codes(classes.codes[idx], nom_codes)
    per_combo = np.full(len(rep), np.nan)
    failed: dict[int, Problem] = {}
    for c, r in enumerate(rep):
        nom, cls = float(nominal_mm[idx[r]]), str(classes[idx[r]])
        try:
            per_combo[c] = general_tolerance(nom, cls)
        except QcError as exc:
            failed[c] = Problem(cls, "an ISO 2768-1 general tolerance that applies", str(exc))
    half[idx] = per_combo[combo]
    if failed:
        bad = np.flatnonzero(np.isin(combo, np.fromiter(failed, dtype=np.intp)))
        problems = {int(idx[r]): failed[int(combo[r])] for r in bad}
    return GeneralTolerances(half, problems)
