"""The HTML report as headless Chromium shows it, with every host name unresolvable.

Chromium runs with a fresh profile, background services off, ``--host-resolver-rules`` that
make every name fail to resolve, and a network log. A test copy of the page (its
Content-Security-Policy removed, so the page itself is what is tested) gets a small script
that writes into the DOM what loaded: the dump then shows whether every chart decoded and
whether the page asked for any resource. Skipped where the chromium command is missing.
"""

from __future__ import annotations

import json
import re
import shutil
import subprocess
from pathlib import Path

import pytest

from tests.report.conftest import Built

CHROMIUM = shutil.which("chromium")
pytestmark = pytest.mark.skipif(
    CHROMIUM is None,
    reason="headless Chromium not installed (Debian package 'chromium'): "
    "the browser checks need the chromium command",
)

PROBE = """<script>
window.addEventListener("load", () => {
  const imgs = [...document.images];
  const ok = imgs.filter(i => i.complete && i.naturalWidth > 0).length;
  document.body.dataset.images = ok + "/" + imgs.length;
  document.body.dataset.resources = JSON.stringify(
    performance.getEntriesByType("resource").map(e => e.name));
});
</script>"""


def _probe_copy(html: Path, dest: Path) -> Path:
    text = html.read_text(encoding="utf-8")
    text, n = re.subn(r'<meta http-equiv="Content-Security-Policy"[^>]*>', "", text)
    assert n == 1
    dest.write_text(text.replace("</body>", PROBE + "</body>"), encoding="utf-8")
    return dest


def _chromium(page: Path, work: Path) -> tuple[str, list[dict]]:
    """DOM after load, and the network log's request starts."""
    netlog = work / "net.json"
    cmd = [
        str(CHROMIUM), "--headless", "--no-sandbox", "--disable-gpu",
        "--disable-background-networking", "--disable-component-update", "--disable-sync",
        "--no-first-run", f"--user-data-dir={work / 'profile'}",
        "--host-resolver-rules=MAP * ~NOTFOUND", f"--log-net-log={netlog}",
        "--virtual-time-budget=5000", "--dump-dom", page.as_uri(),
    ]
    out = subprocess.run(cmd, capture_output=True, text=True, timeout=90, check=True)
    log = json.loads(netlog.read_text(encoding="utf-8"))
    kinds = {v: k for k, v in log["constants"]["logEventTypes"].items()}
    starts = [e["params"] for e in log["events"]
              if kinds.get(e["type"]) == "URL_REQUEST_START_JOB" and "url" in e.get("params", {})]
    return out.stdout, starts


def _page_requests(starts: list[dict]) -> list[str]:
    """Requests the page made (the browser's own service calls carry no origin)."""
    return [s["url"] for s in starts
            if s.get("initiator") != "not an origin" and not s["url"].startswith(("data:",
                                                                                  "file:"))]


def _text(dom: str) -> str:
    body = re.sub(r"<script.*?</script>|<style.*?</style>", " ", dom, flags=re.S)
    text = re.sub(r"<[^>]+>", " ", body)
    return re.sub(r"\s+", " ", text.replace("&nbsp;", " ").replace("&amp;", "&"))


@pytest.mark.parametrize("name", ["winter", "inch", "tiny"])
def test_chromium_renders_everything_offline(built: dict[str, Built], name: str,
                                             tmp_path: Path) -> None:
    b = built[name]
    dom, starts = _chromium(_probe_copy(b.html, tmp_path / "page.html"), tmp_path)
    n_images = len(re.findall(r"<img ", dom))
    n_chars = b.data.results["characteristic"].nunique()
    assert f'data-images="{n_images}/{n_images}"' in dom  # every chart decoded
    assert 'data-resources="[]"' in dom  # the page asked for no resource at all
    assert _page_requests(starts) == []
    assert len(re.findall(r'<figure class="size-chart"', dom)) == n_chars
    text = _text(dom)
    assert f"Batch {b.data.meta.batch}" in text
    for i, char in enumerate(dict.fromkeys(b.data.results["characteristic"]), start=1):
        assert f"Chart {i}. {char}" in text
    counts = b.data.results["verdict"].value_counts()
    assert f"conforms {counts.get('conforms', 0)} " in text
    assert "qualified judgement" in text
    off = b.data.meta.reference_temperature_c != 20
    assert ("not at the ISO 1 reference temperature of 20" in text) == off


def test_the_request_check_can_fail(tmp_path: Path) -> None:
    """Control: a page with one outside image is caught by both checks."""
    page = tmp_path / "control.html"
    page.write_text('<!DOCTYPE html><html><body><img src="https://example.invalid/x.png">'
                    + PROBE + "</body></html>", encoding="utf-8")
    dom, starts = _chromium(page, tmp_path)
    assert 'data-images="0/1"' in dom
    assert _page_requests(starts) == ["https://example.invalid/x.png"]


@pytest.mark.parametrize("name", ["tiny", "inch"])
def test_chromium_prints_the_page_like_the_pdf(built: dict[str, Built], name: str,
                                               tmp_path: Path) -> None:
    """Printed from the browser, the page keeps its paper size, and the reference warning
    (when the sizes are not at 20 °C) heads every page."""
    import pypdfium2 as pdfium

    b = built[name]
    out = tmp_path / "printed.pdf"
    cmd = [
        str(CHROMIUM), "--headless", "--no-sandbox", "--disable-gpu",
        "--disable-background-networking", "--disable-component-update", "--disable-sync",
        "--no-first-run", f"--user-data-dir={tmp_path / 'profile'}",
        "--host-resolver-rules=MAP * ~NOTFOUND", "--no-pdf-header-footer",
        f"--print-to-pdf={out}", b.html.as_uri(),
    ]
    subprocess.run(cmd, capture_output=True, timeout=90, check=True)
    # ISO 216 A4 = 595.3 × 841.9 pt; US Letter = 612 × 792 pt
    want = {"A4": (595.3, 841.9), "Letter": (612.0, 792.0)}[b.paper]
    pdf = pdfium.PdfDocument(out)
    try:
        assert len(pdf) >= 2
        for page in pdf:
            assert page.get_size() == pytest.approx(want, abs=1.0)
            text = page.get_textpage().get_text_range()
            warned = "WARNING: sizes at 23 °C, not at the ISO 1 reference of 20 °C" in text
            assert warned == (b.data.meta.reference_temperature_c != 20)
    finally:
        pdf.close()
