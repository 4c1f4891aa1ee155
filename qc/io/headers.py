"""Header matching: the synonym list, units written in headers, finding the header row.

A header is compared after :func:`header_key`: lower case, punctuation to spaces, ``+``/``-``
spelled out, and a unit in brackets split off (``Temp (°F)`` → ``temp`` with unit ``°F``).
Canonical names (``part_temp``) always match. Repeated readings are ``reading 1``, ``R2``,
``Reading #3`` or a merged ``Readings`` header spanning several columns.
"""

from __future__ import annotations

import re
import tomllib
from dataclasses import dataclass, field
from functools import cache
from importlib import resources

from qc.errors import DataFileError, suggest
from qc.io.grid import Grid, column_letter
from qc.models import HeaderFile, Layout

__all__ = [
    "HeaderMatch",
    "HeaderScan",
    "field_kinds",
    "find_header_row",
    "header_key",
    "load_synonyms",
    "match_header_row",
    "match_one",
    "split_unit",
    "suggest_field",
]

_BRACKET_UNIT = re.compile(
    r"^(?P<name>.*?)\s*(?:\((?P<unit>(?:[^()]|\([^()]*\))+?)\)|\[(?P<unit2>[^\[\]]+?)\])\s*$")
_TRAILING_UNIT = re.compile(r"^(?P<name>.*?)\s*,?\s*(?:in\s+)?(?P<unit>°\s*[CFcf]|℃|℉)\s*$")
_NUMBERED = re.compile(r"^(?P<base>.*?)\s*(?P<n>\d{1,3})$")
SCAN_ROWS = 60


@cache
def load_synonyms() -> HeaderFile:
    """The bundled synonym list, read once and validated."""
    text = resources.files("qc.data").joinpath("headers.toml").read_text(encoding="utf-8")
    try:
        return HeaderFile.model_validate(tomllib.loads(text))
    except Exception as exc:
        raise DataFileError(f"qc/data/headers.toml: {exc}") from exc


def field_kinds() -> dict[str, str]:
    """Canonical field name → kind (length, temperature, text, ...)."""
    return {k: v.kind for k, v in load_synonyms().fields.items()}


def header_key(text: str) -> str:
    """Comparable form of a header: lower case, words separated by single spaces."""
    t = text.lower().replace("&", " and ").replace("ø", " ").replace("⌀", " ")
    t = t.replace("+", " plus ")
    t = re.sub(r"(?<![a-z0-9])-|-(?![a-z0-9])", " minus ", t)
    t = re.sub(r"[^a-z0-9µ]+", " ", t)
    return " ".join(t.split())


def split_unit(text: str) -> tuple[str, str | None]:
    """Header text without its unit, and the unit (``'Size [in]'`` → ``('Size', 'in')``)."""
    t = str(text).strip()
    m = _BRACKET_UNIT.match(t)
    if m and m["name"]:
        return m["name"], (m["unit"] or m["unit2"]).strip()
    m = _TRAILING_UNIT.match(t)
    if m and m["name"]:
        return m["name"], m["unit"].strip()
    return t, None


@cache
def _lookup(extra: tuple[tuple[str, str], ...]) -> dict[str, str]:
    """Header key → canonical field; the layout's own headers first, then the synonym list."""
    table: dict[str, str] = {}
    for name, spec in load_synonyms().fields.items():
        table.setdefault(header_key(name.replace("_", " ")), name)
        for s in spec.synonyms:
            table.setdefault(header_key(s), name)
    for name in load_synonyms().fields:
        table[header_key(name.replace("_", " "))] = name  # canonical names always win
    for name, text in extra:
        table[header_key(text)] = name
    return table


def _layout_pairs(layout: Layout | None) -> tuple[tuple[str, str], ...]:
    if layout is None:
        return ()
    pairs = []
    for name, texts in layout.headers.items():
        for t in [texts] if isinstance(texts, str) else texts:
            pairs.append((name, split_unit(t)[0]))
    return tuple(pairs)


def match_one(text: str, layout: Layout | None = None) -> tuple[str | None, int | None]:
    """Canonical field of one header (and the repeat number for reading_2 etc.), or None."""
    key = header_key(split_unit(text)[0])
    if not key:
        return None, None
    table = _lookup(_layout_pairs(layout))
    if key in table:
        name = table[key]
        m = re.fullmatch(r"(\w+?)_(\d+)", name)
        if m and m[1] in load_synonyms().fields and load_synonyms().fields[m[1]].repeat:
            return m[1], int(m[2])
        return name, None
    m = _NUMBERED.match(key)
    if m:
        base = m["base"].strip()
        name = table.get(base)
        if name and load_synonyms().fields[name].repeat:
            return name, int(m["n"])
    return None, None


