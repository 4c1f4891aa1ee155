"""The instrument register: a sheet of the workbook or a separate CSV/XLSX file.

Columns (synonyms in qc/data/headers.toml, table ``instrument_register``): id, type,
resolution, mpe, cal_u with cal_k (certificate), material (scale or master), cal_due.
A register is small (tens to thousands of rows), so each entry is validated by
:class:`qc.models.RegisterEntry`; an entry that fails is reported once as a note and on each
inspection row that names it.
"""

from __future__ import annotations

import datetime as dt
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
from pydantic import ValidationError

from qc.errors import FileReadError
from qc.io.grid import Grid, column_letter
from qc.io.headers import header_key, load_synonyms, split_unit
from qc.io.mpe import parse_mpe
from qc.io.values import is_blank, parse_dates, parse_numbers, parse_texts
from qc.models import RegisterEntry
from qc.units import canonical_unit, length_factor

__all__ = ["REGISTER_SHEETS", "Register", "read_register", "register_from_grid"]

# Sheet names taken as the register when no layout names one (case-insensitive).
REGISTER_SHEETS = ("instruments", "instrument register", "register", "gauges", "gages",
                   "equipment")


@dataclass
class Register:
    """Valid entries by id; ``invalid`` maps ids of entries that failed to their message."""

    entries: dict[str, RegisterEntry] = field(default_factory=dict)
    invalid: dict[str, str] = field(default_factory=dict)
    notes: list[str] = field(default_factory=list)
    origin: str = ""


def _lookup() -> dict[str, str]:
    table: dict[str, str] = {}
    for name, spec in load_synonyms().instrument_register.items():
        table[header_key(name.replace("_", " "))] = name
        for s in spec.synonyms:
            table.setdefault(header_key(s), name)
    return table


def register_from_grid(grid: Grid, *, decimal: str = ".", default_unit: str = "millimeter",
                       date_order: str | None = None) -> Register:
    """Parse a register sheet: header row found among the first 30 rows by its id column."""
    table = _lookup()
    where = f"{grid.file}" + (f" › {grid.sheet}" if grid.sheet else "")
    best = None
    for r in range(min(30, grid.cells.shape[0])):
        found: dict[str, tuple[int, str | None, str]] = {}
        for c, v in enumerate(grid.cells[r]):
            name_text, unit = split_unit(str(v))
            name = table.get(header_key(name_text))
            if name and name not in found:
                found[name] = (c, unit, str(v))
        if "id" in found and len(found) >= 2 and (best is None or len(found) > len(best[1])):
            best = (r, found)
    if best is None:
        raise FileReadError(
            f"{where}: no instrument register header found; expected columns such as "
            "'Instrument ID', 'Type', 'Resolution', 'MPE', 'Calibration due'"
        )
    hr, cols = best
    body = grid.cells[hr + 1 :]
    keep = ~np.all(np.vectorize(lambda x: x in ("", None))(body), axis=1) if len(body) else []
    rows = np.flatnonzero(keep) + hr + 2  # 1-based spreadsheet rows
    body = body[keep] if len(body) else body
    n = len(rows)

    def col(name: str) -> np.ndarray:
        if name not in cols:
            return np.full(n, "", dtype=object)
        return body[:, cols[name][0]]

    def unit_of(name: str) -> str:
        u = cols.get(name, (0, None, ""))[1]
        return (canonical_unit(u, "length") if u else None) or default_unit

    reg = Register(origin=where)
    ids, _ = parse_texts(col("id"))
    types, _ = parse_texts(col("type"))
    mats, _ = parse_texts(col("material"))
    problems: dict[int, list[str]] = {}

    def length_col(name: str) -> np.ndarray:
        p = parse_numbers(col(name), kind="length", decimal=decimal)
        u = unit_of(name)
        facs = np.array([length_factor(x or u) for x in p.units]) if n else np.array([])
        for i, pr in p.problems.items():
            problems.setdefault(i, []).append(
                f"{column_letter(cols[name][0])}: expected {pr.expected}, got {pr.value!r}")
        return p.first * facs

    res = length_col("resolution")
    cal_u = length_col("cal_u")
    k = parse_numbers(col("cal_k"), kind=None, decimal=decimal)
    for i, pr in k.problems.items():
        problems.setdefault(i, []).append(f"cal k: expected {pr.expected}, got {pr.value!r}")
    a, kk, mp = parse_mpe(col("mpe"), np.full(n, unit_of("mpe"), dtype=object), decimal)
    for i, pr in mp.items():
        problems.setdefault(i, []).append(f"MPE: expected {pr.expected}, got {pr.value!r}")
    due, dp = parse_dates(col("cal_due"), date_order=date_order)
    for i, pr in dp.items():
        problems.setdefault(i, []).append(
            f"calibration due: expected {pr.expected}, got {pr.value!r}")
    no_k = np.isfinite(cal_u) & ~np.isfinite(k.first)
    for i in np.flatnonzero(no_k):
        problems.setdefault(int(i), []).append(
            "certificate uncertainty given without its coverage factor k")
    blank_ids = is_blank(col("id"))

    def opt(x: float) -> float | None:
        return None if not np.isfinite(x) else float(x)

    for i in range(n):
        rid = ids[i]
        if blank_ids[i]:
            reg.notes.append(f"{where} › row {rows[i]}: register row without an instrument id")
            continue
        if rid in reg.entries or rid in reg.invalid:
            reg.notes.append(f"{where} › row {rows[i]}: instrument {rid!r} listed twice; "
                             "the first entry is used")
            continue
        if i in problems:
            reg.invalid[rid] = "; ".join(problems[i])
            reg.notes.append(f"{where} › row {rows[i]}: " + reg.invalid[rid])
            continue
        d = due[i]
        try:
            entry = RegisterEntry(
                id=rid, type=types[i] or None, resolution_mm=opt(res[i]), mpe_a_mm=opt(a[i]),
                mpe_k_mm=opt(kk[i]),
                cal_u_mm=opt(cal_u[i] / k.first[i]) if np.isfinite(cal_u[i]) else None,
                material=mats[i] or None,
                cal_due=None if np.isnat(d) else d.astype(dt.datetime).date(),
                source_row=int(rows[i]),
            )
        except ValidationError as exc:
            e = exc.errors()[0]
            reg.invalid[rid] = f"{e['loc'][0]}: {e['msg']}"
            reg.notes.append(f"{where} › row {rows[i]}: " + reg.invalid[rid])
            continue
        reg.entries[rid] = entry
    return reg


def read_register(path: Path, *, sheet: str | None = None, decimal: str | None = None) -> Register:
    """Read a register from a separate CSV/TSV/XLSX/ODS file."""
    from qc.io.reader import read_grid

    grid = read_grid(path, sheet=sheet, prefer=REGISTER_SHEETS, decimal=decimal)
    return register_from_grid(grid, decimal=grid.decimal or decimal or ".")
