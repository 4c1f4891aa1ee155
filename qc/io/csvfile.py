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
import threading
from collections import Counter
from collections.abc import Callable, Iterator
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pyarrow as pa
import pyarrow.compute as pc
import pyarrow.csv as pa_csv

from qc.errors import FileReadError
from qc.io.grid import Grid

__all__ = ["DelimitedStream", "NotStreamable", "TextChunk", "read_delimited", "sniff_decimal",
           "sniff_delimiter", "stream_delimited"]

_CANDIDATES = (";", ",", "\t", "|")
_COMMA_NUM = re.compile(r"\d,\d")
_POINT_NUM = re.compile(r"\d\.\d")
#: Rows whose fields are the evidence for the decimal mark.
SNIFF_ROWS = 2000
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


def _options(delimiter: str, width: int, block_size: int | None = None,
             ) -> tuple[pa_csv.ReadOptions, pa_csv.ParseOptions, pa_csv.ConvertOptions]:
    """pyarrow options that split like the csv module: every field text, nothing null."""
    names = [f"c{j}" for j in range(width)]
    read = pa_csv.ReadOptions(column_names=names) if block_size is None else \
        pa_csv.ReadOptions(column_names=names, block_size=block_size)
    return (read,
            pa_csv.ParseOptions(delimiter=delimiter, newlines_in_values=True,
                                ignore_empty_lines=False),
            pa_csv.ConvertOptions(column_types=dict.fromkeys(names, pa.string()),
                                  strings_can_be_null=False, quoted_strings_can_be_null=False))


def _text_columns(columns: list[pa.ChunkedArray] | list[pa.Array],
                  ) -> list[tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]] | None:
    """Arrow string columns as (object array of str, blank mask, codes, distinct values);
    None when a field is longer than ``csv.field_size_limit()``, which the csv module reports
    as an error. Codes and distinct values are the factorisation of the column (distinct
    values in order of first appearance, as ``pandas.factorize`` gives them).

    Each column is dictionary-encoded first, so one str object is made per distinct value and
    the cells share it (memory, and hashing later, scale with distinct values); the blank
    mask (empty or whitespace only, as :meth:`Grid.blank`) is found per distinct value too.
    """
    limit = csv.field_size_limit()
    out = []
    for col in columns:
        arr = col.combine_chunks() if isinstance(col, pa.ChunkedArray) else col
        if len(arr) and (pc.max(pc.binary_length(arr)).as_py() or 0) > limit \
                and (pc.max(pc.utf8_length(arr)).as_py() or 0) > limit:
            return None
        enc = arr.dictionary_encode()
        values = enc.dictionary.to_numpy(zero_copy_only=False)
        # a value that starts with a visible ASCII character is not blank; the rest (empty,
        # a space first, anything non-ASCII) are judged by str.strip, as Grid.blank does
        maybe = np.flatnonzero(~pc.match_substring_regex(enc.dictionary, "^[!-~]")
                               .to_numpy(zero_copy_only=False))
        blank = np.zeros(len(values), dtype=bool)
        blank[maybe] = [not values[i].strip() for i in maybe.tolist()]
        codes = enc.indices.to_numpy(zero_copy_only=False)
        out.append((values[codes], blank[codes], codes, values))
    return out


def _arrow_columns(data: bytes | memoryview, delimiter: str, width: int,
                   ) -> list[tuple[np.ndarray, ...]] | None:
    """Columns split by pyarrow as :func:`_text_columns` gives them, or None where pyarrow
    cannot be trusted (rows of other widths, broken quoting, a field over the size limit)."""
    read, parse, convert = _options(delimiter, width)
    try:
        table = pa_csv.read_csv(pa.py_buffer(data), read_options=read, parse_options=parse,
                                convert_options=convert)
        return _text_columns(table.columns)
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
        cells, blank = _chunk_cells(head, cols, wide)  # head: a few rows above the header
        # an empty line is one row of '' for pyarrow and [] for csv: the same cells
        fields = [f for row in cells[:SNIFF_ROWS].tolist() for f in row] if sample else []
        return cells, blank, fields
    rows = list(csv.reader(io.StringIO(text), delimiter=delimiter))
    width = max((len(r) for r in rows), default=0)
    cells = np.empty((len(rows), width), dtype=object)
    cells[:] = ""
    for i, r in enumerate(rows):
        cells[i, : len(r)] = r
    return cells, None, [f for r in rows[:SNIFF_ROWS] for f in r] if sample else []


def _delimiter(path: Path, text: str, given: str | None, notes: list[str]) -> str:
    """The layout's delimiter, a tab for .tsv, else the one sniffed from the first 200 lines
    of ``text`` (noted)."""
    if given is not None:
        return given
    if path.suffix.lower() == ".tsv":
        return "\t"
    found = sniff_delimiter(_head_lines(text, 200)) or ","
    notes.append(f"{path.name}: fields separated by {_NAMES[found]} (detected)")
    return found


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
    delimiter = _delimiter(path, text, delimiter, notes)
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


