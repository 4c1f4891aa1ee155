"""Read a machine drift-study log (CSV) into plain arrays.

Format (documented in docs/thermal.md):

* optional comment lines starting with ``#``; blank lines are skipped;
* one header row, then one row per observation; separator ``,``, ``;`` or tab
  (with ``;`` a decimal comma is accepted);
* a time column: header ``time``/``elapsed`` with a unit suffix ``(s)``, ``(min)`` or
  ``(h)`` holding elapsed time, or with no suffix holding clock times/dates such as
  ``2026-03-02 07:30`` (then elapsed time is counted from the first row);
* a temperature column: header ``temperature``, ``temp`` or ``T`` with suffix ``(°C)``
  (or ``(degC)``, ``(C)``; no suffix means °C);
* every other column is one axis of indicator readings, named by its header; the unit
  suffix ``(µm)``, ``(um)``, ``(nm)`` or ``(mm)`` is converted to µm; no suffix means µm.
  An empty reading is a missing value.

Row numbers in messages are the file's own line numbers.
"""

from __future__ import annotations

import io
import re
from dataclasses import dataclass
from datetime import datetime
from pathlib import Path

import numpy as np
import pandas as pd
from numpy.typing import NDArray

from qc.errors import CellError, FileReadError, Place

__all__ = ["DriftLog", "read_drift_log"]

_HEADER = re.compile(r"^\s*(?P<name>.*?)\s*(?:[\(\[]\s*(?P<unit>[^\)\]]*?)\s*[\)\]])?\s*$")
_TIME_NAMES = {"time", "elapsed", "elapsed time", "clock", "timestamp", "date/time"}
_TEMP_NAMES = {"temperature", "temp", "t", "room temperature", "air temperature"}
_TIME_UNITS = {"s": 1.0, "sec": 1.0, "min": 60.0, "h": 3600.0, "hr": 3600.0}
_TEMP_UNITS = {"", "°c", "degc", "c", "℃"}
_LENGTH_UNITS = {"µm": 1.0, "μm": 1.0, "um": 1.0, "micron": 1.0, "nm": 1e-3, "mm": 1000.0}


@dataclass(frozen=True)
class DriftLog:
    """A drift-study log as arrays: times in s from the first row, temperature in °C,
    readings in µm with shape (rows, axes); ``started`` is the first clock time if given."""

    source: str
    time_s: NDArray[np.float64]
    temperature_c: NDArray[np.float64]
    axes: tuple[str, ...]
    readings_um: NDArray[np.float64]
    started: datetime | None


def _split_header(text: str) -> tuple[str, str]:
    m = _HEADER.match(text)
    assert m is not None  # the pattern matches any string
    return m.group("name"), (m.group("unit") or "").strip()


def _numbers(
    values: pd.Series, lines: list[int], name: str, column: str, expected: str, decimal: str
) -> NDArray[np.float64]:
    text = values.fillna("").astype(str).str.strip()
    if decimal == ",":
        text = text.str.replace(",", ".", regex=False)
    nums = pd.to_numeric(text.where(text != "", None), errors="coerce")
    bad = nums.isna() & (text != "")
    if bad.any():
        i = int(np.flatnonzero(bad.to_numpy())[0])
        raise CellError(Place(name, row=lines[i], column=column), text.iloc[i], expected)
    return nums.to_numpy(dtype=float)


