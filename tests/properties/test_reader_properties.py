"""Properties of read_inspection on random long-layout sheets with junk in their cells.

Rows in equals rows out (style guide: "rows in equals rows out"): every data row gives exactly
one frame row, in order, with its own spreadsheet row number; every junk cell is explained by
a row error on its row and field; a row without junk reads without error; nothing but a qc
error escapes. Seeds are fixed (derandomize) and example counts bounded.
"""

from __future__ import annotations

import csv
import tempfile
from pathlib import Path

import numpy as np
import openpyxl
from hypothesis import HealthCheck, given, settings

from qc.errors import QcError
from qc.io import read_inspection
from qc.io.guard import guard_file
from tests.properties.strategies import HEADER, NUMERIC, SheetSpec, sheets

SETTINGS = settings(derandomize=True, max_examples=40, deadline=None,
                    suppress_health_check=[HealthCheck.too_slow])


def _write_csv(spec: SheetSpec, path: Path) -> None:
    with path.open("w", newline="", encoding="utf-8") as fh:
        w = csv.writer(fh, delimiter=";")
        w.writerow(HEADER)
        w.writerows([[repr(v) if isinstance(v, float) else v for v in r] for r in spec.rows])


def _write_xlsx(spec: SheetSpec, path: Path) -> None:
    wb = openpyxl.Workbook()
    ws = wb.active
    ws.title = "Readings"
    ws.append(HEADER)
    for r, row in enumerate(spec.rows, start=2):
        for c, v in enumerate(row, start=1):
            cell = ws.cell(row=r, column=c, value=v)
            if isinstance(v, str):
                cell.data_type = "s"  # text stays text: openpyxl would make '=..' a formula
    wb.save(path)


def _check(spec: SheetSpec, path: Path) -> None:
    guard_file(path)  # a well-formed sheet passes the guard
    try:
        table = read_inspection(path)
    except QcError as exc:  # pragma: no cover - would be a failure of the property
        raise AssertionError(f"a whole-file error for a readable sheet: {exc}") from exc
    frame = table.frame
    n = len(spec.rows)
    assert len(frame) == n
    assert frame["source_row"].tolist() == list(range(2, n + 2))
    assert frame["part"].tolist() == [str(r[0]).strip() for r in spec.rows]
    by_row: dict[int, set[str]] = {}
    for e in table.errors:
        assert e.message.startswith(path.name)
        assert f"row {e.row}" in e.message
        by_row.setdefault(e.index, set()).add(e.field)
    for i, c in spec.junk:
        field = NUMERIC[c]
        got = {f.removesuffix("_1") for f in by_row.get(i, set())}  # a lone 'Reading' is reading_1
        assert field in got, (i, field, spec.rows[i][c], table.errors)
    for i in range(n):
        if not any((i, c) in spec.junk for c in NUMERIC):
            assert i not in by_row, [e.message for e in table.errors if e.index == i]
            assert np.isfinite(frame["reading_mean_mm"].iloc[i])


@SETTINGS
@given(sheets())
def test_csv_rows_in_rows_out(spec: SheetSpec) -> None:
    with tempfile.TemporaryDirectory() as d:
        p = Path(d) / "random.csv"
        _write_csv(spec, p)
        _check(spec, p)


@SETTINGS
@given(sheets())
def test_xlsx_rows_in_rows_out(spec: SheetSpec) -> None:
    with tempfile.TemporaryDirectory() as d:
        p = Path(d) / "random.xlsx"
        _write_xlsx(spec, p)
        _check(spec, p)
