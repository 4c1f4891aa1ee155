"""Plausibility checks on the typed inspection frame: values that parse but cannot be right.

The reader has already turned every cell into a number in canonical units (mm, °C, 1/K) and
reported what it could not read. What remains are values a careful inspector would query:
a temperature below absolute zero, °F or kelvin in a °C column, an inch reading taken for
millimetres, a CTE written in ppm without its unit, limits in the wrong order, a negative size.
Each check works on whole columns with numpy; only flagged rows get a message.

Ranges and factors, each with its source, are in the ``[plausibility]`` table of
``qc/data/limits.toml``. Conversions: t_F = 1.8·t_C + 32 and T = t_C + 273.15 (NIST SP 811,
4.2.1.1); 1 in = 25.4 mm exactly (NIST SP 811, B.9).
"""

from __future__ import annotations

import dataclasses
import tomllib
from collections.abc import Callable, Mapping
from dataclasses import dataclass
from functools import cache, cached_property
from importlib import resources
from typing import Any

import numpy as np
import pandas as pd

from qc.errors import DataFileError, Place

__all__ = ["Plausibility", "check_plausibility"]

Messages = dict[int, list[str]]

# frame column -> (input field for the column label, words for messages)
_TEMPS = {"part_temp_c": ("part_temp", "part temperature"),
          "gauge_temp_c": ("gauge_temp", "gauge temperature"),
          "room_temp_c": ("room_temp", "room temperature")}
_CTES = {"part_cte": ("part_cte", "part expansion coefficient"),
         "gauge_cte": ("gauge_cte", "gauge expansion coefficient")}


@cache
def _table() -> dict[str, Any]:
    text = resources.files("qc").joinpath("data", "limits.toml").read_text("utf-8")
    table = tomllib.loads(text).get("plausibility")
    if not isinstance(table, dict):
        raise DataFileError("limits.toml: expected a [plausibility] table")
    for name, entry in table.items():
        if not isinstance(entry, dict) or "value" not in entry or not entry.get("source"):
            raise DataFileError(f"limits.toml › plausibility.{name}: expected value and source")
    return {name: entry["value"] for name, entry in table.items()}


def _pair(name: str) -> tuple[float, float]:
    v = _table()[name]
    if not (isinstance(v, list) and len(v) == 2 and v[0] < v[1]):
        raise DataFileError(f"limits.toml › plausibility.{name}: expected [low, high], got {v!r}")
    return float(v[0]), float(v[1])


@dataclass(frozen=True)
class Plausibility:
    """Ranges of the plausibility checks; defaults from qc/data/limits.toml."""

    shop_temp_c: tuple[float, float] = _pair("shop_temp_c")
    celsius_majority: float = _table()["celsius_majority"]
    gauge_part_gap_c: float = _table()["gauge_part_gap_c"]
    spread_of_tolerance: float = _table()["spread_of_tolerance"]
    signed_kinds: tuple[str, ...] = tuple(_table()["signed_kinds"])
    inch_factor_rel: float = _table()["inch_factor_rel"]
    far_outside_tolerances: float = _table()["far_outside_tolerances"]
    cte_range_per_k: tuple[float, float] = _pair("cte_range_per_k")

    def replace(self, **changes: Any) -> Plausibility:
        """A copy with some ranges changed (e.g. ``shop_temp_c=(15.0, 30.0)``)."""
        return dataclasses.replace(self, **changes)


ABSOLUTE_ZERO_C: float = _table()["absolute_zero_c"]
INCH_MM: float = _table()["inch_factor"]
PPM: float = _table()["ppm_factor"]


