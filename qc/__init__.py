"""qc: inspection sheets of machined parts, corrected to 20 °C, with uncertainty and verdicts.

The library API, for notebooks and scripts (the ``qc`` command is a thin layer over it)::

    import qc
    ev = qc.evaluate_file("batch.xlsx")            # read, validate, correct, budget, decide
    ev.results                                     # one row per input row (docs/columns.md)
    qc.write_results(ev, "batch.checked.xlsx")     # the workbook written back

Names are imported on first use, so ``import qc.core`` stays free of I/O libraries.
"""

from __future__ import annotations

from importlib import import_module
from typing import Any

__version__ = "0.1.0"

_EXPORTS: dict[str, str] = {
    # the main job
    "Evaluation": "qc.pipeline",
    "Settings": "qc.pipeline",
    "evaluate_file": "qc.pipeline",
    "evaluate_table": "qc.pipeline",
    "write_results": "qc.export",
    "evaluate_to_table": "qc.streaming",
    "StreamedRun": "qc.streaming",
    "RESULT_COLUMNS": "qc.results",
    "FLAG_CODES": "qc.results",
    # reading
    "InspectionTable": "qc.io.reader",
    "read_inspection": "qc.io.reader",
    "read_inspection_chunks": "qc.io.reader",
    "propose_layout": "qc.io.layout",
    "load_layout": "qc.io.layout",
    "Layout": "qc.models",
    # the core
    "MeasurementArrays": "qc.core.model",
    "evaluate": "qc.core.budget",
    "decide": "qc.core.decision",
    "rule_from_name": "qc.core.decision",
    "VERDICT_NAMES": "qc.core.decision",
    "SAFETY_NOTE": "qc.core.decision",
    "monte_carlo": "qc.core.montecarlo",
    # domain data and tolerances
    "load_materials": "qc.library.materials",
    "load_instrument_types": "qc.library.instruments",
    "Tolerance": "qc.tolerances",
    "parse_tolerance": "qc.tolerances",
    "parse_tolerance_column": "qc.tolerances",
    # report
    "build_report": "qc.report",
    "QcError": "qc.errors",
}

__all__ = sorted([*_EXPORTS, "__version__"])


def __getattr__(name: str) -> Any:
    module = _EXPORTS.get(name)
    if module is None:
        raise AttributeError(f"module 'qc' has no attribute {name!r}")
    value = getattr(import_module(module), name)
    globals()[name] = value
    return value


def __dir__() -> list[str]:
    return __all__
