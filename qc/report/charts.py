"""The report's charts: sizes per characteristic, budget contributions, temperature scatter.

Each function takes plain arrays in the report's length unit and returns an SVG data URI.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np
from matplotlib.axes import Axes
from matplotlib.lines import Line2D
from matplotlib.patches import Patch
from matplotlib.transforms import offset_copy

from qc.report.figures import GREYS, VERDICT_STYLE, chart_style, new_figure, svg_data_uri
from qc.report.units import DisplayUnit

__all__ = [
    "MAX_PANELS",
    "MAX_PARTS_PER_PANEL",
    "SizeSeries",
    "budget_chart",
    "size_chart",
    "temperature_chart",
]

WIDTH_IN = 6.7  # 170 mm: fits the text width of A4 and Letter with 15 mm margins
MAX_PARTS_PER_PANEL = 100
MAX_PANELS = 3
LABEL_ALL_UP_TO = 40  # name every part on the axis up to this many per panel
DENSE_POINTS = 600  # above this many markers the scatter's markers are embedded as pixels


@dataclass(frozen=True)
class SizeSeries:
    """One characteristic, part by part, in the report unit (NaN where a value is missing)."""

    parts: Sequence[str]
    size: np.ndarray
    reading: np.ndarray
    expanded: np.ndarray
    lower: np.ndarray
    upper: np.ndarray
    accept_low: np.ndarray
    accept_high: np.ndarray
    nominal: np.ndarray
    verdict: Sequence[str]


@dataclass(frozen=True)
class SizeChart:
    """A drawn size chart and how many sizes fell outside its scale (drawn as edge arrows)."""

    uri: str
    panels: int
    off_scale: int


def panel_slices(n: int) -> list[slice]:
    """Split n parts into at most MAX_PANELS stacked panels of about equal length."""
    if n <= MAX_PARTS_PER_PANEL:
        return [slice(0, n)]
    panels = min(MAX_PANELS, math.ceil(n / MAX_PARTS_PER_PANEL))
    step = math.ceil(n / panels)
    return [slice(i, min(i + step, n)) for i in range(0, n, step)]


def size_chart(series: SizeSeries, unit: DisplayUnit, ref: str = "20 °C") -> SizeChart:
    """Each part's size at the reference temperature ``ref`` ± U against the limits and the
    guard-banded zone.

    The uncorrected reading sits faintly to the left of each size, so the thermal
    correction shows as the step between the two.
    """
    n = len(series.parts)
    slices = panel_slices(n) if n else [slice(0, 0)]
    low, high = _scale(series)
    off_scale = 0
    with chart_style():
        # stacked panels are lower, so two two-row charts still share a page
        fig = new_figure(WIDTH_IN, 0.55 + (2.2 if len(slices) == 1 else 1.85) * len(slices))
        axes = fig.subplots(len(slices), 1, squeeze=False)[:, 0]
        for ax, sl in zip(axes, slices, strict=True):
            off_scale += _size_panel(ax, series, sl, low, high)
            ax.set_ylabel(f"size at {ref} ({unit.name})")
            ax.ticklabel_format(axis="y", useOffset=False, style="plain")
        axes[-1].set_xlabel("part")
        fig.legend(handles=_size_legend(series, ref), loc="outside lower center", ncol=4,
                   fontsize=6.5, handlelength=2.2)
        return SizeChart(svg_data_uri(fig), len(slices), off_scale)


def _scale(s: SizeSeries) -> tuple[float, float]:
    """The y range: the limits and the data, with room around them.

    With two limits the data may widen the range by at most one tolerance either side, so
    a single wild reading does not flatten the rest (it is drawn as an arrow at the edge).
    With one limit or none there is no tolerance to measure by, so all data are shown.
    """
    limits = np.concatenate([s.lower, s.upper, s.accept_low, s.accept_high])
    limits = limits[np.isfinite(limits)]
    data = np.concatenate([s.size - s.expanded, s.size + s.expanded, s.reading])
    data = data[np.isfinite(data)]
    both = np.isfinite(s.lower) & np.isfinite(s.upper)
    tolerance = float(np.nanmax(s.upper[both] - s.lower[both])) if both.any() else 0.0
    points = np.concatenate([limits, data])
    if points.size == 0:
        return 0.0, 1.0
    lo, hi = float(points.min()), float(points.max())
    if tolerance > 0:
        lo = max(lo, float(limits.min()) - tolerance)
        hi = min(hi, float(limits.max()) + tolerance)
    span = hi - lo or 1e-3 * max(1.0, abs(lo))
    pad = 0.08 * span
    return lo - pad, hi + pad


def _size_panel(ax: Axes, s: SizeSeries, sl: slice, low: float, high: float) -> int:
    """Draw parts ``sl`` into ``ax``; returns how many sizes lay off the scale."""
    idx = np.arange(sl.start, sl.stop)
    x = idx.astype(float)
    edges_lo, edges_hi = x - 0.5, x + 0.5
    # guard bands: hatched between each tolerance limit and its acceptance limit
    for tol, acc in ((s.upper, s.accept_high), (s.lower, s.accept_low)):
        t, a = tol[sl], acc[sl]
        ok = np.isfinite(t) & np.isfinite(a)
        if ok.any():
            xs = np.column_stack([edges_lo[ok], edges_hi[ok]]).ravel()
            ax.fill_between(xs, np.repeat(t[ok], 2), np.repeat(a[ok], 2), facecolor="none",
                            edgecolor=GREYS["light"], hatch="////", linewidth=0)
    _steps(ax, edges_lo, edges_hi, s.upper[sl], color=GREYS["ink"], lw=1.3, ls="-")
    _steps(ax, edges_lo, edges_hi, s.lower[sl], color=GREYS["ink"], lw=1.3, ls="-")
    _steps(ax, edges_lo, edges_hi, s.accept_high[sl], color=GREYS["dark"], lw=0.8, ls="--")
    _steps(ax, edges_lo, edges_hi, s.accept_low[sl], color=GREYS["dark"], lw=0.8, ls="--")
    _steps(ax, edges_lo, edges_hi, s.nominal[sl], color=GREYS["mid"], lw=0.6, ls="-.")

    size, reading, U = s.size[sl], s.reading[sl], s.expanded[sl]
    dense = len(idx) > 60
    # the reading sits a fixed distance left of its part, whatever the number of parts
    beside = offset_copy(ax.transData, fig=ax.figure, x=-2.0 if dense else -5.0, units="points")
    ax.plot(x, np.clip(reading, low, high), linestyle="none", marker="^",
            markersize=2.5 if dense else 3.2, mfc="none", mec=GREYS["light"], mew=0.7,
            rasterized=dense, transform=beside)
    has_u = np.isfinite(size) & np.isfinite(U)
    ends = (np.clip(size[has_u] - U[has_u], low, high), np.clip(size[has_u] + U[has_u], low, high))
    ax.vlines(x[has_u], *ends, color=GREYS["ink"], linewidth=0.6 if dense else 0.9,
              rasterized=dense)
    if not dense:  # caps of a fixed width in points
        for y in ends:
            ax.plot(x[has_u], y, linestyle="none", marker="_", markersize=6, mew=0.9,
                    color=GREYS["ink"])
    verdicts = np.asarray(s.verdict, dtype=object)[sl]
    for verdict, style in VERDICT_STYLE.items():
        pick = (verdicts == verdict) & np.isfinite(size) & (size >= low) & (size <= high)
        if pick.any():
            kw = dict(style)
            if dense:
                kw["markersize"] = float(kw["markersize"]) * 0.75  # type: ignore[arg-type]
            ax.plot(x[pick], size[pick], linestyle="none", mew=0.8, rasterized=dense,
                    **kw)  # type: ignore[arg-type]
    above = np.isfinite(size) & (size > high)
    below = np.isfinite(size) & (size < low)
    span = high - low
    ax.plot(x[above], np.full(above.sum(), high - 0.03 * span), "^", color=GREYS["ink"],
            markersize=6)
    ax.plot(x[below], np.full(below.sum(), low + 0.03 * span), "v", color=GREYS["ink"],
            markersize=6)
    ax.set_ylim(low, high)
    ax.set_xlim(sl.start - 0.7, max(sl.stop - 1, sl.start) + 0.7)
    ax.grid(axis="y")
    ax.tick_params(axis="x", length=2)
    names = [str(s.parts[i]) for i in idx]
    if len(idx) <= LABEL_ALL_UP_TO:
        ax.set_xticks(x, names, rotation=90, fontsize=6)
    else:
        every = math.ceil(len(idx) / LABEL_ALL_UP_TO)
        ax.set_xticks(x[::every], names[::every], rotation=90, fontsize=5.5)
    return int(above.sum() + below.sum())


def _steps(ax: Axes, x0: np.ndarray, x1: np.ndarray, y: np.ndarray, **line: object) -> None:
    """A limit drawn part by part (one straight line when it is the same for all parts)."""
    ok = np.isfinite(y)
    if not ok.any():
        return
    kw = {"color": line["color"], "linewidth": line["lw"], "linestyle": line["ls"]}
    if np.ptp(y[ok]) == 0 and ok.all():
        ax.axhline(y[ok][0], **kw)  # type: ignore[arg-type]
    else:
        ax.hlines(y[ok], x0[ok], x1[ok], **kw)  # type: ignore[arg-type]


def _size_legend(s: SizeSeries, ref: str) -> list[Line2D | Patch]:
    """Legend entries for what the chart can show (verdicts only where present)."""
    handles: list[Line2D | Patch] = [
        Line2D([], [], color=GREYS["ink"], lw=1.3, label="tolerance limit"),
        Line2D([], [], color=GREYS["dark"], lw=0.8, ls="--", label="conformance zone limit"),
        Patch(facecolor="none", edgecolor=GREYS["light"], hatch="////", label="guard band"),
        Line2D([], [], color=GREYS["mid"], lw=0.6, ls="-.", label="nominal"),
        Line2D([], [], color=GREYS["ink"], lw=0.9, marker="|", markersize=6,
               label=f"size at {ref} ± U"),
        Line2D([], [], ls="none", marker="^", mfc="none", mec=GREYS["light"],
               label="reading, uncorrected"),
    ]
    present = set(s.verdict)
    for verdict, style in VERDICT_STYLE.items():
        if verdict in present:
            handles.append(Line2D([], [], ls="none", mew=0.8, label=verdict, **style))  # type: ignore[arg-type]
    return handles


def budget_chart(
    quantities: Sequence[str], contributions: np.ndarray, shares: np.ndarray, small_unit: str
) -> str:
    """Horizontal bars of |u_i(y)| (in µm or µin), largest first; the dominant bar is dark."""
    order = np.argsort(-np.abs(contributions), kind="stable")
    q = [str(quantities[i]) for i in order][::-1]
    c = np.abs(contributions[order])[::-1]
    sh = shares[order][::-1]
    with chart_style():
        fig = new_figure(WIDTH_IN * 0.62, 0.55 + 0.24 * max(len(q), 2))
        ax = fig.add_subplot()
        y = np.arange(len(q))
        face = [GREYS["paper"]] * len(q)
        hatch = ["////"] * len(q)
        if len(q):
            face[-1], hatch[-1] = GREYS["dark"], ""
        ax.barh(y, c, color=face, edgecolor=GREYS["ink"], linewidth=0.6, hatch=hatch,
                height=0.62)
        top = float(c.max()) if len(c) else 1.0
        for yi, ci, si in zip(y, c, sh, strict=True):
            label = f"{100 * si:.0f} %" if math.isfinite(si) else ""
            ax.text(ci + 0.02 * top, yi, label, va="center", fontsize=6.5)
        ax.set_yticks(y, q, fontsize=6.5)
        ax.set_xlim(0, top * 1.18 if top > 0 else 1.0)
        ax.set_xlabel(f"contribution $u_i(y)$ ({small_unit})\nnumber at each bar: share of $u_c^2$")
        ax.grid(axis="x")
        return svg_data_uri(fig)


def temperature_chart(
    part_temp: np.ndarray,
    correction_small: np.ndarray,
    verdict: Sequence[str],
    reference_c: float,
    small_unit: str,
) -> str:
    """Part temperature against the thermal correction applied, one marker per measurement."""
    verdicts = np.asarray(verdict, dtype=object)
    with chart_style():
        fig = new_figure(WIDTH_IN, 2.8)
        ax = fig.add_subplot()
        ax.axvline(reference_c, color=GREYS["mid"], lw=0.8, ls=":")
        ax.axhline(0.0, color=GREYS["mid"], lw=0.6)
        handles = [Line2D([], [], color=GREYS["mid"], lw=0.8, ls=":",
                          label=f"reference temperature {reference_c:g} °C")]
        ok = np.isfinite(part_temp) & np.isfinite(correction_small)
        dense = int(ok.sum()) > DENSE_POINTS
        for name, style in VERDICT_STYLE.items():
            pick = ok & (verdicts == name)
            if pick.any():
                ax.plot(part_temp[pick], correction_small[pick], ls="none", mew=0.8,
                        rasterized=dense, **style)  # type: ignore[arg-type]
                handles.append(Line2D([], [], ls="none", mew=0.8, label=name, **style))  # type: ignore[arg-type]
        ax.set_xlabel("part temperature (°C)")
        ax.set_ylabel(f"thermal correction ({small_unit})")
        ax.grid(True)
        fig.legend(handles=handles, loc="outside lower center", ncol=5, fontsize=6.5)
        return svg_data_uri(fig)
