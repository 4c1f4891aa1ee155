"""Reading .csv/.tsv files: encoding, delimiter and decimal convention sniffed, all overridable.

Many shops write ``;`` as separator with comma decimals (``12,02``); others ``,`` with points.
The delimiter is the candidate that splits the first lines into the most consistent number of
fields; the decimal convention is the one the number-like fields use (with ``,`` as delimiter it
can only be ``.``). What was assumed is reported as a file-level note.

Fields are split by ``pyarrow.csv`` (multi-threaded C, every column read as text) when every
row has the same number of fields; anything else (rows of other widths, a field over
``csv.field_size_limit()``, a parse error) is read again by the standard-library ``csv``
module, whose rows and messages are the reference: both give the same cells for the files
pyarrow accepts (Excel dialect: ``"`` quotes, doubled inside a quoted field).
"""

from __future__ import annotations

import codecs
import csv
import io
import re
from collections import Counter
from pathlib import Path

import numpy as np
import pyarrow as pa
import pyarrow.compute as pc
import pyarrow.csv as pa_csv

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


def _head_lines(text: str, n: int) -> list[str]:
    """The first ``n`` lines of ``text`` (as ``text.splitlines()[:n]``) without splitting it all."""
    size = 1 << 16
    while size < len(text):
        lines = text[:size].splitlines()
        if len(lines) > n:  # line n + 1 has begun inside the prefix: the first n are whole
            return lines[:n]
        size *= 4
    return text.splitlines()[:n]


def _head(text: str, delimiter: str) -> tuple[list[list[str]], int, int] | None:
    """Leading rows of other widths (a title, a remark above the header), the number of
    characters they take, and the number of fields of the rows below them.

    Read with the csv module from a prefix of the text. The body's width is that of the last
    whole non-empty row of the prefix; the head ends after the last row of another width.
    None when the csv module refuses the prefix or a head row spans lines (a quoted line
    break), since then the text cannot be cut at a line end.
    """
    size = 1 << 16
    try:
        while True:
            whole = size >= len(text)
            rows = list(csv.reader(io.StringIO(text[:size]), delimiter=delimiter))
            complete = rows if whole else rows[:-1]  # the prefix may cut its last row
            width = next((len(r) for r in reversed(complete) if r), None)
            if width is not None or whole:
                break
            size *= 4
    except csv.Error:
        return None
    if width is None:
        return None
    k = next((i + 1 for i in range(len(complete) - 1, -1, -1)
              if complete[i] and len(complete[i]) != width), 0)
    head = complete[:k]
    if any("\n" in f or "\r" in f for r in head for f in r):
        return None
    offset = 0
    for _ in range(k):  # one line per head row
        offset = text.find("\n", offset) + 1
        if offset == 0:
            return None
    if list(csv.reader(io.StringIO(text[:offset]), delimiter=delimiter)) != head:
        return None
    return head, offset, width


def _arrow_columns(data: bytes | memoryview, delimiter: str, width: int,
                   ) -> list[tuple[np.ndarray, np.ndarray]] | None:
    """Columns split by pyarrow as (object array of str, blank mask), or None where pyarrow
    cannot be trusted.

    None: pyarrow refused the text (rows of other widths, broken quoting) or a field is
    longer than ``csv.field_size_limit()``, which the csv module reports as an error. Each
    column is dictionary-encoded first, so one str object is made per distinct value and
    the cells share it (memory, and hashing later, scale with distinct values); the blank
    mask (empty or whitespace only, as :meth:`Grid.blank`) is found per distinct value too.
    """
    names = [f"c{j}" for j in range(width)]
    limit = csv.field_size_limit()
    try:
        table = pa_csv.read_csv(
            pa.py_buffer(data),
            read_options=pa_csv.ReadOptions(column_names=names),
            parse_options=pa_csv.ParseOptions(delimiter=delimiter, newlines_in_values=True,
                                              ignore_empty_lines=False),
            convert_options=pa_csv.ConvertOptions(
                column_types=dict.fromkeys(names, pa.string()), strings_can_be_null=False,
                quoted_strings_can_be_null=False),
        )
        out = []
        for col in table.columns:
            arr = col.combine_chunks()
            if len(arr) and (pc.max(pc.binary_length(arr)).as_py() or 0) > limit \
                    and (pc.max(pc.utf8_length(arr)).as_py() or 0) > limit:
                return None
            enc = arr.dictionary_encode()
            values = enc.dictionary.to_numpy(zero_copy_only=False)
            blank = np.fromiter((not v.strip() for v in values), dtype=bool, count=len(values))
            codes = enc.indices.to_numpy(zero_copy_only=False)
            out.append((values[codes], blank[codes]))
        return out
    except (pa.ArrowException, ValueError, OverflowError):
        return None


