"""Checks on an untrusted file before any reader opens it: kind, size, zip bombs, XML entities.

Inspection workbooks come from customers, suppliers and other departments. Before a reader
touches one, :func:`guard_file` decides, cheaply and in bounded memory, whether it is safe:

* the file's first bytes (its "magic number") must fit its extension: a PDF, an image, an old
  binary ``.xls`` or a CSV renamed ``.xlsx`` is named for what it is;
* a ZIP-based workbook (``.xlsx``, ``.xlsm``, ``.ods``) is judged from its central directory
  alone, without decompressing: member count, total unpacked size, compression ratio of each
  member, encrypted or overlapping members;
* every XML part is then streamed through expat in fixed-size chunks, refusing any document
  type declaration (so no entity can be declared: no "billion laughs", no external entity), and
  the used area of each worksheet (``<dimension ref>`` and the cell references themselves) is
  compared with the row, column and cell limits;
* a text file is checked for size, binary content, encoding (UTF-8, else Windows-1252 with a
  note) and separators that change from line to line; the fields of each line are counted on
  the bytes with numpy (the file, at most ``max_text_mb``, is mapped whole, as the reader reads
  it whole, and scanned a block of lines at a time: a block whose quotes all plainly open and
  close fields is counted from its separators alone, any other block quote by quote), and only
  lines with a quote that does not simply open or close a field, or with another number of
  fields, go through the csv module.

Macros in ``.xlsm`` files are never run: nothing in ``qc`` executes workbook content.
The limits and their reasons are in ``qc/data/limits.toml``; each message names the command-line
option that raises a limit.
"""

from __future__ import annotations

import codecs
import contextlib
import csv
import dataclasses
import mmap
import os
import re
import struct
import tomllib
import zipfile
import zlib
from collections import Counter
from collections.abc import Callable, Iterator
from dataclasses import dataclass
from functools import cache
from importlib import resources
from itertools import pairwise
from pathlib import Path
from typing import Any
from xml.parsers import expat

import numpy as np

from qc.errors import DataFileError, FileReadError, LimitExceededError
from qc.io.csvfile import sniff_delimiter
from qc.io.xlsx_package import parse_range_ref

__all__ = ["OPTIONS", "Limits", "check_file", "describe_bytes", "guard_file", "load_limits"]

WORKBOOK_SUFFIXES = (".xlsx", ".xlsm", ".ods")
TEXT_SUFFIXES = (".csv", ".tsv", ".txt")
_MB = 1024 * 1024
_CHUNK = 256 * 1024  # bytes per read; memory stays at a few chunks whatever the file's size
_FORMAT_VERSION = 1
_Text = bytes | mmap.mmap  # a text file's bytes, read or mapped


# --- limits ---------------------------------------------------------------------------------


@cache
def _limits_table() -> dict[str, dict[str, Any]]:
    """The [limits] table of the bundled limits.toml, validated once."""
    text = resources.files("qc").joinpath("data", "limits.toml").read_text("utf-8")
    return _validated(tomllib.loads(text), "limits.toml")


def _validated(doc: dict[str, Any], label: str) -> dict[str, dict[str, Any]]:
    if doc.get("format_version") != _FORMAT_VERSION:
        raise DataFileError(f"{label}: expected format_version = {_FORMAT_VERSION}, "
                            f"got {doc.get('format_version')!r}")
    table = doc.get("limits")
    if not isinstance(table, dict):
        raise DataFileError(f"{label}: expected a [limits] table")
    for name, entry in table.items():
        where = f"{label} › limits.{name}"
        if not isinstance(entry, dict):
            raise DataFileError(f"{where}: expected a table with value, option and source")
        value = entry.get("value")
        if isinstance(value, bool) or not isinstance(value, int | float) or value <= 0:
            raise DataFileError(f"{where} › value: expected a positive number, got {value!r}")
        for key in ("option", "source"):
            if not isinstance(entry.get(key), str) or not entry[key].strip():
                raise DataFileError(f"{where} › {key}: expected a non-empty text")
    return table


def _default(name: str) -> Any:
    return _limits_table()[name]["value"]


@dataclass(frozen=True)
class Limits:
    """Safety limits for opening one file; defaults from qc/data/limits.toml (sizes in MiB)."""

    max_uncompressed_mb: float = _default("max_uncompressed_mb")
    max_ratio: float = _default("max_ratio")
    ratio_min_mb: float = _default("ratio_min_mb")
    max_members: int = _default("max_members")
    max_rows: int = _default("max_rows")
    max_columns: int = _default("max_columns")
    max_cells: int = _default("max_cells")
    max_text_mb: float = _default("max_text_mb")

    def replace(self, **changes: Any) -> Limits:
        """A copy with some limits changed (e.g. from command-line options)."""
        return dataclasses.replace(self, **changes)


#: Limit field → command-line option that raises it.
OPTIONS: dict[str, str] = {name: e["option"] for name, e in _limits_table().items()}


def load_limits() -> Limits:
    """The default limits (bundled limits.toml)."""
    return Limits()


def _too_big(name: str, found: str, field: str, limit: float, unit: str,
             why: str) -> LimitExceededError:
    return LimitExceededError(
        f"{name}: {found}, more than the limit of {_number(limit)}{unit}; {why}. The file was not "
        f"opened. If you trust it, raise the limit with {OPTIONS[field]}"
    )


def _number(x: float) -> str:
    return f"{int(x):,}" if float(x).is_integer() else f"{x:g}"


# --- what a file looks like -------------------------------------------------------------------