class _Out:
    """Messages per frame row, with places in the spreadsheet's own terms."""

    def __init__(self, frame: pd.DataFrame, columns: Mapping[str, Any] | None) -> None:
        n = len(frame)
        self.frame = frame
        self.columns = columns or {}
        self.errors: Messages = {}
        self.warnings: Messages = {}
        self.n = n
        first = _col(frame.iloc[:1], "source_file", "", object)[0] if n else ""
        self.label = str(first) if isinstance(first, str) and first else "input"

    # the source columns are converted only when a row gets a message (most files: none)
    @cached_property
    def file(self) -> np.ndarray:
        return _col(self.frame, "source_file", "", object)

    @cached_property
    def sheet(self) -> np.ndarray:
        return _col(self.frame, "source_sheet", None, object)

    @cached_property
    def row(self) -> np.ndarray:
        return _col(self.frame, "source_row", None, object)

    def place(self, i: int, field: str) -> str:
        ref = self.columns.get(field)
        if ref is not None:
            letter = getattr(ref, "letter", None)
            header = getattr(ref, "header", "")
            col = f"{letter}: {header}" if letter and header else (letter or header or field)
        else:
            col = field
        row = self.row[i]
        sheet = self.sheet[i]
        return str(Place(str(self.file[i] or "input"),
                         sheet if isinstance(sheet, str) and sheet else None,
                         int(row) if row is not None and not pd.isna(row) else None, col))

    def add(self, target: Messages, mask: np.ndarray, field: str, text: Any) -> None:
        """One message per flagged row; ``text(i)`` writes what was found and what to do."""
        for i in np.flatnonzero(mask):
            target.setdefault(int(i), []).append(f"{self.place(int(i), field)}: {text(int(i))}")


def _col(frame: pd.DataFrame, name: str, fill: Any, dtype: Any) -> np.ndarray:
    if name in frame:
        return frame[name].to_numpy(dtype=dtype, copy=True)
    return np.full(len(frame), fill, dtype=dtype)


def _by_distinct(frame: pd.DataFrame, name: str, fill: Any,
                 fn: Callable[[pd.Series], np.ndarray]) -> np.ndarray:
    """``fn`` of a column, where ``fn`` works value by value (a string test, a comparison).

    A string column is factorised and ``fn`` runs on its distinct values only (plus one
    missing value), the answers spread back by code; any other column goes to ``fn`` whole,
    and a missing column is ``fill`` on every row.
    """
    if name not in frame:
        return np.asarray(fn(pd.Series(np.full(len(frame), fill, dtype=object), dtype=object)))
    column = frame[name]
    if not isinstance(column.dtype, pd.StringDtype):
        return np.asarray(fn(column))
    codes, uniques = pd.factorize(column)  # missing values: code -1, the last entry below
    distinct = pd.Series(uniques).reindex(range(len(uniques) + 1))
    return np.asarray(fn(distinct))[codes]


def _num(frame: pd.DataFrame, name: str) -> np.ndarray:
    if name not in frame:
        return np.full(len(frame), np.nan)
    return pd.to_numeric(frame[name], errors="coerce").to_numpy(dtype=float)


def check_plausibility(frame: pd.DataFrame, limits: Plausibility | None = None, *,
                       columns: Mapping[str, Any] | None = None,
                       ) -> tuple[Messages, Messages, list[str]]:
    """Errors and warnings per frame row (0-based position, as RowError.index), and file notes.

    ``frame`` has the reader's canonical columns (mm, °C, 1/K); missing columns are skipped.
    ``columns`` (InspectionTable.columns) lets messages name the sheet's column letter and
    header. Errors mark values that cannot be right; warnings mark values to look at.
    """
    lim = limits or Plausibility()
    out = _Out(frame, columns)
    notes: list[str] = []
    if len(frame) == 0:
        return out.errors, out.warnings, notes
    _temperatures(frame, lim, out, notes)
    _shared_room(frame, lim, out)
    _sizes(frame, lim, out, notes)
    _ctes(frame, lim, out)
    return out.errors, out.warnings, notes


