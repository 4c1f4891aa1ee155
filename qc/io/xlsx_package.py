"""An xlsx/xlsm package read as zip members, edited part by part, written back.

Why at this level: re-saving a workbook through a spreadsheet library drops what it does not
model (images, charts, comments' drawings, macros, extensions). Here every member is kept as
bytes and only the few parts that must change are replaced.

Package structure follows ECMA-376 Part 2 (Open Packaging Conventions): ``[Content_Types].xml``
maps parts to content types, ``_rels/*.rels`` files hold relationships. The input is untrusted:
small parts are parsed with defusedxml, big worksheet parts are checked with a streaming expat
pass that refuses any document type declaration (hence any entity declaration).
"""

from __future__ import annotations

import posixpath
import queue
import re
import threading
import zipfile
from collections.abc import Callable, Iterable, Iterator
from dataclasses import dataclass
from pathlib import Path
from typing import IO
from xml.etree.ElementTree import Element
from xml.parsers import expat

from defusedxml import DefusedXmlException
from defusedxml.ElementTree import fromstring as _defused_fromstring

from qc.errors import FileReadError, LimitExceededError

NS_MAIN = "http://schemas.openxmlformats.org/spreadsheetml/2006/main"
NS_DOC_REL = "http://schemas.openxmlformats.org/officeDocument/2006/relationships"
NS_PKG_REL = "http://schemas.openxmlformats.org/package/2006/relationships"
NS_CT = "http://schemas.openxmlformats.org/package/2006/content-types"

REL_OFFICE_DOCUMENT = NS_DOC_REL + "/officeDocument"
REL_WORKSHEET = NS_DOC_REL + "/worksheet"
REL_STYLES = NS_DOC_REL + "/styles"
REL_TABLE = NS_DOC_REL + "/table"
REL_PIVOT_TABLE = NS_DOC_REL + "/pivotTable"
REL_EXTENDED_PROPERTIES = NS_DOC_REL + "/extended-properties"
REL_VBA_PROJECT = "http://schemas.microsoft.com/office/2006/relationships/vbaProject"

CT_WORKSHEET = "application/vnd.openxmlformats-officedocument.spreadsheetml.worksheet+xml"
CT_STYLES = "application/vnd.openxmlformats-officedocument.spreadsheetml.styles+xml"
CT_RELS = "application/vnd.openxmlformats-package.relationships+xml"
CT_VBA_PROJECT = "application/vnd.ms-office.vbaProject"
CT_MAIN_XLSX = "application/vnd.openxmlformats-officedocument.spreadsheetml.sheet.main+xml"
CT_MAIN_XLSM = "application/vnd.ms-excel.sheet.macroEnabled.main+xml"
#: Content type of the workbook part for each output extension we write.
MAIN_CONTENT_TYPE = {".xlsx": CT_MAIN_XLSX, ".xlsm": CT_MAIN_XLSM}

#: Guard against zip bombs: total uncompressed bytes and the worst member compression ratio.
MAX_UNCOMPRESSED_BYTES = 2 * 1024**3
MAX_COMPRESSION_RATIO = 1000
MIN_RATIO_CHECK_BYTES = 10 * 1024**2
FAST_COMPRESSION_BYTES = 4 * 1024**2
#: Deflate levels (zlib, 1 fastest … 9 smallest): big new or edited parts are written fast
#: (level 1: about three times quicker than 6, files about 20 % larger); small ones at 6.
FAST_LEVEL = 1
SMALL_LEVEL = 6
#: Chunks of streamed parts built ahead of the zip writer (each up to some tens of MB).
_AHEAD = 2

#: A part produced in pieces when the package is written (a generator of bytes).
Chunks = Callable[[], Iterable[bytes | memoryview]]

_MAX_COLUMN = 16384
_REF_RE = re.compile(r"^\$?([A-Za-z]{1,3})\$?(\d+)$")


def column_letter(index: int) -> str:
    """Spreadsheet column letters of a 1-based column index (1 → A, 27 → AA)."""
    if not 1 <= index <= _MAX_COLUMN:
        raise ValueError(f"column index {index} outside 1..{_MAX_COLUMN}")
    letters = ""
    while index:
        index, rem = divmod(index - 1, 26)
        letters = chr(65 + rem) + letters
    return letters