_MAGIC: tuple[tuple[bytes, str], ...] = (
    (b"PK\x03\x04", "a ZIP archive"),
    (b"PK\x05\x06", "an empty ZIP archive"),
    (b"\xd0\xcf\x11\xe0\xa1\xb1\x1a\xe1",
     "an older binary Office file (.xls) or a password-protected workbook"),
    (b"%PDF", "a PDF document"),
    (b"\x89PNG\r\n\x1a\n", "a PNG image"),
    (b"\xff\xd8\xff", "a JPEG image"),
    (b"GIF87a", "a GIF image"),
    (b"GIF89a", "a GIF image"),
    (b"II*\x00", "a TIFF image"),
    (b"MM\x00*", "a TIFF image"),
    (b"\x1f\x8b", "a gzip-compressed file"),
    (b"7z\xbc\xaf\x27\x1c", "a 7-Zip archive"),
    (b"Rar!", "a RAR archive"),
    (b"\x7fELF", "a program (ELF executable)"),
    (b"MZ", "a Windows program or library"),
    (b"{\\rtf", "a rich-text (RTF) document"),
    (b"\xff\xfe", "text in UTF-16 (as saved by 'Unicode Text')"),
    (b"\xfe\xff", "text in UTF-16 (as saved by 'Unicode Text')"),
)
#: Signatures of a local file header, an empty archive (end of central directory) and a split
#: archive (PKWARE APPNOTE.TXT 6.3: 4.3.7, 4.3.16, 8.5.3; the last from memory).
_ZIP_MAGIC = (b"PK\x03\x04", b"PK\x05\x06", b"PK\x07\x08")
_CONTROL = re.compile(rb"[\x00-\x08\x0b\x0e-\x1f]")