def _temperatures(frame: pd.DataFrame, lim: Plausibility, out: _Out, notes: list[str]) -> None:
    lo, hi = lim.shop_temp_c
    f_lo, f_hi = 1.8 * lo + 32, 1.8 * hi + 32  # the shop range in °F (NIST SP 811, 4.2.1.1)
    k_lo, k_hi = lo - ABSOLUTE_ZERO_C, hi - ABSOLUTE_ZERO_C  # and in kelvin
    for col, (field, words) in _TEMPS.items():
        t = _num(frame, col)
        fin = np.isfinite(t)
        if not fin.any():
            continue
        below_zero = fin & (t < ABSOLUTE_ZERO_C)
        out.add(out.errors, below_zero, field, lambda i, t=t, w=words: (
            f"{w} {t[i]:g} °C is below absolute zero ({ABSOLUTE_ZERO_C:g} °C); expected a "
            "temperature near 20 °C; correct the value or its unit"))
        outside = fin & ~below_zero & ((t < lo) | (t > hi))
        celsius_share = float(((t >= lo) & (t <= hi)).sum()) / max(int(fin.sum()), 1)
        fahrenheit = outside & (t >= f_lo) & (t <= f_hi)
        kelvin = outside & (t >= k_lo) & (t <= k_hi)
        if fahrenheit.any() and celsius_share < lim.celsius_majority:
            notes.append(
                f"{out.label}: {int(fahrenheit.sum())} {words}s lie between {f_lo:g} and "
                f"{f_hi:g}, the shop range in °F: is the column in °F? Write the unit in the "
                "header, e.g. 'Temp (°F)'")
        out.add(out.warnings, fahrenheit, field, lambda i, t=t, w=words: (
            f"{w} {t[i]:g} °C is outside the shop range {lo:g}–{hi:g} °C and looks like °F "
            f"({t[i]:g} °F = {(t[i] - 32) / 1.8:.1f} °C); if so, write the unit in the cell or "
            f"header (e.g. '{t[i]:g} °F')"))
        out.add(out.warnings, kelvin, field, lambda i, t=t, w=words: (
            f"{w} {t[i]:g} °C is outside the shop range {lo:g}–{hi:g} °C and looks like kelvin "
            f"({t[i]:g} K = {t[i] + ABSOLUTE_ZERO_C:.2f} °C); if so, write the unit (e.g. "
            f"'{t[i]:g} K')"))
        out.add(out.warnings, outside & ~fahrenheit & ~kelvin, field, lambda i, t=t, w=words: (
            f"{w} {t[i]:g} °C is outside the shop range {lo:g}–{hi:g} °C; check the value "
            "(the correction to 20 °C grows with the difference)"))


def _shared_room(frame: pd.DataFrame, lim: Plausibility, out: _Out) -> None:
    part, gauge = _num(frame, "part_temp_c"), _num(frame, "gauge_temp_c")
    shared = _col(frame, "shared_room", False, bool)
    gap = np.abs(part - gauge)
    mask = shared & np.isfinite(gap) & (gap > lim.gauge_part_gap_c)
    out.add(out.warnings, mask, "gauge_temp", lambda i: (
        f"the row is marked as part and gauge sharing one room, but the part is at "
        f"{part[i]:g} °C and the gauge at {gauge[i]:g} °C ({gap[i]:.1f} °C apart, more than "
        f"{lim.gauge_part_gap_c:g} °C); check whether the two were swapped or the part was "
        "still warm"))