def column_index(letters: str) -> int:
    """1-based column index of spreadsheet column letters (A → 1, AA → 27)."""
    n = 0
    for ch in letters.upper():
        n = n * 26 + (ord(ch) - 64)
    return n


def parse_cell_ref(ref: str) -> tuple[int, int]:
    """(row, column), both 1-based, of a cell reference like ``B7`` or ``$B$7``."""
    m = _REF_RE.match(ref.strip())
    if not m:
        raise ValueError(f"not a cell reference: {ref!r}")
    return int(m.group(2)), column_index(m.group(1))


def parse_range_ref(ref: str) -> tuple[int, int, int, int] | None:
    """(first row, first column, last row, last column) of ``A1:D9`` or ``A1``; None if unreadable.

    Whole-column (``A:C``) and whole-row (``1:3``) forms are widened to the sheet's edges.
    """
    ref = ref.strip().split(" ")[0]
    parts = ref.split(":")
    try:
        if len(parts) == 1:
            r, c = parse_cell_ref(parts[0])
            return r, c, r, c
        a, b = (p.replace("$", "") for p in parts[:2])
        if a.isalpha() and b.isalpha():
            return 1, column_index(a), 1048576, column_index(b)
        if a.isdigit() and b.isdigit():
            return int(a), 1, int(b), _MAX_COLUMN
        r1, c1 = parse_cell_ref(a)
        r2, c2 = parse_cell_ref(b)
        return min(r1, r2), min(c1, c2), max(r1, r2), max(c1, c2)
    except ValueError:
        return None


def parse_xml(data: bytes, part: str) -> Element:
    """Parse a small package part safely (no DTD, no entities, no external references)."""
    try:
        return _defused_fromstring(data, forbid_dtd=True)
    except (DefusedXmlException, SyntaxError) as exc:
        raise FileReadError(
            f"the workbook part {part} is not safe, well-formed XML ({exc})"
        ) from exc


def check_xml_stream(data: bytes, part: str) -> None:
    """Check a (possibly large) part is well-formed XML without a DTD, in one expat pass.

    No tree is built, so this stays fast on a sheet of 100 000 rows.
    """

    def refuse(*_args: object) -> None:
        raise FileReadError(f"the workbook part {part} declares a DTD or entities; refused")

    parser = expat.ParserCreate()
    parser.StartDoctypeDeclHandler = refuse
    parser.EntityDeclHandler = refuse
    parser.ExternalEntityRefHandler = refuse  # type: ignore[assignment]
    try:
        parser.Parse(data, True)
    except expat.ExpatError as exc:
        raise FileReadError(f"the workbook part {part} is not well-formed XML ({exc})") from exc


def decode_xml(data: bytes) -> str:
    """Text of an XML part: UTF-8 unless a UTF-16 byte order mark says otherwise."""
    if data[:2] in (b"\xff\xfe", b"\xfe\xff"):
        return data.decode("utf-16")
    return data.decode("utf-8-sig")


def encode_xml(text: str) -> bytes:
    """UTF-8 bytes of an XML part, with the declaration (if any) saying UTF-8."""
    if text.startswith("<?xml"):
        end = text.find("?>", 0, 400)
        decl = re.sub(r"encoding\s*=\s*(['\"])[^'\"]*\1", 'encoding="UTF-8"', text[:end])
        text = decl + text[end:]
    return text.encode("utf-8")


def escape_attr(value: str) -> str:
    """Escape text for a double-quoted XML attribute."""
    return (
        value.replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;").replace('"', "&quot;")
    )


def rels_path(part: str) -> str:
    """The relationships part of ``part``: ``xl/a.xml`` → ``xl/_rels/a.xml.rels``."""
    folder, name = posixpath.split(part)
    return posixpath.join(folder, "_rels", name + ".rels")


@dataclass(frozen=True)
class Relationship:
    """One relationship of a part: id, type URI, target as written, and target mode."""

    id: str
    type: str
    target: str
    external: bool = False