#: Bytes of the file's beginning read to sniff the delimiter and find the rows above the body.
_PREFIX_BYTES = 4 << 20
#: Bytes pyarrow reads at a time when streaming (one record batch each).
_BLOCK_BYTES = 4 << 20
#: Rows of the first chunk at least: the header is looked for in the first 60 rows and the
#: decimal mark in the first SNIFF_ROWS, as when the whole file is read.
FIRST_CHUNK_ROWS = SNIFF_ROWS + 100


class NotStreamable(Exception):
    """The file cannot be read in chunks with the same cells as a whole read; read it whole."""


@dataclass
class DelimitedStream:
    """A delimited file read in chunks of rows (:class:`TextChunk`, each made into a
    :class:`Grid` by its ``grid()``); ``fraction`` tells how far reading is."""

    chunks: Iterator[TextChunk]
    size: int
    _source: object

    def fraction(self) -> float:
        """Share of the file's bytes handed out so far (to within one reading block)."""
        return min(1.0, self._source.consumed() / max(self.size, 1))  # type: ignore[attr-defined]


def _plain_utf8(path: Path) -> bool:
    """True when the file decodes as UTF-8 and every carriage return ends a CRLF pair (what
    the whole-file reader hands to pyarrow); read in blocks, nothing kept."""
    dec = codecs.getincrementaldecoder("utf-8-sig")()
    tail = b""
    try:
        with path.open("rb") as fh:
            while block := fh.read(16 << 20):
                dec.decode(block)
                if not tail and b"\r" not in block:  # the usual Unix file: nothing to pair
                    continue
                both = tail + block
                # a CR at the very end may pair with an LF in the next block
                body = both[:-1] if both.endswith(b"\r") else both
                if body.count(b"\r") != body.count(b"\r\n"):
                    return False
                tail = both[-1:] if both.endswith(b"\r") else b""
            dec.decode(b"", True)
    except UnicodeDecodeError:
        return False
    return tail == b""


def stream_delimited(path: Path, *, delimiter: str | None = None, decimal: str | None = None,
                     chunk_rows: int = 50_000) -> DelimitedStream:
    """The file in chunks of about ``chunk_rows`` rows, the same cells as
    :func:`read_delimited` would give, for files pyarrow splits the same way.

    Raises :class:`NotStreamable` for a file that must be read whole (not UTF-8, bare carriage
    returns, no regular body, rows of other widths met while reading), and only before the
    first chunk is handed out or while reading a later one.
    """
    if not _plain_utf8(path):
        raise NotStreamable(path.name)
    size = path.stat().st_size
    with path.open("rb") as fh:
        prefix = fh.read(_PREFIX_BYTES)
    bom = len(codecs.BOM_UTF8) if prefix.startswith(codecs.BOM_UTF8) else 0
    whole = len(prefix) >= size
    if not whole:  # whole rows only (a quoted line break at the cut is caught by _head)
        prefix = prefix[: prefix.rfind(b"\n") + 1]
    text = prefix[bom:].decode("utf-8", errors="strict")
    if not text or text.isspace():
        raise NotStreamable(path.name)
    notes: list[str] = []
    delimiter = _delimiter(path, text, delimiter, notes)
    lead = _head(text, delimiter)
    if lead is None:
        raise NotStreamable(path.name)
    head, offset, width = lead
    cut = bom + len(text[:offset].encode("utf-8"))
    source = _PacedFile(path, cut, _BLOCK_BYTES)
    read, parse, convert = _options(delimiter, width, block_size=_BLOCK_BYTES)
    try:
        reader = pa_csv.open_csv(source, read_options=read, parse_options=parse,
                                 convert_options=convert)
    except (pa.ArrowException, ValueError, OverflowError) as exc:
        source.close()
        raise NotStreamable(path.name) from exc
    wide = max(width, *(len(r) for r in head)) if head else width

    def chunks() -> Iterator[TextChunk]:
        first_row = 0
        try:
            first = max(chunk_rows, FIRST_CHUNK_ROWS)
            for batches in _batched_rows(reader, chunk_rows, first, source.allow):
                chunk = TextChunk(file=path.name, batches=batches,
                                  head=head if first_row == 0 else [], wide=wide,
                                  first_row=first_row, delimiter=delimiter,
                                  decimal=decimal, notes=notes if first_row == 0 else [])
                yield chunk
                first_row += chunk.rows
        except (pa.ArrowException, ValueError, OverflowError) as exc:
            raise NotStreamable(path.name) from exc
        finally:
            source.close()

    return DelimitedStream(chunks=chunks(), size=size, _source=source)


