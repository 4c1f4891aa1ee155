"""What the report is built from: results, budgets, actions and facts about the batch.

The column names below are a public interface between the pipeline and the report.
Lengths are in each row's own unit (``unit`` column, "mm" or "in"); temperatures in °C.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field
from datetime import date, datetime

import pandas as pd

from qc.errors import InputError, UnknownNameError

__all__ = [
    "ACTION_COLUMNS",
    "BUDGET_COLUMNS",
    "RESULT_COLUMNS",
    "VERDICTS",
    "InstrumentUsed",
    "MaterialUsed",
    "ReportData",
    "ReportMeta",
]

VERDICTS: tuple[str, ...] = ("conforms", "nonconforming", "borderline", "not evaluated")
ROW_UNITS: tuple[str, ...] = ("mm", "in")

RESULT_COLUMNS: tuple[str, ...] = (
    "part", "characteristic", "kind", "unit", "nominal", "lower_limit", "upper_limit",
    "reading", "size_at_20c", "thermal_correction", "combined_uncertainty", "coverage_factor",
    "expanded_uncertainty", "effective_dof", "verdict", "conformance_probability",
    "capability_index", "margin_in_U", "accept_low", "accept_high", "flags", "message",
    "part_temp_c", "gauge_temp_c", "instrument", "inspector", "measured_at", "source_row",
    "soak_minutes_low", "soak_minutes_high",
)  # fmt: skip

BUDGET_COLUMNS: tuple[str, ...] = (
    "row_index", "quantity", "estimate", "unit", "standard_uncertainty", "distribution", "dof",
    "sensitivity", "contribution", "share", "source_label",
)  # fmt: skip

ACTION_COLUMNS: tuple[str, ...] = ("part", "characteristic", "action", "reason", "source_row")


@dataclass(frozen=True)
class MaterialUsed:
    """A material the batch used, with its expansion coefficient (1/K) and where it came from."""

    name: str
    source: str
    expansion_coefficient: float | None = None


@dataclass(frozen=True)
class InstrumentUsed:
    """An instrument the batch used, its data source and the date its calibration falls due."""

    name: str
    source: str
    description: str = ""
    calibration_due: date | None = None


@dataclass(frozen=True)
class ReportMeta:
    """Facts about the batch and the run that the header and method sections print.

    Leave a field empty where the sheet does not have it: the report then says nothing
    rather than inventing it (dates and inspectors fall back to the results table).
    """

    title: str = "Inspection report"
    batch: str | None = None
    input_file: str | None = None
    input_sha256: str | None = None
    sheet: str | None = None
    inspected_from: date | None = None
    inspected_to: date | None = None
    inspectors: Sequence[str] = ()
    decision_rule: str = "ISO 14253-1"
    decision_rule_description: str = ""
    coverage_probability: float = 0.95
    reference_temperature_c: float = 20.0
    program_version: str = ""
    generated_at: datetime | None = None
    materials: Sequence[MaterialUsed] = ()
    instruments: Sequence[InstrumentUsed] = ()
    notes: Sequence[str] = ()

    @property
    def off_reference(self) -> bool:
        """True when sizes are stated at a temperature other than the ISO 1 reference, 20 °C."""
        return abs(self.reference_temperature_c - 20.0) > 1e-9


@dataclass
class ReportData:
    """Everything the report shows; build it once, then pass it to :func:`build_report`."""

    results: pd.DataFrame
    budgets: pd.DataFrame = field(default_factory=lambda: pd.DataFrame(columns=BUDGET_COLUMNS))
    actions: pd.DataFrame = field(default_factory=lambda: pd.DataFrame(columns=ACTION_COLUMNS))
    meta: ReportMeta = field(default_factory=ReportMeta)

    def __post_init__(self) -> None:
        _require(self.results, RESULT_COLUMNS, "results")
        _require(self.budgets, BUDGET_COLUMNS, "budgets")
        _require(self.actions, ACTION_COLUMNS, "actions")
        _check_values(self.results)


def _require(frame: pd.DataFrame, columns: Sequence[str], name: str) -> None:
    """Refuse a table that lacks any column of the contract, naming every missing one."""
    missing = [c for c in columns if c not in frame.columns]
    if missing:
        raise InputError(
            f"report data › {name}: missing column(s) {', '.join(missing)}; "
            f"expected the columns {', '.join(columns)}"
        )


def _check_values(results: pd.DataFrame) -> None:
    """Refuse verdicts and row units the report cannot show, with the first bad row."""
    for column, allowed, kind in (
        ("verdict", VERDICTS, "verdict"),
        ("unit", ROW_UNITS, "length unit"),
    ):
        bad = ~results[column].isin(allowed)
        if bad.any():
            value = results.loc[bad, column].iloc[0]
            raise UnknownNameError(kind, str(value), allowed)
