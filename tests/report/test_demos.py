"""The report of every bundled demo scenario, as a reader would see it: rendered PDF pages and
the self-contained HTML."""

from __future__ import annotations

import re
from pathlib import Path

import pypdfium2 as pdfium
import pytest

from qc.pipeline import evaluate_file
from qc.report.build import report_from_evaluation

DEMO = Path(__file__).resolve().parents[2] / "demo_inspections"
SCENARIOS = ["housings_winter.xlsx", "shafts_warm.xlsx", "spacers_inch.csv"]


@pytest.mark.parametrize("name", SCENARIOS)
def test_demo_report_reads_right(tmp_path: Path, name: str) -> None:
    ev = evaluate_file(DEMO / name)
    html, pdf = report_from_evaluation(ev, tmp_path / "report")
    page = html.read_text(encoding="utf-8")
    # one chart per characteristic, nothing fetched from outside
    n_chars = ev.table.frame["characteristic"].nunique()
    assert page.count('<figure class="size-chart"') == n_chars
    assert not re.search(r"""(src|href)=["']https?://""", page)
    doc = pdfium.PdfDocument(pdf)
    n = len(doc)
    assert 3 <= n <= 20
    text = "\n".join(doc[i].get_textpage().get_text_range() for i in range(n))
    assert "Inspection report" in text
    assert "ISO 14253-1" in text
    for verdict, count in ev.counts.items():
        if count:
            assert verdict in text
    assert "ISO/IEC 17025" in text  # the caution, on every page's footer
    assert text.count("ISO/IEC 17025") >= n
    # the first page renders to a non-blank picture
    image = doc[0].render(scale=0.5).to_pil().convert("L")
    assert image.getextrema()[0] < 100
