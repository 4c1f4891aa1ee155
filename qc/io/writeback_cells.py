"""Cell XML for one column of results: numbers as numbers, text as inline strings, never formulas.

Text is written as ``t="inlineStr"`` so the shared-strings part stays untouched, and no ``<f>``
element is ever produced: a value beginning with ``=``, ``+``, ``-`` or ``@`` stays text.
Escaping follows XML 1.0 (``&``, ``<``, ``>``) and ECMA-376 Part 1, 22.9.2.19 (ST_Xstring):
characters XML cannot carry are written ``_xHHHH_``, and a literal ``_xHHHH_`` is protected by
escaping its underscore as ``_x005F_``.
"""

from __future__ import annotations

import math
import re
from collections.abc import Sequence
from dataclasses import dataclass, field
from datetime import date, datetime

import numpy as np
import pandas as pd

#: Longest text an Excel cell holds (Excel specifications and limits: 32 767 characters).
MAX_CELL_TEXT = 32767

_ILLEGAL = re.compile("[\x00-\x08\x0b\x0c\x0e-\x1f\ufffe\uffff]")
_ESCAPE_LIKE = re.compile(r"_(x[0-9A-Fa-f]{4}_)")
_EPOCH_1900 = np.datetime64("1899-12-30T00:00:00", "ns")
_EPOCH_1904 = np.datetime64("1904-01-01T00:00:00", "ns")


@dataclass
class CellNotes:
    """Counts of values that had to be adapted, for the write report."""

    truncated: int = 0
    infinite: int = 0
    other: list[str] = field(default_factory=list)


def xml_text(value: str, notes: CellNotes | None = None) -> str:
    """Escape ``value`` for the text of an XML element, per the module notes."""
    if len(value) > MAX_CELL_TEXT:
        value = value[:MAX_CELL_TEXT]
        if notes is not None:
            notes.truncated += 1
    if "_x" in value:
        value = _ESCAPE_LIKE.sub(r"_x005F_\1", value)
    value = value.replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;")
    if _ILLEGAL.search(value):
        value = _ILLEGAL.sub(lambda m: f"_x{ord(m.group()):04X}_", value)
    return value


def _style(style: int | None) -> str:
    return f' s="{style}"' if style else ""


def inline_string_cell(
    ref: str, text: str, style: int | None, notes: CellNotes | None = None
) -> str:
    """An inline-string cell: its text is shown as typed, never evaluated."""
    return (
        f'<c r="{ref}"{_style(style)} t="inlineStr"><is><t xml:space="preserve">'
        f"{xml_text(text, notes)}</t></is></c>"
    )


def _number_text(value: float) -> str:
    # repr gives the shortest text that reads back as the same double
    text = repr(float(value))
    return text[:-2] if text.endswith(".0") else text


def column_cells(
    values: pd.Series,
    letter: str,
    rows: Sequence[int],
    style: int | None,
    *,
    value_styles: dict[str, int] | None = None,
    date1904: bool = False,
    notes: CellNotes | None = None,
) -> list[str]:
    """Cell XML (``''`` for an empty cell) of one column, one entry per row of ``rows``.

    ``value_styles`` maps a normalised text value to a style index (the verdict marking);
    other text gets ``style``.
    """
    notes = notes if notes is not None else CellNotes()
    kind = values.dtype.kind
    st = _style(style)
    if kind in "fiu" and not isinstance(values.dtype, pd.CategoricalDtype):
        arr = values.to_numpy(dtype=float, na_value=np.nan)
        # repr is the shortest text that reads back as the same double
        out = [
            f'<c r="{letter}{r}"{st}><v>{v!r}</v></c>'
            for r, v in zip(rows, arr.tolist(), strict=True)
        ]
        bad = np.flatnonzero(~np.isfinite(arr))
        for i in bad.tolist():
            v = arr[i]
            if v != v:  # NaN: empty
                out[i] = ""
            else:
                notes.infinite += 1
                out[i] = inline_string_cell(f"{letter}{rows[i]}", "inf" if v > 0 else "-inf", style)
        return out
    if kind == "b" and not values.isna().any():
        return [
            f'<c r="{letter}{r}"{st} t="b"><v>{int(v)}</v></c>'
            for r, v in zip(rows, values.tolist(), strict=True)
        ]
    if kind == "M":
        epoch = _EPOCH_1904 if date1904 else _EPOCH_1900
        naive = values.dt.tz_localize(None) if values.dt.tz is not None else values
        days = (naive.to_numpy(dtype="datetime64[ns]") - epoch) / np.timedelta64(1, "D")
        return [
            "" if d != d else f'<c r="{letter}{r}"{st}><v>{_number_text(d)}</v></c>'
            for r, d in zip(rows, days.tolist(), strict=True)
        ]
    items = values.tolist()
    if pd.api.types.infer_dtype(items, skipna=False) == "string":
        # all text: escape each distinct value once (result texts repeat a lot)
        cache: dict[str, str] = {}
        for text in set(items):
            s = _style(value_styles.get(normalise_label(text), style) if value_styles else style)
            cache[text] = f'{s} t="inlineStr"><is><t xml:space="preserve">{xml_text(text, notes)}'
        return [
            f'<c r="{letter}{r}"{cache[t]}</t></is></c>' for r, t in zip(rows, items, strict=True)
        ]
    return [
        _object_cell(f"{letter}{r}", v, style, value_styles, date1904, notes)
        for r, v in zip(rows, items, strict=True)
    ]


def _object_cell(
    ref: str,
    value: object,
    style: int | None,
    value_styles: dict[str, int] | None,
    date1904: bool,
    notes: CellNotes,
) -> str:
    """One cell of a column of mixed Python values."""
    if value is None or value is pd.NA or value is pd.NaT:
        return ""
    if isinstance(value, str):
        if value_styles:
            style = value_styles.get(normalise_label(value), style)
        return inline_string_cell(ref, value, style, notes)
    if isinstance(value, bool | np.bool_):
        return f'<c r="{ref}"{_style(style)} t="b"><v>{int(value)}</v></c>'
    if isinstance(value, int | float | np.integer | np.floating):
        v = float(value)
        if v != v:
            return ""
        if math.isinf(v):
            notes.infinite += 1
            return inline_string_cell(ref, "inf" if v > 0 else "-inf", style)
        return f'<c r="{ref}"{_style(style)}><v>{_number_text(v)}</v></c>'
    if isinstance(value, datetime | date):
        epoch = datetime(1904, 1, 1) if date1904 else datetime(1899, 12, 30)
        moment = (
            value if isinstance(value, datetime) else datetime(value.year, value.month, value.day)
        )
        days = (moment.replace(tzinfo=None) - epoch).total_seconds() / 86400
        return f'<c r="{ref}"{_style(style)}><v>{_number_text(days)}</v></c>'
    return inline_string_cell(ref, str(value), style, notes)


def normalise_label(text: str) -> str:
    """Lower-case text with ``_``/``-`` read as spaces, for matching verdict words."""
    return " ".join(text.replace("_", " ").replace("-", " ").lower().split())
