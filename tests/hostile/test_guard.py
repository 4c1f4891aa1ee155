"""guard_file refuses hostile and broken files quickly, in bounded memory, with clear messages.

Each file is built by the test (tests/hostile/builders.py). File signatures used to build the
wrong-kind cases: ZIP local header "PK\\x03\\x04" (PKWARE APPNOTE.TXT 6.3, 4.3.7); PDF "%PDF-"
(ISO 32000-1:2008, 7.5.2); PNG signature 89 50 4E 47 0D 0A 1A 0A (PNG specification, ISO/IEC
15948:2004, 5.2); compound file D0 CF 11 E0 A1 B1 1A E1 ([MS-CFB] 2.2, header signature).
"""

from __future__ import annotations

import random
import time
import tracemalloc
import zipfile
import zlib
from collections.abc import Callable
from pathlib import Path

import pytest

from qc.errors import FileReadError, LimitExceededError, QcError
from qc.io import read_inspection
from qc.io.guard import OPTIONS, Limits, check_file, describe_bytes, guard_file
from tests.hostile import builders as b

PEAK_LIMIT = 30 * 1024 * 1024  # bytes: "some tens of MB"
TIME_LIMIT = 3.0  # seconds


def _refused(call: Callable[[], object]) -> tuple[QcError, float, int]:
    """Run a guard call that must fail; return the error, seconds taken and peak bytes."""
    tracemalloc.start()
    t0 = time.perf_counter()
    try:
        call()
    except QcError as exc:
        err = exc
    else:  # pragma: no cover - reported as a failure below
        err = None
    seconds = time.perf_counter() - t0
    peak = tracemalloc.get_traced_memory()[1]
    tracemalloc.stop()
    assert err is not None, "the file was accepted"
    return err, seconds, peak


def test_zip_bomb_refused_from_directory_without_unpacking(tmp_path: Path) -> None:
    bomb = b.zip_bomb_xlsx(tmp_path / "bomb.xlsx", mib=3584)  # 3.5 GiB unpacked
    assert bomb.stat().st_size < 8 * 1024 * 1024  # the bomb itself is small
    with zipfile.ZipFile(bomb) as zf:  # the stdlib reads the directory as the guard sees it
        assert zf.getinfo("xl/worksheets/sheet1.xml").file_size == 3584 * 1024 * 1024
    err, seconds, peak = _refused(lambda: guard_file(bomb))
    assert isinstance(err, LimitExceededError)
    assert str(err) == (
        "bomb.xlsx: the package unpacks to 3,584 MB, more than the limit of 500 MB; that is how "
        "a 'zip bomb' looks, or the workbook is far larger than an inspection sheet. The file "
        "was not opened. If you trust it, raise the limit with --max-uncompressed-mb")
    assert seconds < TIME_LIMIT
    assert peak < PEAK_LIMIT


def test_deflate_builder_is_real_deflate() -> None:
    # the bomb's member is genuine DEFLATE: 4 MiB built the same way inflate to 4 MiB of zeros
    data, crc, size = b.deflate_zeros(4)
    out = zlib.decompress(data, -15)
    assert out == bytes(4 * 1024 * 1024)
    assert zlib.crc32(out) == crc and size == len(out)


def test_compression_ratio_over_limit(tmp_path: Path) -> None:
    # 8 MiB of zeros: deflate reaches about 1000:1 (RFC 1951 block limits, from memory)
    parts = [("[Content_Types].xml", *b.deflate(b"<Types/>")),
             ("xl/workbook.xml", *b.deflate(b"<workbook/>")),
             ("xl/media/fill.bin", *b.deflate_zeros(8))]
    p = b.raw_zip(tmp_path / "dense.xlsx", parts)
    err, seconds, _ = _refused(lambda: guard_file(p, Limits().replace(max_ratio=100)))
    assert isinstance(err, LimitExceededError)
    msg = str(err)
    assert msg.startswith("dense.xlsx: the part xl/media/fill.bin is compressed ")
    assert msg.endswith(":1, more than the limit of 100:1; that is how a 'zip bomb' looks. The "
                        "file was not opened. If you trust it, raise the limit with --max-ratio")
    assert seconds < TIME_LIMIT