def read_drift_log(path: str | Path) -> DriftLog:
    """Read a drift-study CSV; raises FileReadError or CellError (also for a header unit)."""
    p = Path(path)
    name = p.name
    try:
        raw = p.read_text(encoding="utf-8-sig")
    except FileNotFoundError as exc:
        raise FileReadError(f"{name}: file not found") from exc
    except (OSError, UnicodeDecodeError) as exc:
        raise FileReadError(f"{name}: cannot be read as a UTF-8 text file ({exc})") from exc

    kept: list[str] = []
    lines: list[int] = []
    for number, line in enumerate(raw.splitlines(), start=1):
        if line.strip() and not line.lstrip().startswith("#"):
            kept.append(line)
            lines.append(number)
    if len(kept) < 2:
        raise FileReadError(f"{name}: expected a header row and at least one row of readings")
    header = kept[0]
    sep = max((",", ";", "\t"), key=header.count)
    decimal = "," if sep == ";" else "."
    try:
        frame = pd.read_csv(io.StringIO("\n".join(kept)), sep=sep, dtype=str, keep_default_na=False)
    except (pd.errors.ParserError, ValueError) as exc:
        raise FileReadError(f"{name}: not a readable table ({exc})") from exc
    frame.columns = [str(c).strip() for c in frame.columns]
    data_lines = lines[1:]

    def bad_unit(column: str, unit: str, expected: str) -> CellError:
        return CellError(Place(name, row=lines[0], column=column), unit, expected)

    time_col = temp_col = None
    axes: list[tuple[str, str, float]] = []
    for col in frame.columns:
        label, unit = _split_header(str(col))
        key = label.lower()
        if time_col is None and key in _TIME_NAMES:
            time_col = (str(col), unit)
        elif temp_col is None and key in _TEMP_NAMES:
            if unit.lower() not in _TEMP_UNITS:
                raise bad_unit(str(col), unit, "a temperature unit: °C (or degC, C)")
            temp_col = str(col)
        else:
            factor = 1.0 if unit == "" else _LENGTH_UNITS.get(unit.lower())
            if factor is None:
                raise bad_unit(str(col), unit, "a length unit: µm (or um), nm or mm")
            axes.append((str(col), label, factor))
    if time_col is None:
        raise FileReadError(
            f"{name}: no time column found (expected a header such as 'time (min)')"
        )
    if temp_col is None:
        raise FileReadError(
            f"{name}: no temperature column found (expected a header such as 'temperature (°C)')"
        )
    if not axes:
        raise FileReadError(f"{name}: no axis columns found (expected a header such as 'X (µm)')")

    col, unit = time_col
    started: datetime | None = None
    if unit:
        if unit.lower() not in _TIME_UNITS:
            raise bad_unit(col, unit, "a time unit: s, min or h")
        elapsed = _numbers(frame[col], data_lines, name, col, f"elapsed time in {unit}", decimal)
        if np.isnan(elapsed).any():
            i = int(np.flatnonzero(np.isnan(elapsed))[0])
            raise CellError(Place(name, row=data_lines[i], column=col), "", "a time")
        time_s = (elapsed - elapsed[0]) * _TIME_UNITS[unit.lower()]
    else:
        stamps = pd.to_datetime(frame[col].str.strip(), errors="coerce", format="mixed")
        if stamps.isna().any():
            i = int(np.flatnonzero(stamps.isna().to_numpy())[0])
            raise CellError(
                Place(name, row=data_lines[i], column=col),
                frame[col].iloc[i],
                "a date and time such as 2026-03-02 07:30",
                "or give elapsed time with a unit in the header, e.g. 'time (min)'",
            )
        started = stamps.iloc[0].to_pydatetime()
        time_s = (stamps - stamps.iloc[0]).dt.total_seconds().to_numpy(dtype=float)

    temperature = _numbers(
        frame[temp_col], data_lines, name, temp_col, "a temperature in °C", decimal
    )
    if np.isnan(temperature).any():
        i = int(np.flatnonzero(np.isnan(temperature))[0])
        raise CellError(Place(name, row=data_lines[i], column=temp_col), "", "a temperature in °C")
    readings = np.column_stack(
        [
            _numbers(frame[c], data_lines, name, c, "a reading (number)", decimal) * f
            for c, _, f in axes
        ]
    )
    return DriftLog(
        source=name,
        time_s=time_s,
        temperature_c=temperature,
        axes=tuple(label for _, label, _ in axes),
        readings_um=readings,
        started=started,
    )
