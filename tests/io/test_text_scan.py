"""The text guard counts fields per line with numpy; the reference is Python's csv module.

Reference: the Python standard library ``csv`` module (default dialect: ``"`` quotes, doubled
inside a quoted field, a quoted field may hold separators and line breaks) reading the file
opened with ``newline=""`` (universal newlines: LF, CR LF or a lone CR end a line). Every case
is split both ways and the row count, the widest row and each row's starting line and field
count must agree. The chunk sizes are made tiny so that the chunk edges fall inside lines.
"""

from __future__ import annotations

import csv
import random
from pathlib import Path

import pytest

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
