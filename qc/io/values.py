"""Column-wise parsing of cell values: numbers, numbers as text with units, dates.

A column arrives as an object array of raw cells (float, int, str, datetime, bool, '' for blank,
or a :class:`CellMarker` for an Excel error value or a formula without a saved result).
Numeric cells are converted with numpy in one step; each *distinct* text is parsed once and
the result mapped back, so a column of 10^6 rows costs one regex per distinct spelling.

Nothing is guessed: ``1,250`` under a decimal-point convention could be 1250 or 1.25 and is
reported, unless the layout names ``,`` as thousands separator.
"""

from __future__ import annotations

import datetime as dt
import math
import re
from collections.abc import Callable
from dataclasses import dataclass, field
from typing import Literal

import numpy as np
import pandas as pd

from qc.io.grid import KnownCodes
from qc.units import UnitKind, canonical_unit

__all__ = [
    "BLANK_WORDS",
    "EXCEL_ERRORS",
    "CellMarker",
    "Coded",
    "ParsedColumn",
    "Problem",
    "is_blank",
    "joint_codes",
    "parse_dates",
    "parse_numbers",
    "parse_texts",
    "parse_texts_coded",
]

Decimal = Literal[".", ","]

EXCEL_ERRORS = frozenset(
    {
        "#N/A",
        "#VALUE!",
        "#DIV/0!",
        "#REF!",
        "#NAME?",
        "#NUM!",
        "#NULL!",
        "#SPILL!",
        "#CALC!",
        "#GETTING_DATA",
        "#FIELD!",
        "#BLOCKED!",
        "#UNKNOWN!",
        "#BUSY!",
        "#CONNECT!",
        "#PYTHON!",
    }
)
# Words shops write in a cell to mean "nothing here"; read as blank (documented in docs/columns.md).
BLANK_WORDS = frozenset({"", "-", "--", "—", "–", "n/a", "na", "none", "nil"})

_MINUS = str.maketrans({"−": "-", "–": "-", "‐": "-", "‒": "-", "\u00a0": " ", "\u202f": " "})
_TOKEN = re.compile(
    r"^(?P<sign>[+\-±]|\+/-|\+-)?\s*"
    r"(?P<num>\d[\d.,' ]*\d|\d|[.,]\d+)"
    r"(?P<exp>[eE][+\-]?\d+)?\s*(?P<unit>\D.*)?$"
)
_GROUPED = {
    ".": re.compile(r"^\d{1,3}(?:,\d{3})+(?:\.\d+)?$"),
    ",": re.compile(r"^\d{1,3}(?:\.\d{3})+(?:,\d+)?$"),
}
_SPACE_GROUPED = re.compile(r"^\d{1,3}(?:[ ']\d{3})+(?:[.,]\d+)?$")
_SIMPLE = {
    ".": re.compile(r"^[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?$"),
    ",": re.compile(r"^[+-]?(?:\d+,?\d*|,\d+)(?:[eE][+-]?\d+)?$"),
}
_SPLIT = re.compile(r"\s*[;|]\s*")
_SPLIT_POINT = re.compile(r"\s*[;|]\s*|,\s+")


@dataclass(frozen=True)
class CellMarker:
    """A cell whose value the reader could not take: an Excel error or an uncomputed formula."""

    kind: Literal["error", "formula"]
    text: str

    def __repr__(self) -> str:
        return self.text if self.kind == "error" else f"={self.text}"


@dataclass(frozen=True)
class Problem:
    """Why one cell could not be read: what was found and what was expected."""

    value: object
    expected: str
    hint: str = ""


@dataclass
class ParsedColumn:
    """Parsed values of one column: ``values`` (n × k, canonical unit), the unit used per row."""

    values: np.ndarray
    units: np.ndarray
    counts: np.ndarray
    problems: dict[int, Problem] = field(default_factory=dict)

    @property
    def first(self) -> np.ndarray:
        """The first (or only) value of each row."""
        return self.values[:, 0]


