"""The main job: read a sheet → validate → correct to 20 °C → budget → decide → results.

``evaluate_file`` reads and evaluates; ``write_results`` writes the workbook back (or a
CSV/Parquet/JSON Lines table). Everything between the reader and the writers is column-wise:
the frame's columns become :class:`~qc.core.model.MeasurementArrays`, the core evaluates the
whole batch in one call, and the results come back as columns in each row's own unit.
"""

from __future__ import annotations

import hashlib
from dataclasses import dataclass, field
from functools import cached_property
from pathlib import Path

import numpy as np
import pandas as pd

from qc.core.budget import BatchBudget, evaluate
from qc.core.decision import (
    BORDERLINE,
    NOT_EVALUATED,
    VERDICT_NAMES,
    Decision,
    DecisionRule,
    decide,
    rule_from_name,
)
from qc.core.distributions import RECTANGULAR
from qc.core.model import MeasurementArrays
from qc.errors import ConfigError
from qc.io.guard import Limits
from qc.io.plausibility import check_plausibility
from qc.io.reader import InspectionTable, read_inspection
from qc.models import Layout
from qc.results import (
    actions_frame,
    band_actions,
    budget_frame,
    characteristic_frame,
    soak_advice,
)
from qc.units import MM_PER_UNIT

__all__ = ["Evaluation", "Settings", "evaluate_file", "evaluate_table", "mm_per_unit"]


#: Half-width assumed for a thermometer whose accuracy the sheet does not state, °C
#: (a contact thermometer for shop use; common practice, no source).
DEFAULT_THERMOMETER_C = 0.5
#: Allowance for the part's core differing from its measured surface, half-width in K:
#: 0.2 K, or a tenth of the part–gauge difference when larger (common practice, no source).
GRADIENT_FLOOR_C = 0.2
GRADIENT_SHARE = 0.1
#: Test uncertainty ratio below which the instrument is called too coarse:
#: tolerance / (2U) < 4 (the 4:1 rule, common practice, no source).
MIN_UNCERTAINTY_RATIO = 4.0


@dataclass(frozen=True)
class Settings:
    """What the user agreed for this run (command-line options override the layout file)."""

    rule: str | None = None
    coverage: float = 0.9545
    k: float | None = None
    t_ref: float = 20.0
    output_unit: str = "row"
    soak_band_k: float = 1.0
    tolerance_share: float = 0.1


@dataclass
class Evaluation:
    """Everything one run produced, for the writers, the report and notebooks."""

    table: InspectionTable
    measurements: MeasurementArrays
    budget: BatchBudget
    decision: Decision
    rule: DecisionRule
    settings: Settings
    results: pd.DataFrame
    characteristics: pd.DataFrame
    actions: pd.DataFrame
    input_sha256: str = ""
    source: Path | None = None
    notes: list[str] = field(default_factory=list)

    @cached_property
    def budgets(self) -> pd.DataFrame:
        """The budget in long form (one row per contribution per measurement), built when
        first asked for: flat outputs never need it."""
        return budget_frame(self.budget, self.results, mm_per_unit(self.results["unit"]),
                            self.table.frame["source_row"].to_numpy())

    @property
    def counts(self) -> dict[str, int]:
        """Rows per verdict, every verdict listed."""
        counts = self.results["verdict"].value_counts()
        return {v: int(counts.get(v, 0)) for v in VERDICT_NAMES}

    @property
    def input_columns(self) -> pd.DataFrame:
        """The validated input fields beside the results (for flat outputs)."""
        keep = ["source_file", "source_sheet", "source_row", "part", "characteristic", "kind",
                "instrument", "inspector", "measured_at", "part_temp_c", "gauge_temp_c"]
        return self.table.frame[[c for c in keep if c in self.table.frame]]

    def flat(self) -> pd.DataFrame:
        """Input fields and result columns side by side, one row per input row."""
        return pd.concat([self.input_columns, self.results], axis=1)


