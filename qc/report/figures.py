"""Matplotlib plumbing for the report: the Agg backend, one grey style, SVG as a data URI.

Every chart is drawn in greys only and tells series apart by marker shape, line style and
hatching, so it reads the same on a monochrome printer. The SVG keeps text as text (no
embedded glyphs) and carries no DOCTYPE or metadata, so nothing in it points off the page.
"""

from __future__ import annotations

import base64
import io
import re
from collections.abc import Iterator
from contextlib import contextmanager

import matplotlib
from matplotlib.figure import Figure

matplotlib.use("Agg")  # no display needed, ever: figures are only saved

__all__ = ["GREYS", "VERDICT_STYLE", "chart_style", "new_figure", "svg_data_uri", "svg_text"]

# Greys only (r = g = b), darkest first.
GREYS = {"ink": "#000000", "dark": "#404040", "mid": "#808080", "light": "#b3b3b3",
         "faint": "#d9d9d9", "paper": "#ffffff"}  # fmt: skip

# Marker per verdict: shape and fill differ, so the verdict reads without colour.
VERDICT_STYLE: dict[str, dict[str, object]] = {
    "conforms": {"marker": "o", "markersize": 4.0, "mfc": GREYS["ink"], "mec": GREYS["ink"]},
    "borderline": {"marker": "D", "markersize": 5.0, "mfc": GREYS["paper"], "mec": GREYS["ink"]},
    "nonconforming": {"marker": "X", "markersize": 7.0, "mfc": GREYS["ink"], "mec": GREYS["ink"]},
    "not evaluated": {"marker": "s", "markersize": 4.5, "mfc": GREYS["paper"],
                      "mec": GREYS["mid"]},
}  # fmt: skip

_RC = {
    "font.family": "DejaVu Sans",
    "font.size": 7.5,
    "axes.edgecolor": GREYS["dark"],
    "axes.labelcolor": GREYS["ink"],
    "axes.linewidth": 0.6,
    "axes.prop_cycle": matplotlib.cycler(color=[GREYS["ink"]]),
    "xtick.color": GREYS["ink"],
    "ytick.color": GREYS["ink"],
    "grid.color": GREYS["faint"],
    "grid.linewidth": 0.5,
    "hatch.color": GREYS["mid"],
    "hatch.linewidth": 0.5,
    "legend.frameon": False,
    "svg.fonttype": "none",
    "svg.hashsalt": "qc-report",
}


@contextmanager
def chart_style() -> Iterator[None]:
    """The report's plotting style, applied only inside the block."""
    with matplotlib.rc_context(_RC):
        yield


def new_figure(width_in: float, height_in: float) -> Figure:
    """A figure not registered with pyplot, so it is freed as soon as it is dropped."""
    return Figure(figsize=(width_in, height_in), layout="constrained")


_DOCTYPE = re.compile(r"<!DOCTYPE[^>]*>\s*", re.S)
_METADATA = re.compile(r"<metadata>.*?</metadata>\s*", re.S)


def svg_text(fig: Figure) -> str:
    """The figure as SVG text without DOCTYPE or metadata (nothing that names a web address)."""
    buf = io.StringIO()
    # dpi only matters for artists drawn rasterized (dense data): 200 dpi prints cleanly
    fig.savefig(buf, format="svg", dpi=200,
                metadata={"Date": None, "Creator": None, "Format": None, "Type": None})
    text = _DOCTYPE.sub("", buf.getvalue())
    return _METADATA.sub("", text)


def svg_data_uri(fig: Figure) -> str:
    """The figure as a ``data:image/svg+xml;base64`` URI for an ``<img>`` element."""
    raw = svg_text(fig).encode("utf-8")
    return "data:image/svg+xml;base64," + base64.b64encode(raw).decode("ascii")
