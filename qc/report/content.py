"""Turn ReportData into what the template prints: text, numbers formatted, charts drawn.

Everything here is presentation: no verdict or uncertainty is recomputed, only the
statistics of the corrected sizes (``qc.report.stats``) are derived.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from datetime import date, datetime

import numpy as np
import pandas as pd

from qc.report.actions import ActionList, action_list, last_inspection_date
from qc.report.charts import SizeSeries, budget_chart, size_chart, temperature_chart
from qc.report.data import ReportData, ReportMeta
from qc.report.stats import CAUTION_N, MIN_N_CAPABILITY, describe
from qc.report.summary import (
    PartNeed,
    budget_positions,
    budget_rows,
    parts_needing_action,
    verdict_counts,
    worst_margins,
)
from qc.report.units import DisplayUnit, to_display

__all__ = ["MAX_PARTS_LISTED", "Content", "build_content"]

MAX_PARTS_LISTED = 60


@dataclass
class CharacteristicView:
    """One characteristic: its chart, the statistics row and the words around them."""

    number: int
    name: str
    kind: str
    limits: str
    chart_uri: str
    chart_note: str
    n: int
    mean: str
    std: str
    minimum: str
    maximum: str
    cp: str
    cpk: str
    note: str


@dataclass
class BudgetView:
    """The uncertainty budget of one row, drawn and tabled."""

    title: str
    dominant: str
    chart_uri: str
    lines: list[dict[str, str]]
    result: str


@dataclass
class Content:
    """All the report prints, ready for the template."""

    meta: ReportMeta
    unit: DisplayUnit
    paper: str
    facts: list[tuple[str, str]]
    warnings: list[str]
    counts: list[tuple[str, int]]
    total: int
    needs: list[PartNeed]
    needs_left_off: int
    worst: list[dict[str, str]]
    characteristics: list[CharacteristicView]
    budgets: list[BudgetView]
    budgets_qualified: int
    temperature_uri: str | None
    temperature_note: str
    ref: str
    actions: ActionList
    calibration_table: list[dict[str, str]]
    min_n: int = MIN_N_CAPABILITY
    caution_n: int = CAUTION_N
    footer_caution: str = field(
        default="Supports, does not replace, the customer's acceptance requirements, "
        "accredited procedures (ISO/IEC 17025) and qualified judgement."
    )


def build_content(data: ReportData, unit: DisplayUnit, paper: str) -> Content:
    """Everything the template needs, for one report unit and paper size."""
    r = data.results
    meta = data.meta
    needs = parts_needing_action(r, data.actions)
    positions, qualified = budget_rows(r, data.budgets)
    generated = meta.generated_at or datetime.now().astimezone()
    ref = f"{meta.reference_temperature_c:g}\u00a0°C"
    return Content(
        meta=meta,
        unit=unit,
        paper=paper,
        facts=_facts(data, generated, unit),
        warnings=_warnings(meta),
        counts=verdict_counts(r),
        total=len(r),
        needs=needs[:MAX_PARTS_LISTED],
        needs_left_off=max(0, len(needs) - MAX_PARTS_LISTED),
        worst=[_worst_row(row, unit) for _, row in worst_margins(r).iterrows()],
        characteristics=_characteristics(r, unit, ref),
        budgets=[_budget(data, p, unit) for p in positions],
        budgets_qualified=qualified,
        temperature_uri=_temperature(r, unit, meta),
        temperature_note=_temperature_note(r, unit),
        ref=ref,
        actions=action_list(r, data.actions, meta),
        calibration_table=_calibration_table(data),
    )


def _stamp(t: datetime) -> str:
    return t.strftime("%Y-%m-%d %H:%M %Z").strip()


def _fmt_num(x: object, spec: str) -> str:
    try:
        v = float(x)  # type: ignore[arg-type]
    except (TypeError, ValueError):
        return "–"
    return format(v, spec) if math.isfinite(v) else "–"


def _facts(data: ReportData, generated: datetime, unit: DisplayUnit) -> list[tuple[str, str]]:
    """The header lines, leaving out what neither the meta nor the sheet has."""
    r, m = data.results, data.meta
    facts: list[tuple[str, str]] = []
    if m.batch:
        facts.append(("Batch", m.batch))
    facts.append(("Parts", str(r["part"].nunique())))
    chars = list(dict.fromkeys(characteristic_names(r, unit)))
    shown = ", ".join(chars[:12]) + (f" and {len(chars) - 12} more" if len(chars) > 12 else "")
    facts.append(("Characteristics", f"{len(chars)}: {shown}" if chars else "0"))
    facts.append(("Measurements", str(len(r))))
    first, last = _dates(r, m)
    if first:
        facts.append(("Inspected", first if first == last else f"{first} to {last}"))
    inspectors = list(m.inspectors) or list(dict.fromkeys(r["inspector"].dropna().astype(str)))
    inspectors = [i for i in inspectors if i.strip()]
    if inspectors:
        facts.append(("Inspector" if len(inspectors) == 1 else "Inspectors", ", ".join(inspectors)))
    if m.input_file:
        facts.append(("Inspection sheet", m.input_file + (f" › {m.sheet}" if m.sheet else "")))
    if m.input_sha256:
        facts.append(("SHA-256 of the sheet", m.input_sha256))
    rule = m.decision_rule + (f": {m.decision_rule_description}" if m.decision_rule_description
                              else "")
    facts.append(("Decision rule", rule))
    facts.append(("Coverage probability", f"{100 * m.coverage_probability:g} %"))
    ref = f"{m.reference_temperature_c:g}\u00a0°C"
    ref += (" (NOT the ISO 1 reference of 20\u00a0°C)" if m.off_reference
            else " (ISO 1 reference)")
    facts.append(("Sizes stated at", ref))
    program = "qc" + (f" {m.program_version}" if m.program_version else "")
    facts.append(("Produced by", f"{program}, {_stamp(generated)}"))
    return facts


def _dates(r: pd.DataFrame, m: ReportMeta) -> tuple[str, str]:
    first: date | None = m.inspected_from
    last = last_inspection_date(r, m)
    if first is None:
        stamps = pd.to_datetime(r["measured_at"], errors="coerce").dropna()
        first = stamps.min().date() if len(stamps) else None
    return (first.isoformat() if first else "", last.isoformat() if last else "")


def _warnings(m: ReportMeta) -> list[str]:
    warnings = []
    if m.off_reference:
        warnings.append(
            f"Sizes are stated at {m.reference_temperature_c:g}\u00a0°C, not at the ISO 1 "
            "reference temperature of 20\u00a0°C: compare them only with limits agreed for "
            "that temperature."
        )
    return warnings


def _limits_text(lo: np.ndarray, up: np.ndarray, unit: DisplayUnit) -> str:
    """"limits 24.9800 to 25.0210 mm", "max 0.8000 mm", or "limits differ between parts"."""
    def common(a: np.ndarray) -> float | None:
        f = a[np.isfinite(a)]
        if f.size == 0:
            return math.nan
        return float(f[0]) if f.size == a.size and np.ptp(f) == 0 else None

    cl, cu = common(lo), common(up)
    if cl is None or cu is None:
        return "limits differ between parts"
    has_l, has_u = math.isfinite(cl), math.isfinite(cu)
    if has_l and has_u:
        return f"limits {unit.size(cl)} to {unit.size(cu)} {unit.name}"
    if has_u:
        return f"max {unit.size(cu)} {unit.name} (one-sided)"
    if has_l:
        return f"min {unit.size(cl)} {unit.name} (one-sided)"
    return "no limits"


def characteristic_names(r: pd.DataFrame, unit: DisplayUnit) -> pd.Series:
    """The name each row is charted under: its characteristic, or, where the sheet gives
    none, "unnamed, nominal …" so that rows of different sizes are not drawn as one."""
    names = r["characteristic"].fillna("").astype(str).str.strip()
    blank = names == ""
    if blank.any():
        nominal = to_display(r.loc[blank, "nominal"], r.loc[blank, "unit"], unit)
        names[blank] = [f"unnamed, nominal {unit.size(v)} {unit.name}" for v in nominal]
    return names


def _characteristics(r: pd.DataFrame, unit: DisplayUnit, ref: str) -> list[CharacteristicView]:
    views = []
    names = characteristic_names(r, unit)
    for number, (name, g) in enumerate(r.groupby(names, sort=False), start=1):
        conv = {c: to_display(g[c], g["unit"], unit) for c in (
            "size_at_20c", "reading", "expanded_uncertainty", "lower_limit", "upper_limit",
            "accept_low", "accept_high", "nominal")}  # fmt: skip
        series = SizeSeries(
            parts=g["part"].astype(str).tolist(), size=conv["size_at_20c"],
            reading=conv["reading"], expanded=conv["expanded_uncertainty"],
            lower=conv["lower_limit"], upper=conv["upper_limit"], accept_low=conv["accept_low"],
            accept_high=conv["accept_high"], nominal=conv["nominal"],
            verdict=g["verdict"].astype(str).tolist(),
        )
        chart = size_chart(series, unit, ref)
        st = describe(conv["size_at_20c"], conv["lower_limit"], conv["upper_limit"])
        notes = [f"{len(g)} measurement" + ("" if len(g) == 1 else "s")]
        if chart.panels > 1:
            notes.append(f"parts in order of the sheet, in {chart.panels} rows")
        if chart.off_scale:
            notes.append(f"{chart.off_scale} size(s) off the scale, drawn as arrows at the edge")
        missing = int(np.sum(~np.isfinite(conv["size_at_20c"])))
        if missing:
            notes.append(f"{missing} without a size at {ref} (not drawn)")
        kinds = ", ".join(dict.fromkeys(g["kind"].dropna().astype(str)))
        views.append(CharacteristicView(
            number=number, name=str(name), kind=kinds,
            limits=_limits_text(conv["lower_limit"], conv["upper_limit"], unit),
            chart_uri=chart.uri, chart_note="; ".join(notes), n=st.n,
            mean=unit.size(st.mean), std=unit.size(st.std), minimum=unit.size(st.minimum),
            maximum=unit.size(st.maximum), cp=_fmt_num(st.cp, ".2f"),
            cpk=_fmt_num(st.cpk, ".2f"), note=st.note,
        ))
    return views


def _worst_row(row: pd.Series, unit: DisplayUnit) -> dict[str, str]:
    one = pd.DataFrame([row])
    size = to_display(one["size_at_20c"], one["unit"], unit)[0]
    U = to_display(one["expanded_uncertainty"], one["unit"], unit)[0]
    lo = to_display(one["lower_limit"], one["unit"], unit)
    up = to_display(one["upper_limit"], one["unit"], unit)
    return {
        "part": str(row["part"]), "characteristic": str(row["characteristic"]),
        "size": unit.size(size), "U": unit.size(U),
        "limits": _short_limits(lo[0], up[0], unit),
        "margin": _signed(row["margin_in_U"], ".2f"),
        "pc": _percent(row["conformance_probability"]),
        "verdict": str(row["verdict"]), "row": _fmt_num(row["source_row"], ".0f"),
    }



def _short_limits(lo: float, up: float, unit: DisplayUnit) -> str:
    """Limits for a table cell: "24.9800–25.0210", "≤ 0.25000", "≥ 0.12000"."""
    has_l, has_u = math.isfinite(lo), math.isfinite(up)
    if has_l and has_u:
        return f"{unit.size(lo)}–{unit.size(up)}"
    if has_u:
        return f"≤ {unit.size(up)}"
    return f"≥ {unit.size(lo)}" if has_l else "–"


def _percent(p: object) -> str:
    """A probability as a percentage, never rounded up to a certain 100 % or down to 0 %."""
    s = _fmt_num(p, ".6f")
    if s == "–":
        return s
    v = 100 * float(s)
    if v >= 99.995:
        return "> 99.99 %"
    if v <= 0.005:
        return "< 0.01 %"
    return f"{v:.2f} %" if v >= 99.95 or v < 0.05 else f"{v:.1f} %"


def _signed(x: object, spec: str) -> str:
    """A number with a true minus sign (U+2212), as typeset text uses."""
    return _fmt_num(x, spec).replace("-", "−")


def _budget(data: ReportData, position: int, unit: DisplayUnit) -> BudgetView:
    r, b = data.results, data.budgets
    row = r.iloc[position]
    lines = b[budget_positions(r, b) == position]
    row_unit = pd.Series([row["unit"]] * len(lines), index=lines.index)
    contrib = unit.to_small(to_display(lines["contribution"], row_unit, unit))
    share = pd.to_numeric(lines["share"], errors="coerce").to_numpy(float)
    quantities = lines["quantity"].astype(str).tolist()
    uri = budget_chart(quantities, np.asarray(contrib, float), share, unit.small)
    top = int(np.nanargmax(np.abs(contrib))) if len(lines) and np.isfinite(contrib).any() else -1
    dominant = ""
    if top >= 0:
        dominant = f"dominant input: {quantities[top]}"
        if math.isfinite(share[top]):
            dominant += f" ({100 * share[top]:.0f} % of the combined variance)"
    table = []
    for (_, line), c, s in zip(lines.iterrows(), np.asarray(contrib, float), share, strict=True):
        table.append({
            "quantity": str(line["quantity"]),
            "estimate": f"{_fmt_num(line['estimate'], '.6g')} {line['unit']}".strip(),
            "u": f"{_fmt_num(line['standard_uncertainty'], '.3g')} {line['unit']}".strip(),
            "distribution": str(line["distribution"]),
            "dof": _dof(line["dof"]),
            "sensitivity": _fmt_num(line["sensitivity"], ".3g"),
            "contribution": _fmt_num(c, ".2f"),
            "share": "–" if not math.isfinite(s) else f"{100 * s:.1f} %",
            "source": "" if pd.isna(line["source_label"]) else str(line["source_label"]),
        })
    one = pd.DataFrame([row])
    uc = unit.to_small(to_display(one["combined_uncertainty"], one["unit"], unit)[0])
    U = unit.to_small(to_display(one["expanded_uncertainty"], one["unit"], unit)[0])
    result = (f"u_c = {_fmt_num(uc, '.2f')} {unit.small}; ν_eff = {_dof(row['effective_dof'])}; "
              f"k = {_fmt_num(row['coverage_factor'], '.2f')}; "
              f"U = {_fmt_num(U, '.2f')} {unit.small}")
    title = (f"{row['part']} · {row['characteristic']} · {row['verdict']} · "
             f"margin {_signed(row['margin_in_U'], '.2f')} U")
    return BudgetView(title, dominant, uri, table, result)


def _dof(v: object) -> str:
    s = _fmt_num(v, ".0f")
    try:
        if math.isinf(float(v)):  # type: ignore[arg-type]
            return "∞"
    except (TypeError, ValueError):
        pass
    return s


def _temperature(r: pd.DataFrame, unit: DisplayUnit, m: ReportMeta) -> str | None:
    temp = pd.to_numeric(r["part_temp_c"], errors="coerce").to_numpy(float)
    corr = unit.to_small(to_display(r["thermal_correction"], r["unit"], unit))
    if not (np.isfinite(temp) & np.isfinite(corr)).any():
        return None
    return temperature_chart(temp, np.asarray(corr, float), r["verdict"].astype(str).tolist(),
                             m.reference_temperature_c, unit.small)


def _temperature_note(r: pd.DataFrame, unit: DisplayUnit) -> str:
    temp = pd.to_numeric(r["part_temp_c"], errors="coerce").dropna()
    corr = np.asarray(unit.to_small(to_display(r["thermal_correction"], r["unit"], unit)), float)
    corr = corr[np.isfinite(corr)]
    if temp.empty or corr.size == 0:
        return ("No thermal correction to show: no part temperatures were recorded, "
                "or no row could be evaluated.")
    return (f"Part temperatures {temp.min():.1f}\u00a0°C to {temp.max():.1f}\u00a0°C; the largest "
            f"correction applied was {np.abs(corr).max():.1f} {unit.small}.")


def _calibration_table(data: ReportData) -> list[dict[str, str]]:
    day = last_inspection_date(data.results, data.meta)
    rows = []
    for inst in data.meta.instruments:
        due = inst.calibration_due
        status = ""
        if due is not None and day is not None:
            status = "overdue" if due < day else "in date"
        rows.append({"name": inst.name, "description": inst.description, "source": inst.source,
                     "due": due.isoformat() if due else "–", "status": status})
    return rows
