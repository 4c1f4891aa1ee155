"""Wide layout: parts down the rows, characteristics across the columns.

Header rows are labelled in one column (the label column): a ``Characteristic`` row carrying
the characteristic ids, then rows labelled ``Nominal``, ``Tolerance`` and optionally
``Instrument``, ``Unit``, ``Lower limit``, ``Upper limit``, ``Kind``. Below them, one row per
part: its id in the label column and one reading per characteristic column. Columns of the
characteristic row whose header is a per-part field (``Temp (°F)``, ``Inspector``, ``Date``)
hold that field for the part. The result is one long record per part and characteristic.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from qc.io.grid import Grid, column_letter
from qc.io.headers import match_one, split_unit
from qc.io.raw import RawTable
from qc.models import Layout, WideLayout

__all__ = ["WideHeader", "find_wide_header", "wide_to_raw"]

# fields a labelled header row of a wide sheet can carry, one value per characteristic
_ROW_FIELDS = ("nominal", "tolerance", "instrument", "unit", "lower_limit", "upper_limit",
               "lower_deviation", "upper_deviation", "kind", "hole_or_shaft", "general_tolerance",
               "resolution", "mpe")


@dataclass
class WideHeader:
    """Where things are in a wide sheet (0-based rows and columns)."""

    label_col: int
    char_row: int
    field_rows: dict[str, int]
    char_cols: list[int]
    part_fields: dict[str, int]
    first_data_row: int
    header_units: dict[str, str | None]
    header_texts: dict[str, str]


def _text(v: object) -> str:
    if isinstance(v, float) and v.is_integer():
        return str(int(v))
    return "" if v is None else str(v).strip()


def _first_filled(row: np.ndarray) -> int | None:
    for c, v in enumerate(row):
        if _text(v):
            return c
    return None


def _build(grid: Grid, label_col: int, char_row: int, field_rows: dict[str, int],
           first_data: int | None, layout: Layout | None) -> WideHeader:
    char_cols, part_fields, units, texts = [], {}, {}, {}
    cells = grid.header_cells(char_row)
    for c in range(label_col + 1, len(cells)):
        t = _text(cells[c])
        if not t:
            continue
        name, _ = match_one(t, layout)
        if name is not None and name not in ("characteristic", "reading") \
                and name not in _ROW_FIELDS:
            part_fields.setdefault(name, c)
            units[name] = split_unit(t)[1]
            texts[name] = t
        else:
            char_cols.append(c)
    last = max([char_row, *field_rows.values()])
    start = first_data if first_data is not None else last + 1
    if start < grid.cells.shape[0]:
        lab = _text(grid.cells[start, label_col])
        if lab and match_one(lab, layout)[0] == "part":
            start += 1
    return WideHeader(label_col, char_row, field_rows, char_cols, part_fields, start, units,
                      texts)


def find_wide_header(grid: Grid, layout: Layout | None = None) -> WideHeader | None:
    """A wide header: a row labelled Characteristic followed by Nominal or Tolerance rows."""
    if layout is not None and layout.wide is not None:
        w: WideLayout = layout.wide
        from qc.io.xlsx import column_index

        rows = {name: getattr(w, f"{name}_row") for name in _ROW_FIELDS}
        return _build(grid, column_index(w.label_column), w.characteristic_row - 1,
                      {k: v - 1 for k, v in rows.items() if v is not None},
                      None if w.first_part_row is None else w.first_part_row - 1, layout)
    nrows = grid.cells.shape[0]
    for r in range(min(60, nrows)):
        c0 = _first_filled(grid.cells[r])
        if c0 is None or match_one(_text(grid.cells[r, c0]), layout)[0] != "characteristic":
            continue
        field_rows: dict[str, int] = {}
        for r2 in range(r + 1, min(r + 12, nrows)):
            name = match_one(_text(grid.cells[r2, c0]), layout)[0]
            if name in _ROW_FIELDS and name not in field_rows:
                field_rows[name] = r2
            elif name == "part" or (not _text(grid.cells[r2, c0]) and field_rows):
                continue
            else:
                break
        if "nominal" in field_rows or "tolerance" in field_rows:
            return _build(grid, c0, r, field_rows, None, layout)
    return None


def wide_to_raw(grid: Grid, wh: WideHeader) -> tuple[RawTable, list[int]]:
    """Long raw table (row-major: each part, then each characteristic) and the data rows."""
    filled = ~grid.blank()[wh.first_data_row:].all(axis=1)
    data_rows = [int(i) + wh.first_data_row for i in np.flatnonzero(filled)]
    k = len(wh.char_cols)
    rows = np.repeat(np.array(data_rows, dtype=np.int64) + 1, k)
    raw = RawTable(file=grid.file, sheet=grid.sheet, rows=rows)
    if not k or not data_rows:
        return raw, data_rows
    dr = np.array(data_rows)
    cols = np.array(wh.char_cols)
    raw.cells["reading"] = grid.cells[np.ix_(dr, cols)].reshape(-1)
    raw.letters["reading"] = np.tile(np.array([column_letter(c) for c in cols], dtype=object),
                                     len(dr))
    char_ids = np.array([_text(grid.merged_value(wh.char_row, c)) for c in cols], dtype=object)
    raw.headers["reading"] = np.tile(char_ids, len(dr))
    raw.cells["characteristic"] = np.tile(char_ids, len(dr))
    raw.letters["characteristic"] = raw.letters["reading"]
    raw.headers["characteristic"] = "characteristic id"
    for name, r in wh.field_rows.items():
        vals = np.array([grid.merged_value(r, c) for c in cols], dtype=object)
        raw.cells[name] = np.tile(vals, len(dr))
        raw.letters[name] = raw.letters["reading"]
        raw.headers[name] = f"{_text(grid.cells[r, wh.label_col])} (row {r + 1})"
        raw.header_units[name] = split_unit(_text(grid.cells[r, wh.label_col]))[1]
    raw.cells["part"] = np.repeat(grid.cells[dr, wh.label_col], k)
    raw.letters["part"] = column_letter(wh.label_col)
    raw.headers["part"] = "part"
    for name, c in wh.part_fields.items():
        raw.cells[name] = np.repeat(grid.cells[dr, c], k)
        raw.letters[name] = column_letter(c)
        raw.headers[name] = wh.header_texts[name]
        raw.header_units[name] = wh.header_units[name]
    return raw, data_rows
