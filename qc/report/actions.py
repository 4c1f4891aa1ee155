"""The action list, grouped the way a shop acts on it.

Parts to soak and re-measure (with the soak time the pipeline advised), characteristics that
need a finer instrument (with the worst measurement capability index C_m, JCGM 106), and
instruments overdue for calibration (from the actions and from the due dates in the meta).
Anything else is listed as given.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from datetime import date

import numpy as np
import pandas as pd

from qc.report.data import ReportMeta

__all__ = [
    "INSTRUMENT_ACTIONS",
    "ActionList",
    "CalibrationLine",
    "FinerLine",
    "SoakLine",
    "action_list",
    "last_inspection_date",
]

SOAK = "soak and re-measure"
FINER = "use a finer instrument"
CALIBRATION = "calibration overdue"
INSTRUMENT_ACTIONS = (FINER, CALIBRATION)
MAX_OTHER = 200


@dataclass(frozen=True)
class SoakLine:
    """A part to let soak, the characteristics to re-measure and the soak time in minutes."""

    part: str
    characteristics: str
    minutes_low: float
    minutes_high: float

    @property
    def minutes(self) -> str:
        """The soak time as a range ("40–90 min"), or a dash when none was advised."""
        lo, hi = self.minutes_low, self.minutes_high
        if not math.isfinite(lo) and not math.isfinite(hi):
            return "–"
        if not math.isfinite(hi) or (math.isfinite(lo) and round(lo) == round(hi)):
            return f"{lo:.0f} min" if math.isfinite(lo) else f"up to {hi:.0f} min"
        if not math.isfinite(lo):
            return f"up to {hi:.0f} min"
        return f"{lo:.0f}–{hi:.0f} min"


@dataclass(frozen=True)
class FinerLine:
    """A characteristic measured with too coarse an instrument."""

    characteristic: str
    instruments: str
    rows: int
    worst_capability: float
    reason: str


@dataclass(frozen=True)
class CalibrationLine:
    """An instrument whose calibration is overdue on the last inspection date."""

    instrument: str
    due: date | None
    rows: int


@dataclass(frozen=True)
class ActionList:
    """The grouped actions; ``other`` holds any action the groups do not cover."""

    soak: list[SoakLine]
    finer: list[FinerLine]
    calibration: list[CalibrationLine]
    other: pd.DataFrame
    other_left_off: int

    @property
    def empty(self) -> bool:
        """True when nothing needs doing."""
        return not (self.soak or self.finer or self.calibration or len(self.other))


def last_inspection_date(results: pd.DataFrame, meta: ReportMeta) -> date | None:
    """The day of the last measurement: from the meta, else from the results' timestamps."""
    if meta.inspected_to is not None:
        return meta.inspected_to
    stamps = pd.to_datetime(results["measured_at"], errors="coerce").dropna()
    return stamps.max().date() if len(stamps) else None


def action_list(results: pd.DataFrame, actions: pd.DataFrame, meta: ReportMeta) -> ActionList:
    """Group the actions table, joined to the results through the sheet's row number."""
    kind = actions["action"].astype(str).str.strip().str.lower()
    by_row = results.drop_duplicates("source_row").set_index("source_row")
    joined = actions.join(
        by_row[["soak_minutes_low", "soak_minutes_high", "capability_index", "instrument"]],
        on="source_row",
    )
    soak = _soak(joined[kind == SOAK])
    finer = _finer(joined[kind == FINER])
    calibration = _calibration(joined[kind == CALIBRATION], results, meta)
    other = actions[~kind.isin([SOAK, FINER, CALIBRATION])]
    left_off = max(0, len(other) - MAX_OTHER)
    return ActionList(soak, finer, calibration, other.head(MAX_OTHER), left_off)


def _soak(rows: pd.DataFrame) -> list[SoakLine]:
    lines = []
    for part, g in rows.groupby(rows["part"].astype(str), sort=False):
        chars = ", ".join(dict.fromkeys(g["characteristic"].astype(str)))
        lo = pd.to_numeric(g["soak_minutes_low"], errors="coerce").to_numpy(float)
        hi = pd.to_numeric(g["soak_minutes_high"], errors="coerce").to_numpy(float)
        lines.append(SoakLine(str(part), chars, _nanmin(lo), _nanmax(hi)))
    return lines


def _finer(rows: pd.DataFrame) -> list[FinerLine]:
    lines = []
    for char, g in rows.groupby(rows["characteristic"].astype(str), sort=False):
        instruments = ", ".join(dict.fromkeys(g["instrument"].dropna().astype(str)))
        cm = pd.to_numeric(g["capability_index"], errors="coerce").to_numpy(float)
        reason = str(g["reason"].iloc[0]) if len(g) else ""
        lines.append(FinerLine(str(char), instruments, len(g), _nanmin(cm), reason))
    return lines


def _calibration(
    rows: pd.DataFrame, results: pd.DataFrame, meta: ReportMeta
) -> list[CalibrationLine]:
    """Instruments named by an action, and instruments whose due date lies before the last
    inspection day, each once with the number of measurements it took."""
    due = {i.name: i.calibration_due for i in meta.instruments}
    names = list(dict.fromkeys(rows["instrument"].dropna().astype(str)))
    day = last_inspection_date(results, meta)
    if day is not None:
        names += [n for n, d in due.items() if d is not None and d < day and n not in names]
    used = results["instrument"].astype(str).value_counts()
    return [CalibrationLine(n, due.get(n), int(used.get(n, 0))) for n in names]


def _nanmin(a: np.ndarray) -> float:
    return float(np.nanmin(a)) if np.isfinite(a).any() else math.nan


def _nanmax(a: np.ndarray) -> float:
    return float(np.nanmax(a)) if np.isfinite(a).any() else math.nan
