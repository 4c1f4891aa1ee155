"""Reading .csv/.tsv files: encoding, delimiter and decimal convention sniffed, all overridable.

Many shops write ``;`` as separator with comma decimals (``12,02``); others ``,`` with points.
The delimiter is the candidate that splits the first lines into the most consistent number of
fields; the decimal convention is the one the number-like fields use (with ``,`` as delimiter it
can only be ``.``). What was assumed is reported as a file-level note.
"""

from __future__ import annotations

import csv
import io
import re
from collections import Counter
from pathlib import Path

import numpy as np

from qc.errors import FileReadError
from qc.io.grid import Grid

__all__ = ["read_delimited", "sniff_decimal", "sniff_delimiter"]

_CANDIDATES = (";", ",", "\t", "|")
_COMMA_NUM = re.compile(r"\d,\d")
_POINT_NUM = re.compile(r"\d\.\d")
_NAMES = {";": "semicolon", ",": "comma", "\t": "tab", "|": "vertical bar"}


def _decode(raw: bytes, name: str) -> tuple[str, str | None]:
    """Text of the file: UTF-8 (with or without BOM), else Windows-1252 with a note."""
    try:
        return raw.decode("utf-8-sig"), None
    except UnicodeDecodeError:
        pass
    try:
        return raw.decode("cp1252"), f"{name}: not UTF-8; read as Windows-1252 (Western European)"
    except UnicodeDecodeError as exc:
        raise FileReadError(f"{name}: the text encoding cannot be recognised") from exc


def sniff_delimiter(lines: list[str]) -> str | None:
    """The candidate delimiter giving the most lines with the same (>1) number of fields."""
    best, best_score = None, 0
    for d in _CANDIDATES:
        counts = Counter(len(next(csv.reader([ln], delimiter=d))) for ln in lines if ln.strip())
        if not counts:
            continue
        width, freq = counts.most_common(1)[0]
        score = freq * (width > 1) * width
        if score > best_score:
            best, best_score = d, score
    return best


def sniff_decimal(fields: list[str], delimiter: str) -> tuple[str, bool]:
    """Decimal mark and whether the evidence was clear (False: assumed '.')."""
    if delimiter == ",":
        return ".", True
    commas = sum(bool(_COMMA_NUM.search(f)) for f in fields)
    points = sum(bool(_POINT_NUM.search(f)) for f in fields)
    if commas > points:
        return ",", True
    return ".", points > 0


def read_delimited(path: Path, *, delimiter: str | None = None, decimal: str | None = None) -> Grid:
    """Read a delimited text file into a Grid of strings; notes record what was assumed."""
    try:
        raw = path.read_bytes()
    except OSError as exc:
        raise FileReadError(f"{path.name}: cannot be opened ({exc.strerror})") from exc
    if b"\x00" in raw:
        raise FileReadError(f"{path.name}: not a text file (is it a workbook saved as .csv?)")
    text, note = _decode(raw, path.name)
    notes = [note] if note else []
    lines = text.splitlines()
    if not any(ln.strip() for ln in lines):
        raise FileReadError(f"{path.name}: the file is empty")
    if delimiter is None:
        if path.suffix.lower() == ".tsv":
            delimiter = "\t"
        else:
            delimiter = sniff_delimiter(lines[:200]) or ","
            notes.append(f"{path.name}: fields separated by {_NAMES[delimiter]} (detected)")
    try:
        rows = list(csv.reader(io.StringIO(text), delimiter=delimiter))
    except csv.Error as exc:  # e.g. an unclosed quote swallowing the rest of the file
        raise FileReadError(f"{path.name}: cannot be read as delimited text ({exc}); "
                            "look for an unclosed quote") from exc
    if decimal is None:
        sample = [f for r in rows[:2000] for f in r]
        decimal, clear = sniff_decimal(sample, delimiter)
        word = "comma" if decimal == "," else "point"
        how = "detected" if clear else "assumed; no decimal numbers found to tell"
        notes.append(f"{path.name}: decimal {word} ({how})")
    width = max((len(r) for r in rows), default=0)
    cells = np.empty((len(rows), width), dtype=object)
    cells[:] = ""
    for i, r in enumerate(rows):
        cells[i, : len(r)] = r
    return Grid(
        file=path.name, sheet=None, cells=cells, decimal=decimal, delimiter=delimiter, notes=notes
    )