@dataclass
class TextChunk:
    """Rows of a delimited file as pyarrow split them, made into cells by :meth:`grid` when
    their turn comes. The first chunk (``first_row`` 0) also holds
    the rows above the body and the file's notes, and finds the decimal mark if not given."""

    file: str
    batches: list[pa.RecordBatch]
    head: list[list[str]]
    wide: int
    first_row: int
    delimiter: str
    decimal: str | None
    notes: list[str]

    @property
    def rows(self) -> int:
        """Rows of the file in this chunk."""
        return len(self.head) + sum(b.num_rows for b in self.batches)

    def grid(self) -> Grid:
        """The chunk's cells, as :func:`read_delimited` gives those rows."""
        width = self.batches[0].num_columns
        cols = _text_columns([pa.concat_arrays([b.column(j) for b in self.batches])
                              for j in range(width)])
        if cols is None:
            raise NotStreamable(self.file)
        cells, blank = _chunk_cells(self.head, cols, self.wide)
        # the codes describe whole columns of cells only when no rows stand above the body
        codes = None if self.head else [(c[2], c[3]) for c in cols]
        notes, dec = list(self.notes), self.decimal
        if self.first_row == 0 and dec is None:
            fields = [f for row in cells[:SNIFF_ROWS].tolist() for f in row]
            dec, clear = sniff_decimal(fields, self.delimiter)
            word = "comma" if dec == "," else "point"
            how = "detected" if clear else "assumed; no decimal numbers found to tell"
            notes.append(f"{self.file}: decimal {word} ({how})")
        return Grid(file=self.file, sheet=None, cells=cells, decimal=dec,
                    delimiter=self.delimiter, notes=notes, _blank=blank,
                    first_row=self.first_row, codes=codes)


def _batched_rows(reader: pa_csv.CSVStreamingReader, rows: int, first: int,
                  taken: Callable[[], None]) -> Iterator[list[pa.RecordBatch]]:
    """Record batches regrouped (sliced, no copy) into groups of ``rows`` rows, the first of
    ``first`` rows; the last group may be shorter. ``taken`` is called after each batch."""
    group: list[pa.RecordBatch] = []
    n, want = 0, first
    for batch in reader:
        taken()
        while batch.num_rows:
            take = min(want - n, batch.num_rows)
            group.append(batch.slice(0, take))
            batch = batch.slice(take)
            n += take
            if n == want:
                yield group
                group, n, want = [], 0, rows
    if group:
        yield group


class _PacedFile(io.RawIOBase):
    """The file from byte ``start`` on, read by pyarrow's background threads at most
    ``ahead`` blocks past what the consumer has taken, so a large file is not buffered whole.

    pyarrow's streaming reader makes one record batch per ``block`` bytes of input, so each
    batch the consumer takes (:meth:`allow`) lets the reader one block further, and
    :meth:`consumed` tells, to within a block, how far the consumer has got. A read that has
    waited ``_WAIT_S`` goes on anyway: pacing can slow the reader but never stop it.
    """

    _WAIT_S = 2.0

    def __init__(self, path: Path, start: int, block: int, ahead: int = 4) -> None:
        super().__init__()
        self._fh = path.open("rb")
        self._fh.seek(start)
        self._start, self._block, self._taken = start, block, 0
        self._limit = start + ahead * block
        self._turn = threading.Condition()

    def readable(self) -> bool:
        return True

    def readinto(self, buffer) -> int:  # type: ignore[override]
        with self._turn:
            if not self._fh.closed and self._fh.tell() >= self._limit:
                self._turn.wait(self._WAIT_S)
            if self._fh.closed:  # the consumer stopped early: the end, for the reader
                return 0
            return self._fh.readinto(buffer)

    def allow(self) -> None:
        """The consumer took a batch: the reader may read one block further."""
        with self._turn:
            self._taken += 1
            self._limit += self._block
            self._turn.notify_all()

    def consumed(self) -> int:
        """Bytes of the file the consumer has taken as batches, about (one block each)."""
        return self._start + self._taken * self._block

    def tell(self) -> int:
        return self._fh.tell()  # ValueError once closed

    def close(self) -> None:
        with self._turn:
            self._fh.close()
            self._turn.notify_all()
        super().close()


def _chunk_cells(head: list[list[str]], cols: list[tuple[np.ndarray, ...]], wide: int,
                 ) -> tuple[np.ndarray, np.ndarray]:
    """Cells and blank mask of a chunk: ``head`` rows (those above the body, first chunk
    only) then the body's columns, rows padded with '' to ``wide`` fields."""
    n = len(cols[0][0]) if cols else 0
    cells = np.empty((len(head) + n, wide), dtype=object)
    blank = np.ones(cells.shape, dtype=bool)
    if wide > len(cols) or head:
        cells[:] = ""
    for i, r in enumerate(head):
        cells[i, : len(r)] = r
        blank[i, : len(r)] = [not f.strip() for f in r]
    for j, (c, b, *_) in enumerate(cols):
        cells[len(head):, j] = c
        blank[len(head):, j] = b
    return cells, blank
