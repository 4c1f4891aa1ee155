"""Cell XML for one column of results: numbers as numbers, text as inline strings, never formulas.

Text is written as ``t="inlineStr"`` so the shared-strings part stays untouched, and no ``<f>``
element is ever produced: a value beginning with ``=``, ``+``, ``-`` or ``@`` stays text.
Escaping follows XML 1.0 (``&``, ``<``, ``>``) and ECMA-376 Part 1, 22.9.2.19 (ST_Xstring):
characters XML cannot carry are written ``_xHHHH_``, and a literal ``_xHHHH_`` is protected by
escaping its underscore as ``_x005F_``.

Cells are built a whole column at a time with Arrow string kernels (no Python loop per cell):
numbers become text with the fewest digits that read back as the same double
(:func:`number_text`); each distinct text is escaped once. A column's cells come back as an Arrow
string array, null where the cell stays empty.
"""

from __future__ import annotations

import math
import re
from collections.abc import Sequence
from dataclasses import dataclass, field
from datetime import date, datetime
from itertools import repeat

import numpy as np
import pandas as pd
import pyarrow as pa
import pyarrow.compute as pc

#: Longest text an Excel cell holds (Excel specifications and limits: 32 767 characters).
MAX_CELL_TEXT = 32767

_ILLEGAL = re.compile("[\x00-\x08\x0b\x0c\x0e-\x1f\ufffe\uffff]")
_ESCAPE_LIKE = re.compile(r"_(x[0-9A-Fa-f]{4}_)")
_EPOCH_1900 = np.datetime64("1899-12-30T00:00:00", "ns")
_EPOCH_1904 = np.datetime64("1904-01-01T00:00:00", "ns")
_INLINE = ' t="inlineStr"><is><t xml:space="preserve">'
_INLINE_END = "</t></is></c>"
_NUMBER_TYPES = (int, float, np.integer, np.floating)
_BOOL_TYPES = (bool, np.bool_)


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
    return f'<c r="{ref}"{_style(style)}{_INLINE}{xml_text(text, notes)}{_INLINE_END}'


def _number_text(value: float) -> str:
    # repr gives the shortest text that reads back as the same double
    text = repr(float(value))
    return text[:-2] if text.endswith(".0") else text


def row_numbers(rows: np.ndarray | list[int] | range) -> pa.Array:
    """Spreadsheet row numbers as text, the form :func:`column_cells` takes."""
    return pc.cast(pa.array(np.asarray(rows, dtype=np.int64)), pa.string())


def _join(*parts: pa.Array | str) -> pa.Array:
    """Element-wise concatenation; a null part makes the whole cell null (empty)."""
    args = [pa.scalar(p, pa.string()) if isinstance(p, str) else p for p in parts]
    return pc.binary_join_element_wise(*args, "", null_handling="emit_null")


def join_cells(
    columns: Sequence[pa.Array], prefix: Sequence[pa.Array | str] = (), suffix: str = ""
) -> pa.Array:
    """Each row's cells (in column order) in one string; an empty cell adds nothing."""
    args = [pa.scalar(p, pa.string()) if isinstance(p, str) else p for p in [*prefix, *columns]]
    if suffix:
        args.append(pa.scalar(suffix, pa.string()))
    return pc.binary_join_element_wise(*args, "", null_handling="replace", null_replacement="")


def _inline_cells(
    letter: str,
    rows: pa.Array,
    text: pa.Array,
    style: int | None,
    value_styles: dict[str, int] | None,
    notes: CellNotes,
) -> pa.Array:
    """Inline-string cells of a string array (null → empty); each distinct text escaped once."""
    encoded = text.dictionary_encode()
    distinct = encoded.dictionary.to_pylist()
    indices = encoded.indices
    counts = np.bincount(
        pc.drop_null(indices).to_numpy(zero_copy_only=False), minlength=len(distinct)
    )
    tails = []
    for i, value in enumerate(distinct):
        if len(value) > MAX_CELL_TEXT:
            notes.truncated += int(counts[i])
        s = value_styles.get(normalise_label(value), style) if value_styles else style
        tails.append(f'"{_style(s)}{_INLINE}{xml_text(value)}{_INLINE_END}')
    return _join(f'<c r="{letter}', rows, pa.array(tails, pa.string()).take(indices))