def _split_rows(text: str, data: bytes, delimiter: str, *, sample: bool,
                ) -> tuple[np.ndarray, np.ndarray | None, list[str]]:
    """The cells of the file (rows padded with ''), their blank mask if known already, and,
    if asked, the fields of its first 2000 rows (evidence for the decimal mark). ``data`` is
    ``text`` encoded as UTF-8.

    A bare carriage return ends a row for pyarrow but is an error for the csv module (the
    text is read without newline translation), so such files take the csv module's path.
    """
    lead = _head(text, delimiter)
    cols = None
    if lead and (b"\r" not in data or data.count(b"\r") == data.count(b"\r\n")):
        head, offset, width = lead
        cut = len(text[:offset].encode("utf-8")) if head else 0
        body = memoryview(data)[cut:]  # no copy of the bytes
        cols = _arrow_columns(body, delimiter, width) if len(body) else None
    if cols is not None:
        wide = max(width, *(len(r) for r in head)) if head else width
        cells = np.empty((len(head) + len(cols[0][0]), wide), dtype=object)
        blank = np.ones(cells.shape, dtype=bool)
        if wide > width or head:
            cells[:] = ""
        for i, r in enumerate(head):  # a few rows above the header
            cells[i, : len(r)] = r
            blank[i, : len(r)] = [not f.strip() for f in r]
        for j, (c, b) in enumerate(cols):
            cells[len(head):, j] = c
            blank[len(head):, j] = b
        # an empty line is one row of '' for pyarrow and [] for csv: the same cells
        fields = [f for row in cells[:2000].tolist() for f in row] if sample else []
        return cells, blank, fields
    rows = list(csv.reader(io.StringIO(text), delimiter=delimiter))
    width = max((len(r) for r in rows), default=0)
    cells = np.empty((len(rows), width), dtype=object)
    cells[:] = ""
    for i, r in enumerate(rows):
        cells[i, : len(r)] = r
    return cells, None, [f for r in rows[:2000] for f in r] if sample else []


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
    if not text or text.isspace():  # no copy of the text, unlike strip()
        raise FileReadError(f"{path.name}: the file is empty")
    if delimiter is None:
        if path.suffix.lower() == ".tsv":
            delimiter = "\t"
        else:
            delimiter = sniff_delimiter(_head_lines(text, 200)) or ","
            notes.append(f"{path.name}: fields separated by {_NAMES[delimiter]} (detected)")
    # pyarrow reads bytes: the file's own when it is UTF-8, else the decoded text re-encoded
    data = (raw[len(codecs.BOM_UTF8):] if raw.startswith(codecs.BOM_UTF8) else raw) \
        if note is None else text.encode("utf-8")
    try:
        cells, blank, sample = _split_rows(text, data, delimiter, sample=decimal is None)
    except csv.Error as exc:  # e.g. an unclosed quote swallowing the rest of the file
        raise FileReadError(f"{path.name}: cannot be read as delimited text ({exc}); "
                            "look for an unclosed quote") from exc
    if decimal is None:
        decimal, clear = sniff_decimal(sample, delimiter)
        word = "comma" if decimal == "," else "point"
        how = "detected" if clear else "assumed; no decimal numbers found to tell"
        notes.append(f"{path.name}: decimal {word} ({how})")
    return Grid(
        file=path.name, sheet=None, cells=cells, decimal=decimal, delimiter=delimiter,
        notes=notes, _blank=blank,
    )