def mm_per_unit(units: pd.Series | np.ndarray) -> np.ndarray:
    """Millimetres per unit for each row's unit name (1 for angles and unknown units).

    Looked up once per distinct name (a sheet uses one or two units)."""
    codes, names = pd.factorize(pd.Series(units), use_na_sentinel=True)
    per_name = np.array([MM_PER_UNIT.get(u, 1.0) if isinstance(u, str) else 1.0
                         for u in names] + [1.0])
    return per_name[codes]  # code -1 (missing): the 1.0 at the end


def sha256_of(path: Path) -> str:
    """SHA-256 of a file, read in blocks (the method sheet names the exact input)."""
    digest = hashlib.sha256()
    with open(path, "rb") as fh:
        for block in iter(lambda: fh.read(1 << 20), b""):
            digest.update(block)
    return digest.hexdigest()


def evaluate_file(path: Path | str, *, layout: Layout | None = None, sheet: str | None = None,
                  register: Path | None = None, settings: Settings | None = None,
                  limits: Limits | None = None) -> Evaluation:
    """Read one inspection file and evaluate every row (the input file is only read).

    ``limits`` are the safety limits for untrusted files (qc/data/limits.toml by default).
    """
    path = Path(path)
    table = read_inspection(path, layout=layout, sheet=sheet, register=register, limits=limits)
    ev = evaluate_table(table, settings or Settings())
    ev.input_sha256 = sha256_of(path)
    ev.source = path
    return ev


def _col(frame: pd.DataFrame, name: str, default: float = np.nan) -> np.ndarray:
    if name not in frame:
        return np.full(len(frame), default)
    return frame[name].to_numpy(dtype=float, na_value=np.nan)


def _rule(table: InspectionTable, settings: Settings) -> DecisionRule:
    name = settings.rule or table.layout.defaults.decision_rule or "iso14253"
    return rule_from_name(name)


def measurement_arrays(frame: pd.DataFrame, layout: Layout) -> MeasurementArrays:
    """The core's inputs from the reader's typed columns (mm, °C, 1/K)."""
    n_read = _col(frame, "n_readings", 1.0)
    n_read = np.where(np.isfinite(n_read) & (n_read >= 1), n_read, 1.0)
    sd = _col(frame, "reading_sd_mm")
    prior = _col(frame, "prior_sd_mm")
    single = n_read < 2
    repeat_s = np.where(single, np.nan_to_num(prior, nan=0.0), np.nan_to_num(sd, nan=0.0))
    # A prior standard deviation (n = 1) counts as Type B with infinite degrees of freedom
    # unless the layout says more; n repeated readings give n − 1 (GUM 4.2.6).
    repeat_nu = np.where(single, np.inf, np.nan)

    part_t = _col(frame, "part_temp_c")
    gauge_t = _col(frame, "gauge_temp_c")
    room_t = _col(frame, "room_temp_c")
    gauge_t = np.where(np.isfinite(gauge_t), gauge_t, room_t)
    # One temperature for part and gauge (the reader's flag: no gauge temperature, or the
    # same value), unless a room temperature stands for the gauge's.
    shared = frame["shared_room"].to_numpy(dtype=bool) if "shared_room" in frame else \
        np.zeros(len(frame), bool)
    gauge_given = np.isfinite(_col(frame, "gauge_temp_c"))
    shared = (shared & (gauge_given | ~np.isfinite(room_t))) | ~np.isfinite(gauge_t)
    acc = _col(frame, "thermometer_accuracy_c")
    default_acc = _default_accuracy(layout)
    acc = np.where(np.isfinite(acc), acc, default_acc)
    u_part = _col(frame, "u_part_temp_c")
    u_gauge = _col(frame, "u_gauge_temp_c")
    sqrt3 = np.sqrt(3.0)
    u_part = np.where(np.isfinite(u_part), u_part, acc / sqrt3)
    u_gauge = np.where(np.isfinite(u_gauge), u_gauge, acc / sqrt3)
    diff = np.abs(part_t - np.where(np.isfinite(gauge_t), gauge_t, part_t))
    grad = np.maximum(GRADIENT_FLOOR_C, GRADIENT_SHARE * np.nan_to_num(diff))

    master = _col(frame, "master_size_mm")
    comparison = np.isfinite(master)
    cal_u = _col(frame, "cal_u_mm")
    alpha_g = _col(frame, "gauge_cte")
    u_alpha_g = _col(frame, "gauge_cte_u")
    return MeasurementArrays.from_columns(
        reading=_col(frame, "reading_mean_mm"),
        comparison=comparison,
        master_size=master,
        master_U=np.nan_to_num(_col(frame, "master_u_mm"), nan=0.0),
        master_k=1.0,
        repeat_s=repeat_s,
        repeat_n=n_read,
        repeat_nu=repeat_nu,
        resolution=np.nan_to_num(_col(frame, "resolution_mm"), nan=0.0),
        mpe_a=np.nan_to_num(_col(frame, "mpe_a_mm"), nan=0.0),
        mpe_k=_fill_nan(_col(frame, "mpe_k_mm"), np.inf),
        cert_U=cal_u,
        cert_k=1.0,
        scaled=frame["scaled"].to_numpy(dtype=bool) if "scaled" in frame else True,
        shared_room=shared,
        t_part=part_t,
        t_gauge=np.where(shared, part_t, gauge_t),
        u_t_part=u_part,
        u_grad_part=grad,
        dist_grad_part=RECTANGULAR,
        u_t_gauge=u_gauge,
        alpha_part=_col(frame, "part_cte"),
        u_alpha_part=np.nan_to_num(_col(frame, "part_cte_u"), nan=0.0),
        alpha_gauge=np.where(np.isfinite(alpha_g), alpha_g, 11.5e-6),
        u_alpha_gauge=np.where(np.isfinite(u_alpha_g), u_alpha_g, 0.0),
        dtheta=0.0,
        u_dtheta=grad,
    )


