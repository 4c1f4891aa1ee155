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
from dataclasses import dataclass, field
from typing import Literal

import numpy as np
import pandas as pd

from qc.units import UnitKind, canonical_unit

__all__ = [
    "BLANK_WORDS",
    "EXCEL_ERRORS",
    "CellMarker",
    "ParsedColumn",
    "Problem",
    "is_blank",
    "parse_dates",
    "parse_numbers",
    "parse_texts",
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


def is_blank(cells: np.ndarray) -> np.ndarray:
    """True where a cell is empty, whitespace, or one of :data:`BLANK_WORDS`."""
    s = pd.Series(cells, dtype=object)
    out = s.isna().to_numpy().copy()
    strs = s.map(lambda x: isinstance(x, str)).to_numpy(dtype=bool)
    if strs.any():
        out[strs] = s[strs].str.strip().str.lower().isin(BLANK_WORDS).to_numpy()
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
    s = pd.Series(np.asarray(cells, dtype=object), dtype=object)
    n = len(s)
    types = s.map(type)
    num_mask = types.isin([float, int, np.float64, np.int64]).to_numpy()
    str_mask = types.isin([str]).to_numpy()
    first = np.full(n, np.nan)
    units = np.full(n, None, dtype=object)
    counts = np.zeros(n, dtype=np.int64)
    problems: dict[int, Problem] = {}
    if num_mask.any():
        first[num_mask] = s[num_mask].astype(float).to_numpy()
        counts[num_mask] = 1
    extra: dict[int, list[float]] = {}
    if str_mask.any():
        texts = s[str_mask].str.strip()
        blank = texts.str.lower().isin(BLANK_WORDS).to_numpy()
        idx = np.flatnonzero(str_mask)
        simple = texts.str.fullmatch(_SIMPLE[decimal].pattern).fillna(False).to_numpy(dtype=bool)
        if simple.any():  # fast path: plain numbers written as text
            vals = texts[simple]
            if decimal == ",":
                vals = vals.str.replace(",", ".", regex=False)
            first[idx[simple]] = vals.astype(float).to_numpy()
            counts[idx[simple]] = 1
        rest = ~simple & ~blank
        if rest.any():
            parsed = {
                t: _parse_one(t, kind, decimal, thousands, allow_pm) for t in pd.unique(texts[rest])
            }
            for i, t in zip(idx[rest], texts[rest], strict=True):
                r = parsed[t]
                if isinstance(r, Problem):
                    problems[int(i)] = Problem(s.iat[i], r.expected, r.hint)
                    continue
                if len(r) > 1 and not multi:
                    problems[int(i)] = Problem(s.iat[i], "a single number")
                    continue
                rowunits = {u for _, u in r}
                if len(rowunits) > 1:
                    problems[int(i)] = Problem(s.iat[i], "values in one unit")
                    continue
                first[i] = r[0][0]
                units[i] = r[0][1]
                counts[i] = len(r)
                if len(r) > 1:
                    extra[int(i)] = [v for v, _ in r]
    other = ~num_mask & ~str_mask & ~s.isna().to_numpy()
    for i in np.flatnonzero(other):
        v = s.iat[i]
        if isinstance(v, CellMarker):
            if v.kind == "error":
                problems[int(i)] = Problem(
                    v.text, "a number", f"the cell holds the spreadsheet error {v.text}"
                )
            else:
                problems[int(i)] = Problem(
                    v,
                    "a number",
                    "formula without a saved result; open and save the file in the spreadsheet "
                    "program so it computes the value",
                )
        elif isinstance(v, bool):
            problems[int(i)] = Problem(v, "a number")
        elif isinstance(v, dt.date | dt.time | dt.timedelta):
            problems[int(i)] = Problem(
                v, "a number", "the cell is formatted as a date or time; format it as a number"
            )
        elif isinstance(v, float | int | np.floating | np.integer):
            first[i] = float(v)
            counts[i] = 1
        else:
            problems[int(i)] = Problem(v, "a number")
    width = max([1, *(len(v) for v in extra.values())])
    values = np.full((n, width), np.nan)
    values[:, 0] = first
    for i, vs in extra.items():
        values[i, : len(vs)] = vs
    bad = ~np.isfinite(values[:, 0]) & (counts > 0)
    for i in np.flatnonzero(bad):  # inf or nan typed as text
        problems[int(i)] = Problem(s.iat[i], "a finite number")
        counts[i] = 0
        values[i] = np.nan
    for i in problems:
        values[i] = np.nan
        counts[i] = 0
        units[i] = None
    return ParsedColumn(values, units, counts, problems)


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
    s = pd.Series(np.asarray(cells, dtype=object), dtype=object)
    out = np.full(len(s), np.datetime64("NaT"), dtype="datetime64[s]")
    problems: dict[int, Problem] = {}
    types = s.map(type)
    dts = types.isin([dt.datetime, pd.Timestamp]).to_numpy()
    if dts.any():  # the common case, a real date cell: one vectorised conversion
        out[dts] = pd.to_datetime(s[dts]).dt.tz_localize(None).to_numpy(dtype="datetime64[s]")
    strs = types.isin([str]).to_numpy()
    if strs.any():
        texts = s[strs].str.strip()
        keep = ~texts.str.lower().isin(BLANK_WORDS).to_numpy()
        idx = np.flatnonzero(strs)[keep]
        texts = texts[keep]
        parsed = {t: _date_from_text(t, date_order) for t in pd.unique(texts)}
        good = {t: np.datetime64(v, "s") for t, v in parsed.items()
                if not isinstance(v, Problem)}
        ok = texts.isin(list(good)).to_numpy()
        if ok.any():
            out[idx[ok]] = texts[ok].map(good).to_numpy(dtype="datetime64[s]")
        for i, t in zip(idx[~ok], texts[~ok], strict=True):
            r = parsed[t]
            problems[int(i)] = Problem(s.iat[i], r.expected, r.hint)
    nums = types.isin([float, int]).to_numpy()
    if nums.any():
        v = s[nums].astype(float).to_numpy()
        idx = np.flatnonzero(nums)
        valid = (v >= 1) & (v < 2958466)  # Excel serials 1900-01-01 … 9999-12-31
        secs = np.round(v[valid] * 86400.0).astype("int64").astype("timedelta64[s]")
        out[idx[valid]] = np.datetime64(_EXCEL_EPOCH, "s") + secs
        for i in idx[~valid]:
            problems[int(i)] = Problem(s.iat[i], "a date")
    other = ~dts & ~strs & ~nums & ~s.isna().to_numpy()
    for i in np.flatnonzero(other):
        v = s.iat[i]
        if isinstance(v, dt.date) and not isinstance(v, dt.datetime):
            out[i] = np.datetime64(dt.datetime(v.year, v.month, v.day), "s")
        else:
            problems[int(i)] = Problem(v, "a date")
    return out, problems


def parse_texts(cells: np.ndarray) -> tuple[np.ndarray, dict[int, Problem]]:
    """Text column: strings stripped, numbers written without a trailing '.0', blanks as ''."""
    s = pd.Series(np.asarray(cells, dtype=object), dtype=object)
    problems: dict[int, Problem] = {}
    types = s.map(type)
    out = np.full(len(s), "", dtype=object)
    strs = types.isin([str]).to_numpy()
    if strs.any():
        out[strs] = s[strs].str.strip().to_numpy(dtype=object)
    rest = ~strs & ~s.isna().to_numpy()
    for i in np.flatnonzero(rest):
        v = s.iat[i]
        if isinstance(v, CellMarker):
            hint = (f"the cell holds the spreadsheet error {v.text}" if v.kind == "error"
                    else "formula without a saved result; open and save the file in the "
                    "spreadsheet program so it computes the value")
            problems[int(i)] = Problem(v.text if v.kind == "error" else v, "a text", hint)
        elif isinstance(v, float) and v.is_integer():
            out[i] = str(int(v))
        elif isinstance(v, float) and math.isnan(v):
            continue
        else:
            out[i] = str(v).strip()
    return out, problems
