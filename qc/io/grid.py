"""A sheet as read: a 2-D object array of raw cells with its place in the file."""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

__all__ = ["Grid", "KnownCodes", "column_letter"]


def column_letter(index: int) -> str:
    """Spreadsheet column letter of a 0-based column index (0 → A, 26 → AA)."""
    out = ""
    n = index + 1
    while n:
        n, r = divmod(n - 1, 26)
        out = chr(65 + r) + out
    return out


class KnownCodes(np.ndarray):
    """An object column of text cells that already knows its factorisation, as
    ``pandas.factorize`` would give it: ``codes`` (one per cell) into ``uniques`` (in order of
    first appearance). The CSV reader gets both from pyarrow's dictionary encoding, so the
    parsers need not hash the column again. Read-only; a view or copy made from it forgets
    the codes (they would no longer match its cells)."""

    codes: np.ndarray | None
    uniques: np.ndarray | None

    def __new__(cls, cells: np.ndarray, codes: np.ndarray, uniques: np.ndarray) -> KnownCodes:
        obj = np.asarray(cells, dtype=object).view(cls)
        obj.codes, obj.uniques = np.asarray(codes, dtype=np.intp), uniques
        obj.flags.writeable = False
        return obj

    def __array_finalize__(self, obj: object) -> None:
        self.codes = self.uniques = None


@dataclass
class Grid:
    """Raw cells of one sheet; ``cells[i, j]`` is spreadsheet row i + 1, column j (0 = A).

    Blank cells are ''. ``merged`` lists merged ranges as ((row0, col0), (row1, col1)), 0-based
    and inclusive. ``sheet`` is None for CSV files. A chunk of a file read in parts starts
    at ``first_row`` (0-based): its ``cells[i, j]`` is row first_row + i + 1.
    """

    file: str
    sheet: str | None
    cells: np.ndarray
    merged: list[tuple[tuple[int, int], tuple[int, int]]] = field(default_factory=list)
    sheets: list[str] = field(default_factory=list)
    decimal: str | None = None
    delimiter: str | None = None
    notes: list[str] = field(default_factory=list)
    _blank: np.ndarray | None = field(default=None, repr=False)
    first_row: int = 0
    #: per column, (codes, uniques) of its cells when the reader knows them (else None)
    codes: list[tuple[np.ndarray, np.ndarray] | None] | None = field(default=None, repr=False)

    def blank(self) -> np.ndarray:
        """True where a cell is empty or whitespace-only text (computed once, column-wise).

        Each column's distinct values are looked at once (a column of 10^6 cells holds far
        fewer distinct texts), and the answer is mapped back to the cells.
        """
        if self._blank is None:
            import pandas as pd

            out = np.ones(self.cells.shape, dtype=bool)
            for j in range(self.cells.shape[1]):
                codes, uniques = pd.factorize(self.cells[:, j])  # None/NaN/NaT: code -1
                per_value = np.fromiter(
                    (type(u) is str and not u.strip() for u in uniques), dtype=bool,
                    count=len(uniques))
                out[:, j] = np.append(per_value, True)[codes]
            self._blank = out
        return self._blank

    def header_cells(self, row: int) -> list[object]:
        """Cells of one row with merged ranges spanning it filled from their top-left cell."""
        vals = list(self.cells[row]) if row < self.cells.shape[0] else []
        for (r0, c0), (r1, c1) in self.merged:
            if r0 <= row <= r1:
                top = self.cells[r0, c0]
                for c in range(c0, min(c1 + 1, len(vals))):
                    if vals[c] == "" or vals[c] is None:
                        vals[c] = top
        return vals

    def merged_value(self, row: int, col: int) -> object:
        """The cell's value, or the top-left value of the merged range that covers it."""
        v = self.cells[row, col]
        if v not in ("", None):
            return v
        for (r0, c0), (r1, c1) in self.merged:
            if r0 <= row <= r1 and c0 <= col <= c1:
                return self.cells[r0, c0]
        return v
