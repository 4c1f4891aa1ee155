"""Parquet inputs: a table written by another program (a gauge's export, an earlier `qc` run)
read into the same cell grid as a sheet, so it goes through the same validation.

The column names become the header row (row 1), each record a data row (rows 2 …). Numbers
stay numbers, text stays text, nulls become blank cells. Large files can be read in chunks of
record batches (:func:`stream_parquet`), each chunk a grid of the same cells.
"""

from __future__ import annotations

from collections.abc import Iterator
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from qc.errors import FileReadError
from qc.io.grid import Grid

__all__ = ["ParquetChunk", "ParquetStream", "read_parquet_grid", "stream_parquet"]


def _open(path: Path):
    """The file as a ``pyarrow.parquet.ParquetFile``, after checking its signature."""
    import pyarrow as pa
    import pyarrow.parquet as pq

    with open(path, "rb") as fh:
        magic = fh.read(4)
    if magic != b"PAR1":
        raise FileReadError(f"{path.name}: not a Parquet file (it does not start with the "
                            "Parquet signature); export the table again")
    try:
        pf = pq.ParquetFile(path)
    except (OSError, pa.ArrowException) as exc:
        raise FileReadError(f"{path.name}: cannot be read as a Parquet file ({exc})") from exc
    if not pf.schema_arrow.names:
        raise FileReadError(f"{path.name}: the file is empty")
    return pf


def _cells(columns: list, n: int, header: list[str] | None) -> np.ndarray:
    """Object cells of Arrow columns, with the header row on top when given."""
    import pyarrow as pa

    top = 1 if header is not None else 0
    cells = np.empty((n + top, len(columns)), dtype=object)
    if header is not None:
        cells[0, :] = header
    for j, column in enumerate(columns):
        if pa.types.is_dictionary(column.type):
            column = column.cast(column.type.value_type)
        values = column.to_numpy(zero_copy_only=False)
        obj = values.astype(object) if values.dtype.kind in "fiub" else \
            np.asarray(values, dtype=object)
        nulls = column.is_null().to_numpy(zero_copy_only=False)
        obj[nulls] = ""
        cells[top:, j] = obj
    return cells


def read_parquet_grid(path: Path) -> Grid:
    """The cells of a Parquet file, header first."""
    import pyarrow as pa

    pf = _open(path)
    try:
        table = pf.read()
    except (OSError, pa.ArrowException) as exc:
        raise FileReadError(f"{path.name}: cannot be read as a Parquet file ({exc})") from exc
    return Grid(file=path.name, sheet=None,
                cells=_cells(table.columns, table.num_rows, table.column_names))


@dataclass
class ParquetChunk:
    """Records of a Parquet file, made into cells by :meth:`grid` when their turn comes (the
    first chunk with the header row on top)."""

    file: str
    batch: object  # a pyarrow.RecordBatch
    header: list[str] | None
    first_row: int

    @property
    def rows(self) -> int:
        """Rows of the grid this chunk makes."""
        return self.batch.num_rows + (self.header is not None)  # type: ignore[attr-defined]

    def grid(self) -> Grid:
        """The chunk's cells, as :func:`read_parquet_grid` gives those rows."""
        b = self.batch
        return Grid(file=self.file, sheet=None, first_row=self.first_row,
                    cells=_cells(b.columns, b.num_rows, self.header))  # type: ignore[attr-defined]


@dataclass
class ParquetStream:
    """A Parquet file read in chunks of rows; ``fraction`` tells how far reading is."""

    chunks: Iterator[ParquetChunk]
    rows: int
    done: list[int]

    def fraction(self) -> float:
        """Share of the file's records read so far."""
        return min(1.0, self.done[0] / max(self.rows, 1))


def stream_parquet(path: Path, *, chunk_rows: int = 50_000) -> ParquetStream:
    """The file in chunks of ``chunk_rows`` records: the first chunk's grid starts with the
    header row, as :func:`read_parquet_grid`; later chunks hold data rows only."""
    import pyarrow as pa

    pf = _open(path)
    names = pf.schema_arrow.names
    done = [0]

    def chunks() -> Iterator[ParquetChunk]:
        first_row = 0
        try:
            batches = pf.iter_batches(batch_size=chunk_rows)
            batch = next(batches, None)
            if batch is None:  # no records: the header alone, as a whole read gives
                batch = pa.RecordBatch.from_pylist([], schema=pf.schema_arrow)
            while batch is not None:
                chunk = ParquetChunk(path.name, batch, names if first_row == 0 else None,
                                     first_row)
                done[0] += batch.num_rows
                yield chunk
                first_row += chunk.rows
                batch = next(batches, None)
        except (OSError, pa.ArrowException) as exc:
            raise FileReadError(
                f"{path.name}: cannot be read as a Parquet file ({exc})") from exc

    return ParquetStream(chunks=chunks(), rows=pf.metadata.num_rows, done=done)
