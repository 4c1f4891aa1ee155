"""Damaged files: the guard and then the reader fail only with qc errors, never anything else.

A good workbook is damaged at random (bytes overwritten, the file cut short) and random bytes
are written under CSV and workbook names. Whatever the damage, guard_file either refuses the
file with a FileReadError/LimitExceededError or passes it; read_inspection on a passed file
returns a table or raises a QcError. Seeds are fixed (derandomize).
"""

from __future__ import annotations

import tempfile
from pathlib import Path

from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from qc.errors import FileReadError, LimitExceededError, QcError
from qc.io import read_inspection
from qc.io.guard import guard_file
from tests.hostile import builders as b

SETTINGS = settings(derandomize=True, max_examples=60, deadline=None,
                    suppress_health_check=[HealthCheck.too_slow])

_TEMPLATE: dict[str, bytes] = {}


def _good_bytes() -> bytes:
    if "xlsx" not in _TEMPLATE:
        with tempfile.TemporaryDirectory() as d:
            _TEMPLATE["xlsx"] = b.good_xlsx(Path(d) / "good.xlsx").read_bytes()
    return _TEMPLATE["xlsx"]


def _guard_then_read(path: Path) -> None:
    try:
        guard_file(path)
    except (FileReadError, LimitExceededError) as exc:
        assert str(exc).startswith(path.name), str(exc)
        return
    try:
        read_inspection(path)
    except QcError as exc:
        assert path.name in str(exc), str(exc)


@SETTINGS
@given(st.lists(st.tuples(st.integers(0, 10**6), st.binary(min_size=1, max_size=8)),
                max_size=6),
       st.one_of(st.none(), st.integers(0, 10**6)))
def test_damaged_workbook(edits: list[tuple[int, bytes]], cut: int | None) -> None:
    data = bytearray(_good_bytes())
    for pos, junk in edits:
        i = pos % len(data)
        data[i: i + len(junk)] = junk
    if cut is not None:
        data = data[: cut % (len(data) + 1)]
    with tempfile.TemporaryDirectory() as d:
        p = Path(d) / "damaged.xlsx"
        p.write_bytes(bytes(data))
        _guard_then_read(p)


@SETTINGS
@given(st.binary(max_size=600), st.sampled_from(["junk.csv", "junk.tsv", "junk.xlsx",
                                                 "junk.ods"]))
def test_random_bytes(data: bytes, name: str) -> None:
    with tempfile.TemporaryDirectory() as d:
        p = Path(d) / name
        p.write_bytes(data)
        _guard_then_read(p)