def _fill_nan(a: np.ndarray, value: float) -> np.ndarray:
    """NaN → value, leaving ±inf as they are (np.nan_to_num would clip them)."""
    return np.where(np.isnan(a), value, a)


def _default_accuracy(layout: Layout) -> float:
    value = layout.defaults.thermometer_accuracy
    if value is None:
        return DEFAULT_THERMOMETER_C
    if isinstance(value, int | float):
        return float(value)
    from qc.io.values import parse_temperature_difference

    return parse_temperature_difference(value)


def _missing_inputs(frame: pd.DataFrame, m: MeasurementArrays) -> np.ndarray:
    """A plain reason for each row the core could not evaluate ('' where it could)."""
    checks = (
        (~np.isfinite(m.reading), "no usable reading"),
        (np.isnan(_col(frame, "lower_limit_mm")) & np.isnan(_col(frame, "upper_limit_mm")),
         "no tolerance or limits"),
        (m.scaled & ~np.isfinite(m.t_part), "no part temperature"),
        (m.scaled & ~np.isfinite(m.alpha_part), "no part material or expansion coefficient"),
    )
    # one bit per reason; the few combinations that occur are written out once
    code = np.zeros(len(frame), dtype=np.int64)
    for j, (mask, _) in enumerate(checks):
        code |= np.asarray(mask, dtype=np.int64) << j
    uniq, inverse = np.unique(code, return_inverse=True)
    texts = np.array(["; ".join(r for j, (_, r) in enumerate(checks) if c >> j & 1)
                      for c in uniq.tolist()], dtype=object)
    return texts[inverse.ravel()]


