"""Builders of hostile and broken input files, written by the tests into a temporary folder.

Nothing here is committed as a binary: every file is made on the fly. Zip archives are written
byte by byte following the ZIP file format specification (PKWARE APPNOTE.TXT 6.3: local file
header 4.3.7, central directory header 4.3.12, end of central directory record 4.3.16), so the
tests can make archives no well-behaved library would write (lying sizes, huge members).
All part numbers, people and values are invented.
"""

from __future__ import annotations

import struct
import zlib
from pathlib import Path

import xlsxwriter

__all__ = [
    "BILLION_LAUGHS",
    "billion_laughs_xlsx",
    "deflate",
    "deflate_zeros",
    "doctype_in_part",
    "far_cell_xlsx",
    "good_xlsx",
    "members_of",
    "mixed_delimiter_csv",
    "no_sheets_xlsx",
    "ods_repeated",
    "raw_zip",
    "zip_bomb_xlsx",
]

_MIB = 1024 * 1024

# The classic entity-expansion document (XML 1.0, 4.2 entity declarations; the attack is the
# one defusedxml's documentation calls "billion laughs"): 10 levels of 10 references, 10^9 "lol"s.
BILLION_LAUGHS = (
    '<?xml version="1.0"?>\n<!DOCTYPE lolz [\n <!ENTITY lol "lol">\n'
    + "".join(
        f' <!ENTITY lol{i} "{("&lol" + (str(i - 1) if i > 1 else "") + ";") * 10}">\n'
        for i in range(1, 10)
    )
    + ']>\n<worksheet xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main">'
    "<sheetData><row r=\"1\"><c r=\"A1\" t=\"inlineStr\"><is><t>&lol9;</t></is></c></row>"
    "</sheetData></worksheet>"
)

HEADER = ["Part", "Characteristic", "Nominal", "Lower limit", "Upper limit", "Reading",
          "Part temp (°C)"]
ROWS = [
    ["PX-100", "D1", 25.0, 24.98, 25.02, 25.004, 20.4],
    ["PX-100", "D2", 12.0, 11.95, 12.05, 12.010, 20.5],
    ["PX-101", "D1", 25.0, 24.98, 25.02, 24.996, 20.6],
]


def good_xlsx(path: Path, rows: list[list[object]] | None = None) -> Path:
    """A small ordinary inspection workbook (one sheet 'Readings')."""
    wb = xlsxwriter.Workbook(path)
    ws = wb.add_worksheet("Readings")
    ws.write_row(0, 0, HEADER)
    for r, row in enumerate(rows or ROWS, start=1):
        for c, v in enumerate(row):
            if isinstance(v, str):
                ws.write_string(r, c, v)  # text stays text, even '=...'
            else:
                ws.write(r, c, v)
    wb.close()
    return path


def members_of(path: Path) -> dict[str, bytes]:
    import zipfile

    with zipfile.ZipFile(path) as zf:
        return {n: zf.read(n) for n in zf.namelist()}


def raw_zip(path: Path, members: list[tuple[str, bytes, int, int]]) -> Path:
    """Write a zip from (name, deflated bytes, CRC-32, uncompressed size) as given, unchecked."""
    out = bytearray()
    central = bytearray()
    for name, data, crc, size in members:
        fn = name.encode()
        offset = len(out)
        # local file header (APPNOTE 4.3.7): version 20, no flags, method 8 (deflate)
        out += struct.pack("<IHHHHHIIIHH", 0x04034B50, 20, 0, 8, 0, 0x21, crc, len(data),
                           size, len(fn), 0) + fn + data
        central += struct.pack("<IHHHHHHIIIHHHHHII", 0x02014B50, 20, 20, 0, 8, 0, 0x21, crc,
                               len(data), size, len(fn), 0, 0, 0, 0, 0, offset) + fn
    start = len(out)
    out += central
    out += struct.pack("<IHHHHIIH", 0x06054B50, 0, 0, len(members), len(members), len(central),
                       start, 0)
    path.write_bytes(bytes(out))
    return path


def deflate(data: bytes) -> tuple[bytes, int, int]:
    co = zlib.compressobj(9, zlib.DEFLATED, -15)  # raw deflate, as zip stores it
    return co.compress(data) + co.flush(), zlib.crc32(data), len(data)


def deflate_zeros(mib: int) -> tuple[bytes, int, int]:
    """Raw deflate of ``mib`` MiB of zero bytes, without ever holding them in memory.

    Each MiB is compressed once and ended with a full flush (RFC 1951 stored-block alignment,
    zlib Z_FULL_FLUSH), which resets the history: the compressed block is then the same for
    every further MiB and is simply repeated. CRC-32 is computed MiB by MiB.
    """
    zeros = bytes(_MIB)
    co = zlib.compressobj(9, zlib.DEFLATED, -15)
    first = co.compress(zeros) + co.flush(zlib.Z_FULL_FLUSH)
    again = co.compress(zeros) + co.flush(zlib.Z_FULL_FLUSH)
    end = co.flush()
    crc = 0
    for _ in range(mib):
        crc = zlib.crc32(zeros, crc)
    return first + again * (mib - 1) + end, crc, mib * _MIB


