"""A new workbook for inputs that were not workbooks, written with xlsxwriter.

Every text value goes through ``write_string`` (xlsxwriter's generic ``write`` turns a string
starting with ``=`` into a formula); the workbook options that convert strings to formulas,
numbers or links are also switched off, as a second guard.
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from pathlib import Path
from typing import TYPE_CHECKING, Any

import numpy as np
import pandas as pd
import xlsxwriter

from qc.io.writeback_cells import MAX_CELL_TEXT, normalise_label
from qc.io.writeback_sheets import column_width, valid_sheet_name
from qc.io.writeback_styles import HEADER_MARK, TITLE_MARK, VERDICT_ALIASES, VERDICT_MARKS, Mark

if TYPE_CHECKING:
    from qc.io.writeback import SheetTable

_PATTERNS = {"none": 0, "solid": 1, "mediumGray": 2, "darkGray": 3, "lightGray": 4}
_BORDERS = {"thin": 1, "medium": 2, "dashed": 3, "dotted": 4}


def _props(mark: Mark | None, number_format: str | None) -> dict[str, Any]:
    """xlsxwriter format properties equal to a :class:`Mark` (see qc.io.writeback_styles)."""
    props: dict[str, Any] = {}
    if number_format:
        props["num_format"] = number_format
    if mark is None:
        return props
    if mark.bold:
        props["bold"] = True
    if mark.italic:
        props["italic"] = True
    if mark.color:
        props["font_color"] = "#" + mark.color[-6:]
    if mark.size_step:
        props["font_size"] = 11 + mark.size_step
    if mark.pattern != "none":
        props["pattern"] = _PATTERNS[mark.pattern]
        if mark.pattern == "solid":
            props["bg_color"] = "#" + (mark.fg or "FFFFFFFF")[-6:]
        else:
            if mark.fg:
                props["fg_color"] = "#" + mark.fg[-6:]
            if mark.bg:
                props["bg_color"] = "#" + mark.bg[-6:]
    if mark.border:
        if mark.bottom_only:
            props["bottom"] = _BORDERS[mark.border]
        else:
            props["border"] = _BORDERS[mark.border]
    return props


class _Formats:
    """xlsxwriter formats, made once per (number format, marking)."""

    def __init__(self, book: xlsxwriter.Workbook) -> None:
        self.book = book
        self._made: dict[tuple[str | None, Mark | None], Any] = {}

    def get(self, number_format: str | None = None, mark: Mark | None = None) -> Any:
        key = (number_format, mark)
        if key not in self._made:
            props = _props(mark, number_format)
            self._made[key] = self.book.add_format(props) if props else None
        return self._made[key]


def build_workbook(
    path: Path,
    *,
    data: pd.DataFrame,
    sheet_name: str,
    column_formats: Mapping[str, str],
    extra_sheets: Sequence[SheetTable],
    verdict_column: str,
) -> tuple[list[str], list[str]]:
    """Write the workbook to ``path``; return the sheet names used and notes for the report."""
    options = {
        "constant_memory": True,
        "strings_to_formulas": False,
        "strings_to_numbers": False,
        "strings_to_urls": False,
    }
    notes: list[str] = []
    names: list[str] = []
    book = xlsxwriter.Workbook(str(path), options)
    try:
        formats = _Formats(book)
        first = valid_sheet_name(sheet_name, [])
        names.append(first)
        truncated = _write_sheet(
            book.add_worksheet(first),
            formats,
            data,
            0,
            column_formats,
            {},
            (),
            True,
            verdict_column,
        )
        for extra in extra_sheets:
            name = valid_sheet_name(extra.name, names)
            if name != extra.name:
                notes.append(
                    f"The sheet '{extra.name}' was named '{name}' (names must be unique, "
                    "at most 31 characters, without []:*?/\\)."
                )
            names.append(name)
            titles = list(extra.title_lines)
            truncated += _write_sheet(
                book.add_worksheet(name),
                formats,
                extra.frame,
                len(titles) + 1 if titles else 0,
                extra.column_formats,
                extra.column_widths,
                titles,
                extra.freeze_header,
                verdict_column,
            )
    finally:
        book.close()
    if truncated:
        notes.append(
            f"{truncated} text value(s) longer than 32 767 characters were cut to fit a cell."
        )
    return names, notes


def _write_sheet(
    ws: Any,
    formats: _Formats,
    frame: pd.DataFrame,
    header_row: int,
    column_formats: Mapping[str, str],
    column_widths: Mapping[str, float],
    titles: Sequence[str],
    freeze: bool,
    verdict_column: str,
) -> int:
    """Fill one worksheet, row by row (constant-memory mode needs row order). 0-based rows."""
    truncated = 0
    labels = [str(c) for c in frame.columns]
    title_format = formats.get(None, TITLE_MARK)
    for i, line in enumerate(titles):
        ws.write_string(i, 0, line[:MAX_CELL_TEXT], title_format)
    header_format = formats.get(None, HEADER_MARK)
    for j, label in enumerate(labels):
        ws.write_string(header_row, j, label[:MAX_CELL_TEXT], header_format)
    verdict_formats = {w: formats.get(None, m) for w, m in VERDICT_MARKS.items()}
    verdict_formats.update({a: verdict_formats[w] for a, w in VERDICT_ALIASES.items()})
    plans = []
    for j, (label, col) in enumerate(zip(labels, frame.columns, strict=True)):
        series = frame[col]
        fmt_code = column_formats.get(label)
        if series.dtype.kind == "M" and not fmt_code:
            fmt_code = "yyyy-mm-dd hh:mm:ss"
        width = column_widths.get(label) or column_width(label, series, fmt_code)
        ws.set_column(j, j, width)
        values = _values(series)
        plans.append((j, values, formats.get(fmt_code), label == verdict_column))
    for i in range(len(frame)):
        r = header_row + 1 + i
        for j, values, fmt, is_verdict in plans:
            v = values[i]
            if v is None:
                continue
            if isinstance(v, str):
                if len(v) > MAX_CELL_TEXT:
                    v = v[:MAX_CELL_TEXT]
                    truncated += 1
                cell_fmt = verdict_formats.get(normalise_label(v), fmt) if is_verdict else fmt
                ws.write_string(r, j, v, cell_fmt)
            elif isinstance(v, bool):
                ws.write_boolean(r, j, v, fmt)
            elif isinstance(v, float | int):
                if math.isinf(v):
                    ws.write_string(r, j, "inf" if v > 0 else "-inf", fmt)
                else:
                    ws.write_number(r, j, v, fmt)
            else:
                ws.write_datetime(r, j, v, fmt)
    if freeze:
        ws.freeze_panes(header_row + 1, 0)
    return truncated


def _values(series: pd.Series) -> list[Any]:
    """Python values of a column: None for missing, str/bool/float/int/datetime otherwise."""
    kind = series.dtype.kind
    if kind == "f":
        arr = series.to_numpy(dtype=float)
        return [None if v != v else v for v in arr.tolist()]
    if kind in "iub" and not series.isna().any():
        return series.tolist()
    if kind == "M":
        naive = series.dt.tz_localize(None) if series.dt.tz is not None else series
        return [None if pd.isna(v) else v.to_pydatetime() for v in naive]
    out: list[Any] = []
    for v in series.tolist():
        if v is None or v is pd.NA or v is pd.NaT or (isinstance(v, float) and v != v):
            out.append(None)
        elif isinstance(v, np.generic):
            out.append(v.item())
        elif isinstance(v, str | bool | int | float):
            out.append(v)
        elif isinstance(v, pd.Timestamp):
            out.append(v.to_pydatetime().replace(tzinfo=None))
        else:
            out.append(str(v))
    return out