def _number_cells(
    letter: str, rows: pa.Array, values: np.ndarray, style: int | None, notes: CellNotes
) -> pa.Array:
    """Number cells of float ``values``; NaN → empty, ±inf → the text inf / -inf."""
    st = _style(style)
    cells = _join(f'<c r="{letter}', rows, f'"{st}><v>', number_text(values), "</v></c>")
    infinite = np.isinf(values)
    n_inf = int(infinite.sum())
    if n_inf:
        notes.infinite += n_inf
        words = pa.array(np.where(values > 0, "inf", "-inf"), pa.string())
        inf_cells = _join(f'<c r="{letter}', rows, f'"{st}{_INLINE}', words, _INLINE_END)
        cells = pc.if_else(pa.array(infinite), inf_cells, cells)
    return cells


def number_text(values: np.ndarray) -> pa.Array:
    """Text of each double with the fewest digits that read back as the same double.

    Arrow's cast finds those digits (shortest round trip, as Python's ``repr``), ten times
    faster than formatting in numpy; its notation may differ (``1e-05`` is ``0.00001``). Each
    text is read back and compared, and any that would not round-trip is written with
    ``repr`` instead, so no digit is ever lost. NaN and ±inf give null.
    """
    finite = np.isfinite(values)
    numbers = pa.array(values, pa.float64(), mask=~finite)
    text = pc.cast(numbers, pa.string())
    same = pc.equal(pc.cast(text, pa.float64()), numbers)
    if not pc.all(same).as_py():
        wrong = np.flatnonzero(~pc.fill_null(same, True).to_numpy(zero_copy_only=False))
        fixed = text.to_numpy(zero_copy_only=False).astype(object)
        fixed[wrong] = [repr(float(v)) for v in values[wrong]]
        text = pa.array(fixed, pa.string(), mask=~finite)
    return text


def _bool_cells(letter: str, rows: pa.Array, values: np.ndarray, style: int | None) -> pa.Array:
    digits = pa.array(np.where(values.astype(bool), "1", "0"), pa.string())
    return _join(f'<c r="{letter}', rows, f'"{_style(style)} t="b"><v>', digits, "</v></c>")


def column_cells(
    values: pd.Series,
    letter: str,
    rows: pa.Array,
    style: int | None,
    *,
    value_styles: dict[str, int] | None = None,
    date1904: bool = False,
    notes: CellNotes | None = None,
) -> pa.Array:
    """Cell XML of one column (null for an empty cell), one entry per row of ``rows``.

    ``rows`` are the spreadsheet row numbers as text (:func:`row_numbers`). ``value_styles``
    maps a normalised text value to a style index (the verdict marking); other text gets
    ``style``.
    """
    notes = notes if notes is not None else CellNotes()
    if len(values) != len(rows):
        raise ValueError(f"{len(values)} values for {len(rows)} rows")
    if isinstance(values.dtype, pd.CategoricalDtype):
        cells = _categorical_cells(values, letter, rows, style, value_styles, date1904)
        if cells is not None:
            return cells
        values = values.astype(object)
    kind = values.dtype.kind
    if kind in "fiu":
        arr = values.to_numpy(dtype=float, na_value=np.nan)
        return _number_cells(letter, rows, arr, style, notes)
    if kind == "b" and not values.isna().any():
        return _bool_cells(letter, rows, values.to_numpy(dtype=bool), style)
    if kind == "M":
        epoch = _EPOCH_1904 if date1904 else _EPOCH_1900
        naive = values.dt.tz_localize(None) if values.dt.tz is not None else values
        days = (naive.to_numpy(dtype="datetime64[ns]") - epoch) / np.timedelta64(1, "D")
        return _number_cells(letter, rows, days, style, notes)
    return _object_cells(values, letter, rows, style, value_styles, date1904, notes)


def _categorical_cells(
    values: pd.Series,
    letter: str,
    rows: pa.Array,
    style: int | None,
    value_styles: dict[str, int] | None,
    date1904: bool,
) -> pa.Array | None:
    """Cells of a categorical column: each category's cell made once, then repeated by code.

    A cell is ``<c r="`` + its reference + a part that depends on the value only; that part is
    built for the categories (with an empty reference) and taken by each row's code. None when
    a category had to be adapted (cut or infinite), so the caller counts those cell by cell.
    """
    categories = pd.Series(values.cat.categories.to_numpy(dtype=object), dtype=object)
    scratch = CellNotes()
    none = pa.array([""] * len(categories), pa.string())
    cells = column_cells(
        categories, "", none, style, value_styles=value_styles, date1904=date1904, notes=scratch
    )
    if scratch.truncated or scratch.infinite or scratch.other:
        return None
    tails = pc.utf8_slice_codeunits(cells, len('<c r="'))
    codes = values.cat.codes.to_numpy()
    picked = tails.take(pa.array(codes, pa.int64(), mask=codes < 0))
    return _join(f'<c r="{letter}', rows, picked)


