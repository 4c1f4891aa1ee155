"""Invented batches for the report tests, built the way the contract describes the tables.

The numbers follow the published formulas the pipeline uses, so the tables are consistent:
correction to 20 °C from linear expansion (ISO 1 reference), GUM combination (JCGM 100:2008,
5.1.2) with k = 2, ISO 14253-1 guard bands of U, conformance probability and C_m per
JCGM 106:2012. They are scenarios of our own, not data from any shop.
"""

from __future__ import annotations

from dataclasses import dataclass
from datetime import UTC, date, datetime, timedelta

import numpy as np
import pandas as pd
from scipy.stats import norm

from qc.report import InstrumentUsed, MaterialUsed, ReportData, ReportMeta

ALPHA_STEEL = 11.5e-6  # 1/K, steel (Swyt, J. Res. NIST 99, 1994)
ALPHA_ALU = 23.6e-6  # 1/K, aluminium 6061-T6, 20–100 °C (Aluminum Association data)


@dataclass(frozen=True)
class Char:
    """One characteristic of the invented drawing (limits in the row unit; None = open)."""

    name: str
    kind: str
    nominal: float
    lower: float | None
    upper: float | None
    instrument: str
    spread: float  # process standard deviation, row unit
    offset: float = 0.0  # process mean minus the middle of the tolerance, row unit
    u_instrument: float = 0.0005  # standard uncertainty of the instrument, row unit