def test_too_many_members(tmp_path: Path) -> None:
    p = b.good_xlsx(tmp_path / "book.xlsx")
    n = len(zipfile.ZipFile(p).namelist())
    err, _, _ = _refused(lambda: guard_file(p, Limits().replace(max_members=3)))
    assert isinstance(err, LimitExceededError)
    assert str(err) == (
        f"book.xlsx: the package holds {n} files, more than the limit of 3 files; a workbook "
        "holds a few dozen parts. The file was not opened. If you trust it, raise the limit "
        "with --max-members")


def test_billion_laughs_refused_in_bounded_memory(tmp_path: Path) -> None:
    p = b.billion_laughs_xlsx(tmp_path / "laughs.xlsx")
    err, seconds, peak = _refused(lambda: guard_file(p))
    assert isinstance(err, FileReadError)
    assert str(err) == (
        "laughs.xlsx: the workbook part xl/worksheets/sheet1.xml declares a document type "
        "(DOCTYPE/ENTITY); such declarations can expand to gigabytes ('billion laughs') or "
        "fetch other files, and no spreadsheet program writes them; the file was not opened")
    assert seconds < TIME_LIMIT
    assert peak < PEAK_LIMIT


@pytest.mark.parametrize("part", ["[Content_Types].xml", "xl/workbook.xml", "xl/styles.xml",
                                  "xl/_rels/workbook.xml.rels"])
def test_external_entity_in_any_part(tmp_path: Path, part: str) -> None:
    xml = ('<?xml version="1.0"?><!DOCTYPE x [<!ENTITY e SYSTEM "http://example.invalid/x">]>'
           "<x>&e;</x>")
    p = b.doctype_in_part(tmp_path / "ext.xlsx", part, xml)
    err, _, _ = _refused(lambda: guard_file(p))
    assert isinstance(err, FileReadError)
    assert str(err).startswith(f"ext.xlsx: the workbook part {part} declares a document type")


def test_doctype_after_the_root_and_in_utf16_is_found(tmp_path: Path) -> None:
    # expat rejects a late DOCTYPE as malformed; laxer parsers would not: the byte scan finds it
    late = '<?xml version="1.0"?><sst><si><t>a</t></si><!DOCTYPE x [<!ENTITY y "z">]></sst>'
    p = b.doctype_in_part(tmp_path / "late.xlsx", "xl/sharedStrings.xml", late)
    err, _, _ = _refused(lambda: guard_file(p))
    assert "declares a document type" in str(err)
    u16 = '<?xml version="1.0" encoding="UTF-16"?><!DOCTYPE x [<!ENTITY y "z">]><x>&y;</x>'
    parts = b.members_of(b.good_xlsx(tmp_path / "g.xlsx"))
    parts["xl/styles.xml"] = u16.encode("utf-16")
    p2 = b.raw_zip(tmp_path / "u16.xlsx", [(n, *b.deflate(v)) for n, v in parts.items()])
    err2, _, _ = _refused(lambda: guard_file(p2))
    assert str(err2).startswith("u16.xlsx: the workbook part xl/styles.xml declares a document")