@dataclass(frozen=True)
class Coded:
    """A column as its distinct values and one code per row: ``values[codes]`` is the column.

    Shop columns repeat a few spellings over many rows, so whatever depends on the value only
    (a look-up, a comparison, a message) is worked out once per entry of ``values`` and spread
    back with integer indexing. ``values`` may hold an entry twice or one no row uses; every
    per-value step gives the same answer for equal entries, so that never changes a result.
    """

    codes: np.ndarray
    values: np.ndarray

    @classmethod
    def of(cls, column: np.ndarray) -> Coded:
        """Codes of an object column of texts (None, NaN and NaT all become the value None)."""
        if isinstance(column, KnownCodes) and column.codes is not None:  # the reader's own
            return cls(column.codes, np.asarray(column.uniques, dtype=object))
        codes, uniques = pd.factorize(np.asarray(column, dtype=object))
        missing = codes < 0
        if not missing.any():
            return cls(codes, np.asarray(uniques, dtype=object))
        values = np.empty(len(uniques) + 1, dtype=object)
        values[:-1] = uniques
        values[-1] = None
        return cls(np.where(missing, len(uniques), codes), values)

    @classmethod
    def constant(cls, value: object, n: int) -> Coded:
        """``n`` rows of one value."""
        values = np.empty(1, dtype=object)
        values[0] = value
        return cls(np.zeros(n, dtype=np.intp), values)

    def __len__(self) -> int:
        return len(self.codes)

    def __getitem__(self, i: int) -> object:
        """The value of row ``i``."""
        return self.values[self.codes[i]]

    def dense(self) -> np.ndarray:
        """The column as an object array, one value per row."""
        return self.values[self.codes]

    def in_use(self) -> np.ndarray:
        """Indices of the values some row holds."""
        return np.flatnonzero(np.bincount(self.codes, minlength=len(self.values)))

    def _per_value(self, fn: Callable[[object], object], dtype: object) -> np.ndarray:
        """``fn`` of each value in use (others left zero or None): fn never sees a value no
        row holds."""
        k = len(self.values)
        per_value = (np.full(k, None, dtype=object) if np.dtype(dtype) == object
                     else np.zeros(k, dtype=dtype))
        used = self.in_use()
        results = np.empty(len(used), dtype=object)
        results[:] = [fn(v) for v in self.values[used]]
        per_value[used] = results
        return per_value

    def each(self, fn: Callable[[object], object], dtype: object = object) -> np.ndarray:
        """``fn`` of each row's value, called once per distinct value in use."""
        return self._per_value(fn, dtype)[self.codes]

    def is_(self, value: object) -> np.ndarray:
        """True on the rows whose value equals ``value``."""
        hit = np.fromiter((v == value for v in self.values), dtype=bool, count=len(self.values))
        return hit[self.codes]

    def recode(self, fn: Callable[[object], object]) -> Coded:
        """The column with every value in use replaced by ``fn(value)``; the codes stay."""
        return Coded(self.codes, self._per_value(fn, object))

    def take(self, rows: np.ndarray) -> Coded:
        """The rows ``rows`` (indices or a mask) of the column."""
        return Coded(self.codes[rows], self.values)

    def where(self, mask: np.ndarray, other: Coded) -> Coded:
        """This column where ``mask`` holds, ``other`` (of the same length) elsewhere."""
        codes = np.where(mask, self.codes, other.codes + len(self.values))
        return Coded(codes, np.concatenate([self.values, other.values]))

    def put(self, rows: np.ndarray, other: Coded) -> Coded:
        """The column with the rows ``rows`` (indices) replaced by ``other``'s values."""
        codes = self.codes.copy()
        codes[rows] = other.codes + len(self.values)
        return Coded(codes, np.concatenate([self.values, other.values]))