def zip_bomb_xlsx(path: Path, mib: int = 3584) -> Path:
    """A workbook-looking package whose one sheet unpacks to ``mib`` MiB (default 3.5 GiB)."""
    parts = members_of(good_xlsx(path.with_name("bomb-template.xlsx")))
    members = [(n, *deflate(b)) for n, b in parts.items() if n != "xl/worksheets/sheet1.xml"]
    members.append(("xl/worksheets/sheet1.xml", *deflate_zeros(mib)))
    return raw_zip(path, members)


def doctype_in_part(path: Path, part: str, xml: str) -> Path:
    """A good workbook with one part replaced by ``xml`` (e.g. a DOCTYPE with entities)."""
    parts = members_of(good_xlsx(path.with_name("template-" + path.name)))
    parts[part] = xml.encode("utf-8")
    return raw_zip(path, [(n, *deflate(b)) for n, b in parts.items()])


def billion_laughs_xlsx(path: Path) -> Path:
    """A workbook whose sheet is the billion-laughs document."""
    return doctype_in_part(path, "xl/worksheets/sheet1.xml", BILLION_LAUGHS)


def no_sheets_xlsx(path: Path) -> Path:
    """A well-formed workbook package whose workbook part lists no sheets."""
    parts = members_of(good_xlsx(path.with_name("template-" + path.name)))
    parts["xl/workbook.xml"] = (
        b'<?xml version="1.0" encoding="UTF-8" standalone="yes"?>\n'
        b'<workbook xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main" '
        b'xmlns:r="http://schemas.openxmlformats.org/officeDocument/2006/relationships">'
        b"<sheets/></workbook>"
    )
    return raw_zip(path, [(n, *deflate(b)) for n, b in parts.items()])


def far_cell_xlsx(path: Path, ref: str = "XFD1048576") -> Path:
    """A tiny workbook with one header row and one stray cell far away (at ``ref``)."""
    wb = xlsxwriter.Workbook(path)
    ws = wb.add_worksheet("Readings")
    ws.write_row(0, 0, HEADER)
    ws.write(ref, "x")
    wb.close()
    return path


def mixed_delimiter_csv(path: Path) -> Path:
    """Semicolon-separated, except rows 4 and 6 which a second program wrote with commas."""
    lines = [
        "Part;Characteristic;Nominal;Lower limit;Upper limit;Reading",
        "PX-200;D1;25;24.98;25.02;25.004",
        "PX-200;D2;12;11.95;12.05;12.010",
        "PX-201,D1,25,24.98,25.02,24.996",
        "PX-201;D2;12;11.95;12.05;12.001",
        "PX-202,D1,25,24.98,25.02,25.010",
    ]
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return path


def ods_repeated(path: Path, rows: int, cols: int, *, filled: bool = True) -> Path:
    """An OpenDocument spreadsheet whose few bytes stand for ``rows`` × ``cols`` cells.

    Under a header row, one ``table:table-row`` repeated ``rows`` times holds one cell repeated
    ``cols`` times: with a value (``filled``) or empty, as programs write trailing formatting.
    """
    import zipfile

    ns = ('xmlns:office="urn:oasis:names:tc:opendocument:xmlns:office:1.0" '
          'xmlns:table="urn:oasis:names:tc:opendocument:xmlns:table:1.0" '
          'xmlns:text="urn:oasis:names:tc:opendocument:xmlns:text:1.0"')
    cell = (f'<table:table-cell table:number-columns-repeated="{cols}" '
            'office:value-type="string"><text:p>x</text:p></table:table-cell>' if filled else
            f'<table:table-cell table:number-columns-repeated="{cols}"/>')
    header = "".join(f'<table:table-cell office:value-type="string"><text:p>{h}</text:p>'
                     "</table:table-cell>" for h in HEADER)
    content = (
        f'<?xml version="1.0" encoding="UTF-8"?><office:document-content {ns} '
        'office:version="1.2"><office:body><office:spreadsheet><table:table table:name='
        f'"Readings"><table:table-row>{header}</table:table-row><table:table-row '
        f'table:number-rows-repeated="{rows}">{cell}</table:table-row></table:table>'
        "</office:spreadsheet></office:body></office:document-content>")
    manifest = (
        '<?xml version="1.0" encoding="UTF-8"?><manifest:manifest xmlns:manifest="urn:oasis:'
        'names:tc:opendocument:xmlns:manifest:1.0" manifest:version="1.2"><manifest:file-entry '
        'manifest:full-path="/" manifest:media-type="application/vnd.oasis.opendocument.'
        'spreadsheet"/></manifest:manifest>')
    with zipfile.ZipFile(path, "w") as z:
        z.writestr("mimetype", "application/vnd.oasis.opendocument.spreadsheet",
                   compress_type=zipfile.ZIP_STORED)
        z.writestr("content.xml", content, compress_type=zipfile.ZIP_DEFLATED)
        z.writestr("META-INF/manifest.xml", manifest, compress_type=zipfile.ZIP_DEFLATED)
    return path
