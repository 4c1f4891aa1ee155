"""Parquet inputs read to the same records as the same table written as CSV."""

from __future__ import annotations

from pathlib import Path

import pandas as pd
import pytest

from qc.errors import FileReadError
from qc.io.reader import read_inspection

ROWS = {
    "part": ["P1", "P2", "P3"],
    "characteristic": ["D1", "D1", "D1"],
    "nominal": [25.0, 25.0, 25.0],
    "tolerance": ["±0.05", "±0.05", None],
    "reading": [25.01, 24.98, 25.0],
    "part_temp": [21.5, 22.0, 20.5],
    "part_material": ["steel", "steel", "steel"],
}


def test_parquet_reads_like_the_same_csv(tmp_path: Path) -> None:
    df = pd.DataFrame(ROWS)
    pq, csv = tmp_path / "t.parquet", tmp_path / "t.csv"
    df.to_parquet(pq)
    df.to_csv(csv, index=False)
    a, b = read_inspection(pq), read_inspection(csv)
    cols = ["part", "nominal_mm", "lower_limit_mm", "upper_limit_mm", "reading_mean_mm",
            "part_temp_c", "part_cte", "source_row"]
    pd.testing.assert_frame_equal(a.frame[cols], b.frame[cols])
    assert [e.field for e in a.errors] == [e.field for e in b.errors] == ["tolerance"]
    assert a.errors[0].row == 4


def test_damaged_parquet_is_one_clear_error(tmp_path: Path) -> None:
    p = tmp_path / "bad.parquet"
    p.write_bytes(b"PAR1 this is not a parquet file")  # right signature, broken body
    with pytest.raises(FileReadError) as e:
        read_inspection(p)
    assert str(e.value).startswith("bad.parquet: cannot be read as a Parquet file (")


def test_other_file_named_parquet_is_refused(tmp_path: Path) -> None:
    p = tmp_path / "sheet.parquet"
    p.write_text("part,reading\nP1,1\n", encoding="utf-8")
    with pytest.raises(FileReadError) as e:
        read_inspection(p)
    assert str(e.value) == ("sheet.parquet: not a Parquet file (it does not start with the "
                            "Parquet signature); export the table again")
