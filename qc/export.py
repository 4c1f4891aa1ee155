"""Write an evaluation out: the workbook written back, or a flat CSV/Parquet/JSON Lines table.

The workbook gets the result columns beside the original data (or a results sheet lined up with
it) and four new sheets: the uncertainty budget in long form, a summary, the action list and
the method (reference temperature, decision rule, every material and instrument value used
with its source, the input file's SHA-256, program version, date).
"""

from __future__ import annotations

import datetime as dt
from pathlib import Path

import numpy as np
import pandas as pd

from qc import __version__
from qc.core.decision import SAFETY_NOTE, VERDICT_NAMES
from qc.errors import OutputError
from qc.io.writeback import SheetTable, WriteReport, write_back, write_new_workbook
from qc.io.writers import write_table
from qc.io.xlsx_package import column_index
from qc.pipeline import Evaluation
from qc.results import FLAG_CODES, RESULT_COLUMNS

__all__ = ["OUTPUT_SUFFIXES", "default_output", "method_rows", "write_results"]

OUTPUT_SUFFIXES = (".xlsx", ".xlsm", ".csv", ".parquet", ".jsonl")
WORKBOOK_INPUTS = (".xlsx", ".xlsm")

#: Excel number formats of the result columns (lengths get the row unit's digits).
_FORMATS = {
    "size_at_20c": "0.00000", "thermal_correction": "0.00000", "combined_uncertainty": "0.00000",
    "expanded_uncertainty": "0.00000", "reading": "0.00000", "lower_limit": "0.00000",
    "upper_limit": "0.00000", "accept_low": "0.00000", "accept_high": "0.00000",
    "coverage_factor": "0.00", "effective_dof": "0", "conformance_probability": "0.000",
    "capability_index": "0.00", "uncertainty_ratio": "0.0", "margin_in_U": "0.00",
    "soak_minutes_low": "0", "soak_minutes_high": "0",
}
#: Result columns written beside the original data (the rest are in the budget/summary).
BESIDE_DATA = ("size_at_20c", "thermal_correction", "combined_uncertainty", "coverage_factor",
               "expanded_uncertainty", "effective_dof", "verdict", "conformance_probability",
               "capability_index", "flags", "message", "unit")


def default_output(path: Path, suffix: str | None = None) -> Path:
    """``name.checked.xlsx`` beside the input (CSV inputs get a new workbook by default)."""
    suffix = suffix or (path.suffix.lower() if path.suffix.lower() in WORKBOOK_INPUTS
                        else ".xlsx")
    return path.with_name(f"{path.stem}.checked{suffix}")


def write_results(ev: Evaluation, output: Path, *, force: bool = False) -> WriteReport | None:
    """Write ``ev`` to ``output``; the kind follows the extension. The input is only read."""
    output = Path(output)
    suffix = output.suffix.lower()
    if suffix not in OUTPUT_SUFFIXES:
        raise OutputError(f"{output.name}: cannot write files of type {suffix or '(none)'}; "
                          "use .xlsx, .csv, .parquet or .jsonl")
    source = ev.source
    if source is not None and source.exists() and output.resolve() == source.resolve():
        raise OutputError(f"{output.name}: the output would replace the input; choose another "
                          "name (the input file is never modified)")
    if suffix in (".csv", ".parquet", ".jsonl"):
        write_table(ev.flat(), output, force=force)
        return None
    if source is not None and source.suffix.lower() == ".xlsm":
        ev.notes.append("macros of the input (.xlsm) were never run; " + (
            "they are kept untouched in the output" if suffix == ".xlsm" else
            "they are not in this .xlsx output (write to .xlsm to keep them)"))
    sheets = extra_sheets(ev)
    formats = dict(_FORMATS)
    if source is not None and source.suffix.lower() in WORKBOOK_INPUTS:
        t = ev.table
        if t.kind == "wide":
            beside, rows = _wide_part_verdicts(ev)
            table = _infinity_as_text(_results_sheet(ev), ("effective_dof",))
            sheets = [SheetTable("Results", table, _FORMATS, title_lines=_titles(ev)), *sheets]
        else:
            beside, rows = ev.results[list(BESIDE_DATA)], list(t.data_rows)
        beside = _infinity_as_text(beside, ("effective_dof",))
        return write_back(source, output, sheet=t.sheet or "", header_row=t.header_row,
                          data_rows=rows, last_column=column_index(t.last_column),
                          results=beside, column_formats=formats, extra_sheets=sheets,
                          force=force)
    data = _infinity_as_text(ev.flat(), ("effective_dof",))
    return write_new_workbook(output, data=data, sheet_name="Results", column_formats=formats,
                              extra_sheets=sheets, force=force)


