"""Hypothesis strategies shared by the property tests: good values, junk, and whole sheets.

"Junk" is text a careful reader must refuse for a number: it holds no digit at all (so it can
be no number in any convention) and is not one of the words read as blank. Characters that a
workbook cannot store (control characters, ECMA-376 Part 1, 22.9.2.19 ST_Xstring, from memory)
and line breaks are left out so CSV and xlsx files carry the same text.
"""

from __future__ import annotations

from dataclasses import dataclass

from hypothesis import strategies as st

from qc.io.values import BLANK_WORDS

__all__ = ["HEADER", "SheetSpec", "good_row", "junk_text", "sheets", "text_cells"]

HEADER = ["Part", "Characteristic", "Nominal", "Lower limit", "Upper limit", "Reading",
          "Part temp (°C)", "Note"]
NUMERIC = {2: "nominal", 3: "lower_limit", 4: "upper_limit", 5: "reading", 6: "part_temp"}

_ALPHABET = st.characters(blacklist_categories=("Cc", "Cs", "Nd", "Zl", "Zp", "Co", "Cn"),
                          blacklist_characters="\ufffe\uffff\x85")

#: Text without digits that is not read as blank: never a number.
junk_text = (st.text(_ALPHABET, min_size=1, max_size=12)
             .filter(lambda s: s.strip() and s.strip().lower() not in BLANK_WORDS)
             .filter(lambda s: not any(ch.isdigit() for ch in s)))

#: Anything a text cell may hold, formula-looking text included (OWASP "CSV Injection" leaders).
text_cells = st.one_of(
    st.text(_ALPHABET | st.sampled_from("0123456789"), max_size=16),
    st.sampled_from(["=1+1", "@SUM(A1)", "+1", "-1+1", "=HYPERLINK(\"x\")", "#N/A"]),
)


@st.composite
def good_row(draw: st.DrawFn, i: int) -> list[object]:
    """A row that must read without any error: limits around the nominal, a near reading."""
    nominal = draw(st.floats(1.0, 500.0).map(lambda x: round(x, 3)))
    half = draw(st.floats(0.001, 1.0).map(lambda x: round(x, 3)))
    reading = round(nominal + draw(st.floats(-2 * half, 2 * half)), 4)
    temp = round(draw(st.floats(15.0, 25.0)), 2)
    return [f"PX-{i}", f"D{i}", nominal, round(nominal - half, 4), round(nominal + half, 4),
            reading, temp, draw(st.text(_ALPHABET, max_size=10))]


@dataclass
class SheetSpec:
    """Rows of a long-layout sheet and which (row, column) cells hold junk."""

    rows: list[list[object]]
    junk: set[tuple[int, int]]


@st.composite
def sheets(draw: st.DrawFn, max_rows: int = 12) -> SheetSpec:
    """A long-layout sheet: good rows, some numeric cells replaced by junk text."""
    n = draw(st.integers(1, max_rows))
    rows, junk = [], set()
    for i in range(n):
        row = draw(good_row(i))
        for c in NUMERIC:
            if draw(st.integers(0, 4)) == 0:
                row[c] = draw(junk_text)
                junk.add((i, c))
        if draw(st.booleans()):
            row[7] = draw(text_cells)  # the note: anything, formula-looking included
        rows.append(row)
    return SheetSpec(rows, junk)