def make_batch(
    chars: list[Char], n_parts: int, *, unit: str = "mm", seed: int = 7,
    part_temp: tuple[float, float] = (19.0, 21.0), gauge_temp: float = 20.0,
    alpha_part: float = ALPHA_STEEL, reference_c: float = 20.0, meta: ReportMeta | None = None,
    overdue: str | None = None, shifts: dict[tuple[int, int], float] | None = None,
) -> ReportData:
    """A batch of ``n_parts`` parts × ``chars``, one row per part and characteristic."""
    rng = np.random.default_rng(seed)
    rows, budgets, actions = [], [], []
    start = datetime(2026, 1, 14, 6, 30, tzinfo=UTC)
    for ci, ch in enumerate(chars):
        lo = np.nan if ch.lower is None else ch.lower
        up = np.nan if ch.upper is None else ch.upper
        mid = np.nanmean([lo, up]) if np.isfinite([lo, up]).any() else ch.nominal
        true = mid + ch.offset + ch.spread * rng.standard_normal(n_parts)
        for (c_at, p_at), delta in (shifts or {}).items():  # parts made off on purpose
            if c_at == ci:
                true[p_at] += delta
        tp = rng.uniform(*part_temp, n_parts)
        tg = np.full(n_parts, gauge_temp)
        # reading of a part at tp with a gauge at tg, both referred to 20 °C (linear model)
        reading = true * (1 + alpha_part * (tp - 20) - ALPHA_STEEL * (tg - 20))
        reading += 0.3 * ch.u_instrument * rng.standard_normal(n_parts)
        size = reading * (1 - alpha_part * (tp - 20) + ALPHA_STEEL * (tg - 20))
        correction = size - reading
        # budget: instrument, part temperature (u 0.3 K), expansion coefficient (10 %)
        u_inst = np.full(n_parts, ch.u_instrument)
        u_temp = np.abs(ch.nominal * alpha_part) * 0.3
        u_alpha = np.abs(ch.nominal * (tp - 20)) * 0.1 * alpha_part
        contrib = np.vstack([u_inst, np.full(n_parts, u_temp), u_alpha])
        uc = np.sqrt((contrib**2).sum(axis=0))
        k = 2.0
        U = k * uc
        acc_lo, acc_hi = lo + U, up - U
        inside = (np.isnan(lo) | (size >= acc_lo)) & (np.isnan(up) | (size <= acc_hi))
        outside = (size < lo - U) | (size > up + U)
        verdict = np.where(inside, "conforms", np.where(outside, "nonconforming", "borderline"))
        margin = np.fmin(np.where(np.isnan(up), np.inf, up - size),
                         np.where(np.isnan(lo), np.inf, size - lo)) / U
        pc = np.where(np.isnan(up), 1.0, norm.cdf((up - size) / uc)) - np.where(
            np.isnan(lo), 0.0, norm.cdf((lo - size) / uc))
        cm = (up - lo) / (4 * uc)
        for i in range(n_parts):
            part = f"H-{i + 1:03d}"
            src = 2 + ci * n_parts + i
            flags = []
            soak_lo = soak_hi = np.nan
            if verdict[i] == "borderline" and abs(tp[i] - 20) > 2:
                flags.append("temperature-decides")
                flags.append("soak-advised")
                soak_lo, soak_hi = 35.0, 80.0
                actions.append({"part": part, "characteristic": ch.name,
                                "action": "soak and re-measure",
                                "reason": f"part at {tp[i]:.1f} °C; the temperature decides",
                                "source_row": src})
            if np.isfinite(cm[i]) and cm[i] < 4:
                flags.append("instrument-too-coarse")
                actions.append({"part": part, "characteristic": ch.name,
                                "action": "use a finer instrument",
                                "reason": f"C_m = {cm[i]:.1f}, below 4", "source_row": src})
            if overdue and ch.instrument == overdue:
                flags.append("calibration-overdue")
                actions.append({"part": part, "characteristic": ch.name,
                                "action": "calibration overdue",
                                "reason": f"{overdue} was due before this inspection",
                                "source_row": src})
            row_index = len(rows)
            rows.append({
                "part": part, "characteristic": ch.name, "kind": ch.kind, "unit": unit,
                "nominal": ch.nominal, "lower_limit": lo, "upper_limit": up,
                "reading": reading[i], "size_at_20c": size[i],
                "thermal_correction": correction[i], "combined_uncertainty": uc[i],
                "coverage_factor": k, "expanded_uncertainty": U[i], "effective_dof": 60.0,
                "verdict": verdict[i], "conformance_probability": pc[i],
                "capability_index": cm[i], "margin_in_U": margin[i],
                "accept_low": acc_lo[i], "accept_high": acc_hi[i], "flags": ";".join(flags),
                "message": "", "part_temp_c": tp[i], "gauge_temp_c": tg[i],
                "instrument": ch.instrument, "inspector": "R. Okafor",
                "measured_at": start + timedelta(minutes=3 * row_index), "source_row": src,
                "soak_minutes_low": soak_lo, "soak_minutes_high": soak_hi,
            })
            for q, est, qu, u_x, dist, c_i, ui, label in (
                ("instrument", 0.0, unit, ch.u_instrument, "rectangular", 1.0,
                 contrib[0, i], "instrument table"),
                ("part temperature", tp[i], "°C", 0.3, "normal", ch.nominal * alpha_part,
                 contrib[1, i], "contact thermometer"),
                ("expansion coefficient of the part", alpha_part, "1/K", 0.1 * alpha_part,
                 "rectangular", ch.nominal * (tp[i] - 20), contrib[2, i], "materials table"),
            ):
                budgets.append({
                    "row_index": row_index, "quantity": q, "estimate": est, "unit": qu,
                    "standard_uncertainty": u_x, "distribution": dist, "dof": 50.0,
                    "sensitivity": c_i, "contribution": ui, "share": ui**2 / uc[i] ** 2,
                    "source_label": label,
                })
    results = pd.DataFrame(rows)
    meta = meta or ReportMeta()
    meta = ReportMeta(**{**meta.__dict__, "reference_temperature_c": reference_c})
    return ReportData(results, pd.DataFrame(budgets),
                      pd.DataFrame(actions, columns=["part", "characteristic", "action",
                                                     "reason", "source_row"]), meta)


