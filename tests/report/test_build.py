"""Writing the report: files, refusals and their messages, a page that needs nothing else."""

from __future__ import annotations

import base64
import re
import sys
from html.parser import HTMLParser
from pathlib import Path

import pytest

from qc.errors import ConfigError, OutputError, UnknownNameError
from qc.report import build_report, report_html
from tests.report.conftest import Built
from tests.report.synthetic import tiny_batch

# Namespace names inside SVG are identifiers, never fetched (W3C, Namespaces in XML 1.0, 2).
NAMESPACES = {"http://www.w3.org/2000/svg", "http://www.w3.org/1999/xlink"}


class _Refs(HTMLParser):
    """Every attribute value that can make a browser fetch something."""

    def __init__(self) -> None:
        super().__init__()
        self.refs: list[str] = []
        self.tags: list[tuple[str, dict[str, str | None]]] = []

    def handle_starttag(self, tag: str, attrs: list[tuple[str, str | None]]) -> None:
        self.tags.append((tag, dict(attrs)))
        for name, value in attrs:
            if name in {"src", "href", "srcset", "poster", "data", "action", "formaction"}:
                self.refs.append(value or "")


def _parse(html: str) -> _Refs:
    parser = _Refs()
    parser.feed(html)
    return parser


def test_builds_both_files_with_the_suffixes(tmp_path: Path) -> None:
    paths = build_report(tiny_batch(), tmp_path / "shafts.pdf")
    assert paths == [tmp_path / "shafts.html", tmp_path / "shafts.pdf"]
    assert paths[0].read_text(encoding="utf-8").startswith("<!DOCTYPE html>")
    assert paths[1].read_bytes()[:5] == b"%PDF-"
    only = build_report(tiny_batch(), tmp_path, formats=["HTML"])
    assert only == [tmp_path / "report.html"]
    assert [p.name for p in tmp_path.iterdir() if p.name.startswith(".")] == []


def test_existing_files_are_kept_unless_forced(tmp_path: Path) -> None:
    target = tmp_path / "r.html"
    target.write_text("keep me", encoding="utf-8")
    with pytest.raises(OutputError) as err:
        build_report(tiny_batch(), tmp_path / "r", formats=("pdf", "html"))
    assert str(err.value) == f"{target} already exists; use --force (force=True) to replace it"
    assert target.read_text(encoding="utf-8") == "keep me"
    assert not (tmp_path / "r.pdf").exists()  # nothing written when one file is in the way
    build_report(tiny_batch(), tmp_path / "r", formats=("html",), force=True)
    assert "Inspection report" in target.read_text(encoding="utf-8")


def test_refusals_and_their_words(tmp_path: Path) -> None:
    data = tiny_batch()
    with pytest.raises(UnknownNameError) as err:
        build_report(data, tmp_path / "r", formats=("pfd",))
    assert str(err.value) == "unknown report format 'pfd'; did you mean 'pdf'?"
    with pytest.raises(UnknownNameError) as err:
        build_report(data, tmp_path / "r", paper="Leter")
    assert str(err.value) == "unknown paper size 'Leter'; did you mean 'Letter'?"
    with pytest.raises(ConfigError) as err:
        build_report(data, tmp_path / "r", formats=())
    assert str(err.value) == "no report format asked for: choose html, pdf or both"
    missing = tmp_path / "no such folder"
    with pytest.raises(OutputError) as err:
        build_report(data, missing / "r")
    assert str(err.value) == f"{missing}: the folder for the report does not exist"
    assert list(tmp_path.iterdir()) == []


def test_pdf_without_weasyprint_says_what_to_do(tmp_path: Path, monkeypatch) -> None:
    monkeypatch.setitem(sys.modules, "weasyprint", None)  # makes the import fail
    with pytest.raises(ConfigError) as err:
        build_report(tiny_batch(), tmp_path / "r", formats=("pdf",))
    assert str(err.value) == (
        "PDF output needs the weasyprint package and the pango library: "
        "install them, or ask for the HTML report only")