def _object_cells(
    values: pd.Series,
    letter: str,
    rows: pa.Array,
    style: int | None,
    value_styles: dict[str, int] | None,
    date1904: bool,
    notes: CellNotes,
) -> pa.Array:
    """Cells of a column of Python values: each kind (text, truth value, number) in bulk."""
    obj = values.to_numpy(dtype=object, na_value=None)
    missing = values.isna().to_numpy(dtype=bool)
    n = len(obj)
    is_str = np.fromiter(map(isinstance, obj, repeat(str)), bool, n) & ~missing
    if is_str.sum() + missing.sum() == n:  # text and empty cells only: the common case
        text = pa.array(np.where(missing, None, obj), pa.string())
        return _inline_cells(letter, rows, text, style, value_styles, notes)
    is_bool = np.fromiter(map(isinstance, obj, repeat(_BOOL_TYPES)), bool, n) & ~missing
    is_num = np.fromiter(map(isinstance, obj, repeat(_NUMBER_TYPES)), bool, n)
    is_num &= ~is_bool & ~missing
    other = ~(missing | is_str | is_bool | is_num)
    groups: list[tuple[np.ndarray, pa.Array]] = []
    if is_str.any():
        at = np.flatnonzero(is_str)
        text = pa.array(obj[at], pa.string())
        groups.append((at, _inline_cells(letter, rows.take(at), text, style, value_styles, notes)))
    if is_bool.any():
        at = np.flatnonzero(is_bool)
        groups.append((at, _bool_cells(letter, rows.take(at), obj[at], style)))
    if is_num.any():
        at = np.flatnonzero(is_num)
        numbers = obj[at].astype(float)
        groups.append((at, _number_cells(letter, rows.take(at), numbers, style, notes)))
    if other.any():  # dates, times and other objects: rare, one at a time
        at = np.flatnonzero(other)
        cells = [
            _object_cell(f"{letter}{r}", obj[i], style, value_styles, date1904, notes)
            for i, r in zip(at.tolist(), rows.take(at).to_pylist(), strict=True)
        ]
        groups.append((at, pa.array(cells, pa.string())))
    if missing.any():
        at = np.flatnonzero(missing)
        groups.append((at, pa.nulls(len(at), pa.string())))
    order = np.concatenate([at for at, _ in groups])
    combined = pa.concat_arrays([cells for _, cells in groups])
    return combined.take(pa.array(np.argsort(order, kind="stable")))


def _object_cell(
    ref: str,
    value: object,
    style: int | None,
    value_styles: dict[str, int] | None,
    date1904: bool,
    notes: CellNotes,
) -> str:
    """One cell of a value that is not text, a number or a truth value (dates, other objects)."""
    if isinstance(value, datetime | date):
        epoch = datetime(1904, 1, 1) if date1904 else datetime(1899, 12, 30)
        moment = (
            value if isinstance(value, datetime) else datetime(value.year, value.month, value.day)
        )
        days = (moment.replace(tzinfo=None) - epoch).total_seconds() / 86400
        if math.isfinite(days):
            return f'<c r="{ref}"{_style(style)}><v>{_number_text(days)}</v></c>'
    text = str(value)
    if value_styles:
        style = value_styles.get(normalise_label(text), style)
    return inline_string_cell(ref, text, style, notes)


def string_bytes(cells: pa.Array) -> memoryview:
    """The UTF-8 bytes of a string array without nulls, concatenated, without a copy."""
    if cells.null_count:
        cells = pc.fill_null(cells, "")
    if isinstance(cells, pa.ChunkedArray):
        cells = cells.combine_chunks()
    offsets_type = np.int64 if cells.type == pa.large_string() else np.int32
    _, offsets_buf, data_buf = cells.buffers()
    if data_buf is None or len(cells) == 0:
        return memoryview(b"")
    offsets = np.frombuffer(offsets_buf, dtype=offsets_type)
    start, stop = int(offsets[cells.offset]), int(offsets[cells.offset + len(cells)])
    return memoryview(data_buf)[start:stop]


def normalise_label(text: str) -> str:
    """Lower-case text with ``_``/``-`` read as spaces, for matching verdict words."""
    return " ".join(text.replace("_", " ").replace("-", " ").lower().split())