def _meta(batch: str, **kw: object) -> ReportMeta:
    base = dict(
        title="Inspection report", batch=batch, input_file=f"{batch}.xlsx",
        input_sha256="9f2c" * 16, sheet="Readings", decision_rule="ISO 14253-1",
        decision_rule_description="conformance proven inside the tolerance reduced by U; "
        "nonconformance proven outside it enlarged by U",
        coverage_probability=0.95, program_version="0.1.0",
        generated_at=datetime(2026, 1, 15, 9, 0, tzinfo=UTC),
        materials=(MaterialUsed("steel 1.0503 (C45)", "qc materials table: steel, gauge "
                                "reference (Swyt 1994)", ALPHA_STEEL),),
        instruments=(
            InstrumentUsed("bore gauge BG-2", "instrument table", "two-point bore gauge",
                           date(2026, 6, 30)),
            InstrumentUsed("micrometer M-07", "instrument table", "outside micrometer 75–100",
                           date(2025, 12, 31)),
            InstrumentUsed("caliper C-11", "instrument table", "dial caliper 0–150",
                           date(2026, 9, 1)),
        ),
    )
    base.update(kw)
    return ReportMeta(**base)  # type: ignore[arg-type]


def winter_batch() -> ReportData:
    """30 steel housings measured cold off the delivery van: borderline parts, one overdue
    micrometer, reference 20 °C, sizes in mm."""
    chars = [
        Char("Bore Ø25 H7", "diameter", 25.0, 25.000, 25.021, "bore gauge BG-2", 0.0035,
             offset=0.006, u_instrument=0.0008),
        Char("Length 80 ±0.05", "length", 80.0, 79.95, 80.05, "micrometer M-07", 0.012,
             u_instrument=0.001),
        Char("Flange 12 −0.1", "thickness", 12.0, 11.9, 12.0, "caliper C-11", 0.02,
             u_instrument=0.012),
    ]
    return make_batch(chars, 30, part_temp=(11.0, 16.0), gauge_temp=19.5, seed=11,
                      meta=_meta("HW-2601"), overdue="micrometer M-07",
                      shifts={(0, 6): 0.012})


def inch_batch() -> ReportData:
    """60 aluminium brackets with one-sided limits, in inches, reference 20 °C."""
    chars = [
        Char("Wall 0.120 min", "thickness", 0.125, 0.120, None, "micrometer M-07", 0.0018,
             offset=0.005, u_instrument=0.00005),
        Char("Slot depth 0.250 max", "depth", 0.245, None, 0.250, "caliper C-11", 0.0018,
             offset=-0.005, u_instrument=0.0004),
    ]
    meta = _meta("BR-0412", materials=(MaterialUsed("aluminium 6061-T6", "qc materials "
                                                    "table (Aluminum Association)", ALPHA_ALU),))
    return make_batch(chars, 60, unit="in", part_temp=(19.0, 24.0), alpha_part=ALPHA_ALU,
                      seed=5, meta=meta, shifts={(0, 9): -0.009})


def tiny_batch() -> ReportData:
    """3 shafts checked at a site that states sizes at 23 °C (not the ISO 1 reference)."""
    chars = [
        Char("Shaft Ø25 g6", "diameter", 25.0, 24.980, 24.993, "micrometer M-07", 0.002,
             u_instrument=0.0006),
        Char("Shoulder 40 ±0.1", "length", 40.0, 39.9, 40.1, "caliper C-11", 0.02,
             u_instrument=0.01),
    ]
    return make_batch(chars, 3, part_temp=(20.5, 21.5), seed=3, reference_c=23.0,
                      meta=_meta("SH-3"))


def big_batch(n_chars: int = 40, n_parts: int = 200) -> ReportData:
    """A large batch for the layout checks: 40 characteristics × 200 parts."""
    chars = [Char(f"Feature {i + 1:02d}", "length", 10.0 + i, 10.0 + i - 0.02,
                  10.0 + i + 0.02, "caliper C-11", 0.004, u_instrument=0.001)
             for i in range(n_chars)]
    return make_batch(chars, n_parts, part_temp=(18.0, 23.0), seed=1, meta=_meta("BIG"))
