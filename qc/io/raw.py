"""A table of raw cells by canonical field, before parsing: what long and wide sheets share."""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

__all__ = ["RawTable"]


@dataclass
class RawTable:
    """Raw cells per canonical field, one entry per output row.

    ``letters[f]`` is the column letter of field f: one string (long layout) or an array with
    one letter per row (wide layout). ``headers[f]`` is the header text written in the sheet,
    ``header_units[f]`` the unit written in that header (or None). ``rows`` holds 1-based
    spreadsheet row numbers.
    """

    file: str
    sheet: str | None
    rows: np.ndarray
    cells: dict[str, np.ndarray] = field(default_factory=dict)
    letters: dict[str, str | np.ndarray] = field(default_factory=dict)
    headers: dict[str, str | np.ndarray] = field(default_factory=dict)
    header_units: dict[str, str | None] = field(default_factory=dict)

    @property
    def n(self) -> int:
        return len(self.rows)

    def get(self, name: str) -> np.ndarray:
        """Cells of a field; blanks when the sheet has no such column."""
        if name in self.cells:
            return self.cells[name]
        out = np.empty(self.n, dtype=object)
        out[:] = ""
        return out

    def has(self, name: str) -> bool:
        return name in self.cells

    def column_label(self, name: str, i: int) -> str | None:
        """'D: Temp (°F)' for messages, or None if the field has no column."""
        if name not in self.letters:
            return None
        letter = self.letters[name]
        header = self.headers.get(name, "")
        if isinstance(letter, np.ndarray):
            letter = letter[i]
        if isinstance(header, np.ndarray):
            header = header[i]
        return f"{letter}: {header}" if header else str(letter)

    def reading_fields(self) -> list[str]:
        """reading, reading_1, reading_2 ... in column order."""
        names = [k for k in self.cells if k == "reading" or k.startswith("reading_")]
        return sorted(names, key=lambda k: int(k.rsplit("_", 1)[1]) if "_" in k else 0)
