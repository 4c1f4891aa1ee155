"""The text guard counts fields per line with numpy; the reference is Python's csv module.

Reference: the Python standard library ``csv`` module (default dialect: ``"`` quotes, doubled
inside a quoted field, a quoted field may hold separators and line breaks) reading the file
opened with ``newline=""`` (universal newlines: LF, CR LF or a lone CR end a line). Every case
is split both ways and the row count, the widest row and each row's starting line and field
count must agree. The chunk sizes are made tiny so that the chunk edges fall inside lines.
"""

from __future__ import annotations

import codecs
import csv
import random
from pathlib import Path

import pytest

from qc.errors import QcError
from qc.io import guard
from qc.io.guard import Limits, _Lines, _RowScan, _scan_lines

_PIECES = ("a", "12.5", "", " ", '"q"', '"x,y"', '"x;y"', '"two\nlines"', '"cr\r\nlf"', '"un',
           'in"side', '"a""b"', '""', "é", "\xa0", ";", ",", "\t", '"', '"end"x')


def _text(rnd: random.Random) -> tuple[str, str]:
    sep = rnd.choice([",", ";", "\t"])
    width = rnd.randint(1, 5)
    lines = []
    for _ in range(rnd.randint(1, 30)):
        k = width if rnd.random() < 0.8 else rnd.randint(0, 7)
        fields = [rnd.choice(_PIECES) if rnd.random() < 0.3 else rnd.choice(["a", "1", "xy"])
                  for _ in range(k)]
        lines.append((sep if rnd.random() < 0.9 else rnd.choice(",;\t|")).join(fields))
    ends = [rnd.choice(["\n", "\r\n", "\r"]) for _ in lines]
    if rnd.random() < 0.5:
        ends = [ends[0]] * len(lines)
    if rnd.random() < 0.3:
        ends[-1] = ""
    return "".join(line + end for line, end in zip(lines, ends, strict=True)), sep


def _reference(path: Path, enc: str, sep: str) -> tuple[int, int, list[tuple[int, int]]]:
    """Rows, widest row and (starting line, field count) of every row, by the csv module."""
    rows: list[tuple[int, int]] = []
    with path.open("r", encoding=enc, newline="") as fh:
        reader = csv.reader(fh, delimiter=sep)
        start = 1
        for row in reader:
            rows.append((start, len(row)))
            start = reader.line_num + 1
    return len(rows), max((w for _, w in rows), default=0), rows


class _Recording(_RowScan):
    """A scan that records every row it is shown as odd: here each row not 2 fields wide."""

    def __init__(self, sep: str) -> None:
        super().__init__(2, sep, Limits(max_rows=10**6, max_columns=10**6))
        self.seen: list[tuple[int, int]] = []

    def _odd(self, row: list[str], start: int) -> None:
        self.seen.append((start, len(row)))


@pytest.mark.parametrize("seed", range(40))
def test_line_counts_agree_with_the_csv_module(tmp_path: Path, monkeypatch: pytest.MonkeyPatch,
                                               seed: int) -> None:
    monkeypatch.setattr(guard, "_SPLIT_CHUNK", 7)
    monkeypatch.setattr(guard, "_QUOTE_CHUNK", 5)
    monkeypatch.setattr(guard, "_QUOTE_STEP", 3)
    rnd = random.Random(seed)
    for case in range(25):
        text, sep = _text(rnd)
        enc = rnd.choice(["utf-8-sig", "cp1252"])
        path = tmp_path / f"t{case}.csv"
        data = text.encode(enc)
        path.write_bytes(data)
        try:
            n_rows, width, rows = _reference(path, enc, sep)
        except csv.Error:
            continue  # a field over the csv field limit cannot occur here; nothing else raises
        lines = _Lines.read(path, enc, sep)
        assert lines is not None
        scan = _Recording(sep)
        _scan_lines(lines, scan)
        assert (scan.n_rows, scan.width) == (n_rows, width), text
        assert scan.seen == [r for r in rows if r[1] != 2], text


def test_quoted_separator_is_not_counted(tmp_path: Path) -> None:
    # csv module: '"12,5",mm' is two fields; a separator inside quotes does not split
    path = tmp_path / "q.csv"
    path.write_bytes(b'part,size,unit\r\nA,"12,5",mm\r\nB,"13,0",mm\r\n')
    lines = _Lines.read(path, "utf-8-sig", ",")
    assert lines is not None
    assert list(lines.seps) == [2, 2, 2]
    assert list(lines.quoted) == []  # every quote opens or closes a field: counted, not split


def test_stray_quote_sends_the_line_to_the_csv_module(tmp_path: Path) -> None:
    # a quote inside an unquoted field is a plain character for the csv module (5" bore)
    path = tmp_path / "s.csv"
    path.write_bytes(b'part,size\nA,5" bore\nB,6\n')
    lines = _Lines.read(path, "utf-8-sig", ",")
    assert lines is not None
    assert list(lines.quoted) == [1]


def test_multi_character_separator_falls_back_to_the_csv_module(tmp_path: Path) -> None:
    path = tmp_path / "m.csv"
    path.write_bytes(b"a\xc2\xa7b\n")
    assert _Lines.read(path, "utf-8-sig", "\xa7") is None


# --- the block scan against the quote-by-quote scan ------------------------------------------
# The fast scan decides a block of lines from the bytes next to separators and line breaks;
# a block it cannot decide goes quote by quote (``exact=True`` does that for the whole text).
# Both must give the same lines, the same separator counts and the same lines for the csv
# module; the block size is made tiny so that block edges fall between any two lines.

