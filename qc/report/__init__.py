"""The inspection report: HTML and PDF with charts, statistics and an action list.

Build a :class:`ReportData` from the pipeline's tables, then call :func:`build_report`.
Charts are drawn with matplotlib (Agg) in greys; the PDF is the same page laid out by
WeasyPrint. Nothing in the report is fetched from outside the page.
"""

from qc.report.build import FORMATS, PAPERS, build_report, report_html
from qc.report.data import (
    ACTION_COLUMNS,
    BUDGET_COLUMNS,
    RESULT_COLUMNS,
    VERDICTS,
    InstrumentUsed,
    MaterialUsed,
    ReportData,
    ReportMeta,
)

__all__ = [
    "ACTION_COLUMNS",
    "BUDGET_COLUMNS",
    "FORMATS",
    "PAPERS",
    "RESULT_COLUMNS",
    "VERDICTS",
    "InstrumentUsed",
    "MaterialUsed",
    "ReportData",
    "ReportMeta",
    "build_report",
    "report_html",
]