def _infinity_as_text(frame: pd.DataFrame, columns: tuple[str, ...]) -> pd.DataFrame:
    """Degrees of freedom of Type B inputs are infinite: shown as ∞ in a workbook cell."""
    out = frame.copy()
    for c in columns:
        if c in out:
            v = out[c].to_numpy(dtype=float)
            out[c] = np.where(np.isinf(v), "∞", pd.Series(v, dtype=object)).astype(object)
            out.loc[np.isnan(v), c] = None
    return out


def _wide_part_verdicts(ev: Evaluation) -> tuple[pd.DataFrame, list[int]]:
    """One verdict per part row of a wide sheet: the worst of its characteristics."""
    order = {"nonconforming": 0, "borderline": 1, "not evaluated": 2, "conforms": 3}
    df = pd.DataFrame({
        "row": ev.table.frame["source_row"].to_numpy(),
        "rank": ev.results["verdict"].map(order).to_numpy(),
        "verdict": ev.results["verdict"].to_numpy(),
        "what": ev.table.frame["characteristic"].astype(str).to_numpy() + ": "
        + ev.results["verdict"].astype(str).to_numpy(),
        "flags": ev.results["flags"].to_numpy(),
    })
    g = df.sort_values(["row", "rank"], kind="stable").groupby("row", sort=True)
    out = pd.DataFrame({
        "verdict": g["verdict"].first(),
        "message": g["what"].agg(lambda s: "; ".join(s)),
        "flags": g["flags"].agg(lambda s: ";".join(sorted({f for v in s for f in
                                                            str(v).split(";") if f}))),
    })
    return out.reset_index(drop=True), [int(r) for r in out.index]


def _results_sheet(ev: Evaluation) -> pd.DataFrame:
    cols = ["source_row", "part", "characteristic"]
    return pd.concat([ev.table.frame[cols].reset_index(drop=True),
                      ev.results.reset_index(drop=True)], axis=1)


def _titles(ev: Evaluation) -> list[str]:
    lines = [f"qc {__version__}: sizes at {ev.settings.t_ref:g} °C, uncertainty and verdicts "
             f"for {Path(ev.table.file).name}", f"Decision rule: {ev.rule.description}"]
    lines += [f"WARNING: {n}" for n in ev.notes]
    return lines


def extra_sheets(ev: Evaluation) -> list[SheetTable]:
    """Budget, summary, actions and method sheets."""
    b = ev.budgets
    budget = SheetTable(
        "Budget", _infinity_as_text(b, ("dof",)),
        {"estimate": "0.000E+00", "standard_uncertainty": "0.000E+00",
         "sensitivity": "0.000E+00", "contribution": "0.000E+00", "share": "0.0%", "dof": "0"},
        title_lines=["Uncertainty budget (JCGM 100:2008): one row per contribution per "
                     "measurement; contribution = |c_i|·u(x_i) in the row's unit; the squares "
                     "of a row's contributions sum to its combined uncertainty squared.",
                     *[f"WARNING: {n}" for n in ev.notes]])
    summary = SheetTable(
        "Summary", ev.characteristics,
        {"mean": "0.00000", "s": "0.00000", "min": "0.00000", "max": "0.00000",
         "lower_limit": "0.00000", "upper_limit": "0.00000", "band_low_c": "0.0",
         "band_high_c": "0.0", "band_corrected_low_c": "0.0", "band_corrected_high_c": "0.0"},
        title_lines=[*_titles(ev), "Counts: " + ", ".join(
            f"{v} {ev.counts[v]}" for v in VERDICT_NAMES)])
    actions = SheetTable("Actions", ev.actions, title_lines=[
        "What to do next, by spreadsheet row. " + SAFETY_NOTE])
    method = SheetTable("Method", pd.DataFrame(method_rows(ev), columns=["item", "value"]),
                        column_widths={"item": 34, "value": 110}, freeze_header=False)
    return [budget, summary, actions, method]


