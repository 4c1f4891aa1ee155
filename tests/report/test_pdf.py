"""The PDF as a reader sees it: pages rendered with pypdfium2, text taken from the pages."""

from __future__ import annotations

import re

import numpy as np
import pypdfium2 as pdfium
import pytest

from qc.report.stats import MIN_N_CAPABILITY
from tests.report.conftest import Built

# ISO 216: A4 is 210 mm × 297 mm; US Letter is 8.5 in × 11 in (ANSI/ASME Y14.1). 1 pt = 1/72 in.
PAGE_PT = {"A4": (210 / 25.4 * 72, 297 / 25.4 * 72), "Letter": (8.5 * 72, 11 * 72)}


def _flat(text: str) -> str:
    return re.sub(r"\s+", " ", text.replace("\r", " "))


@pytest.mark.parametrize("name", ["winter", "inch", "tiny"])
def test_pages_have_the_paper_size(built: dict[str, Built], name: str) -> None:
    b = built[name]
    pdf = pdfium.PdfDocument(b.pdf)
    try:
        want = PAGE_PT[b.paper]
        for page in pdf:
            assert page.get_size() == pytest.approx(want, abs=0.5)
    finally:
        pdf.close()


@pytest.mark.parametrize("name", ["winter", "inch", "tiny"])
def test_page_count_and_page_numbers(built: dict[str, Built], name: str) -> None:
    pages = [_flat(t) for t in built[name].pages_text()]
    limits = {"winter": (5, 10), "inch": (4, 8), "tiny": (3, 6)}[name]
    assert limits[0] <= len(pages) <= limits[1]
    for i, text in enumerate(pages, start=1):
        assert f"page {i} of {len(pages)}" in text


@pytest.mark.parametrize("name", ["winter", "inch", "tiny"])
def test_each_chart_whole_on_one_page(built: dict[str, Built], name: str) -> None:
    """Caption above and note below a chart sit on the same page: no chart is cut in two."""
    b = built[name]
    pages = [_flat(t) for t in b.pages_text()]
    names = list(dict.fromkeys(b.data.results["characteristic"]))
    for i, char in enumerate(names, start=1):
        caption = [p for p, t in enumerate(pages) if f"Chart {i}. {char}" in t]
        note = [p for p, t in enumerate(pages) if f"Chart {i} · " in t]
        assert len(caption) == 1 and caption == note, (char, caption, note)


def test_winter_batch_reads_right(built: dict[str, Built]) -> None:
    b = built["winter"]
    text = _flat(" ".join(b.pages_text()))
    r = b.data.results
    for needle in ("Batch HW-2601", "HW-2601.xlsx › Readings", "R. Okafor", "2026-01-14",
                   "ISO 14253-1", "20 °C (ISO 1 reference)", "Let soak and re-measure",
                   "35–80 min", "Use a finer instrument", "Calibration overdue",
                   "micrometer M-07", "2025-12-31", "Method, assumptions and cautions",
                   "contact thermometer", "Part temperature against the thermal correction"):
        assert needle in text, needle
    n_border = int((r["verdict"] == "borderline").sum())
    assert f"borderline {n_border} " in text
    worst = r.loc[r["margin_in_U"].idxmin()]
    assert f"{worst['part']} {worst['characteristic']} {worst['size_at_20c']:.4f}" in text
    assert "WARNING" not in text


def test_statistics_row_in_the_pdf(built: dict[str, Built]) -> None:
    b = built["winter"]
    text = _flat(" ".join(b.pages_text()))
    sizes = b.data.results.loc[b.data.results["characteristic"] == "Length 80 ±0.05",
                               "size_at_20c"].to_numpy()
    s = sizes.std(ddof=1)
    cp = 0.1 / (6 * s)  # ISO 22514-2: (USL − LSL)/(6s), USL − LSL = 0.1 mm
    cpk = min(80.05 - sizes.mean(), sizes.mean() - 79.95) / (3 * s)
    row = (f"Length 80 ±0.05 30 {sizes.mean():.4f} {s:.4f} {sizes.min():.4f} "
           f"{sizes.max():.4f} {cp:.2f} {cpk:.2f}")
    assert row in text


def test_inch_batch_uses_inches_and_one_sided_limits(built: dict[str, Built]) -> None:
    text = _flat(" ".join(built["inch"].pages_text()))
    assert "lengths in inches" in text
    assert "min 0.12000 in (one-sided)" in text and "max 0.25000 in (one-sided)" in text
    assert "one-sided limit: Cpk of that limit only" in text
    assert "(µin)" in text or "µin" in text
    assert "nonconforming 1 " in text


def test_tiny_batch_states_no_capability_and_warns_on_every_page(
    built: dict[str, Built],
) -> None:
    pages = [_flat(t) for t in built["tiny"].pages_text()]
    for text in pages:
        assert "WARNING: sizes at 23 °C, not at the ISO 1 reference of 20 °C" in text
        assert "qualified judgement" in text  # the footer caution, page by page
    whole = " ".join(pages)
    assert f"Cp, Cpk not stated: n = 3 is below {MIN_N_CAPABILITY}" in whole
    assert "Sizes are stated at 23 °C, not at the ISO 1 reference temperature" in whole


@pytest.mark.parametrize("name", ["winter", "inch", "tiny"])
def test_rendered_pages_are_grey_and_not_blank(built: dict[str, Built], name: str) -> None:
    pdf = pdfium.PdfDocument(built[name].pdf)
    try:
        for page in pdf:
            img = np.asarray(page.render(scale=0.6).to_pil().convert("RGB"), dtype=int)
            ink = (img.min(axis=2) < 128).mean()
            assert 0.003 < ink < 0.5, ink  # some text or lines, not a black page
            spread = img.max(axis=2) - img.min(axis=2)
            assert spread.max() <= 8  # greys only: reads the same on a monochrome printer
    finally:
        pdf.close()