@dataclass
class HeaderMatch:
    """One matched column: canonical field, column index, header text and unit written in it."""

    field: str
    column: int
    header: str
    unit: str | None = None

    @property
    def letter(self) -> str:
        return column_letter(self.column)


@dataclass
class HeaderScan:
    """The header row found and how each of its cells matched."""

    row: int  # 0-based index into the grid
    matches: list[HeaderMatch]
    unmatched: list[tuple[int, str]] = field(default_factory=list)
    unit_row: int | None = None

    @property
    def fields(self) -> dict[str, HeaderMatch]:
        return {m.field: m for m in self.matches}


def _labels(grid: Grid, row: int) -> list[str]:
    """Header texts of a row; merged cells filled, a merged group label above prefixed."""
    cells = grid.header_cells(row)
    out = []
    for c, v in enumerate(cells):
        text = "" if v is None else str(v).strip()
        if isinstance(v, float) and v.is_integer():
            text = str(int(v))
        if row > 0:
            for (r0, c0), (r1, c1) in grid.merged:
                if r0 <= row - 1 <= r1 and c0 <= c <= c1 and c1 > c0 and r1 < row:
                    parent = str(grid.cells[r0, c0]).strip()
                    text = f"{parent} {text}".strip() if parent else text
        out.append(text)
    return out


def match_header_row(grid: Grid, row: int, layout: Layout | None = None) -> HeaderScan:
    """Match every cell of one row; repeated bare ``reading`` columns are numbered in order."""
    matches: list[HeaderMatch] = []
    unmatched: list[tuple[int, str]] = []
    seen: set[str] = set()
    repeats: dict[str, int] = {}
    for c, text in enumerate(_labels(grid, row)):
        if not text:
            continue
        name, n = match_one(text, layout)
        if name is None:
            unmatched.append((c, text))
            continue
        spec = load_synonyms().fields[name]
        unit = split_unit(text)[1]
        if spec.repeat:
            k = n if n is not None else repeats.get(name, 0) + 1
            repeats[name] = max(repeats.get(name, 0), k)
            key = f"{name}_{k}"
            if key in seen:
                unmatched.append((c, text))
                continue
            seen.add(key)
            matches.append(HeaderMatch(key, c, text, unit))
        elif name in seen:
            unmatched.append((c, text))
        else:
            seen.add(name)
            matches.append(HeaderMatch(name, c, text, unit))
    return HeaderScan(row, matches, unmatched)


def _score(scan: HeaderScan) -> int:
    names = {m.field.split("_")[0] if m.field.startswith("reading") else m.field
             for m in scan.matches}
    return len(names)


def find_header_row(grid: Grid, layout: Layout | None = None) -> HeaderScan | None:
    """The row, among the first 60, whose cells match the most known fields (at least two,
    one of them a reading, a nominal or a characteristic); None if no row qualifies."""
    if layout is not None and layout.header_row is not None:
        return match_header_row(grid, layout.header_row - 1, layout)
    best: HeaderScan | None = None
    for r in range(min(SCAN_ROWS, grid.cells.shape[0])):
        scan = match_header_row(grid, r, layout)
        f = scan.fields
        key = any(k.startswith("reading") for k in f) or "nominal" in f or "characteristic" in f
        if key and _score(scan) >= 2 and (best is None or _score(scan) > _score(best)):
            best = scan
    if best is not None:
        best.unit_row = _unit_row(grid, best)
    return best


def _unit_row(grid: Grid, scan: HeaderScan) -> int | None:
    """A row right below the header holding only unit spellings (mm, °C) and blanks."""
    from qc.units import canonical_unit

    r = scan.row + 1
    if r >= grid.cells.shape[0]:
        return None
    texts = [str(grid.cells[r, m.column]).strip() for m in scan.matches]
    filled = [t for t in texts if t]
    if not filled:
        return None
    ok = all(
        any(canonical_unit(t.strip("()[]"), k) for k in ("length", "temperature", "cte"))
        for t in filled
    )
    if not ok:
        return None
    for m, t in zip(scan.matches, texts, strict=True):
        if t and m.unit is None:
            m.unit = t.strip("()[]")
    return r


def suggest_field(text: str) -> list[str]:
    """Close canonical names or synonyms for an unmatched header."""
    table = _lookup(())
    hits = suggest(header_key(split_unit(text)[0]), list(table))
    return list(dict.fromkeys(table[k] for k in hits))