def method_rows(ev: Evaluation) -> list[tuple[str, str]]:
    """The method sheet: everything an auditor needs to repeat the evaluation."""
    t = ev.table
    s = ev.settings
    rows: list[tuple[str, str]] = [
        ("program", f"qc {__version__}"),
        ("evaluated at", dt.datetime.now(dt.UTC).strftime("%Y-%m-%d %H:%M UTC")),
        ("input file", Path(t.file).name if t.file else ""),
        ("input SHA-256", ev.input_sha256),
        ("sheet", t.sheet or ""),
        ("layout", f"{t.kind}, header row {t.header_row}"),
        ("reference temperature", f"{s.t_ref:g} °C" + ("" if s.t_ref == 20 else
                                                       " — NOT the ISO 1 standard 20 °C")),
        ("measurement model", "L20 = R·(1 + α_g·(t_g − 20 °C)) / (1 + α_p·(t_p − 20 °C)); "
                              "see docs/method.md"),
        ("uncertainty", "JCGM 100:2008 (GUM): first- and second-order terms, "
                        "Welch–Satterthwaite ν_eff, k from the t-distribution"),
        ("coverage", f"k = {s.k:g}" if s.k else f"coverage probability {s.coverage:.2%}"),
        ("decision rule", f"{ev.rule.name}: {ev.rule.description}"),
        ("thermometer (when the sheet gives none)", "±0.5 °C, rectangular"),
        ("temperature gradient allowance", "±max(0.2 K, 10 % of |t_part − t_gauge|), "
                                           "rectangular"),
        ("instrument too coarse", "tolerance / (2U) below 4 (4:1 rule)"),
        ("rows", f"{len(t.frame)} in, {len(ev.results)} out"),
        *[(f"flag {k}", v) for k, v in FLAG_CODES.items()],
        *[("note", n) for n in [*t.warnings, *ev.notes]],
        ("result columns", ", ".join(RESULT_COLUMNS)),
        ("caution", SAFETY_NOTE),
        ("caution", "Measure part temperature with a contact thermometer (infrared readings on "
                    "bare metal are unreliable) and let parts soak before final inspection."),
    ]
    rows += _materials_used(ev)
    rows += _instruments_used(ev)
    return rows


def _materials_used(ev: Evaluation) -> list[tuple[str, str]]:
    from qc.library.materials import load_materials

    lib = load_materials()
    f = ev.table.frame
    out = []
    for col, role in (("part_material", "part material"), ("gauge_material", "gauge material")):
        if col not in f:
            continue
        for name in sorted(set(f[col].dropna().astype(str)) - {""}):
            if name in lib:
                m = lib.get(name)
                out.append((f"{role} {name}", f"{m.name}: α = {m.cte * 1e6:.2f}e-6/K, "
                            f"u(α) = {m.cte_u * 1e6:.2f}e-6/K; source: {m.source}"))
    return out


def _instruments_used(ev: Evaluation) -> list[tuple[str, str]]:
    f = ev.table.frame
    if "instrument" not in f:
        return []
    cols = [c for c in ("instrument", "instrument_type", "resolution_mm", "mpe_a_mm", "mpe_k_mm",
                        "cal_u_mm") if c in f]
    g = f[cols].drop_duplicates("instrument")
    out = []
    for rec in g.itertuples(index=False):
        d = rec._asdict()
        if not d.get("instrument"):
            continue
        parts = [f"type {d.get('instrument_type') or '?'}"]
        for key, label in (("resolution_mm", "resolution"), ("mpe_a_mm", "MPE A"),
                           ("cal_u_mm", "certificate u")):
            v = d.get(key)
            if v is not None and np.isfinite(v):
                parts.append(f"{label} {v:g} mm")
        k = d.get("mpe_k_mm")
        if k is not None and np.isfinite(k):
            parts.append(f"MPE L/K with K = {k:g}")
        out.append((f"instrument {d['instrument']}", ", ".join(parts)))
    return out
