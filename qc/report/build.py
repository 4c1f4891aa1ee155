"""Write the inspection report as HTML and/or PDF: check the request, lay out once, write."""

from __future__ import annotations

import os
import tempfile
from collections.abc import Sequence
from pathlib import Path
from typing import Any, Literal

from qc.errors import ConfigError, OutputError, UnknownNameError
from qc.report.content import build_content
from qc.report.data import ReportData
from qc.report.html import render_html
from qc.report.pdf import html_to_pdf
from qc.report.units import display_unit

__all__ = ["FORMATS", "PAPERS", "build_report", "report_from_evaluation", "report_html"]

FORMATS = ("html", "pdf")
PAPERS = ("A4", "Letter")  # ISO 216 A4, 210 × 297 mm; US Letter, 8.5 × 11 in
_SUFFIXES = {".html", ".htm", ".pdf"}


def _paper(paper: str) -> str:
    for known in PAPERS:
        if str(paper).strip().lower() == known.lower():
            return known
    raise UnknownNameError("paper size", str(paper), PAPERS)


def report_html(
    data: ReportData, *, paper: Literal["A4", "Letter"] | str = "A4",
    length_unit: Literal["mm", "in"] | str = "mm",
) -> str:
    """The report as one self-contained HTML page (styles and charts inline)."""
    return render_html(build_content(data, display_unit(length_unit), _paper(paper)))


def _targets(output: Path, formats: Sequence[str]) -> list[Path]:
    """The files to write: ``output`` with each format's suffix (in a folder: report.*)."""
    wanted = []
    for f in formats:
        name = str(f).strip().lower()
        if name not in FORMATS:
            raise UnknownNameError("report format", str(f), FORMATS)
        if name not in wanted:
            wanted.append(name)
    if not wanted:
        raise ConfigError("no report format asked for: choose html, pdf or both")
    output = Path(output)
    if output.is_dir():
        stem = output / "report"
    elif output.suffix.lower() in _SUFFIXES:
        stem = output.with_suffix("")
    else:
        stem = output
    if not stem.parent.is_dir():
        raise OutputError(f"{stem.parent}: the folder for the report does not exist")
    return [stem.parent / f"{stem.name}.{f}" for f in wanted]


def _write(path: Path, payload: bytes) -> None:
    """Write through a temporary file in the same folder, so a failed run leaves no half file."""
    try:
        fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", dir=path.parent)
        try:
            with os.fdopen(fd, "wb") as fh:
                fh.write(payload)
            os.replace(tmp, path)
        except BaseException:
            Path(tmp).unlink(missing_ok=True)
            raise
    except OSError as exc:
        raise OutputError(f"{path}: cannot write the report ({exc.strerror or exc})") from exc


def build_report(
    data: ReportData,
    output: Path,
    *,
    formats: Sequence[str] = FORMATS,
    paper: Literal["A4", "Letter"] | str = "A4",
    length_unit: Literal["mm", "in"] | str = "mm",
    force: bool = False,
) -> list[Path]:
    """Write the report for ``data`` and return the files written, in the order of ``formats``.

    ``output`` names the report with or without a suffix (``out/batch-07`` gives
    ``out/batch-07.html`` and ``out/batch-07.pdf``); an existing folder gets ``report.*``.
    Existing files are kept unless ``force`` is true, and nothing is written if any exists.
    """
    targets = _targets(Path(output), formats)
    paper_name = _paper(paper)
    unit = display_unit(length_unit)
    if not force:
        existing = [p for p in targets if p.exists()]
        if existing:
            raise OutputError(
                f"{existing[0]} already exists; use --force (force=True) to replace it"
            )
    html = render_html(build_content(data, unit, paper_name))
    for path in targets:
        payload = html.encode("utf-8") if path.suffix == ".html" else html_to_pdf(html)
        _write(path, payload)
    return targets


def report_from_evaluation(
    ev: Any,
    output: Path,
    *,
    formats: Sequence[str] = FORMATS,
    paper: Literal["A4", "Letter"] | str = "A4",
    length_unit: Literal["mm", "in"] | str | None = None,
    force: bool = False,
) -> list[Path]:
    """The report of one pipeline run (``qc.pipeline.Evaluation``); see :func:`build_report`.

    ``length_unit`` None prints inches when every row is in inches, else millimetres.
    """
    from qc.report.evaluation import report_data

    data = report_data(ev)
    if length_unit is None:
        units = set(data.results["unit"])
        length_unit = "in" if units == {"in"} else "mm"
    return build_report(data, output, formats=formats, paper=paper, length_unit=length_unit,
                        force=force)