def evaluate_table(table: InspectionTable, settings: Settings, *,
                   summaries: bool = True) -> Evaluation:
    """Evaluate every row of a validated table: correction, budget, verdict, flags, actions.

    ``summaries=False`` leaves out what describes the table as a whole (per-characteristic
    statistics and temperature bands, and the band actions built on them): a chunk of a file
    read in parts gets its per-row results only.
    """
    if not 0.5 <= settings.coverage < 1.0 and settings.k is None:
        raise ConfigError(
            f"coverage probability {settings.coverage!r}: expected a fraction such as 0.9545")
    frame = table.frame
    rule = _rule(table, settings)
    m = measurement_arrays(frame, table.layout)
    errors_by_row = _row_messages(table)
    implausible, doubtful, plausibility_notes = check_plausibility(frame, columns=table.columns)
    for i, msgs in implausible.items():
        errors_by_row.setdefault(int(i), msgs)  # the reader's own message comes first
    has_error = np.zeros(len(frame), dtype=bool)
    has_error[list(errors_by_row)] = True

    budget = evaluate(m, coverage=settings.coverage, k=settings.k, t_ref=settings.t_ref)
    lsl, usl = _col(frame, "lower_limit_mm"), _col(frame, "upper_limit_mm")
    y = np.where(has_error, np.nan, budget.size_at_20)
    decision = decide(y, budget.U, budget.u_c, lsl, usl, rule, uncorrected=budget.uncorrected)

    results = _results(table, m, budget, decision, errors_by_row, settings)
    _add_doubts(results, doubtful)
    ev = Evaluation(
        table=table, measurements=m, budget=budget, decision=decision, rule=rule,
        settings=settings, results=results,
        characteristics=characteristic_frame(table.frame, results, settings.tolerance_share)
        if summaries else pd.DataFrame(),
        actions=actions_frame(table.frame, results),
    )
    if summaries:
        ev.actions = pd.concat(
            [ev.actions,
             band_actions(ev.table.frame, ev.characteristics, settings.tolerance_share)],
            ignore_index=True)
    ev.notes.extend(plausibility_notes)
    if budget.reference_warning:
        ev.notes.append(budget.reference_warning)
    return ev


def _add_doubts(results: pd.DataFrame, doubtful: dict[int, list[str]]) -> None:
    """Plausibility warnings: the row is evaluated, flagged ``check-input``, the doubt in
    ``message`` (e.g. a °F value in a °C column, a reading 25.4× its nominal)."""
    if not doubtful:
        return
    rows = np.fromiter(doubtful, dtype=np.int64)
    text = np.array(["; ".join(doubtful[int(i)]) for i in rows], dtype=object)
    msg = results["message"].to_numpy(dtype=object).copy()
    msg[rows] = np.where(msg[rows] == "", text, msg[rows] + "; " + text)
    flags = results["flags"].to_numpy(dtype=object).copy()
    flags[rows] = np.where(flags[rows] == "", "check-input", flags[rows] + ";check-input")
    results["message"] = msg
    results["flags"] = flags


def _row_messages(table: InspectionTable) -> dict[int, list[str]]:
    out: dict[int, list[str]] = {}
    for e in table.errors:
        out.setdefault(int(e.index), []).append(e.message)
    return out


