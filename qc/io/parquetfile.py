"""Parquet inputs: a table written by another program (a gauge's export, an earlier `qc` run)
read into the same cell grid as a sheet, so it goes through the same validation.

The column names become the header row (row 1), each record a data row (rows 2 …). Numbers
stay numbers, text stays text, nulls become blank cells.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

from qc.errors import FileReadError
from qc.io.grid import Grid

__all__ = ["read_parquet_grid"]


def read_parquet_grid(path: Path) -> Grid:
    """The cells of a Parquet file, header first."""
    import pyarrow as pa
    import pyarrow.parquet as pq

    with open(path, "rb") as fh:
        magic = fh.read(4)
    if magic != b"PAR1":
        raise FileReadError(f"{path.name}: not a Parquet file (it does not start with the "
                            "Parquet signature); export the table again")
    try:
        table = pq.read_table(path)
    except (OSError, pa.ArrowException) as exc:
        raise FileReadError(f"{path.name}: cannot be read as a Parquet file ({exc})") from exc
    if table.num_columns == 0:
        raise FileReadError(f"{path.name}: the file is empty")
    cells = np.empty((table.num_rows + 1, table.num_columns), dtype=object)
    cells[0, :] = table.column_names
    for j, column in enumerate(table.columns):
        if pa.types.is_dictionary(column.type):
            column = column.cast(column.type.value_type)
        values = column.to_numpy(zero_copy_only=False)
        if values.dtype.kind in "fiub":
            obj = values.astype(object)
        else:
            obj = np.asarray(values, dtype=object)
        nulls = column.is_null().to_numpy(zero_copy_only=False)
        obj[nulls] = ""
        cells[1:, j] = obj
    return Grid(file=path.name, sheet=None, cells=cells)