class Package:
    """The members of a zip package, in their original order, as bytes.

    ``replace`` and ``add`` mark members as edited; ``write`` copies the others unchanged.
    """

    def __init__(self, infos: list[zipfile.ZipInfo], data: dict[str, bytes]) -> None:
        self._infos = infos
        self._data = data
        self.edited: set[str] = set()
        self.removed: set[str] = set()
        self._added: list[str] = []
        self._streams: dict[str, Chunks] = {}
        self._zip64: set[str] = set()
        self._defaults: dict[str, str] = {}
        self._overrides: dict[str, str] = {}
        self._read_content_types()

    @classmethod
    def read(cls, path: Path) -> Package:
        """Read every member of the package at ``path`` into memory, with safety limits."""
        if not path.is_file():
            raise FileReadError(f"{path} does not exist or is not a file")
        try:
            with zipfile.ZipFile(path) as zf:
                infos = zf.infolist()
                names = [i.filename for i in infos]
                if len(set(names)) != len(names):
                    raise FileReadError(f"{path.name} has duplicate parts; refused as ambiguous")
                total = sum(i.file_size for i in infos)
                if total > MAX_UNCOMPRESSED_BYTES:
                    raise LimitExceededError(
                        f"{path.name} unpacks to {total} bytes, more than the limit of "
                        f"{MAX_UNCOMPRESSED_BYTES} bytes"
                    )
                for i in infos:
                    big = i.file_size > MIN_RATIO_CHECK_BYTES
                    if big and i.file_size > MAX_COMPRESSION_RATIO * max(i.compress_size, 1):
                        raise LimitExceededError(
                            f"{path.name}: part {i.filename} is compressed more than "
                            f"{MAX_COMPRESSION_RATIO}:1; refused as a possible zip bomb"
                        )
                data = {i.filename: zf.read(i) for i in infos}
        except (zipfile.BadZipFile, OSError, EOFError) as exc:
            raise FileReadError(
                f"{path.name} is not a readable xlsx/xlsm workbook ({exc})"
            ) from exc
        if "[Content_Types].xml" not in data:
            raise FileReadError(f"{path.name} is not an xlsx/xlsm workbook: no [Content_Types].xml")
        return cls(infos, data)

    @classmethod
    def new(cls, parts: dict[str, bytes]) -> Package:
        """A package of ``parts`` (name → bytes), in order; one must be ``[Content_Types].xml``."""
        infos = []
        for name in parts:
            info = zipfile.ZipInfo(name, date_time=(1980, 1, 1, 0, 0, 0))
            info.compress_type = zipfile.ZIP_DEFLATED
            info.external_attr = 0o600 << 16
            infos.append(info)
        return cls(infos, dict(parts))

    # -- members -----------------------------------------------------------------------------
    def names(self) -> list[str]:
        """Member names, original order then added ones, without removed ones."""
        names = [i.filename for i in self._infos] + self._added
        return [n for n in names if n not in self.removed]

    def has(self, part: str) -> bool:
        return part in self._data and part not in self.removed

    def get(self, part: str) -> bytes:
        if part in self._streams:
            return b"".join(bytes(c) for c in self._streams[part]())
        return self._data[part]

    def replace(self, part: str, data: bytes) -> None:
        """Set new bytes for an existing member (marks it edited)."""
        if part not in self._data:
            raise KeyError(part)
        self._data[part] = data
        self._streams.pop(part, None)
        self.edited.add(part)

    def replace_stream(self, part: str, chunks: Chunks) -> None:
        """As :meth:`replace`, with the new bytes yielded piece by piece at :meth:`write`."""
        self.replace(part, b"")
        self._streams[part] = chunks

    def add(self, part: str, data: bytes, content_type: str | None = None) -> None:
        """Add a new member, with an Override content type when given."""
        if part in self._data:
            raise KeyError(f"part exists: {part}")
        self._data[part] = data
        self._added.append(part)
        self.edited.add(part)
        if content_type:
            self._overrides["/" + part] = content_type

    def add_stream(self, part: str, chunks: Chunks, content_type: str | None = None) -> None:
        """Add a new member whose bytes ``chunks()`` yields piece by piece at :meth:`write`.

        A big part (a sheet of a million rows) then never has to be held whole in memory.
        """
        self.add(part, b"", content_type)
        self._streams[part] = chunks

    def remove(self, part: str) -> None:
        """Drop a member and its Override content type."""
        self.removed.add(part)
        self._overrides = {
            k: v for k, v in self._overrides.items() if k.lower() != "/" + part.lower()
        }

    def free_name(self, pattern: str) -> str:
        """First ``pattern.format(n)`` (n = 1, 2, …) that is not a member, case-insensitively."""
        taken = {n.lower() for n in self._data}
        n = 1
        while pattern.format(n).lower() in taken:
            n += 1
        return pattern.format(n)

    # -- content types -----------------------------------------------------------------------
    def _read_content_types(self) -> None:
        root = parse_xml(self._data["[Content_Types].xml"], "[Content_Types].xml")
        for el in root:
            tag = el.tag.rsplit("}", 1)[-1]
            if tag == "Default":
                self._defaults[el.get("Extension", "").lower()] = el.get("ContentType", "")
            elif tag == "Override":
                self._overrides[el.get("PartName", "")] = el.get("ContentType", "")

    def content_type(self, part: str) -> str | None:
        """Content type of ``part`` (Override first, then Default by extension)."""
        key = "/" + part.lower()
        for name, ct in self._overrides.items():
            if name.lower() == key:
                return ct
        ext = posixpath.splitext(part)[1].lstrip(".").lower()
        return self._defaults.get(ext)

    def set_content_type(self, part: str, content_type: str) -> None:
        key = "/" + part.lower()
        for name in list(self._overrides):
            if name.lower() == key:
                del self._overrides[name]
        self._overrides["/" + part] = content_type

    def drop_default(self, extension: str) -> None:
        self._defaults.pop(extension.lower(), None)

    def defaults(self) -> dict[str, str]:
        return dict(self._defaults)

    def _content_types_xml(self) -> bytes:
        lines = [f'<Types xmlns="{NS_CT}">']
        lines += [
            f'<Default Extension="{escape_attr(e)}" ContentType="{escape_attr(c)}"/>'
            for e, c in self._defaults.items()
        ]
        lines += [
            f'<Override PartName="{escape_attr(p)}" ContentType="{escape_attr(c)}"/>'
            for p, c in self._overrides.items()
        ]
        lines.append("</Types>")
        decl = '<?xml version="1.0" encoding="UTF-8" standalone="yes"?>\n'
        return (decl + "".join(lines)).encode("utf-8")

    # -- relationships -----------------------------------------------------------------------
    def rels(self, part: str) -> list[Relationship]:
        """Relationships of ``part`` ('' for the package), empty if it has none."""
        path = "_rels/.rels" if part == "" else rels_path(part)
        if not self.has(path):
            return []
        root = parse_xml(self._data[path], path)
        return [
            Relationship(
                el.get("Id", ""),
                el.get("Type", ""),
                el.get("Target", ""),
                el.get("TargetMode", "") == "External",
            )
            for el in root
            if el.tag.rsplit("}", 1)[-1] == "Relationship"
        ]

    def set_rels(self, part: str, rels: Iterable[Relationship]) -> None:
        """Write the relationships part of ``part`` anew from ``rels``."""
        path = "_rels/.rels" if part == "" else rels_path(part)
        body = "".join(
            f'<Relationship Id="{escape_attr(r.id)}" Type="{escape_attr(r.type)}" '
            f'Target="{escape_attr(r.target)}"'
            + (' TargetMode="External"' if r.external else "")
            + "/>"
            for r in rels
        )
        xml = (
            '<?xml version="1.0" encoding="UTF-8" standalone="yes"?>\n'
            f'<Relationships xmlns="{NS_PKG_REL}">{body}</Relationships>'
        ).encode()
        if self.has(path):
            self.replace(path, xml)
        else:
            self.add(path, xml)

    @staticmethod
    def resolve(source: str, target: str) -> str:
        """Member name a relationship target of ``source`` points to."""
        if target.startswith("/"):
            return target.lstrip("/")
        return posixpath.normpath(posixpath.join(posixpath.dirname(source), target))

    def main_part(self) -> str:
        """The workbook part, found through the package relationships."""
        for rel in self.rels(""):
            if rel.type == REL_OFFICE_DOCUMENT and not rel.external:
                return self.resolve("", rel.target)
        if any(rel.type.endswith("/officeDocument") for rel in self.rels("")):
            raise FileReadError(
                "the workbook is saved as Strict Open XML, which cannot be written back; "
                "save it as an ordinary Excel workbook (.xlsx) and try again"
            )
        raise FileReadError("the file has no workbook part; is it an xlsx/xlsm workbook?")

    # -- writing -----------------------------------------------------------------------------
    def write(self, fileobj: IO[bytes]) -> None:
        """Write the package: unchanged members byte for byte, edited ones as set.

        A part produced in pieces is written without ZIP64 extensions unless it turns out
        larger than plain zip fields hold (2 GiB); then the package is written again with
        them for that part, so ordinary outputs stay readable by every spreadsheet program.
        """
        start = fileobj.tell()
        try:
            self._write(fileobj)
        except _NeedsZip64 as big:
            self._zip64.add(big.part)
            fileobj.seek(start)
            fileobj.truncate()
            self._write(fileobj)

    def _write(self, fileobj: IO[bytes]) -> None:
        self._data["[Content_Types].xml"] = self._content_types_xml()
        self.edited.add("[Content_Types].xml")
        infos = {i.filename: i for i in self._infos}
        names = self.names()
        ahead = _Prefetch([(n, self._streams[n]) for n in names if n in self._streams])
        with ahead, zipfile.ZipFile(fileobj, "w", zipfile.ZIP_DEFLATED) as zf:
            for name in names:
                old = infos.get(name)
                if old is None:
                    info = zipfile.ZipInfo(name, date_time=(1980, 1, 1, 0, 0, 0))
                    info.external_attr = 0o600 << 16
                else:
                    # a fresh header keeps name, date and mode; sizes and CRC are recomputed
                    info = zipfile.ZipInfo(name, date_time=old.date_time)
                    info.external_attr = old.external_attr
                    info.create_system = old.create_system
                keep = old is not None and name not in self.edited
                stored = keep and old.compress_type == zipfile.ZIP_STORED  # type: ignore[union-attr]
                info.compress_type = zipfile.ZIP_STORED if stored else zipfile.ZIP_DEFLATED
                if name in self._streams:
                    info._compresslevel = FAST_LEVEL  # type: ignore[attr-defined]
                    zip64 = name in self._zip64
                    try:
                        with zf.open(info, "w", force_zip64=zip64) as dst:
                            for chunk in ahead.chunks(name):
                                dst.write(chunk)
                    except RuntimeError as exc:
                        if zip64 or "force_zip64" not in str(exc):
                            raise
                        raise _NeedsZip64(name) from exc
                    continue
                data = self._data[name]
                level = FAST_LEVEL if len(data) > FAST_COMPRESSION_BYTES else SMALL_LEVEL
                zf.writestr(info, data, compresslevel=level)


