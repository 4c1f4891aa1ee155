"""Large batches stay readable: charts split into rows of parts, two-row charts share a page."""

from __future__ import annotations

import re
from pathlib import Path

import pypdfium2 as pdfium

import qc.report
from qc.report import build_report
from qc.report.charts import MAX_PANELS, MAX_PARTS_PER_PANEL, panel_slices
from tests.report.synthetic import big_batch


def test_panel_slices_cover_every_part_once() -> None:
    for n in (1, 60, MAX_PARTS_PER_PANEL, MAX_PARTS_PER_PANEL + 1, 200, 299, 1000):
        slices = panel_slices(n)
        covered = [i for s in slices for i in range(s.start, s.stop)]
        assert covered == list(range(n))
        assert len(slices) <= MAX_PANELS
    assert [len(range(s.start, s.stop)) for s in panel_slices(200)] == [100, 100]
    assert len(panel_slices(MAX_PARTS_PER_PANEL)) == 1


def test_two_hundred_parts_two_charts_per_page(tmp_path: Path) -> None:
    data = big_batch(n_chars=3, n_parts=200)
    html, pdf_path = build_report(data, tmp_path / "big")
    assert len(re.findall(r'<figure class="size-chart"', html.read_text(encoding="utf-8"))) == 3
    pdf = pdfium.PdfDocument(pdf_path)
    try:
        pages = [re.sub(r"\s+", " ", p.get_textpage().get_text_range()) for p in pdf]
    finally:
        pdf.close()
    where = []
    for i in (1, 2, 3):
        caption = [p for p, t in enumerate(pages) if f"Chart {i}. Feature 0{i}" in t]
        note = [p for p, t in enumerate(pages) if f"Chart {i} · 200 measurements; parts in "
                "order of the sheet, in 2 rows" in t]
        assert len(caption) == 1 and caption == note  # whole, on one page
        where.append(caption[0])
    # three charts of 200 parts on at most two pages: some page holds two of them
    assert len(set(where)) <= 2, where


def test_public_names() -> None:
    names = set(qc.report.__all__)
    assert {"build_report", "ReportData", "ReportMeta", "InstrumentUsed", "MaterialUsed",
            "report_html"} <= names
    assert all(hasattr(qc.report, n) for n in names)