def _results(table: InspectionTable, m: MeasurementArrays, budget: BatchBudget,
             decision: Decision, errors_by_row: dict[int, list[str]],
             settings: Settings) -> pd.DataFrame:
    """The result columns, in each row's own unit (or the unit the user asked for)."""
    frame = table.frame
    n = len(frame)
    unit = frame["unit"].to_numpy(dtype=object) if "unit" in frame else np.full(n, "mm", object)
    if settings.output_unit != "row":
        unit = np.where(np.isin(unit, list(MM_PER_UNIT)), settings.output_unit, unit)
    f = mm_per_unit(unit)
    verdict_code = decision.verdict
    evaluated = verdict_code != NOT_EVALUATED

    def length(a: np.ndarray) -> np.ndarray:
        return np.where(evaluated, a / f, np.nan)

    tur = (_col(frame, "upper_limit_mm") - _col(frame, "lower_limit_mm")) / (2 * budget.U)
    flags = _flags(frame, budget, decision, evaluated, settings, tur)
    missing = _missing_inputs(frame, m)
    message = np.full(n, "", dtype=object)
    for i, msgs in errors_by_row.items():
        message[i] = "; ".join(msgs)
    message = np.where((message == "") & ~evaluated, missing, message)
    unscaled_note = np.where(m.scaled, "", "not scaled for temperature (angle or form)")
    message = np.where((message == "") & evaluated, unscaled_note, message)

    out = pd.DataFrame({
        "unit": unit,
        "lower_limit": _col(frame, "lower_limit_mm") / f,
        "upper_limit": _col(frame, "upper_limit_mm") / f,
        "reading": _col(frame, "reading_mean_mm") / f,
        "size_at_20c": length(budget.size_at_20),
        "thermal_correction": length(budget.thermal_correction),
        "combined_uncertainty": length(budget.u_c),
        "coverage_factor": np.where(evaluated, budget.k, np.nan),
        "expanded_uncertainty": length(budget.U),
        "effective_dof": np.where(evaluated, budget.nu_eff, np.nan),
        "verdict": pd.Categorical.from_codes(verdict_code, VERDICT_NAMES),
        "conformance_probability": np.where(evaluated, decision.conformance_probability, np.nan),
        "capability_index": np.where(evaluated, decision.capability_index, np.nan),
        "uncertainty_ratio": np.where(evaluated, tur, np.nan),
        "margin_in_U": np.where(evaluated, decision.margin_in_U, np.nan),
        # an open side (one-sided tolerance) has no acceptance limit: left empty
        "accept_low": length(np.where(np.isfinite(decision.accept_low), decision.accept_low,
                                      np.nan)),
        "accept_high": length(np.where(np.isfinite(decision.accept_high), decision.accept_high,
                                       np.nan)),
        "flags": flags,
        "message": message,
    }, index=frame.index)
    soak = soak_advice(frame, out, settings.soak_band_k)
    out["soak_minutes_low"] = soak[0]
    out["soak_minutes_high"] = soak[1]
    return out


def _flags(frame: pd.DataFrame, budget: BatchBudget, decision: Decision,
           evaluated: np.ndarray, settings: Settings, tur: np.ndarray) -> pd.Categorical:
    """';'-separated warning codes per row (docs/columns.md lists them).

    Each condition is a bit; the few distinct combinations are turned into text once.
    """
    n = len(frame)
    part_t, gauge_t = _col(frame, "part_temp_c"), _col(frame, "gauge_temp_c")
    ref = np.where(np.isfinite(gauge_t), gauge_t, _col(frame, "room_temp_c"))
    off = np.abs(part_t - ref) > settings.soak_band_k
    needs = (decision.verdict == BORDERLINE) | decision.temperature_decides
    bits = (
        ("temperature-decides", decision.temperature_decides),
        ("instrument-too-coarse", evaluated & np.isfinite(tur) & (tur < MIN_UNCERTAINTY_RATIO)),
        ("soak-advised", evaluated & needs & off),
        ("reference-not-20c", evaluated & budget.nonstandard_reference),
    )
    code = np.zeros(n, dtype=np.int64)
    for j, (_, mask) in enumerate(bits):
        code |= np.asarray(mask, dtype=np.int64) << j
    reader = frame["flags"] if "flags" in frame else pd.Series([""] * n)
    reader_codes, reader_names = pd.factorize(reader.fillna("").astype(str), sort=False)
    combined = reader_codes.astype(np.int64) * (1 << len(bits)) + code
    uniq, inverse = np.unique(combined, return_inverse=True)
    texts = []
    for c in uniq.tolist():
        names = [reader_names[c >> len(bits)]] if reader_names[c >> len(bits)] else []
        names += [name for j, (name, _) in enumerate(bits) if c >> j & 1]
        texts.append(";".join(names))
    unique_texts = list(dict.fromkeys(texts))
    remap = np.array([unique_texts.index(t) for t in texts], dtype=np.int64)
    return pd.Categorical.from_codes(remap[inverse.ravel()], unique_texts)
