"""Reports built once per test session from the invented batches in ``synthetic.py``."""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

import pytest

from qc.report import ReportData, build_report
from tests.report.synthetic import inch_batch, tiny_batch, winter_batch


@dataclass
class Built:
    """A report written to disk with the data it came from."""

    data: ReportData
    html: Path
    pdf: Path
    paper: str
    length_unit: str

    def pages_text(self) -> list[str]:
        """The text of each PDF page as pypdfium2 extracts it."""
        import pypdfium2 as pdfium

        pdf = pdfium.PdfDocument(self.pdf)
        try:
            return [page.get_textpage().get_text_range() for page in pdf]
        finally:
            pdf.close()


BATCHES = {
    "winter": (winter_batch, {"paper": "A4", "length_unit": "mm"}),
    "inch": (inch_batch, {"paper": "Letter", "length_unit": "in"}),
    "tiny": (tiny_batch, {"paper": "A4", "length_unit": "mm"}),
}


@pytest.fixture(scope="session")
def built(tmp_path_factory: pytest.TempPathFactory) -> dict[str, Built]:
    """The three batches, each as HTML and PDF."""
    out = tmp_path_factory.mktemp("reports")
    reports = {}
    for name, (make, options) in BATCHES.items():
        data = make()
        html, pdf = build_report(data, out / name, **options)
        reports[name] = Built(data, html, pdf, options["paper"], options["length_unit"])
    return reports