def _sizes(frame: pd.DataFrame, lim: Plausibility, out: _Out, notes: list[str]) -> None:
    nominal = _num(frame, "nominal_mm")
    lower, upper = _num(frame, "lower_limit_mm"), _num(frame, "upper_limit_mm")
    mean, sd = _num(frame, "reading_mean_mm"), _num(frame, "reading_sd_mm")
    signed_kinds = set(lim.signed_kinds)
    signed = (_by_distinct(frame, "kind", "", lambda s: (
        pd.Series(s.to_numpy(dtype=object), dtype=object).fillna("").astype(str)
        .str.strip().str.lower().isin(signed_kinds).to_numpy()))
        | _by_distinct(frame, "unit", "", lambda s: s.to_numpy(dtype=object) == "°"))
    for col, field, words in (("nominal_mm", "nominal", "nominal size"),
                              ("reading_mean_mm", "reading", "reading")):
        v = nominal if col == "nominal_mm" else mean
        neg = ~signed & np.isfinite(v) & (v < 0)
        out.add(out.errors, neg, field, lambda i, v=v, w=words: (
            f"{w} {v[i]:g} mm is negative; a size cannot be; expected a positive length, or "
            "name the kind of characteristic (deviation, position) if signed values are meant"))
    inverted = np.isfinite(lower) & np.isfinite(upper) & (lower > upper)
    out.add(out.errors, inverted, "lower_limit", lambda i: (
        f"lower limit {lower[i]:g} mm is above upper limit {upper[i]:g} mm; expected "
        "lower ≤ upper; swap the two"))
    zone = np.isfinite(lower) & np.isfinite(upper) & ~inverted
    width = upper - lower
    # ISO 286 fits (g6, p6, ...) lie off the nominal by design: not a doubt there
    fit = (_by_distinct(frame, "tolerance_description", "", lambda s: (
        s.fillna("").astype(str).str.contains("ISO 286").to_numpy()))
        if "tolerance_description" in frame else np.zeros(len(frame), bool))
    nominal_out = (zone & np.isfinite(nominal) & ((nominal < lower) | (nominal > upper))
                   & ~signed & ~fit)
    out.add(out.warnings, nominal_out, "nominal", lambda i: (
        f"nominal {nominal[i]:g} mm lies outside its own limits {lower[i]:g}–{upper[i]:g} mm; "
        "check the signs of the deviations"))

    # a reading about 25.4 times (or 1/25.4 of) the nominal: inches and millimetres mixed up
    with np.errstate(divide="ignore", invalid="ignore"):
        ratio = mean / nominal
    ok = np.isfinite(ratio) & (nominal > 0) & ~signed
    outside = zone & np.isfinite(mean) & ((mean < lower) | (mean > upper))
    rel = lim.inch_factor_rel
    as_mm = ok & outside & (np.abs(ratio / INCH_MM - 1) <= rel)
    as_in = ok & outside & (np.abs(ratio * INCH_MM - 1) <= rel)
    out.add(out.warnings, as_mm, "reading", lambda i: (
        f"reading {mean[i]:g} mm is about 25.4 × the nominal {nominal[i]:g} mm: a reading in mm "
        f"where inches were expected? ({mean[i]:g} mm = {mean[i] / INCH_MM:.4g} in); check the "
        "unit column"))
    out.add(out.warnings, as_in, "reading", lambda i: (
        f"reading {mean[i]:g} mm is about 1/25.4 of the nominal {nominal[i]:g} mm: inch read as "
        f"mm? ({mean[i]:g} in = {mean[i] * INCH_MM:.4g} mm); write the unit in the cell "
        f"(e.g. '{mean[i]:g} in') or the unit column"))
    with np.errstate(invalid="ignore"):
        distance = np.maximum(lower - mean, mean - upper)
        far = outside & ~as_mm & ~as_in & (width > 0) & (
            distance > lim.far_outside_tolerances * width)
    out.add(out.warnings, far, "reading", lambda i: (
        f"reading {mean[i]:g} mm is far outside the tolerance {lower[i]:g}–{upper[i]:g} mm "
        f"({distance[i] / width[i]:.0f} tolerance widths away); check for a typing mistake, a "
        "wrong row or a wrong unit"))
    zero = zone & (width == 0)
    out.add(out.warnings, zero, "upper_limit", lambda i: (
        f"lower and upper limits are both {lower[i]:g} mm: a tolerance of zero width accepts "
        "nothing; check the limits"))
    spread = zone & np.isfinite(sd) & (width > 0) & (sd > lim.spread_of_tolerance * width)
    out.add(out.warnings, spread, "reading", lambda i: (
        f"the repeated readings scatter by {sd[i]:g} mm (standard deviation), more than "
        f"{lim.spread_of_tolerance:g} of the tolerance width {width[i]:g} mm; check the set-up "
        "and the readings"))
    n_inch = int((as_in | as_mm).sum())
    if n_inch >= 3:
        notes.append(f"{out.label}: {n_inch} readings differ from their nominal by the factor "
                     "25.4: check the unit column or the unit in the reading header")


def _ctes(frame: pd.DataFrame, lim: Plausibility, out: _Out) -> None:
    lo, hi = lim.cte_range_per_k
    for col, (field, words) in _CTES.items():
        a = _num(frame, col)
        fin = np.isfinite(a)
        bad = fin & ((a < lo) | (a > hi))
        ppm = bad & (a * PPM >= lo) & (a * PPM <= hi)
        out.add(out.errors, ppm, field, lambda i, a=a, w=words: (
            f"{w} {a[i]:g} /K is a million times too large for any material; expected about "
            f"{a[i]:g}e-6 /K: it was probably written in ppm/K; write '{a[i]:g} ppm/K' or "
            f"'{a[i]:g}e-6'"))
        out.add(out.errors, bad & ~ppm, field, lambda i, a=a, w=words: (
            f"{w} {a[i]:g} /K is outside {lo:g} to {hi:g} /K, the range of engineering "
            "materials; check the value and its unit"))