@pytest.mark.parametrize("name", ["winter", "inch", "tiny"])
def test_html_fetches_nothing_from_outside(built: dict[str, Built], name: str) -> None:
    html = built[name].html.read_text(encoding="utf-8")
    parsed = _parse(html)
    assert parsed.refs, "the report has images"
    assert all(r.startswith("data:image/svg+xml;base64,") for r in parsed.refs)
    assert not [t for t, _ in parsed.tags if t in {"script", "link", "iframe", "object"}]
    assert "@import" not in html and "url(" not in html and "@font-face" not in html
    assert not re.findall(r"https?://", html)
    # the charts themselves: decoded, only namespace names may look like addresses
    for ref in parsed.refs:
        svg = base64.b64decode(ref.split(",", 1)[1]).decode("utf-8")
        assert set(re.findall(r"https?://[^\"'\s)]+", svg)) <= NAMESPACES
        assert "<!DOCTYPE" not in svg and "<metadata>" not in svg
    csp = [a for t, a in parsed.tags if t == "meta" and a.get("http-equiv")]
    assert csp and csp[0]["content"].startswith("default-src 'none'; img-src data:")


@pytest.mark.parametrize("name", ["winter", "inch", "tiny"])
def test_one_chart_per_characteristic(built: dict[str, Built], name: str) -> None:
    b = built[name]
    parsed = _parse(b.html.read_text(encoding="utf-8"))
    charts = [a["data-characteristic"] for t, a in parsed.tags
              if t == "figure" and "size-chart" in (a.get("class") or "")]
    assert charts == list(dict.fromkeys(b.data.results["characteristic"]))


@pytest.mark.parametrize("name", ["winter", "inch", "tiny"])
def test_charts_are_greys_only(built: dict[str, Built], name: str) -> None:
    """Every colour in every chart has r = g = b, so nothing depends on colour (the series
    differ by marker, line style and hatching)."""
    parsed = _parse(built[name].html.read_text(encoding="utf-8"))
    for ref in parsed.refs:
        svg = base64.b64decode(ref.split(",", 1)[1]).decode("utf-8")
        colours = set(re.findall(r"#([0-9a-fA-F]{6})\b", svg))
        assert colours, "a chart without colours is not a chart"
        assert all(c[0:2] == c[2:4] == c[4:6] for c in colours), colours


def test_page_size_follows_the_paper(built: dict[str, Built]) -> None:
    assert "size: A4;" in built["winter"].html.read_text(encoding="utf-8")
    assert "size: Letter;" in built["inch"].html.read_text(encoding="utf-8")


def test_text_from_the_sheet_is_escaped() -> None:
    data = tiny_batch()
    data.results.loc[0, "part"] = "<b>S-1</b>"
    html = report_html(data)
    assert "<b>S-1</b>" not in html and "&lt;b&gt;S-1&lt;/b&gt;" in html


def test_safety_caution_is_in_the_page(built: dict[str, Built]) -> None:
    html = built["tiny"].html.read_text(encoding="utf-8")
    text = re.sub(r"\s+", " ", html).replace("&#39;", "'")
    assert ("support, and do not replace, the customer's acceptance requirements, accredited "
            "procedures (ISO/IEC 17025) and qualified judgement") in text
    assert "Defer to local codes and licensed practice" in text
    assert "contact thermometer" in text and "Let parts soak" in text


def test_gaps_in_the_results_still_make_a_report() -> None:
    import numpy as np
    import pandas as pd

    from qc.report import RESULT_COLUMNS, ReportData

    r = tiny_batch().results
    r.loc[0, ["size_at_20c", "expanded_uncertainty", "margin_in_U"]] = np.nan
    r.loc[0, "verdict"] = "not evaluated"
    r.loc[1, "part_temp_c"] = np.nan
    r.loc[3, ["lower_limit", "upper_limit", "accept_low", "accept_high"]] = np.nan
    text = re.sub(r"\s+", " ", re.sub(r"<[^>]+>", " ", report_html(ReportData(r))))  # meta: 20 °C
    assert "not evaluated 1 " in text
    assert "Chart 1 · 3 measurements; 1 without a size at 20 °C (not drawn)" in text
    assert "limits differ between parts" in text  # one row of Shoulder lost its limits
    empty = report_html(ReportData(pd.DataFrame(columns=RESULT_COLUMNS)))
    assert "No measurements." in empty and "No actions." in empty


def test_rows_without_a_characteristic_name_are_charted_by_nominal() -> None:
    data = tiny_batch()
    data.results["characteristic"] = ""
    html = report_html(data)
    charts = re.findall(r'<figure class="size-chart" id="chart-\d+" data-characteristic="([^"]*)"',
                        html)
    assert charts == ["unnamed, nominal 25.0000 mm", "unnamed, nominal 40.0000 mm"]