_TRICKY = (
    b'"a","b","c"\n"1","2","3"\n',  # every field quoted: decided from the separators
    b'a,"",c\n"",b,""\n',  # empty quoted fields
    b'a,"x,y",c\nd,e,f\n',  # a separator inside quotes
    b'a,"x\ny",c\nd,e,f\n',  # a quoted line break: the row spans two lines
    b'",a"b"\nx,y\n',  # a one-byte field '"' beside a field with a quote inside it
    b'"a,"b",c"\n',  # starts and ends quoted, but the quotes pair up across separators
    b'a,"b""c",d\n',  # doubled quote inside a quoted field
    b'a,5" bore\nb,6\n',  # a quote inside an unquoted field
    b'"a"x,b\n',  # text after a closing quote
    b'a,"b\r\n"c",d\r\n',  # CR LF inside quotes and at line ends
    b'"a","b"\r"c","d"\r',  # lone CRs only, no LF at all
    b'"a","b"\r\n\r\n"c","d"',  # empty line; the last line has no line break
    b'"a","b"\r',  # ends with a lone CR
    b'"',  # a single quote
    b'\n\n"x"\n',  # empty lines first
    b'"a",b\n"c"',  # last line one quoted field, no line break
)


def _both(path: Path, enc: str, sep: str) -> tuple[_Lines, _Lines]:
    fast = _Lines.read(path, enc, sep)
    exact = _Lines.read(path, enc, sep, exact=True)
    assert fast is not None and exact is not None
    return fast, exact


def _assert_same(fast: _Lines, exact: _Lines, text: object) -> None:
    for name in ("starts", "stops", "nexts", "seps", "quoted"):
        assert getattr(fast, name).tolist() == getattr(exact, name).tolist(), (name, text)
    assert [fast.text(i) for i in range(len(fast.starts))] == [
        exact.text(i) for i in range(len(exact.starts))], text


@pytest.mark.parametrize("block", [1, 4, 13, 1 << 18])
def test_block_scan_agrees_with_the_quote_scan(tmp_path: Path, monkeypatch: pytest.MonkeyPatch,
                                               block: int) -> None:
    monkeypatch.setattr(guard, "_BLOCK", block)
    monkeypatch.setattr(guard, "_SPLIT_CHUNK", 7)
    monkeypatch.setattr(guard, "_QUOTE_CHUNK", 5)
    monkeypatch.setattr(guard, "_QUOTE_STEP", 3)
    rnd = random.Random(block)
    cases = [(t, ",", "utf-8-sig") for t in _TRICKY]
    cases += [(codecs.BOM_UTF8 + t, ",", "utf-8-sig") for t in _TRICKY[:4]]
    for _ in range(300):
        text, sep = _text(rnd)
        enc = rnd.choice(["utf-8-sig", "cp1252"])
        cases.append((text.encode(enc), sep, enc))
    for k, (data, sep, enc) in enumerate(cases):
        path = tmp_path / f"b{k}.csv"
        path.write_bytes(data)
        fast, exact = _both(path, enc, sep)
        _assert_same(fast, exact, data)
        # and the rows as the csv module splits them (the whole guard scan on the fast lines)
        try:
            n_rows, width, rows = _reference(path, enc, sep)
        except csv.Error:
            continue
        scan = _Recording(sep)
        _scan_lines(fast, scan)
        assert (scan.n_rows, scan.width) == (n_rows, width), data
        assert scan.seen == [r for r in rows if r[1] != 2], data


def test_plain_quotes_decide_a_block_and_others_fall_back(tmp_path: Path,
                                                           monkeypatch: pytest.MonkeyPatch) -> None:
    # csv module, default dialect: a quote opening a field after a separator or line start and
    # closing it before a separator or line end; nothing else is "plain"
    calls: list[bool] = []
    plain = guard._plain_quotes

    def spy(*args: object) -> bool:
        calls.append(plain(*args))  # type: ignore[arg-type]
        return calls[-1]

    monkeypatch.setattr(guard, "_plain_quotes", spy)
    decided = {_TRICKY[0]: True, _TRICKY[1]: True, _TRICKY[2]: False, _TRICKY[3]: False,
               _TRICKY[4]: False, _TRICKY[5]: False, _TRICKY[6]: False, _TRICKY[7]: False,
               _TRICKY[8]: False}
    for k, (data, expected) in enumerate(decided.items()):
        path = tmp_path / f"p{k}.csv"
        path.write_bytes(data)
        calls.clear()
        _Lines.read(path, "utf-8-sig", ",")
        assert calls == [expected], data
    lines = _Lines.read(tmp_path / "p2.csv", "utf-8-sig", ",")
    assert lines is not None and lines.seps.tolist() == [2, 2]  # "x,y" is one field


@pytest.mark.parametrize("chunk", [1, 3, 64])
def test_encoding_from_bytes_in_memory_as_from_the_file(tmp_path: Path,
                                                        monkeypatch: pytest.MonkeyPatch,
                                                        chunk: int) -> None:
    # the first problem met chunk by chunk is reported, whether the bytes are read or mapped
    monkeypatch.setattr(guard, "_CHUNK", chunk)
    samples = [b"a;b\n", "a;é\n".encode("cp1252"), "a;é\n".encode(), codecs.BOM_UTF8 + b"a\n",
               b"a\x00b\n", b"\x81\x00\n", b"a\n" * 20 + b"\x81" + b"b\n" * 20 + b"\x00",
               b"a\n" * 20 + b"\x00" + b"\x81", b"\x81\x8d\n"]
    for k, data in enumerate(samples):
        path = tmp_path / f"e{k}.csv"
        path.write_bytes(data)
        results = []
        for given in (None, guard._mapped(path)):
            try:
                results.append(guard._decoding(path, given))
            except QcError as exc:
                results.append(str(exc))
        assert results[0] == results[1], data