def joint_codes(*codes: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """One code per row for each distinct combination of the given codes (each ≥ 0), in order
    of first appearance, and the first row of each combination (a representative to work on)."""
    n = len(codes[0])
    if n == 0:
        return np.zeros(0, dtype=np.intp), np.zeros(0, dtype=np.intp)
    key = np.asarray(codes[0], dtype=np.int64)
    for c in codes[1:]:
        compact, _ = pd.factorize(key)  # at most n values: the product below stays small
        key = compact.astype(np.int64) * (int(c.max()) + 1) + np.asarray(c, dtype=np.int64)
    combo, _ = pd.factorize(key)
    # codes count up in order of first appearance: a row is first where its code is new
    seen = np.maximum.accumulate(combo)
    first = np.flatnonzero(np.concatenate(([True], combo[1:] > seen[:-1])))
    return combo.astype(np.intp, copy=False), first


@dataclass(frozen=True)
class _Distinct:
    """A column split into its text cells, by distinct text, and the rest.

    Equal strings are one entry of ``texts``; ``rows`` are the rows holding text and ``pos``
    the index of each one's text in ``texts``. ``other`` are the rows holding anything else
    (numbers, dates, markers, None/NaN), left to the type-by-type paths. Only text is grouped:
    ``True``, ``1`` and ``1.0`` compare equal in Python, so non-text values are never merged.
    ``all_text`` tells that every cell is text (then ``pos`` has one entry per row).
    """

    cells: np.ndarray
    texts: list[str]
    rows: np.ndarray
    pos: np.ndarray
    other: np.ndarray
    all_text: bool = False

    @classmethod
    def of(cls, cells: np.ndarray) -> _Distinct:
        if isinstance(cells, KnownCodes) and cells.codes is not None:  # text cells, coded
            return cls(np.asarray(cells).reshape(-1), list(cells.uniques), np.arange(len(cells)),
                       cells.codes, np.empty(0, dtype=np.intp), all_text=True)
        arr = np.asarray(cells, dtype=object).reshape(-1)
        codes, uniques = pd.factorize(arr)  # hash table in C; None/NaN/NaT get code -1
        is_str = np.fromiter((type(u) is str for u in uniques), dtype=bool, count=len(uniques))
        if is_str.all() and not (codes < 0).any():  # the usual text file: every cell a string
            return cls(arr, list(uniques), np.arange(len(arr)), codes,
                       np.empty(0, dtype=np.intp), all_text=True)
        # position of each distinct value among the texts; -1 (the last slot) for the rest
        slot = np.append(np.where(is_str, np.cumsum(is_str) - 1, -1), -1)
        pos = slot[codes]
        text_rows = pos >= 0
        return cls(arr, list(uniques[is_str]), np.flatnonzero(text_rows), pos[text_rows],
                   np.flatnonzero(~text_rows))

    def spread(self, per_text: np.ndarray) -> np.ndarray:
        """Values given per distinct text, one per text row."""
        return per_text[self.pos]

    def column(self, per_text: np.ndarray, fill: object, dtype: object) -> np.ndarray:
        """A full column: the value of each text row's text, ``fill`` on the other rows."""
        if self.all_text:
            return np.asarray(per_text, dtype=dtype)[self.pos]
        out = np.full(len(self.cells), fill, dtype=dtype)
        if len(self.rows):
            out[self.rows] = self.spread(per_text)
        return out


def is_blank(cells: np.ndarray) -> np.ndarray:
    """True where a cell is empty, whitespace, or one of :data:`BLANK_WORDS`."""
    d = _Distinct.of(cells)
    out = np.zeros(len(d.cells), dtype=bool)
    if len(d.rows):
        blank = np.fromiter((t.strip().lower() in BLANK_WORDS for t in d.texts), dtype=bool,
                            count=len(d.texts))
        out[d.rows] = d.spread(blank)
    if len(d.other):
        out[d.other] = pd.isna(pd.Series(d.cells[d.other], dtype=object)).to_numpy()
    return out


def _to_float(
    num: str, exp: str | None, decimal: Decimal, thousands: str | None
) -> float | Problem:
    """One number written as text, under a decimal convention; a Problem when ambiguous."""
    other = "," if decimal == "." else "."
    if " " in num or "'" in num:
        if not _SPACE_GROUPED.match(num):
            return Problem(num, "a number")
        num = num.replace(" ", "").replace("'", "")
    if decimal in num and other in num:
        if not _GROUPED[decimal].match(num) and not (
            thousands == other and _GROUPED[decimal].match(num)
        ):
            return Problem(num, "a number")
        num = num.replace(other, "")
    elif other in num:
        if _GROUPED[decimal].match(num):
            if thousands != other:
                whole = num.replace(other, "")
                frac = num.replace(other, ".") if num.count(other) == 1 else None
                alt = f"{whole} or {float(frac):g}" if frac else whole
                return Problem(
                    num,
                    f"a number without {'comma' if other == ',' else 'point'} grouping",
                    f"ambiguous: could be {alt}; set decimal and thousands in the layout file",
                )
            num = num.replace(other, "")
        elif num.count(other) == 1:
            # a single separator not followed by exactly three digits can only be a decimal mark
            num = num.replace(other, decimal)
        else:
            return Problem(num, "a number")
    if decimal == ",":
        num = num.replace(",", ".")
    try:
        return float(num + (exp or ""))
    except ValueError:  # e.g. two decimal marks, '0..0'
        return Problem(num, "a number")


def _parse_one(
    text: str, kind: UnitKind | None, decimal: Decimal, thousands: str | None, allow_pm: bool
) -> list[tuple[float, str | None]] | Problem:
    """Parse the text of one cell into (value, unit) pairs; a Problem if it cannot be read."""
    t = text.translate(_MINUS).strip()
    if t.upper() in EXCEL_ERRORS:
        return Problem(text, "a number", f"the cell holds the spreadsheet error {t.upper()}")
    splitter = _SPLIT_POINT if decimal == "." else _SPLIT
    parts = [p for p in splitter.split(t) if p]
    if len(parts) == 1 and " " in t and not _SPACE_GROUPED.match(t):
        tokens = t.split()
        if len(tokens) > 1 and all(_SIMPLE[decimal].match(x) for x in tokens):
            parts = tokens
    out: list[tuple[float, str | None]] = []
    for part in parts:
        m = _TOKEN.match(part)
        if not m:
            return Problem(text, "a number")
        sign, unit_text = m["sign"], (m["unit"] or "").strip()
        if sign and sign not in "+-" and not allow_pm:
            return Problem(text, "a single value, not a ± range")
        value = _to_float(m["num"], m["exp"], decimal, thousands)
        if isinstance(value, Problem):
            return Problem(text, value.expected, value.hint)
        if sign == "-":
            value = -value
        unit = None
        if unit_text:
            unit = canonical_unit(unit_text, kind) if kind else None
            if unit is None:
                what = {
                    "length": "a length unit (mm, µm, in, thou)",
                    "temperature": "a temperature unit (°C, °F, K)",
                    "cte": "an expansion-coefficient unit (1/K, ppm/K, µm/(m·K), 1/°F)",
                }
                return Problem(text, "a number" if kind is None else f"a number with {what[kind]}")
        out.append((value, unit))
    return out or Problem(text, "a number")


_TextNumber = tuple[float, str | None, int, tuple[str, str] | None, list[float] | None]


def _text_numbers(
    texts: list[str], kind: UnitKind | None, decimal: Decimal, thousands: str | None,
    multi: bool, allow_pm: bool,
) -> list[_TextNumber]:
    """Per distinct text: first value, unit, count, (expected, hint) of its problem, and all
    values when there are several (else None).

    Blank words give (NaN, None, 0, None, None); plain decimals are read with float(); the
    rest go through :func:`_parse_one`, once per distinct stripped text.
    """
    simple = _SIMPLE[decimal]
    parsed: dict[str, list[tuple[float, str | None]] | Problem] = {}
    out: list[_TextNumber] = []
    for raw in texts:
        t = raw.strip()
        if simple.fullmatch(t):  # fast path: a plain number written as text
            v = float(t.replace(",", ".") if decimal == "," else t)
            out.append((v, None, 1, None, None))
            continue
        if t.lower() in BLANK_WORDS:
            out.append((math.nan, None, 0, None, None))
            continue
        r = parsed.get(t)
        if r is None:
            r = parsed[t] = _parse_one(t, kind, decimal, thousands, allow_pm)
        problem: tuple[str, str] | None = None
        if isinstance(r, Problem):
            problem = (r.expected, r.hint)
        elif len(r) > 1 and not multi:
            problem = ("a single number", "")
        elif len({u for _, u in r}) > 1:
            problem = ("values in one unit", "")
        if problem is not None:
            out.append((math.nan, None, 0, problem, None))
        else:
            out.append((r[0][0], r[0][1], len(r), None,
                        [v for v, _ in r] if len(r) > 1 else None))
    return out


def parse_numbers(
    cells: np.ndarray,
    *,
    kind: UnitKind | None,
    decimal: Decimal = ".",
    thousands: str | None = None,
    multi: bool = False,
    allow_pm: bool = False,
) -> ParsedColumn:
    """Parse a column of cells into floats, as written (no unit conversion).

    ``units[i]`` is the pint unit name written in cell i (None where the cell had none, so the
    column's unit applies). ``multi`` allows several values in one cell (``12.01; 12.02``).
    Blank cells give NaN without a problem; required fields are checked later.
    """
    d = _Distinct.of(cells)
    cells = d.cells
    n = len(cells)
    problems: dict[int, Problem] = {}
    width = 1
    multi_rows = np.array([], dtype=np.int64)
    multi_vals = np.empty((0, 1))
    if not len(d.rows):
        first = np.full(n, np.nan)
        units = np.full(n, None, dtype=object)
        counts = np.zeros(n, dtype=np.int64)
    else:
        per_text = _text_numbers(d.texts, kind, decimal, thousands, multi, allow_pm)
        unit_t = np.empty(len(per_text), dtype=object)
        unit_t[:] = [r[1] for r in per_text]
        count_t = np.array([r[2] for r in per_text], dtype=np.int64)
        first = d.column(np.array([r[0] for r in per_text], dtype=float), np.nan, float)
        units = d.column(unit_t, None, object)
        counts = d.column(count_t, 0, np.int64)
        hit = d.spread(np.array([r[3] is not None for r in per_text], dtype=bool))
        if hit.any():
            objs = [Problem(t, *r[3]) if r[3] is not None else None
                    for t, r in zip(d.texts, per_text, strict=True)]
            problems.update(zip(d.rows[hit].tolist(), [objs[j] for j in d.pos[hit].tolist()],
                                strict=True))
        width = max(1, int(count_t.max()))
        if width > 1:
            is_multi = d.spread(count_t > 1)
            multi_rows = d.rows[is_multi]
            table = np.full((len(per_text), width), np.nan)
            for j, r in enumerate(per_text):
                if r[2] > 1:
                    table[j, : r[2]] = r[4]
            multi_vals = table[d.pos[is_multi]]
    if len(d.other):
        _other_numbers(cells, d.other, first, counts, problems)
    if width == 1:
        values = first.reshape(n, 1)  # a view: ``first`` is this function's own array
    else:
        values = np.full((n, width), np.nan)
        values[:, 0] = first
    if len(multi_rows):
        values[multi_rows] = multi_vals
    bad = ~np.isfinite(values[:, 0]) & (counts > 0)
    for i in np.flatnonzero(bad):  # inf or nan typed as text
        problems[int(i)] = Problem(cells[i], "a finite number")
    if problems:
        rows = np.fromiter(problems, dtype=np.int64, count=len(problems))
        values[rows] = np.nan
        counts[rows] = 0
        units[rows] = None
    return ParsedColumn(values, units, counts, problems)


def _other_numbers(cells: np.ndarray, rows: np.ndarray, first: np.ndarray, counts: np.ndarray,
                   problems: dict[int, Problem]) -> None:
    """Cells that are not text: numbers convert in one step, anything else is a problem."""
    s = pd.Series(cells[rows], dtype=object)
    types = s.map(type)
    num_mask = types.isin([float, int, np.float64, np.int64]).to_numpy()
    if num_mask.any():
        first[rows[num_mask]] = s[num_mask].astype(float).to_numpy()
        counts[rows[num_mask]] = 1
    other = ~num_mask & ~s.isna().to_numpy()
    for j in np.flatnonzero(other):
        i, v = int(rows[j]), s.iat[j]
        if isinstance(v, CellMarker):
            if v.kind == "error":
                problems[i] = Problem(
                    v.text, "a number", f"the cell holds the spreadsheet error {v.text}"
                )
            else:
                problems[i] = Problem(
                    v,
                    "a number",
                    "formula without a saved result; open and save the file in the spreadsheet "
                    "program so it computes the value",
                )
        elif isinstance(v, bool):
            problems[i] = Problem(v, "a number")
        elif isinstance(v, dt.date | dt.time | dt.timedelta):
            problems[i] = Problem(
                v, "a number", "the cell is formatted as a date or time; format it as a number"
            )
        elif isinstance(v, float | int | np.floating | np.integer):
            first[i] = float(v)
            counts[i] = 1
        else:
            problems[i] = Problem(v, "a number")


_DATE_PATTERNS = (
    (re.compile(r"^\d{4}-\d{1,2}-\d{1,2}(?:[ T]\d{1,2}:\d{2}(?::\d{2}(?:\.\d+)?)?)?$"), None),
    (re.compile(r"^\d{1,2}\.\d{1,2}\.\d{4}(?: \d{1,2}:\d{2}(?::\d{2})?)?$"), "%d.%m.%Y"),
)
_SLASHED = re.compile(r"^(\d{1,2})/(\d{1,2})/(\d{4})(?: (\d{1,2}):(\d{2})(?::(\d{2}))?)?$")
_EXCEL_EPOCH = dt.datetime(1899, 12, 30)  # Excel's 1900 date system, serial 1 = 1900-01-01


def _date_from_text(text: str, date_order: str | None) -> dt.datetime | Problem:
    t = text.strip()
    for pat, fmt in _DATE_PATTERNS:
        if pat.match(t):
            if fmt is None:
                return dt.datetime.fromisoformat(t.replace("T", " "))
            day, _, rest = t.partition(" ")
            d = dt.datetime.strptime(day, fmt)
            if rest:
                hh, mm, *ss = (int(x) for x in rest.split(":"))
                d = d.replace(hour=hh, minute=mm, second=ss[0] if ss else 0)
            return d
    m = _SLASHED.match(t)
    if m:
        a, b, y = int(m[1]), int(m[2]), int(m[3])
        order = date_order
        if order is None:
            if a > 12 >= b:
                order = "dmy"
            elif b > 12 >= a:
                order = "mdy"
            elif a == b:
                order = "dmy"
            else:
                return Problem(
                    text,
                    "a date",
                    "day and month order is ambiguous; write 2026-01-05 or set date_order "
                    "in the layout file",
                )
        day, month = (a, b) if order == "dmy" else (b, a)
        hh, mm, ss = (int(x) if x else 0 for x in (m[4], m[5], m[6]))
        try:
            return dt.datetime(y, month, day, hh, mm, ss)
        except ValueError:
            return Problem(text, "a date")
    return Problem(text, "a date such as 2026-01-05 or 2026-01-05 14:30")


def parse_dates(cells: np.ndarray, *, date_order: str | None = None) -> tuple[np.ndarray, dict]:
    """Parse a date/time column into datetime64[s] (NaT for blanks) and problems by row.

    Date cells convert in one step; each distinct text is parsed once; plain numbers are
    Excel serial dates (1900 date system).
    """
    d = _Distinct.of(cells)
    out = np.full(len(d.cells), np.datetime64("NaT"), dtype="datetime64[s]")
    problems: dict[int, Problem] = {}
    if len(d.rows):
        parsed: dict[str, dt.datetime | Problem] = {}
        when = np.full(len(d.texts), np.datetime64("NaT"), dtype="datetime64[s]")
        objs: list[Problem | None] = []
        for j, raw in enumerate(d.texts):
            t = raw.strip()
            if t.lower() in BLANK_WORDS:
                objs.append(None)
                continue
            r = parsed.get(t)
            if r is None:
                r = parsed[t] = _date_from_text(t, date_order)
            if isinstance(r, Problem):
                objs.append(Problem(raw, r.expected, r.hint))
            else:
                when[j] = np.datetime64(r, "s")
                objs.append(None)
        out = d.column(when, np.datetime64("NaT"), "datetime64[s]")
        hit = d.spread(np.array([p is not None for p in objs], dtype=bool))
        if hit.any():
            problems.update(zip(d.rows[hit].tolist(), [objs[j] for j in d.pos[hit].tolist()],
                                strict=True))
    if len(d.other):
        _other_dates(d.cells, d.other, out, problems)
    return out, problems


def _other_dates(cells: np.ndarray, rows: np.ndarray, out: np.ndarray,
                 problems: dict[int, Problem]) -> None:
    """Cells that are not text: date cells and Excel serial numbers convert in one step."""
    s = pd.Series(cells[rows], dtype=object)
    types = s.map(type)
    dts = types.isin([dt.datetime, pd.Timestamp]).to_numpy()
    if dts.any():  # the common case, a real date cell: one vectorised conversion
        out[rows[dts]] = pd.to_datetime(s[dts]).dt.tz_localize(None).to_numpy(
            dtype="datetime64[s]")
    nums = types.isin([float, int]).to_numpy()
    if nums.any():
        v = s[nums].astype(float).to_numpy()
        idx = rows[nums]
        valid = (v >= 1) & (v < 2958466)  # Excel serials 1900-01-01 … 9999-12-31
        secs = np.round(v[valid] * 86400.0).astype("int64").astype("timedelta64[s]")
        out[idx[valid]] = np.datetime64(_EXCEL_EPOCH, "s") + secs
        for i in idx[~valid]:
            problems[int(i)] = Problem(cells[i], "a date")
    other = ~dts & ~nums & ~s.isna().to_numpy()
    for j in np.flatnonzero(other):
        i, v = int(rows[j]), s.iat[j]
        if isinstance(v, dt.date) and not isinstance(v, dt.datetime):
            out[i] = np.datetime64(dt.datetime(v.year, v.month, v.day), "s")
        else:
            problems[i] = Problem(v, "a date")


def _text_of(v: object) -> str:
    """A non-text cell as text: integral floats without '.0'."""
    if isinstance(v, float) and v.is_integer():
        return str(int(v))
    return str(v).strip()


def parse_texts(cells: np.ndarray) -> tuple[np.ndarray, dict[int, Problem]]:
    """Text column: strings stripped, numbers written without a trailing '.0', blanks as ''."""
    coded, problems = parse_texts_coded(cells)
    return coded.dense(), problems


def parse_texts_coded(cells: np.ndarray) -> tuple[Coded, dict[int, Problem]]:
    """:func:`parse_texts` as a :class:`Coded` column: each distinct text is stripped once and
    the rows keep codes, so later steps can work per distinct text as well."""
    d = _Distinct.of(cells)
    problems: dict[int, Problem] = {}
    n_text = len(d.texts)
    parts: list[object] = [t.strip() for t in d.texts]
    parts.append("")  # blanks, None and markers
    if d.all_text:
        return Coded(d.pos, _objects(parts)), problems
    codes = np.full(len(d.cells), n_text, dtype=np.intp)
    if len(d.rows):
        codes[d.rows] = d.pos
    if not len(d.other):
        return Coded(codes, _objects(parts)), problems
    s = pd.Series(d.cells[d.other], dtype=object)
    keep = ~s.isna().to_numpy()
    rows, s = d.other[keep], s[keep]
    types = s.map(type).to_numpy()
    markers = np.fromiter((t is CellMarker for t in types), dtype=bool, count=len(types))
    for j in np.flatnonzero(markers):
        v = s.iat[j]
        hint = (f"the cell holds the spreadsheet error {v.text}" if v.kind == "error"
                else "formula without a saved result; open and save the file in the "
                "spreadsheet program so it computes the value")
        problems[int(rows[j])] = Problem(v.text if v.kind == "error" else v, "a text", hint)
    type_codes, kinds = pd.factorize(types)
    for k, t in enumerate(kinds):
        of_type = ~markers & (type_codes == k)
        if not of_type.any():
            continue
        vals = s[of_type].to_numpy()
        if issubclass(t, dt.datetime | dt.time):  # equal across time zones, written apart
            codes[rows[of_type]] = len(parts) + np.arange(len(vals))
            parts.extend(_text_of(v) for v in vals)
            continue
        # within one type, equal values write the same text: convert each distinct value once
        value_codes, uniques = pd.factorize(vals)
        codes[rows[of_type]] = len(parts) + value_codes
        parts.extend(_text_of(u) for u in uniques)
    return Coded(codes, _objects(parts)), problems


def _objects(items: list[object]) -> np.ndarray:
    """An object array of exactly these items (no nesting into more dimensions)."""
    out = np.empty(len(items), dtype=object)
    out[:] = items
    return out