class _NeedsZip64(Exception):
    """A streamed part outgrew plain zip fields; the package is written again with ZIP64."""

    def __init__(self, part: str) -> None:
        super().__init__(part)
        self.part = part


_END = object()


class _Prefetch:
    """The streamed parts' chunks, made in order on a second thread while parts are written.

    Building the next chunk (Arrow kernels) then overlaps compressing the last one (zlib), and
    the next part's first chunks are built while the part before it is still being
    compressed: both release the interpreter lock. At most :data:`_AHEAD` chunks wait.
    Leaving the ``with`` block stops the thread, also after an error on either side; an error
    while building is raised where the chunks are taken.
    """

    def __init__(self, parts: list[tuple[str, Chunks]]) -> None:
        self._parts = parts
        self._queue: queue.Queue[object] = queue.Queue(maxsize=_AHEAD)
        self._stop = threading.Event()
        self._thread = threading.Thread(target=self._run, name="qc-part-builder", daemon=True)

    def __enter__(self) -> _Prefetch:
        if self._parts:
            self._thread.start()
        return self

    def __exit__(self, *_exc: object) -> None:
        self._stop.set()  # the builder stops within a chunk (it never waits on a full queue)
        if self._parts:
            self._thread.join()

    def _put(self, item: object) -> bool:
        """Hand ``item`` over, waiting for room; False once the writer has stopped."""
        while not self._stop.is_set():
            try:
                self._queue.put(item, timeout=0.05)
                return True
            except queue.Full:
                continue
        return False

    def _run(self) -> None:
        for name, chunks in self._parts:
            try:
                for chunk in chunks():
                    if not self._put((name, memoryview(chunk))):
                        return
            except BaseException as exc:  # re-raised on the writing thread
                self._put((name, exc))
                return
            if not self._put((name, _END)):
                return

    def chunks(self, name: str) -> Iterator[memoryview]:
        """The chunks of part ``name``, which must be the next streamed part."""
        while True:
            part, item = self._queue.get()  # type: ignore[misc]
            if part != name:
                raise RuntimeError(f"streamed parts out of order: {part} before {name}")
            if item is _END:
                return
            if isinstance(item, BaseException):
                raise item
            yield item  # type: ignore[misc]