def describe_bytes(head: bytes) -> str:
    """What the first bytes of a file look like, in words ('a PDF document', 'text')."""
    if not head:
        return "an empty file"
    for magic, words in _MAGIC:
        if head.startswith(magic):
            return words
    stripped = head.lstrip(b"\xef\xbb\xbf \t\r\n")
    if b"\x00" in head or len(_CONTROL.findall(head)) > max(2, len(head) // 100):
        return "binary data (not text, not a workbook)"
    if stripped[:1] == b"<":
        return "an XML or HTML document (such as a web page or an 'XML Spreadsheet 2003')"
    return "text (such as CSV)"


def _head(path: Path, n: int = 8192) -> bytes:
    try:
        with path.open("rb") as fh:
            return fh.read(n)
    except OSError as exc:
        raise FileReadError(f"{path.name}: cannot be opened ({exc.strerror})") from exc


# --- entry points -----------------------------------------------------------------------------


def guard_file(path: Path, limits: Limits | None = None, *, delimiter: str | None = None) -> None:
    """Refuse a file that is unsafe or not what its name says, before any reader opens it.

    Raises FileReadError (wrong kind, damaged, binary, unsafe XML, mixed separators) or
    LimitExceededError (over a limit of ``limits``). ``delimiter`` is the layout's separator
    for text files (None: sniffed as the reader does).
    """
    check_file(path, limits, delimiter=delimiter)


def check_file(path: Path, limits: Limits | None = None, *,
               delimiter: str | None = None) -> list[str]:
    """Same checks as :func:`guard_file`; returns file-level notes (e.g. 'read as Windows-1252')."""
    path = Path(path)
    lim = limits or Limits()
    if not path.is_file():
        raise FileReadError(f"{path.name}: no such file")
    head = _head(path)
    if not head:
        raise FileReadError(f"{path.name}: the file is empty (0 bytes)")
    suffix = path.suffix.lower()
    looks = describe_bytes(head)
    if suffix in WORKBOOK_SUFFIXES:
        if not head.startswith(_ZIP_MAGIC):
            hint = ("rename it to .csv" if looks.startswith("text")
                    else "open it in its own program and save the sheet as .xlsx")
            raise FileReadError(
                f"{path.name}: damaged or not a workbook: the file looks like {looks}, but a "
                f"{suffix} workbook is a ZIP package; {hint}"
            )
        return _check_package(path, suffix, lim)
    if suffix in TEXT_SUFFIXES:
        if head.startswith(_ZIP_MAGIC):
            kind = _package_kind_quiet(path)
            raise FileReadError(
                f"{path.name}: not a text file: it looks like {kind}; give it its own "
                "extension (.xlsx, .xlsm or .ods) and read it as a workbook"
            )
        if "UTF-16" in looks:
            raise FileReadError(
                f"{path.name}: the text is in UTF-16 (as saved by 'Unicode Text'), which is not "
                "read; save the sheet as 'CSV UTF-8' instead"
            )
        if not looks.startswith(("text (", "an XML")):
            raise FileReadError(
                f"{path.name}: not a text file: it looks like {looks}; expected delimited text "
                "(CSV or TSV); export the sheet as CSV or .xlsx"
            )
        return _check_text(path, lim, delimiter)
    return []  # other extensions: the reader names what it accepts


# --- ZIP packages -----------------------------------------------------------------------------

_ZIP_ERRORS = (zipfile.BadZipFile, zipfile.LargeZipFile, OSError, ValueError, EOFError,
               NotImplementedError, struct.error, zlib.error, KeyError, IndexError)
_DAMAGED = "damaged or not a workbook"


def _open_zip(path: Path) -> zipfile.ZipFile:
    try:
        return zipfile.ZipFile(path)
    except _ZIP_ERRORS as exc:
        raise FileReadError(
            f"{path.name}: {_DAMAGED}: its ZIP directory is missing or broken ({exc}); the file "
            "may be truncated (an interrupted download or copy); ask for the file again"
        ) from exc


def _package_kind(zf: zipfile.ZipFile) -> str:
    """'xlsx', 'ods', or words for another kind of ZIP archive."""
    names = set(zf.namelist())
    if "[Content_Types].xml" in names and any(n.startswith("xl/") for n in names):
        return "xlsx"
    if "mimetype" in names:
        info = zf.getinfo("mimetype")
        if info.file_size <= 200:
            mime = zf.read("mimetype").decode("ascii", "replace").strip()
            if mime == "application/vnd.oasis.opendocument.spreadsheet":
                return "ods"
            return f"an OpenDocument file of type {mime!r}, not a spreadsheet"
    if any(n.startswith("word/") for n in names):
        return "a Word document (.docx)"
    if any(n.startswith("ppt/") for n in names):
        return "a PowerPoint presentation (.pptx)"
    return "a ZIP archive that holds no workbook"


def _package_kind_quiet(path: Path) -> str:
    try:
        with zipfile.ZipFile(path) as zf:
            kind = _package_kind(zf)
    except _ZIP_ERRORS:
        return "a damaged ZIP archive"
    return {"xlsx": "an Excel workbook (.xlsx/.xlsm)", "ods": "an OpenDocument spreadsheet (.ods)"
            }.get(kind, kind)


def _check_package(path: Path, suffix: str, lim: Limits) -> list[str]:
    notes: list[str] = []
    with _open_zip(path) as zf:
        try:
            infos = zf.infolist()
            _check_directory(path, infos, lim)
            kind = _package_kind(zf)
        except (LimitExceededError, FileReadError):
            raise
        except _ZIP_ERRORS as exc:
            raise FileReadError(f"{path.name}: {_DAMAGED}: {exc}") from exc
        want = "ods" if suffix == ".ods" else "xlsx"
        if kind != want:
            words = {"xlsx": "an Excel workbook (.xlsx/.xlsm)",
                     "ods": "an OpenDocument spreadsheet (.ods)"}.get(kind, kind)
            raise FileReadError(
                f"{path.name}: not a {suffix} workbook: it looks like {words}"
                + ("; rename it to match" if kind in ("xlsx", "ods") else "")
            )
        if any(i.filename.lower().endswith("vbaproject.bin") for i in infos):
            notes.append(f"{path.name}: the workbook contains macros; they are kept when "
                         "written back and never run")
        for info in infos:
            if info.filename.lower().endswith((".xml", ".rels")):
                _scan_xml(path, zf, info, lim)
    return notes


def _check_directory(path: Path, infos: list[zipfile.ZipInfo], lim: Limits) -> None:
    """Decisions from the central directory alone: nothing is decompressed here."""
    name = path.name
    if not infos:
        raise FileReadError(f"{name}: {_DAMAGED}: the ZIP archive holds no files")
    if len(infos) > lim.max_members:
        raise _too_big(name, f"the package holds {len(infos)} files", "max_members",
                       lim.max_members, " files", "a workbook holds a few dozen parts")
    size = path.stat().st_size
    for info in infos:
        if info.flag_bits & 0x1:
            raise FileReadError(
                f"{name}: the part {info.filename} is encrypted (password-protected); "
                "save the workbook again without a password"
            )
        if info.header_offset + info.compress_size > size:
            raise FileReadError(
                f"{name}: {_DAMAGED}: the part {info.filename} ends beyond the end of the "
                "file (the file is truncated); ask for the file again"
            )
    total = sum(i.file_size for i in infos)
    if total > lim.max_uncompressed_mb * _MB:
        raise _too_big(name, f"the package unpacks to {total / _MB:,.0f} MB",
                       "max_uncompressed_mb", lim.max_uncompressed_mb, " MB",
                       "that is how a 'zip bomb' looks, or the workbook is far larger than an "
                       "inspection sheet")
    for info in infos:
        if info.file_size >= lim.ratio_min_mb * _MB:
            ratio = info.file_size / max(info.compress_size, 1)
            if ratio > lim.max_ratio:
                raise _too_big(
                    name, f"the part {info.filename} is compressed {ratio:,.0f}:1", "max_ratio",
                    lim.max_ratio, ":1", "that is how a 'zip bomb' looks")
    spans = sorted((i.header_offset, i.header_offset + i.compress_size, i.filename)
                   for i in infos)
    for (_, end, first), (start, _, second) in pairwise(spans):
        if start < end:
            raise FileReadError(
                f"{name}: {_DAMAGED}: the parts {first} and {second} overlap in the file "
                "(a crafted or corrupt archive)"
            )


_DIMENSION = re.compile(rb'<(?:\w+:)?dimension\b[^>]*?\sref="([^"]*)"')
_REF_COLUMNS = re.compile(rb' r="([A-Z]{1,3})[0-9]')
_REF_ROWS = re.compile(rb' r="[A-Z]{1,3}([0-9]{1,9})"')
# A declaration can only stand in the prolog for expat, but other parsers are laxer: the whole
# part is also searched for it, in UTF-8 and UTF-16 spellings (bytes.find runs at C speed).
_DECLARATIONS = tuple(word.encode(enc) for word in ("<!DOCTYPE", "<!ENTITY")
                      for enc in ("utf-8", "utf-16-le", "utf-16-be"))
_OVERLAP = max(len(d) for d in _DECLARATIONS)


def _col_index(letters: bytes) -> int:
    n = 0
    for ch in letters:
        n = n * 26 + ch - 64
    return n


class _Extent:
    """Rows, columns and cells of a worksheet part, from bytes scanned chunk by chunk.

    Cells are placed by their ``r`` reference, so the used area runs from A1 to the largest
    row and column referenced (or declared in ``<dimension ref>``), whatever lies between.
    """

    def __init__(self) -> None:
        self.rows = self.cols = self.cells = self.row_tags = 0
        self.dimension: tuple[int, int] | None = None

    def feed(self, data: bytes) -> None:
        if self.dimension is None and b"dimension" in data:
            m = _DIMENSION.search(data)
            rng = parse_range_ref(m[1].decode("ascii", "replace")) if m else None
            if rng is not None:
                self.dimension = (rng[2], rng[3])
        self.cells += data.count(b"<c ") + data.count(b"<c>")
        self.row_tags += data.count(b"<row ") + data.count(b"<row>")
        cols = set(_REF_COLUMNS.findall(data))
        if cols:
            self.cols = max(self.cols, *(_col_index(c) for c in cols))
        rows = _REF_ROWS.findall(data)
        if rows:
            self.rows = max(self.rows, *map(int, set(rows)))


_TABLE_NS = "urn:oasis:names:tc:opendocument:xmlns:table:1.0"
_OFFICE_NS = "urn:oasis:names:tc:opendocument:xmlns:office:1.0"
_CELLS = (f"{_TABLE_NS} table-cell", f"{_TABLE_NS} covered-table-cell")


def _repeat(attrs: dict[str, str], name: str) -> int:
    try:
        return max(1, int(attrs.get(f"{_TABLE_NS} {name}", "1")))
    except ValueError:
        return 1


class _OdsExtent:
    """Used area of each table of an OpenDocument content.xml, repeats included.

    The attributes ``table:number-rows-repeated`` and ``table:number-columns-repeated``
    (OpenDocument 1.2, Part 1, from memory) let a few bytes stand for millions of cells, and
    readers expand repeated cells that hold a value (checked with python-calamine); empty
    repeats, which spreadsheet programs write for trailing formatting, are not counted.
    """

    def __init__(self, check: Any) -> None:
        self.check = check  # called with (table name, rows, columns)
        self.table = ""
        self.row = self.last_row = self.cols = 0
        self.row_repeat = self.col = self.cell_repeat = 0
        self.row_content = self.cell_content = False
        self.depth_in_cell = 0

    def start(self, name: str, attrs: dict[str, str]) -> None:
        if self.depth_in_cell:
            self.depth_in_cell += 1
            self.cell_content = True  # a paragraph or annotation inside the cell
        elif name in _CELLS:
            self.depth_in_cell = 1
            self.cell_repeat = _repeat(attrs, "number-columns-repeated")
            self.cell_content = f"{_OFFICE_NS} value-type" in attrs
        elif name == f"{_TABLE_NS} table-row":
            self.row_repeat = _repeat(attrs, "number-rows-repeated")
            self.col = 0
            self.row_content = False
        elif name == f"{_TABLE_NS} table":
            self.table = attrs.get(f"{_TABLE_NS} name", "")
            self.row = self.last_row = self.cols = 0

    def end(self, name: str) -> None:
        if self.depth_in_cell > 1:
            self.depth_in_cell -= 1
            return
        if self.depth_in_cell == 1:
            self.depth_in_cell = 0
            if self.cell_content:
                self.cols = max(self.cols, self.col + self.cell_repeat)
                self.row_content = True
            self.col += self.cell_repeat
        elif name == f"{_TABLE_NS} table-row":
            if self.row_content:
                self.last_row = self.row + self.row_repeat
                self.check(self.table, self.last_row, self.cols)
            self.row += self.row_repeat


class _RootReached(Exception):
    """The prolog is over: no document type declaration can follow for expat."""


def _scan_xml(path: Path, zf: zipfile.ZipFile, info: zipfile.ZipInfo, lim: Limits) -> None:
    """Refuse DTDs in one XML part (expat on the prolog, byte search on the rest); for a
    worksheet, check its used area. Reads the part in chunks: memory stays bounded."""
    part = info.filename
    name = path.name
    message = (
        f"{name}: the workbook part {part} declares a document type (DOCTYPE/ENTITY); such "
        "declarations can expand to gigabytes ('billion laughs') or fetch other files, and "
        "no spreadsheet program writes them; the file was not opened"
    )

    def refuse(*_args: object) -> None:
        raise FileReadError(message)

    def root(*_args: object) -> None:
        raise _RootReached

    parser = expat.ParserCreate()
    parser.StartDoctypeDeclHandler = refuse
    parser.EntityDeclHandler = refuse
    parser.ExternalEntityRefHandler = refuse  # type: ignore[assignment]
    parser.StartElementHandler = root
    in_prolog = True
    sheet = part.lower().startswith(("xl/worksheets/", "xl/chartsheets/")) and part.endswith(".xml")
    extent = _Extent() if sheet else None
    ods = None
    if part == "content.xml":  # OpenDocument: the tables are here; parsed in full, streaming
        def check(table: str, rows: int, cols: int) -> None:
            e = _Extent()
            e.rows, e.cols = rows, cols
            _check_extent(name, f"table '{table}' of content.xml", e, lim, ods=True)

        tables = _OdsExtent(check)
        ods = expat.ParserCreate(namespace_separator=" ")
        ods.StartDoctypeDeclHandler = refuse
        ods.EntityDeclHandler = refuse
        ods.ExternalEntityRefHandler = refuse  # type: ignore[assignment]
        ods.StartElementHandler = tables.start
        ods.EndElementHandler = tables.end
    tail = b""
    last = b""
    try:
        with zf.open(info) as fh:
            while chunk := fh.read(_CHUNK):
                if in_prolog:
                    try:
                        parser.Parse(chunk, False)
                    except _RootReached:
                        in_prolog = False
                if ods is not None:
                    ods.Parse(chunk, False)
                window = last + chunk
                if any(d in window for d in _DECLARATIONS):
                    refuse()
                last = chunk[-_OVERLAP:]
                if extent is not None:
                    buf = tail + chunk
                    cut = buf.rfind(b">") + 1
                    if cut == 0 and len(buf) > 4 * _CHUNK:
                        cut = len(buf)  # a long text node: nothing of interest split
                    extent.feed(buf[:cut])
                    tail = buf[cut:]
                    _check_extent(name, part, extent, lim)
            if in_prolog:
                with contextlib.suppress(_RootReached):
                    parser.Parse(b"", True)
            if ods is not None:
                ods.Parse(b"", True)
    except (FileReadError, LimitExceededError):
        raise
    except expat.ExpatError as exc:
        raise FileReadError(f"{name}: {_DAMAGED}: the part {part} is not well-formed XML "
                            f"({exc})") from exc
    except _ZIP_ERRORS as exc:
        raise FileReadError(f"{name}: {_DAMAGED}: the part {part} cannot be unpacked "
                            f"({exc})") from exc
    if extent is not None:
        extent.feed(tail)
        _check_extent(name, part, extent, lim)


def _check_extent(name: str, part: str, e: _Extent, lim: Limits, *, ods: bool = False) -> None:
    rows = max(e.rows, e.row_tags, e.dimension[0] if e.dimension else 0)
    cols = max(e.cols, e.dimension[1] if e.dimension else 0)
    where = part if ods else f"the sheet {part}"
    if rows > lim.max_rows:
        raise _too_big(name, f"{where} reaches row {rows:,}", "max_rows", lim.max_rows, " rows",
                       "an inspection sheet this long is unlikely; check for a stray cell far "
                       "below the data")
    if cols > lim.max_columns:
        raise _too_big(name, f"{where} reaches column {cols:,}", "max_columns",
                       lim.max_columns, " columns", "check for a stray cell far to the right")
    area = rows * cols
    if max(area, e.cells) > lim.max_cells:
        raise _too_big(name, f"{where} spans {max(area, e.cells):,} cells ({rows:,} rows × "
                       f"{cols:,} columns)", "max_cells", lim.max_cells, " cells",
                       "every cell of the used area is held in memory; delete stray cells far "
                       "from the data")


# --- text files -------------------------------------------------------------------------------


def _decoding(path: Path, data: _Text | None = None) -> str:
    """'utf-8-sig' or 'cp1252': the first that decodes the whole file, in chunks.

    ``data``: the file's bytes if already read (the text check reads them once for all its
    checks); else the file is read a chunk at a time. Either way the chunks are the same, so
    the same first problem (NUL bytes or undecodable text) is the one reported.
    """
    for enc in ("utf-8-sig", "cp1252"):
        dec = codecs.getincrementaldecoder(enc)()
        try:
            for chunk, nul in _chunks(path, data):
                if nul:
                    raise FileReadError(
                        f"{path.name}: not a text file: it holds NUL bytes, as binary data "
                        "does; expected delimited text (CSV or TSV)")
                dec.decode(chunk)
            dec.decode(b"", True)
        except UnicodeDecodeError:
            continue
        return enc
    raise FileReadError(f"{path.name}: the text encoding cannot be recognised: it is neither "
                        "UTF-8 nor Windows-1252; save it again as 'CSV UTF-8'")


def _chunks(path: Path, data: _Text | None) -> Iterator[tuple[memoryview | bytes, bool]]:
    """The file's bytes ``_CHUNK`` at a time, each with whether it holds a NUL byte: from
    ``data`` (views, no copies; one search finds the first NUL), or read from the file."""
    if data is not None:
        nul = data.find(b"\x00")
        view = memoryview(data)
        for a in range(0, len(data), _CHUNK):
            yield view[a:a + _CHUNK], a <= nul < a + _CHUNK
        return
    with path.open("rb") as fh:
        while chunk := fh.read(_CHUNK):
            yield chunk, b"\x00" in chunk


def _mapped(path: Path) -> _Text:
    """The whole file as bytes without copying it (mapped from the operating system's file
    cache); an empty file as empty bytes, which cannot be mapped."""
    with path.open("rb") as fh:
        if not os.fstat(fh.fileno()).st_size:
            return b""
        return mmap.mmap(fh.fileno(), 0, access=mmap.ACCESS_READ)  # stays valid once closed


def _check_text(path: Path, lim: Limits, delimiter: str | None) -> list[str]:
    """Size, encoding, row count, widths and separators of a text file (see the module)."""
    name = path.name
    size = path.stat().st_size
    if size > lim.max_text_mb * _MB:
        raise _too_big(name, f"the file is {size / _MB:,.0f} MB", "max_text_mb",
                       lim.max_text_mb, " MB", "the whole text is read into memory")
    data = _mapped(path)  # once, for the encoding and the line scan
    try:
        return _check_text_bytes(path, lim, delimiter, data)
    finally:
        if isinstance(data, mmap.mmap):  # unmapped now, not whenever it is collected
            with contextlib.suppress(BufferError):  # a view kept alive by an error's traceback
                data.close()


def _check_text_bytes(path: Path, lim: Limits, delimiter: str | None,
                      data: _Text) -> list[str]:
    """The checks of a text file within the size limit, on its bytes ``data``."""
    name = path.name
    enc = _decoding(path, data)
    notes = [] if enc == "utf-8-sig" else [
        f"{name}: not UTF-8; read as Windows-1252 (Western European)"]
    with path.open("r", encoding=enc, newline="") as fh:
        sample = [ln for _, ln in zip(range(200), fh, strict=False)]
    try:
        if delimiter is None:
            delimiter = ("\t" if path.suffix.lower() == ".tsv"
                         else (sniff_delimiter(sample) or ","))
        widths = Counter(len(r) for r in csv.reader(sample, delimiter=delimiter) if any(r))
    except csv.Error as exc:
        raise _unsplittable(name, None, exc) from exc
    typical = max(widths, key=lambda w: (widths[w], w)) if widths else 0
    scan = _RowScan(typical, delimiter, lim)
    lines = _Lines.read(path, enc, delimiter, data)
    try:
        if lines is None:
            _scan_with_csv(path, enc, scan)
        else:
            _scan_lines(lines, scan)
    except csv.Error as exc:
        raise _unsplittable(name, scan.start, exc) from exc
    n_rows, width, mixed, ragged = scan.n_rows, scan.width, scan.mixed, scan.ragged
    if n_rows > lim.max_rows:
        raise _too_big(name, f"the file has {n_rows:,} rows", "max_rows", lim.max_rows, " rows",
                       "an inspection sheet this long is unlikely")
    if width > lim.max_columns:
        raise _too_big(name, f"a row has {width:,} fields", "max_columns", lim.max_columns,
                       " columns", "check the separator")
    if n_rows * width > lim.max_cells:
        raise _too_big(name, f"the file spans {n_rows * width:,} cells", "max_cells",
                       lim.max_cells, " cells", "every cell is held in memory")
    if mixed:
        rows = ", ".join(str(r) for r, _ in mixed[:10]) + (" …" if len(mixed) > 10 else "")
        words = _DELIM_NAMES.get(mixed[0][1], repr(mixed[0][1]))
        raise FileReadError(
            f"{name}: mixed separators: most rows have {typical} fields separated by "
            f"{_DELIM_NAMES.get(delimiter, repr(delimiter))}, but rows {rows} split into "
            f"{typical} fields only by {words}; save the file again with one separator, or "
            "name the separator in the layout file (delimiter = ...)"
        )
    if ragged:
        rows = ", ".join(str(r) for r in ragged[:10]) + (" …" if len(ragged) > 10 else "")
        notes.append(f"{name}: rows {rows} have another number of fields than the "
                     f"{typical} of most rows; check them for a separator inside unquoted text")
    return notes


class _RowScan:
    """Row count, widest row and the first odd rows of a text file, fed row by row or in runs.

    A row whose field count differs from the ``typical`` one is named as split by another
    separator (``mixed``) or as ragged; the first eleven of each are kept (enough to name).
    Scanning stops at the first row over the row or column limit.
    """

    def __init__(self, typical: int, delimiter: str, lim: Limits) -> None:
        self.typical, self.delimiter, self.lim = typical, delimiter, lim
        self.n_rows = self.width = 0
        self.start = 1  # 1-based line where the current row starts
        self.mixed: list[tuple[int, str]] = []
        self.ragged: list[int] = []
        self.stopped = False

    def _full(self) -> bool:
        return len(self.mixed) > 10 and len(self.ragged) > 10

    def row(self, row: list[str], start: int) -> None:
        """One row split by the csv module, starting on line ``start``."""
        self.n_rows += 1
        self.width = max(self.width, len(row))
        if self.n_rows > self.lim.max_rows or self.width > self.lim.max_columns:
            self.stopped = True  # reported by the caller; no need to read on
            return
        if self.typical > 1 and len(row) != self.typical:
            self._odd(row, start)

    def run(self, widths: np.ndarray, first_line: int, row_of: Callable[[int], list[str]]) -> None:
        """A run of rows of one line each: field counts ``widths``, the first on 0-based line
        ``first_line``; ``row_of(k)`` splits the k-th row of the run (odd rows only)."""
        if not len(widths):
            return
        lim = self.lim
        rows = self.n_rows + 1 + np.arange(len(widths))
        widest = np.maximum(np.maximum.accumulate(widths), self.width)
        over = np.flatnonzero((rows > lim.max_rows) | (widest > lim.max_columns))
        end = int(over[0]) + 1 if len(over) else len(widths)
        if self.typical > 1 and not self._full():
            for k in np.flatnonzero(widths[:end] != self.typical):
                if k == end - 1 and len(over):
                    break
                self._odd(row_of(int(k)), first_line + int(k) + 1)
                if self._full():
                    break
        self.n_rows = int(rows[end - 1])
        self.width = int(widest[end - 1])
        self.stopped = bool(len(over))

    def _odd(self, row: list[str], start: int) -> None:
        if any(f.strip() for f in row):
            other = _other_delimiter(self.delimiter.join(row), self.delimiter, self.typical)
            if other is not None:
                self.mixed.append((start, other))
            elif len(row) > 1:  # a one-field line is a title or a remark
                self.ragged.append(start)
            del self.mixed[11:], self.ragged[11:]  # enough to name; memory stays bounded


def _scan_with_csv(path: Path, enc: str, scan: _RowScan) -> None:
    """Every row through the csv module (separators that are not one ASCII character)."""
    with path.open("r", encoding=enc, newline="") as fh:
        reader = csv.reader(fh, delimiter=scan.delimiter)
        for row in reader:
            scan.row(row, scan.start)
            if scan.stopped:
                return
            scan.start = reader.line_num + 1


_SPLIT_CHUNK = 16 * _MB  # bytes compared at a time: temporary masks stay this small
_QUOTE_CHUNK = _MB  # bytes at a time where quotes are looked up: they stay in cache
_QUOTE_STEP = 1 << 20  # quotes checked at a time
_BLOCK = 256 * 1024  # bytes of whole lines the fast scan takes at a time: they stay in cache
_EMPTY = np.zeros(0, dtype=np.int64)


@dataclass
class _Lines:
    """Physical lines of a text file as byte offsets, with separators counted per line.

    Lines end as Python's universal newlines end them (LF, CR LF or a lone CR), so they are
    the lines the csv module sees. The separator and the quote are ASCII, and both encodings
    read here (UTF-8, Windows-1252) keep ASCII bytes for ASCII characters only, so counting
    bytes counts characters.
    """

    data: _Text
    enc: str
    starts: np.ndarray  # first byte of each line
    stops: np.ndarray  # end of each line's text, before its line break
    nexts: np.ndarray  # first byte after each line's line break
    seps: np.ndarray  # separators on each line
    quoted: np.ndarray  # lines holding a quote character, ascending
    skip: int = 0  # bytes of ``data`` before the first line (a byte order mark)

    @classmethod
    def read(cls, path: Path, enc: str, delimiter: str, data: _Text | None = None, *,
             exact: bool = False) -> _Lines | None:
        """None where counting cannot stand for the csv module (a line longer than the
        csv field limit, or a separator that is not one ASCII character).

        ``data``: the file's bytes if already read. The lines are found block by block
        (:func:`_fast_counts`); ``exact`` looks at every quote of the file instead, the way
        the fast scan falls back to for a block it cannot decide (kept as its reference).
        """
        if len(delimiter) != 1 or not delimiter.isascii() or delimiter in "\r\n\"":
            return None
        if data is None:
            data = path.read_bytes()
        bom = codecs.BOM_UTF8
        skip = len(bom) if enc == "utf-8-sig" and data[:len(bom)] == bom else 0
        arr = np.frombuffer(data, dtype=np.uint8)[skip:]  # a view: no copy of the text
        n = len(arr)
        if n == 0:
            return cls(data, enc, _EMPTY, _EMPTY, _EMPTY, _EMPTY, _EMPTY, skip)
        byte = ord(delimiter)
        has_cr = data.find(b"\r") >= 0
        if exact:
            breaks, seps, quoted = _exact_counts(arr, has_cr, byte)
        else:
            breaks, seps, quoted = _fast_counts(arr, data, skip, byte, has_cr)
        nexts = np.minimum(breaks + 1, n)  # a last line without a line break "breaks" at n
        starts = np.concatenate(([0], nexts[:-1])).astype(np.int64)
        stops = breaks
        if has_cr:  # a CR LF line ends before its CR
            crlf = (breaks < n) & (breaks > starts)
            crlf[crlf] = arr[breaks[crlf] - 1] == ord("\r")
            stops = breaks - crlf
        if int((stops - starts).max(initial=0)) > csv.field_size_limit():
            return None
        return cls(data, enc, starts, stops, nexts, seps, quoted, skip)

    def text(self, i: int) -> str:
        """Line i with its line break, decoded."""
        return self.data[self.skip + self.starts[i]:self.skip + self.nexts[i]].decode(self.enc)


def _line_breaks(arr: np.ndarray, has_cr: bool) -> np.ndarray:
    """Where each line ends (its LF, its lone CR, or ``len(arr)`` for a last line without
    a line break), ascending."""
    n = len(arr)
    lf = _where(arr, ord("\n"))
    if has_cr:
        cr = _where(arr, ord("\r"))
        lone = cr[(cr + 1 >= n) | (arr[np.minimum(cr + 1, n - 1)] != ord("\n"))]
        breaks = np.union1d(lf, lone)
    else:
        breaks = lf
    if not len(breaks) or breaks[-1] + 1 < n:
        breaks = np.append(breaks, n)  # a last line without a line break
    return breaks.astype(np.int64)


def _exact_counts(arr: np.ndarray, has_cr: bool,
                  delimiter: int) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Line breaks, separators per line and the lines the csv module must split, from every
    quote of ``arr`` (whole lines): exact for any text, but slow where most fields are quoted.
    """
    breaks = _line_breaks(arr, has_cr)
    quotes = _where(arr, ord('"'))
    quoted, odd = _quoted_lines(arr, quotes, breaks, delimiter)
    return breaks, _per_line(arr, delimiter, breaks, quotes, odd), quoted


def _fast_counts(arr: np.ndarray, data: _Text, skip: int, delimiter: int,
                 has_cr: bool) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """As :func:`_exact_counts`, a block of whole lines (about ``_BLOCK`` bytes) at a time.

    Work goes with the separators and line breaks, not with the quotes: a block where every
    quote is the first or the last byte of a field and every field starting with a quote
    ends with one is counted from its separators alone (:func:`_block_counts`); any other
    block goes through :func:`_exact_counts`. Every line is judged on its own bytes either
    way, so the blocks give the same answer as the whole text at once.
    """
    n = len(arr)
    breaks, seps, quoted = [], [], []
    a = lines = 0
    scratch = (np.empty(0, dtype=bool), np.empty(0, dtype=bool))
    while a < n:
        b = _block_end(data, skip, a + _BLOCK, n, has_cr)
        if len(scratch[0]) < b - a + 1:  # a block ends a line: it may run past _BLOCK
            scratch = (np.empty(2 * (b - a) + 1, dtype=bool), np.empty(2 * (b - a) + 1, dtype=bool))
        brk, sep, quo = _block_counts(arr, a, b, delimiter, has_cr, scratch)
        breaks.append(brk + a)
        seps.append(sep)
        quoted.append(quo + lines)
        lines += len(brk)
        a = b
    return (np.concatenate(breaks), np.concatenate(seps).astype(np.int64),
            np.concatenate(quoted).astype(np.int64))


def _block_end(data: _Text, skip: int, at: int, n: int, has_cr: bool) -> int:
    """End of the block reaching byte ``at``: just after the first line break from there on.

    An LF always ends a line; a CR with no LF after it anywhere is a lone CR, which does too.
    """
    end = data.find(b"\n", skip + at)
    if end < 0 and has_cr:
        end = data.find(b"\r", skip + at)
    return n if end < 0 else end - skip + 1


def _block_counts(arr: np.ndarray, a: int, b: int, delimiter: int, has_cr: bool,
                  scratch: tuple[np.ndarray, np.ndarray]
                  ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Line breaks (from ``a``), separators per line and lines for the csv module (from the
    block's first line) of the whole lines ``arr[a:b]``; ``scratch``: two boolean arrays at
    least as long as the block, reused from block to block (no fresh memory each time).

    The bytes next to each separator and line break tell whether the fields between them
    open and close their quotes plainly (:func:`_plain_quotes`); then no separator is inside
    quotes and no line needs the csv module.
    """
    n = len(arr)
    if a == 0 or b == n:  # the neighbours beyond the text: no quote, no line feed
        tail = [ord("\n")] if b == n and arr[n - 1] not in (ord("\n"), ord("\r")) else []
        pad = np.concatenate(([0], arr[a:b], tail, [0])).astype(np.uint8)
        blk, before, after = pad[1:-1], pad[:-2], pad[2:]  # tail: a last line without a break
    else:
        blk, before, after = arr[a:b], arr[a - 1:b - 1], arr[a + 1:b + 1]
    edge, same = scratch[0][:len(blk)], scratch[1][:len(blk)]
    np.equal(blk, delimiter, out=edge)
    edge |= np.equal(blk, ord("\n"), out=same)
    if has_cr:
        edge |= np.equal(blk, ord("\r"), out=same)
    at = np.flatnonzero(edge)  # separators and line-break bytes, ascending
    byte, next_byte = blk[at], after[at]
    ends = byte == ord("\n")
    if has_cr:
        ends |= (byte == ord("\r")) & (next_byte != ord("\n"))
    line_ends = np.flatnonzero(ends)  # index in ``at`` of each line's break
    seps = np.empty(len(line_ends), dtype=np.int64)  # boundaries between line breaks
    seps[:1] = line_ends[:1]
    np.subtract(line_ends[1:], line_ends[:-1] + 1, out=seps[1:])
    if has_cr:  # the CR of a CR LF stands just before its LF and is no separator
        inner = (byte == ord("\r")) & ~ends
        seps -= inner[np.maximum(line_ends - 1, 0)] & (line_ends > 0)
    breaks = at[line_ends]
    n_quotes = int(np.count_nonzero(np.equal(blk, ord('"'), out=same)))
    if n_quotes and not _plain_quotes(blk, at, before[at] == ord('"'),
                                      next_byte == ord('"'), n_quotes):
        part = arr[a:b]
        quotes = _where(part, ord('"'))
        quoted, odd = _quoted_lines(part, quotes, breaks, delimiter)
        return breaks, _per_line(part, delimiter, breaks, quotes, odd), quoted
    return breaks, seps, _EMPTY


def _plain_quotes(blk: np.ndarray, at: np.ndarray, closes: np.ndarray, opens: np.ndarray,
                  n_quotes: int) -> bool:
    """Whether every quote of the block opens or closes a field the plainest way.

    ``at``: the separators and line-break bytes, the last one ending the block; ``closes``:
    a quote stands just before each; ``opens``: one just after. Field k ends at ``at[k]``. It
    holds: each field starts with a quote exactly when it ends with another, and no quote
    stands elsewhere (the quotes at field edges add up to all quotes, none a field of its
    own). Then, as for the csv module, each quoted field opens after a separator or a line
    break and closes before one, and no separator is inside quotes: counting is exact.
    """
    first = bool(blk[0] == ord('"'))
    if first != closes[0] or not np.array_equal(opens[:-1], closes[1:]):
        return False  # some field starts with a quote but does not end with one, or back
    lone = (first and at[0] == 1) or bool(np.any(opens[:-1] & (at[1:] - at[:-1] == 2)))
    return not lone and 2 * int(np.count_nonzero(closes)) == n_quotes


def _where(arr: np.ndarray, byte: int) -> np.ndarray:
    """Positions of one byte value, compared a chunk at a time."""
    parts = [np.flatnonzero(arr[a:a + _SPLIT_CHUNK] == byte) + a
             for a in range(0, len(arr), _SPLIT_CHUNK)]
    return np.concatenate(parts) if parts else np.zeros(0, dtype=np.int64)


def _per_line(arr: np.ndarray, byte: int, breaks: np.ndarray,
              quotes: np.ndarray | None = None, odd: bool = False) -> np.ndarray:
    """Count of one byte value on each line (lines end at ``breaks``), chunk by chunk.

    With ``quotes``, an occurrence after an odd number of quotes on its line (inside a quoted
    field) is not counted; ``odd``: some line holds an odd number of quotes.
    """
    if quotes is not None and odd:  # quotes before each line's first byte
        first = np.searchsorted(quotes, np.concatenate(([0], breaks[:-1] + 1)))
    before = np.empty(len(breaks), dtype=np.int64)  # occurrences before each line's break
    seen = 0
    step = _SPLIT_CHUNK if quotes is None or not len(quotes) else _QUOTE_CHUNK
    for a in range(0, len(arr), step):
        b = min(a + step, len(arr))
        pos = np.flatnonzero(arr[a:b] == byte) + a
        if quotes is not None and len(quotes):
            q0, q1 = np.searchsorted(quotes, (a, b))
            inside = np.searchsorted(quotes[q0:q1], pos) + q0
            if odd:
                inside -= first[np.searchsorted(breaks, pos)]
            pos = pos[(inside & 1) == 0]
        lo, hi = np.searchsorted(breaks, (a, b))
        before[lo:hi] = seen + np.searchsorted(pos, breaks[lo:hi])
        seen += len(pos)
    before[np.searchsorted(breaks, len(arr)):] = seen
    return np.diff(before, prepend=0)


def _quoted_lines(arr: np.ndarray, quotes: np.ndarray, breaks: np.ndarray,
                  delimiter: int) -> tuple[np.ndarray, bool]:
    """Lines the csv module must split (ascending), and whether a line has an odd number of
    quotes.

    A line is split by counting when each of its quotes opens a field (after a separator, a
    line break or another quote) or closes one (before a separator, a line break or another
    quote) in turn: then, as in the csv module's default dialect (doubled quotes inside a
    quoted field), the separators that count are those after an even number of quotes.
    """
    if not len(quotes):
        return np.zeros(0, dtype=np.int64), False
    per_line = np.diff(np.searchsorted(quotes, breaks), prepend=0)
    odd_lines = np.flatnonzero(per_line & 1)
    edge = np.zeros(256, dtype=bool)
    edge[[delimiter, ord('"'), ord("\n"), ord("\r")]] = True
    closing = np.zeros(len(quotes), dtype=bool)
    closing[1::2] = True
    if len(odd_lines):  # the quote count of later lines starts odd: flip their roles
        flips = np.zeros(len(quotes) + 1, dtype=np.uint8)
        np.bitwise_xor.at(flips, np.cumsum(per_line)[odd_lines], 1)
        closing ^= np.bitwise_xor.accumulate(flips)[:-1].astype(bool)
    bad = []
    step = _QUOTE_STEP
    for a in range(0, len(quotes), step):
        q = quotes[a:a + step]
        # the byte before an opening quote, after a closing one; clipped at the ends of the
        # file to the quote itself, which counts as an edge
        near = q - 1
        near += 2 * closing[a:a + step]
        bad.append(q[~edge[arr.take(near, mode="clip")]])
    lines = np.union1d(np.searchsorted(breaks, np.concatenate(bad)), odd_lines)
    return lines.astype(np.int64), bool(len(odd_lines))


class _Feed:
    """Lines for a csv reader from any line on; the reader takes only what one row needs."""

    def __init__(self, lines: _Lines) -> None:
        self.lines, self.pos = lines, 0

    def __iter__(self) -> _Feed:
        return self

    def __next__(self) -> str:
        if self.pos >= len(self.lines.starts):
            raise StopIteration
        self.pos += 1
        return self.lines.text(self.pos - 1)


def _scan_lines(lines: _Lines, scan: _RowScan) -> None:
    """Rows of lines without quotes counted in runs; a row starting on a line with a quote
    goes through the csv module (a quoted field may hold separators and line breaks)."""
    total = len(lines.starts)
    feed = _Feed(lines)
    reader = csv.reader(feed, delimiter=scan.delimiter)
    empty = lines.stops == lines.starts
    pos = 0
    while pos < total and not scan.stopped:
        k = int(np.searchsorted(lines.quoted, pos))
        stop = int(lines.quoted[k]) if k < len(lines.quoted) else total
        if stop > pos:
            widths = np.where(empty[pos:stop], 0, lines.seps[pos:stop] + 1)

            def row_of(j: int, base: int = pos) -> list[str]:
                return next(csv.reader([lines.text(base + j)], delimiter=scan.delimiter))

            scan.run(widths, pos, row_of)
            pos = stop
            continue
        scan.start = pos + 1
        feed.pos = pos
        scan.row(next(reader, []), scan.start)
        pos = feed.pos


def _unsplittable(name: str, row: int | None, exc: csv.Error) -> FileReadError:
    where = f"{name} › row {row}" if row else name
    hint = (f"a field is longer than {csv.field_size_limit():,} characters (an unclosed quote?)"
            if "field limit" in str(exc) else str(exc))
    near = "in that row" if row else "in the first lines"
    return FileReadError(f"{where}: the text cannot be split into fields: {hint}; check the "
                         f"quotes {near}")


_DELIM_NAMES = {";": "semicolons", ",": "commas", "\t": "tabs", "|": "vertical bars"}


def _other_delimiter(line: str, used: str, width: int) -> str | None:
    """Another separator that splits the line into the file's usual number of fields."""
    for d in (";", ",", "\t", "|"):
        if d != used and len(next(csv.reader([line], delimiter=d))) == width:
            return d
    return None