def test_truncated_zip(tmp_path: Path) -> None:
    data = b.good_xlsx(tmp_path / "good.xlsx").read_bytes()
    p = tmp_path / "half.xlsx"
    p.write_bytes(data[: len(data) // 2])
    err, _, _ = _refused(lambda: guard_file(p))
    assert isinstance(err, FileReadError)
    assert str(err) == (
        "half.xlsx: damaged or not a workbook: its ZIP directory is missing or broken (File is "
        "not a zip file); the file may be truncated (an interrupted download or copy); ask for "
        "the file again")


def test_corrupt_central_directory(tmp_path: Path) -> None:
    data = b.good_xlsx(tmp_path / "good.xlsx").read_bytes()
    i = data.rfind(b"PK\x01\x02")  # last central directory header (APPNOTE 4.3.12)
    p = tmp_path / "cd.xlsx"
    p.write_bytes(data[:i] + b"XX" + data[i + 2:])
    err, _, _ = _refused(lambda: guard_file(p))
    assert str(err).startswith("cd.xlsx: damaged or not a workbook: its ZIP directory is "
                               "missing or broken (")


def test_member_beyond_end_of_file(tmp_path: Path) -> None:
    data, crc, size = b.deflate(b"<worksheet/>" * 100)
    p = b.raw_zip(tmp_path / "short.xlsx", [("[Content_Types].xml", *b.deflate(b"<T/>")),
                                            ("xl/worksheets/sheet1.xml", data, crc, size)])
    raw = bytearray(p.read_bytes())
    # claim a compressed size far larger than the file (central directory, APPNOTE 4.3.12)
    cd = raw.rfind(b"PK\x01\x02")
    raw[cd + 20: cd + 24] = (10**6).to_bytes(4, "little")
    p.write_bytes(bytes(raw))
    err, _, _ = _refused(lambda: guard_file(p))
    assert str(err) == (
        "short.xlsx: damaged or not a workbook: the part xl/worksheets/sheet1.xml ends beyond "
        "the end of the file (the file is truncated); ask for the file again")


def test_stray_far_cell_over_cell_limit(tmp_path: Path) -> None:
    p = b.far_cell_xlsx(tmp_path / "far.xlsx")
    err, seconds, peak = _refused(lambda: guard_file(p))
    assert isinstance(err, LimitExceededError)
    assert str(err) == (
        "far.xlsx: the sheet xl/worksheets/sheet1.xml spans 17,179,869,184 cells (1,048,576 "
        "rows × 16,384 columns), more than the limit of 20,000,000 cells; every cell of the used "
        "area is held in memory; delete stray cells far from the data. The file was not opened. "
        "If you trust it, raise the limit with --max-cells")
    assert seconds < TIME_LIMIT and peak < PEAK_LIMIT


def test_dimension_over_row_and_column_limits(tmp_path: Path) -> None:
    p = b.far_cell_xlsx(tmp_path / "rows.xlsx", ref="C5001")
    err, _, _ = _refused(lambda: guard_file(p, Limits().replace(max_rows=5000)))
    assert str(err) == (
        "rows.xlsx: the sheet xl/worksheets/sheet1.xml reaches row 5,001, more than the limit "
        "of 5,000 rows; an inspection sheet this long is unlikely; check for a stray cell far "
        "below the data. The file was not opened. If you trust it, raise the limit with "
        "--max-rows")
    p = b.far_cell_xlsx(tmp_path / "cols.xlsx", ref="AA1")  # column 27
    err, _, _ = _refused(lambda: guard_file(p, Limits().replace(max_columns=26)))
    assert str(err).startswith("cols.xlsx: the sheet xl/worksheets/sheet1.xml reaches column "
                               "27, more than the limit of 26 columns;")
    assert str(err).endswith("--max-columns")


def test_good_files_pass(tmp_path: Path) -> None:
    assert check_file(b.good_xlsx(tmp_path / "good.xlsx")) == []
    csv = tmp_path / "good.csv"
    csv.write_text("Part;Nominal;Reading\nPX-1;25;25,001\nPX-2;25;24,999\n", encoding="utf-8")
    assert check_file(csv) == []


def test_macro_workbook_noted_never_run(tmp_path: Path) -> None:
    parts = b.members_of(b.good_xlsx(tmp_path / "good.xlsx"))
    plain = tmp_path / "plain.xlsm"
    b.raw_zip(plain, [(n, *b.deflate(v)) for n, v in parts.items()])
    assert check_file(plain) == []  # an .xlsm name alone holds no macro
    parts["xl/vbaProject.bin"] = b"\xd0\xcf\x11\xe0 invented bytes, never run"
    p = b.raw_zip(tmp_path / "macros.xlsm", [(n, *b.deflate(v)) for n, v in parts.items()])
    assert check_file(p) == [
        "macros.xlsm: the workbook contains macros; they are kept when written back and never run"]


@pytest.mark.parametrize(("name", "content", "expected"), [
    ("text.xlsx", b"Part;Reading\nA;1\n",
     "text.xlsx: damaged or not a workbook: the file looks like text (such as CSV), but a .xlsx "
     "workbook is a ZIP package; rename it to .csv"),
    ("scan.xlsx", b"%PDF-1.7\n%\xe2\xe3\xcf\xd3\n1 0 obj",
     "scan.xlsx: damaged or not a workbook: the file looks like a PDF document, but a .xlsx "
     "workbook is a ZIP package; open it in its own program and save the sheet as .xlsx"),
    ("old.xlsm", b"\xd0\xcf\x11\xe0\xa1\xb1\x1a\xe1" + bytes(500),
     "old.xlsm: damaged or not a workbook: the file looks like an older binary Office file "
     "(.xls) or a password-protected workbook, but a .xlsm workbook is a ZIP package; open it in "
     "its own program and save the sheet as .xlsx"),
    ("photo.csv", b"\x89PNG\r\n\x1a\n\x00\x00\x00\rIHDR",
     "photo.csv: not a text file: it looks like a PNG image; expected delimited text (CSV or "
     "TSV); export the sheet as CSV or .xlsx"),
    ("empty.csv", b"", "empty.csv: the file is empty (0 bytes)"),
    ("empty.xlsx", b"", "empty.xlsx: the file is empty (0 bytes)"),
    ("unicode.csv", "Part\tReading\nA\t1\n".encode("utf-16"),
     "unicode.csv: the text is in UTF-16 (as saved by 'Unicode Text'), which is not read; save "
     "the sheet as 'CSV UTF-8' instead"),
    ("bad.csv", b"Part;Reading\nA\x81;1\n",  # 0x81 is undefined in Windows-1252 (from memory)
     "bad.csv: the text encoding cannot be recognised: it is neither UTF-8 nor Windows-1252; "
     "save it again as 'CSV UTF-8'"),
])
def test_wrong_kind_named(tmp_path: Path, name: str, content: bytes, expected: str) -> None:
    p = tmp_path / name
    p.write_bytes(content)
    err, _, _ = _refused(lambda: guard_file(p))
    assert isinstance(err, FileReadError)
    assert str(err) == expected


def test_workbook_renamed_csv(tmp_path: Path) -> None:
    p = tmp_path / "results.csv"
    p.write_bytes(b.good_xlsx(tmp_path / "src.xlsx").read_bytes())
    err, _, _ = _refused(lambda: guard_file(p))
    assert str(err) == (
        "results.csv: not a text file: it looks like an Excel workbook (.xlsx/.xlsm); give it "
        "its own extension (.xlsx, .xlsm or .ods) and read it as a workbook")


def test_binary_junk(tmp_path: Path) -> None:
    rnd = random.Random(20260105)  # fixed seed: the same junk every run
    junk = bytes(rnd.randrange(256) for _ in range(4096))
    for name in ("junk.csv", "junk.xlsx"):
        p = tmp_path / name
        p.write_bytes(junk if not junk.startswith(b"PK") else b"x" + junk)
        err, seconds, _ = _refused(lambda p=p: guard_file(p))
        assert isinstance(err, FileReadError)
        assert "binary data (not text, not a workbook)" in str(err)
        assert seconds < TIME_LIMIT


def test_nul_bytes_later_in_a_text_file(tmp_path: Path) -> None:
    p = tmp_path / "late.csv"
    p.write_bytes(b"Part;Reading\n" + b"PX-1;25.0\n" * 2000 + b"\x00\x00\x00")
    err, _, _ = _refused(lambda: guard_file(p))
    assert str(err) == ("late.csv: not a text file: it holds NUL bytes, as binary data does; "
                        "expected delimited text (CSV or TSV)")


def test_windows_1252_text_noted(tmp_path: Path) -> None:
    p = tmp_path / "west.csv"
    p.write_bytes("Part;Reading;Temp\nPX-1;25.0;20 °C\n".encode("cp1252"))
    assert check_file(p) == ["west.csv: not UTF-8; read as Windows-1252 (Western European)"]


def test_mixed_delimiters_name_the_rows(tmp_path: Path) -> None:
    p = b.mixed_delimiter_csv(tmp_path / "mixed.csv")
    err, _, _ = _refused(lambda: guard_file(p))
    assert str(err) == (
        "mixed.csv: mixed separators: most rows have 6 fields separated by semicolons, but rows "
        "4, 6 split into 6 fields only by commas; save the file again with one separator, or "
        "name the separator in the layout file (delimiter = ...)")


def test_ragged_rows_are_noted(tmp_path: Path) -> None:
    p = tmp_path / "ragged.csv"
    p.write_text("Part;Nominal;Reading;Note\nPX-1;25;25.001;ok\nPX-2;25;24.999;re-run; twice\n"
                 "PX-3;25;25.000;ok\n", encoding="utf-8")
    assert check_file(p) == [
        "ragged.csv: rows 3 have another number of fields than the 4 of most rows; check them "
        "for a separator inside unquoted text"]


def test_text_limits(tmp_path: Path) -> None:
    p = tmp_path / "long.csv"
    p.write_text("Part;Reading\n" + "PX;1\n" * 50, encoding="utf-8")
    err, _, _ = _refused(lambda: guard_file(p, Limits().replace(max_rows=10)))
    assert str(err) == (
        "long.csv: the file has 11 rows, more than the limit of 10 rows; an inspection sheet "
        "this long is unlikely. The file was not opened. If you trust it, raise the limit with "
        "--max-rows")
    err, _, _ = _refused(lambda: guard_file(p, Limits().replace(max_text_mb=0.0001)))
    assert isinstance(err, LimitExceededError)
    assert str(err).endswith("raise the limit with --max-text-mb")


def test_no_sheets_and_no_header_reach_the_reader(tmp_path: Path) -> None:
    # the guard passes well-formed but useless workbooks; the reader names the problem
    ns = b.no_sheets_xlsx(tmp_path / "nosheets.xlsx")
    guard_file(ns)
    with pytest.raises(FileReadError) as e:
        read_inspection(ns)
    assert str(e.value) == "nosheets.xlsx: the workbook has no sheets"
    nh = b.good_xlsx(tmp_path / "nohead.xlsx", rows=[["just", "words"]])
    # replace the header by prose: no recognisable column name
    import xlsxwriter

    wb = xlsxwriter.Workbook(nh)
    ws = wb.add_worksheet("Readings")
    ws.write_row(0, 0, ["shopping", "list"])
    ws.write_row(1, 0, ["bread", "milk"])
    wb.close()
    guard_file(nh)
    with pytest.raises(FileReadError) as e:
        read_inspection(nh)
    assert str(e.value) == (
        "nohead.xlsx › Readings: no header row found in the first 60 rows; expected column names "
        "such as 'Part', 'Characteristic', 'Nominal', 'Tolerance', 'Reading' (or name your "
        "headers in a layout file)")


def test_describe_bytes_and_options() -> None:
    assert describe_bytes(b"%PDF-1.4") == "a PDF document"
    assert describe_bytes(b"PK\x03\x04rest") == "a ZIP archive"
    assert describe_bytes(b"<html><body>") == (
        "an XML or HTML document (such as a web page or an 'XML Spreadsheet 2003')")
    assert describe_bytes("Part;Größe\n".encode()) == "text (such as CSV)"
    # every limit names the option the lead wires on the command line
    assert OPTIONS["max_cells"] == "--max-cells"
    assert OPTIONS["max_uncompressed_mb"] == "--max-uncompressed-mb"
    assert OPTIONS["max_rows"] == "--max-rows"
    assert OPTIONS["max_columns"] == "--max-columns"
    assert OPTIONS["max_ratio"] == "--max-ratio"


def test_limits_defaults_and_sources() -> None:
    import tomllib
    from importlib import resources

    doc = tomllib.loads(resources.files("qc").joinpath("data", "limits.toml").read_text("utf-8"))
    for section in ("limits", "plausibility"):
        for name, entry in doc[section].items():
            assert entry["source"].strip(), f"{section}.{name} has no source"
    lim = Limits()
    # Office Open XML sheet limits, ECMA-376 Part 1 (from memory): 2^20 rows, 2^14 columns
    assert lim.max_rows == 2**20 and lim.max_columns == 2**14
    assert lim.max_ratio == 1000  # same as the write-back guard (docs/output.md)


def test_ods_repeated_cells_over_limit(tmp_path: Path) -> None:
    p = b.ods_repeated(tmp_path / "rep.ods", rows=1_000_000, cols=1000)
    assert p.stat().st_size < 10_000  # a few bytes standing for 10^9 cells
    err, seconds, peak = _refused(lambda: guard_file(p))
    assert isinstance(err, LimitExceededError)
    assert str(err) == (
        "rep.ods: table 'Readings' of content.xml spans 1,000,001,000 cells (1,000,001 rows × "
        "1,000 columns), more than the limit of 20,000,000 cells; every cell of the used area "
        "is held in memory; delete stray cells far from the data. The file was not opened. If "
        "you trust it, raise the limit with --max-cells")
    assert seconds < TIME_LIMIT and peak < PEAK_LIMIT


def test_ods_empty_repeats_pass_and_read(tmp_path: Path) -> None:
    # trailing empty repeats (as spreadsheet programs write them) are not expanded by the reader
    p = b.ods_repeated(tmp_path / "tail.ods", rows=1_048_575, cols=1024, filled=False)
    assert check_file(p) == []
    t0 = time.perf_counter()
    # a header and no data: one clear message, at once
    with pytest.raises(FileReadError) as e:
        read_inspection(p)
    assert str(e.value) == "tail.ods › Readings: no data rows under the header in row 1"
    assert time.perf_counter() - t0 < TIME_LIMIT


def test_ods_renamed_xlsx(tmp_path: Path) -> None:
    p = b.ods_repeated(tmp_path / "sheet.xlsx", rows=1, cols=1)
    err, _, _ = _refused(lambda: guard_file(p))
    assert str(err) == ("sheet.xlsx: not a .xlsx workbook: it looks like an OpenDocument "
                        "spreadsheet (.ods); rename it to match")


def test_unclosed_quote_is_a_file_error(tmp_path: Path) -> None:
    # Python's csv module refuses fields over csv.field_size_limit() (131 072 by default)
    p = tmp_path / "quote.csv"
    p.write_text("Part;Reading\n" + "PX;1\n" * 300 + 'PX;"' + "x" * 200_000 + "\n",
                 encoding="utf-8")
    err, _, _ = _refused(lambda: guard_file(p))
    assert str(err) == (
        "quote.csv › row 302: the text cannot be split into fields: a field is longer than "
        "131,072 characters (an unclosed quote?); check the quotes in that row")
    early = tmp_path / "early.csv"
    early.write_text('Part;Reading\nPX;"' + "x" * 200_000 + "\n", encoding="utf-8")
    err, _, _ = _refused(lambda: guard_file(early))
    assert str(err).startswith("early.csv: the text cannot be split into fields: a field is "
                               "longer than 131,072 characters")


def test_text_starting_with_pk_is_text(tmp_path: Path) -> None:
    # only the ZIP signatures (APPNOTE 4.3.7) mark a package, not any text starting "PK"
    p = tmp_path / "pk.csv"
    p.write_text("PK-100 inspection\nPart;Reading\nPK-100;25.0\n", encoding="utf-8")
    assert check_file(p) == []
