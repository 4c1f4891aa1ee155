"""CSV, Parquet and JSON Lines outputs: same columns and values back, formulas neutralised.

References: RFC 4180 (CSV quoting), OWASP "CSV Injection" (prefix a cell that starts with
=, +, -, @, tab or carriage return with a single quote), JSON Lines (one JSON value per line,
jsonlines.org), RFC 8259 (JSON has no NaN: null instead). Read back with pandas, pyarrow and
the standard library's csv/json modules, independent of the writers.
"""

from __future__ import annotations

import csv
import json
import math
from pathlib import Path

import numpy as np
import pandas as pd
import pyarrow.parquet as pq
import pytest

from qc.io.writers import write_table

TRIGGERS = ["=1+1", "+41", "-7 flagged", "@SUM(A1)", "\tTAB", "\rCR"]


def frame() -> pd.DataFrame:
    """Invented results: floats with full precision, a NaN, negative numbers, risky text."""
    return pd.DataFrame(
        {
            "part_id": ["HX-1", "=1+1", "HX-3", "+41", "@SUM(A1)", "-7 flagged"],
            "size_at_20c": [25.012345678901234, -0.000125, np.nan, 1e-300, 24.99, -3.5],
            "effective_dof": [16, 50, 8, 24, 2, 5],
            "verdict": ["conforms", "nonconforming", "borderline", "not evaluated", None, "x"],
            "notes": ["", "\tTAB", "\rCR", "plain", 'a,b "quoted"', "line\nbreak"],
        }
    )


def test_csv_round_trip_and_neutralised(tmp_path: Path) -> None:
    out = tmp_path / "r.csv"
    write_table(frame(), out)
    with open(out, newline="", encoding="utf-8") as fh:
        rows = list(csv.reader(fh))  # RFC 4180 reader from the standard library
    assert rows[0] == list(frame().columns)
    by_col = dict(zip(rows[0], zip(*rows[1:], strict=True), strict=True))
    # OWASP CSV Injection: risky text gets a leading single quote; safe text is unchanged
    assert list(by_col["part_id"]) == ["HX-1", "'=1+1", "HX-3", "'+41", "'@SUM(A1)", "'-7 flagged"]
    assert list(by_col["notes"]) == ["", "'\tTAB", "'\rCR", "plain", 'a,b "quoted"', "line\nbreak"]
    # numbers stay numbers, negative ones too, with every digit
    sizes = [float(v) if v else math.nan for v in by_col["size_at_20c"]]
    np.testing.assert_array_equal(sizes, frame()["size_at_20c"].to_numpy())
    assert by_col["size_at_20c"][1] == "-0.000125"
    assert list(by_col["effective_dof"]) == ["16", "50", "8", "24", "2", "5"]
    assert by_col["verdict"][4] == ""
    back = pd.read_csv(out)
    assert list(back.columns) == list(frame().columns)
    assert back["effective_dof"].dtype.kind == "i"


def test_csv_mixed_column_numbers_are_not_quoted(tmp_path: Path) -> None:
    out = tmp_path / "m.csv"
    write_table(pd.DataFrame({"v": [-5, "-5", 2.5, "=A1"]}, dtype=object), out)
    with open(out, newline="", encoding="utf-8") as fh:
        assert [r[0] for r in csv.reader(fh)] == ["v", "-5", "'-5", "2.5", "'=A1"]


def test_csv_header_names_are_neutralised(tmp_path: Path) -> None:
    out = tmp_path / "h.csv"
    write_table(pd.DataFrame({"=cmd": ["a"], "size": [1.0]}), out)
    assert out.read_text(encoding="utf-8").splitlines()[0] == '"\'=cmd","size"'


def test_parquet_round_trip(tmp_path: Path) -> None:
    out = tmp_path / "r.parquet"
    write_table(frame(), out)
    back = pq.read_table(out).to_pandas()
    assert list(back.columns) == list(frame().columns)
    np.testing.assert_array_equal(back["size_at_20c"], frame()["size_at_20c"])
    assert back["part_id"].tolist() == frame()["part_id"].tolist()  # not neutralised: typed data
    assert back["effective_dof"].tolist() == [16, 50, 8, 24, 2, 5]
    assert back["verdict"].isna().tolist() == [False] * 4 + [True, False]


def test_jsonl_round_trip(tmp_path: Path) -> None:
    out = tmp_path / "r.jsonl"
    write_table(frame(), out)
    lines = out.read_text(encoding="utf-8").splitlines()
    assert len(lines) == len(frame())
    records = [json.loads(line) for line in lines]  # strict parser: no NaN token allowed
    assert all(list(r) == list(frame().columns) for r in records)
    assert records[2]["size_at_20c"] is None  # RFC 8259 has no NaN
    assert [r["size_at_20c"] for r in records if r["size_at_20c"] is not None] == [
        v for v in frame()["size_at_20c"] if not math.isnan(v)
    ]
    assert records[1]["part_id"] == "=1+1" and records[4]["verdict"] is None
    assert records[5]["notes"] == "line\nbreak" and records[0]["effective_dof"] == 16


@pytest.mark.parametrize("suffix", [".csv", ".parquet", ".jsonl"])
def test_tables_need_force_to_overwrite(tmp_path: Path, suffix: str) -> None:
    out = tmp_path / f"r{suffix}"
    out.write_text("old")
    with pytest.raises(OSError, match="already exists; use --force to overwrite it"):
        write_table(frame(), out)
    write_table(frame(), out, force=True)
    assert out.read_bytes() != b"old"


def test_empty_frame(tmp_path: Path) -> None:
    empty = frame().iloc[:0]
    for suffix in (".csv", ".parquet", ".jsonl"):
        write_table(empty, tmp_path / f"e{suffix}")
    assert pd.read_csv(tmp_path / "e.csv").columns.tolist() == list(frame().columns)
    assert (tmp_path / "e.jsonl").read_text() == ""
