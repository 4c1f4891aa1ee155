"""Loading and validating the bundled ISO 286-1 tables (``qc/data/iso286_*.csv``).

The CSV files hold the tables as printed in ISO 286-1:2010, in micrometres, one row per size
step "over a, up to and including b". They are read once (``functools.cache``) through
``importlib.resources`` and checked before use, so a damaged file fails loudly with a
:class:`~qc.errors.DataFileError` instead of giving wrong limits.
"""

from __future__ import annotations

import csv
import io
import math
from dataclasses import dataclass
from functools import cache
from importlib import resources

import numpy as np

from qc.errors import DataFileError

__all__ = ["Iso286Table", "grades", "holes", "shafts"]

_FORMATS = {
    "iso286_grades.csv": "qc-iso286-grades 1",
    "iso286_shafts.csv": "qc-iso286-shafts 1",
    "iso286_holes.csv": "qc-iso286-holes 1",
}


@dataclass(frozen=True)
class Iso286Table:
    """One table: size steps (mm) and named columns of values (µm, NaN where the cell is empty)."""

    name: str
    over_mm: np.ndarray
    upto_mm: np.ndarray
    columns: dict[str, np.ndarray]
    sources: tuple[str, ...]

    def step(self, size_mm: float) -> int | None:
        """Index of the step with ``over < size <= upto`` (the first starts above 0)."""
        if not (size_mm > 0.0) or size_mm > self.upto_mm[-1]:
            return None
        return int(np.searchsorted(self.upto_mm, size_mm, side="left"))

    def value(self, column: str, size_mm: float) -> float:
        """The cell of ``column`` for ``size_mm`` in µm; NaN where the table gives none."""
        i = self.step(size_mm)
        if i is None or column not in self.columns:
            return math.nan
        return float(self.columns[column][i])


def _read(name: str) -> Iso286Table:
    # "qc" rather than "qc.data": the data folder is package data, not a package of its own
    text = resources.files("qc").joinpath("data", name).read_text(encoding="utf-8")
    lines = text.splitlines()
    comments = [ln for ln in lines if ln.startswith("#")]
    fmt = next((ln.split(":", 1)[1].strip() for ln in comments if ln.startswith("# format:")), None)
    if fmt != _FORMATS[name]:
        raise DataFileError(f"{name}: expected format {_FORMATS[name]!r}, found {fmt!r}")
    data = "\n".join(ln for ln in lines if ln and not ln.startswith("#"))
    rows = list(csv.reader(io.StringIO(data)))
    header, body = rows[0], rows[1:]
    if header[:2] != ["over_mm", "upto_mm"] or header[-1] != "source":
        raise DataFileError(f"{name}: header must start with over_mm,upto_mm and end with source")
    names = header[2:-1]
    values = np.full((len(body), len(names)), np.nan)
    over = np.empty(len(body))
    upto = np.empty(len(body))
    sources = []
    for r, row in enumerate(body, start=2):
        if len(row) != len(header):
            raise DataFileError(f"{name} › row {r}: expected {len(header)} cells, found {len(row)}")
        if not row[-1].strip():
            raise DataFileError(f"{name} › row {r}: every row needs a source")
        sources.append(row[-1])
        try:
            over[r - 2], upto[r - 2] = float(row[0]), float(row[1])
            for c, cell in enumerate(row[2:-1]):
                if cell.strip():
                    values[r - 2, c] = float(cell)
        except ValueError as exc:
            raise DataFileError(f"{name} › row {r}: a cell is not a number ({exc})") from exc
    if over[0] != 0.0 or np.any(upto <= over) or np.any(over[1:] != upto[:-1]):
        raise DataFileError(f"{name}: size steps must start at 0 and follow on without gaps")
    columns = {n: values[:, c] for c, n in enumerate(names)}
    return Iso286Table(name, over, upto, columns, tuple(sources))


def _check_grades(t: Iso286Table) -> None:
    vals = np.column_stack(list(t.columns.values()))
    with np.errstate(invalid="ignore"):
        if np.any(np.diff(vals, axis=1) <= 0):
            raise DataFileError(f"{t.name}: each row must grow from IT01 to IT18")
        if np.any(np.diff(vals, axis=0) < 0):
            raise DataFileError(f"{t.name}: each grade must not shrink as the size grows")
    if np.isnan(vals[:, 2:]).any():
        raise DataFileError(f"{t.name}: IT1 to IT18 must be given for every step")


def _check_holes(h: Iso286Table, g: Iso286Table) -> None:
    # The Δ of ISO 286-1:2010 Table 3 is IT(n) − IT(n−1) of the same step; 0 up to 3 mm.
    for n in range(3, 9):
        delta = h.columns[f"delta{n}"]
        for i, (lo, hi) in enumerate(zip(h.over_mm, h.upto_mm, strict=True)):
            j = g.step(hi)
            expected = 0.0 if hi <= 3 else g.columns[f"IT{n}"][j] - g.columns[f"IT{n - 1}"][j]
            if j is None or g.over_mm[j] != lo or not math.isclose(delta[i], expected):
                raise DataFileError(
                    f"{h.name}: delta{n} for {lo:g}-{hi:g} mm is {delta[i]:g}, "
                    f"expected IT{n} - IT{n - 1} = {expected:g}"
                )


@cache
def grades() -> Iso286Table:
    """ISO 286-1:2010 Table 1 (IT1–IT18) with IT01 and IT0 from Annex A, µm."""
    t = _read("iso286_grades.csv")
    _check_grades(t)
    return t


@cache
def shafts() -> Iso286Table:
    """ISO 286-1:2010 Tables 2 and 3, fundamental deviations of shafts, µm (signed)."""
    return _read("iso286_shafts.csv")


@cache
def holes() -> Iso286Table:
    """ISO 286-1:2010 Table 3: the J holes and the Δ of the special rule, µm."""
    t = _read("iso286_holes.csv")
    _check_holes(t, grades())
    return t
