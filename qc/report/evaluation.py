"""ReportData from one pipeline run (``qc.pipeline.Evaluation``), read by its attributes.

The report sits below the pipeline in the layers, so nothing here imports it: the run is
read through the attributes it has (results, budgets, actions, table, rule, settings).
Lengths in units other than mm and in are converted to mm; rows in a unit that is not a
length (angles) are left out of the report, and a note says how many.
"""

from __future__ import annotations

from datetime import datetime
from typing import Any

import numpy as np
import pandas as pd

from qc import __version__
from qc.errors import QcError
from qc.report.data import (
    ACTION_COLUMNS,
    BUDGET_COLUMNS,
    InstrumentUsed,
    MaterialUsed,
    ReportData,
    ReportMeta,
)
from qc.units import MM_PER_UNIT

__all__ = ["report_data"]

_LENGTH_COLUMNS = ("nominal", "lower_limit", "upper_limit", "reading", "size_at_20c",
                   "thermal_correction", "combined_uncertainty", "expanded_uncertainty",
                   "accept_low", "accept_high")  # fmt: skip


def report_data(
    ev: Any, *, title: str = "Inspection report", batch: str | None = None
) -> ReportData:
    """The report's tables and facts for one evaluated sheet."""
    frame = ev.table.frame
    flat = ev.flat()
    unit = flat["unit"].astype(str)
    f = unit.map(MM_PER_UNIT).to_numpy(float)  # NaN: not a length
    flat["nominal"] = frame["nominal_mm"].to_numpy(float) / f if "nominal_mm" in frame else np.nan
    is_length = np.isfinite(f)
    convert = is_length & ~unit.isin(["mm", "in"]).to_numpy()
    for col in _LENGTH_COLUMNS:
        values = pd.to_numeric(flat[col], errors="coerce").to_numpy(float)
        flat[col] = np.where(convert, values * f, values)
    flat.loc[convert, "unit"] = "mm"
    keep = np.flatnonzero(is_length)
    results = flat.iloc[keep].reset_index(drop=True)

    budgets = _with_source_labels(ev, ev.budgets.copy())
    if "estimate_unit" in budgets:  # the estimate's own unit is the report's "unit"
        budgets = budgets.drop(columns=["unit"]).rename(columns={"estimate_unit": "unit"})
    pos = pd.to_numeric(budgets["row_index"], errors="coerce").fillna(-1).to_numpy(int)
    valid = (pos >= 0) & (pos < len(flat))
    budgets, pos = budgets[valid].copy(), pos[valid]
    contribution = pd.to_numeric(budgets["contribution"], errors="coerce").to_numpy(float)
    budgets["contribution"] = np.where(convert[pos], contribution * f[pos], contribution)
    new_index = np.full(len(flat), -1)
    new_index[keep] = np.arange(keep.size)
    budgets["row_index"] = new_index[pos]
    budgets = budgets[budgets["row_index"] >= 0]
    actions = ev.actions.reindex(columns=list(ACTION_COLUMNS))

    notes = list(getattr(ev, "notes", []))
    if keep.size < len(flat):
        left = sorted(set(unit[~is_length]))
        notes.append(f"{len(flat) - keep.size} row(s) in units that are not lengths "
                     f"({', '.join(left)}) are left out of this report")
    return ReportData(results, budgets.reindex(columns=list(BUDGET_COLUMNS)), actions,
                      _meta(ev, results, title, batch, notes))


#: How many budgets get their plain-language source labels (the report shows a few).
_LABELLED_ROWS = 60


def _with_source_labels(ev: Any, budgets: pd.DataFrame) -> pd.DataFrame:
    """Source labels for the rows a report can show: not conforming, or the smallest margins."""
    budgets["source_label"] = ""
    if not hasattr(ev, "budget"):  # a results table without its batch budget
        return budgets
    res = ev.results
    margin = pd.to_numeric(res["margin_in_U"], errors="coerce").to_numpy(float)
    worst = np.argsort(np.where(np.isnan(margin), np.inf, margin), kind="stable")[:10]
    flagged = np.flatnonzero(res["verdict"].isin(["borderline", "nonconforming"]).to_numpy())
    rows = list(dict.fromkeys([*flagged.tolist(), *worst.tolist()]))[:_LABELLED_ROWS]
    labels: dict[tuple[int, str], str] = {}
    for i in rows:
        if res["verdict"].iloc[i] == "not evaluated":
            continue
        for e in ev.budget.row(int(i)).entries:
            labels[(int(i), e.quantity)] = e.source
    shown = budgets["row_index"].isin(rows).to_numpy()
    sub = budgets.loc[shown]
    keys = zip(sub["row_index"].astype(int), sub["quantity"].astype(str), strict=True)
    budgets.loc[shown, "source_label"] = [labels.get(k, "") for k in keys]
    return budgets


def _meta(ev: Any, results: pd.DataFrame, title: str, batch: str | None,
          notes: list[str]) -> ReportMeta:
    table, settings, rule = ev.table, ev.settings, ev.rule
    source = getattr(ev, "source", None)
    register = getattr(table, "register", None)
    instruments = []
    used = list(dict.fromkeys(results["instrument"].dropna().astype(str)))
    entries = getattr(register, "entries", {}) if register is not None else {}
    origin = getattr(register, "origin", "") or "instrument register"
    for name in used:
        entry = entries.get(name)
        if entry is not None:
            instruments.append(InstrumentUsed(name, origin, entry.type or "", entry.cal_due))
    # a description "ISO 14253-1: conforms inside …" names the rule before its colon
    rule_name, rule_text = str(rule.name), str(rule.description)
    head, sep, tail = rule_text.partition(": ")
    if sep and len(head) <= 40:
        rule_name, rule_text = head, tail
    return ReportMeta(
        title=title,
        batch=batch or (source.stem if source is not None else None),
        input_file=source.name if source is not None else (table.file or None),
        input_sha256=getattr(ev, "input_sha256", "") or None,
        sheet=table.sheet,
        decision_rule=rule_name,
        decision_rule_description=rule_text,
        coverage_probability=settings.coverage,
        reference_temperature_c=settings.t_ref,
        program_version=__version__,
        generated_at=datetime.now().astimezone(),
        instruments=tuple(instruments),
        materials=_materials(table.frame),
        notes=tuple(notes),
    )


def _materials(frame: pd.DataFrame) -> tuple[MaterialUsed, ...]:
    """The part and gauge materials the sheet names, with α and source from the library."""
    names: list[str] = []
    for col in ("part_material", "gauge_material"):
        if col in frame:
            names += [n for n in frame[col].dropna().astype(str) if n.strip()]
    if not names:
        return ()
    try:
        from qc.library.materials import load_materials

        library = load_materials()
    except (ImportError, QcError):  # no library: name the materials without data
        library = None
    used = []
    for name in dict.fromkeys(names):
        try:
            m = library.get(name) if library is not None else None
        except QcError:
            m = None
        if m is None:
            used.append(MaterialUsed(name, "named on the sheet; not in the materials table"))
        else:
            used.append(MaterialUsed(m.name, m.source, m.cte))
    return tuple(dict.fromkeys(used))
