"""Plot of a drift study: readings per axis and temperature against time.

Grayscale-readable: axes are told apart by line style and marker, not by colour alone.
Draws on a matplotlib Figure with the Agg canvas directly (no pyplot state, no display).
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
from matplotlib import rc_context
from matplotlib.backends.backend_agg import FigureCanvasAgg
from matplotlib.figure import Figure
from numpy.typing import ArrayLike

from qc.errors import OutputError

__all__ = ["plot_drift"]

_STYLES = [("-", "o"), ("--", "s"), (":", "^"), ("-.", "D"), ((0, (5, 1, 1, 1)), "v")]
_GRAYS = ["0.0", "0.35", "0.55", "0.2", "0.45"]


def plot_drift(
    path: str | Path,
    time_s: ArrayLike,
    temperature_c: ArrayLike,
    readings_um: ArrayLike,
    axes: tuple[str, ...],
    slopes_um_per_k: ArrayLike | None = None,
    title: str = "Drift study",
) -> Path:
    """Write a two-panel figure (readings µm and temperature °C against time, hours) to
    ``path`` (format from its suffix: .png, .svg, .pdf); returns the path written."""
    out = Path(path)
    t_h = np.asarray(time_s, dtype=float) / 3600.0
    y = np.asarray(readings_um, dtype=float).reshape(len(t_h), -1)
    slopes = None if slopes_um_per_k is None else np.asarray(slopes_um_per_k, dtype=float)
    fig = Figure(figsize=(8, 6))
    FigureCanvasAgg(fig)
    top, bottom = fig.subplots(2, 1, sharex=True, gridspec_kw={"height_ratios": [2, 1]})
    try:
        for i, name in enumerate(axes):
            ls, marker = _STYLES[i % len(_STYLES)]
            label = name
            if slopes is not None:
                label += f" ({slopes[i]:+.2f} µm/K)"
            top.plot(
                t_h,
                y[:, i],
                linestyle=ls,
                marker=marker,
                markersize=4,
                color=_GRAYS[i % len(_GRAYS)],
                markerfacecolor="white",
                label=label,
            )
        top.set_ylabel("reading (µm)")
        top.set_title(title)
        top.grid(True, color="0.85")
        top.legend(loc="best", fontsize="small")
        bottom.plot(t_h, np.asarray(temperature_c, dtype=float), color="0.0", linewidth=1.5)
        bottom.set_ylabel("temperature (°C)")
        bottom.set_xlabel("time from start (h)")
        bottom.grid(True, color="0.85")
        fig.tight_layout()
        with rc_context({"svg.fonttype": "none"}):  # keep SVG text as text
            fig.savefig(out)
    except OSError as exc:
        raise OutputError(f"{out.name}: the plot cannot be written there ({exc})") from exc
    except ValueError as exc:  # matplotlib: unknown format suffix
        raise OutputError(
            f"{out.name}: cannot write a plot of this kind; use .png, .svg or .pdf"
        ) from exc
    return out
