"""read_inspection: one sheet of a shop's inspection file → an :class:`InspectionTable`.

The whole-file problems (unreadable, empty, no header) raise one
:class:`~qc.errors.FileReadError`; everything about single cells becomes a row error in the
table, and every data row of the sheet has exactly one frame row (wide layout: one per part
and characteristic), in input order.
"""

from __future__ import annotations

import time
from collections.abc import Callable, Iterator
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import pandas as pd

from qc.errors import FileReadError
from qc.io.assemble import assemble
from qc.io.csvfile import (
    DelimitedStream,
    NotStreamable,
    TextChunk,
    read_delimited,
    stream_delimited,
)
from qc.io.grid import Grid, KnownCodes, column_letter
from qc.io.guard import Limits, guard_file
from qc.io.headers import HeaderScan, find_header_row, suggest_field
from qc.io.layout import load_layout
from qc.io.parquetfile import ParquetChunk, ParquetStream, read_parquet_grid, stream_parquet
from qc.io.raw import RawTable
from qc.io.register import REGISTER_SHEETS, Register, read_register, register_from_grid
from qc.io.wide import WideHeader, find_wide_header, wide_to_raw
from qc.io.xlsx import read_workbook_sheet
from qc.models import InspectionRecord, Layout, RowError

__all__ = ["ChunkContext", "ChunkedInspection", "ColumnRef", "InspectionTable", "NotStreamable",
           "check", "read_grid", "read_inspection", "read_inspection_chunks", "record_of"]

WORKBOOK_SUFFIXES = (".xlsx", ".xlsm", ".ods")
TEXT_SUFFIXES = (".csv", ".tsv", ".txt")


@dataclass(frozen=True)
class ColumnRef:
    """Where a field came from: column letter (None in wide layout: per row) and header."""

    letter: str | None
    header: str
    unit: str | None = None


@dataclass
class InspectionTable:
    """What read_inspection returns: the typed frame, row errors, and where it all came from."""

    frame: pd.DataFrame
    columns: dict[str, ColumnRef]
    errors: list[RowError]
    warnings: list[str]
    layout: Layout
    header_row: int
    data_rows: list[int]
    sheet: str | None
    last_column: str
    file: str = ""
    kind: str = "long"
    register: Register | None = field(default=None, repr=False)
    wide: WideHeader | None = field(default=None, repr=False)
    delimiter: str | None = None
    decimal_mark: str | None = None

    @property
    def ok(self) -> bool:
        """True when no row has an error."""
        return not self.errors


def read_grid(path: Path, *, sheet: str | None = None, prefer: tuple[str, ...] = (),
              avoid: tuple[str, ...] = (), decimal: str | None = None,
              delimiter: str | None = None, limits: Limits | None = None) -> Grid:
    """Read the cells of one sheet of any supported file, after the safety checks of
    :func:`qc.io.guard.guard_file` (untrusted files: size, compression, XML entities)."""
    path = Path(path)
    if not path.exists():
        raise FileReadError(f"{path.name}: no such file")
    suffix = path.suffix.lower()
    if suffix in WORKBOOK_SUFFIXES or suffix in TEXT_SUFFIXES:
        guard_file(path, limits, delimiter=delimiter)
    if suffix in WORKBOOK_SUFFIXES:
        return read_workbook_sheet(path, sheet, prefer=prefer, avoid=avoid)
    if suffix in TEXT_SUFFIXES:
        return read_delimited(path, delimiter=delimiter, decimal=decimal)
    if suffix == ".parquet":
        return read_parquet_grid(path)
    raise FileReadError(
        f"{path.name}: files of type {suffix or '(none)'} cannot be read; "
        "use .xlsx, .xlsm, .ods, .csv, .tsv or .parquet"
    )


def _long_raw(grid: Grid, scan: HeaderScan, *, below_header: bool = True,
              ) -> tuple[RawTable, list[int]]:
    """The data rows' cells by field; ``below_header=False`` for a later chunk of a file read
    in parts (every row of it is below the header). Row numbers count from the file's top."""
    start = (scan.unit_row if scan.unit_row is not None else scan.row) + 1 if below_header else 0
    filled = ~grid.blank()[start:].all(axis=1)
    dr = np.flatnonzero(filled).astype(np.int64) + start
    data_rows = (dr + grid.first_row).tolist()
    raw = RawTable(file=grid.file, sheet=grid.sheet, rows=dr + grid.first_row + 1)
    # no blank line between the data rows (the usual case): a slice, copied column by column
    block = slice(int(dr[0]), int(dr[-1]) + 1) if len(dr) and dr[-1] - dr[0] + 1 == len(dr) else dr
    # every row of the grid is a data row: the reader's factorisation of a column holds
    known = grid.codes if len(dr) == grid.cells.shape[0] else None
    for m in scan.matches:
        cells = (grid.cells[block, m.column].copy() if len(dr)
                 else np.array([], dtype=object))
        if known and m.column < len(known) and known[m.column] is not None:
            cells = KnownCodes(cells, *known[m.column])  # type: ignore[misc]
        raw.cells[m.field] = cells
        raw.letters[m.field] = m.letter
        raw.headers[m.field] = m.header
        raw.header_units[m.field] = m.unit
    # a bare 'reading' header numbered reading_1 by the matcher; keep the name simple
    return raw, data_rows


def read_inspection(path: Path | str, *, layout: Layout | Path | str | None = None,
                    sheet: str | None = None, register: Path | str | None = None,
                    limits: Limits | None = None) -> InspectionTable:
    """Read one inspection sheet into validated, typed records; see docs/columns.md."""
    path = Path(path)
    lay = _layout(layout)
    decimal_opt = None if lay.decimal == "auto" else lay.decimal
    grid = read_grid(path, sheet=sheet or lay.sheet, decimal=decimal_opt,
                     delimiter=lay.delimiter, avoid=REGISTER_SHEETS, limits=limits)
    return _first_table(path, grid, lay, register, whole=True)[0]


def _layout(layout: Layout | Path | str | None) -> Layout:
    if layout is not None and not isinstance(layout, Layout):
        layout = load_layout(Path(layout))
    return layout or Layout()


def _first_table(path: Path, grid: Grid, lay: Layout, register: Path | str | None, *,
                 whole: bool) -> tuple[InspectionTable, HeaderScan | None]:
    """The table of a whole sheet (``whole``), or of the first chunk of a file read in parts,
    with the header scan that later chunks reuse (None for a wide sheet)."""
    decimal_opt = None if lay.decimal == "auto" else lay.decimal
    warnings = list(grid.notes)
    if not grid.cells.size or grid.blank().all():
        where = grid.file + (f" › {grid.sheet}" if grid.sheet else "")
        raise FileReadError(f"{where}: the sheet is empty")
    decimal = grid.decimal or decimal_opt or "."
    if grid.decimal is None and decimal_opt is None:
        warnings.append(f"{grid.file}: numbers written as text are read with a decimal point; "
                        "a comma is read as decimal mark only where it cannot be a thousands "
                        "separator")

    wide = None if lay.layout == "long" else find_wide_header(grid, lay)
    if wide is not None and not whole:  # a wide sheet is read whole
        raise NotStreamable(grid.file)
    reg = _register(path, grid, lay, register, decimal, warnings)
    columns: dict[str, ColumnRef] = {}
    scan: HeaderScan | None = None
    if wide is not None and lay.layout != "long":
        raw, data_rows = wide_to_raw(grid, wide)
        header_row = wide.char_row + 1
        kind = "wide"
        for name in raw.cells:
            letter = raw.letters[name]
            columns[name] = ColumnRef(letter if isinstance(letter, str) else None,
                                      str(raw.headers[name]) if isinstance(raw.headers[name], str)
                                      else "per characteristic", raw.header_units.get(name))
    else:
        scan = find_header_row(grid, lay)
        where = grid.file + (f" › {grid.sheet}" if grid.sheet else "")
        if scan is None or not scan.matches:
            raise FileReadError(
                f"{where}: no header row found in the first 60 rows; expected column names "
                "such as 'Part', 'Characteristic', 'Nominal', 'Tolerance', 'Reading' "
                "(or name your headers in a layout file)"
            )
        raw, data_rows = _long_raw(grid, scan)
        header_row = scan.row + 1
        kind = "long"
        for m in scan.matches:
            columns[m.field] = ColumnRef(m.letter, m.header, m.unit)
        for c, text in scan.unmatched:
            hint = suggest_field(text)
            extra = f"; did you mean {' or '.join(repr(h) for h in hint)}?" if hint else ""
            warnings.append(f"{where} › {column_letter(c)}: header {text!r} not recognised, "
                            f"column ignored{extra}")
    if not data_rows:
        if not whole:  # a first chunk without data: let a whole read decide
            raise NotStreamable(grid.file)
        where = grid.file + (f" › {grid.sheet}" if grid.sheet else "")
        raise FileReadError(f"{where}: no data rows under the header in row {header_row}")
    frame, errors = assemble(raw, lay, decimal=decimal, register=reg, notes=warnings)
    table = InspectionTable(
        frame=frame, columns=columns, errors=errors, warnings=warnings, layout=lay,
        header_row=header_row, data_rows=(np.asarray(data_rows, dtype=np.int64) + 1).tolist(),
        sheet=grid.sheet, last_column=_last_column(grid), file=grid.file, kind=kind,
        register=reg, wide=wide if kind == "wide" else None, delimiter=grid.delimiter,
        decimal_mark=decimal,
    )
    return table, scan


def _last_column(grid: Grid) -> str:
    used = np.flatnonzero(~grid.blank().all(axis=0))
    return column_letter(int(used.max()) if len(used) else 0)


@dataclass(frozen=True)
class ChunkContext:
    """What the later chunks of a file read in parts take from the first: its header,
    layout, register and decimal mark."""

    file: str
    layout: Layout
    columns: dict[str, ColumnRef]
    register: Register | None
    decimal: str
    delimiter: str | None
    header_row: int
    scan: HeaderScan


def _table_of_grid(grid: Grid, ctx: ChunkContext) -> InspectionTable:
    """The validated table of a later chunk's cells, with the first chunk's context."""
    raw, data_rows = _long_raw(grid, ctx.scan, below_header=False)
    warnings: list[str] = []
    frame, errors = assemble(raw, ctx.layout, decimal=ctx.decimal, register=ctx.register,
                             notes=warnings)
    return InspectionTable(
        frame=frame, columns=ctx.columns, errors=errors, warnings=warnings,
        layout=ctx.layout, header_row=ctx.header_row,
        data_rows=(np.asarray(data_rows, dtype=np.int64) + 1).tolist(), sheet=None,
        last_column=_last_column(grid), file=ctx.file, kind="long", register=ctx.register,
        delimiter=ctx.delimiter, decimal_mark=ctx.decimal,
    )


@dataclass
class ChunkedInspection:
    """An inspection file read and validated in chunks of rows.

    ``first`` is the first chunk's table; ``chunks`` yields the later chunks not yet made
    into cells; ``tables`` makes each into cells and a validated table with ``context`` (row
    numbers count from the file's top, frame positions from the chunk's). ``fraction`` tells
    how much of the file has been read.
    """

    first: InspectionTable
    context: ChunkContext
    chunks: Iterator[TextChunk | ParquetChunk]
    fraction: Callable[[], float]
    #: wall-clock seconds spent so far reading cells (the rest is parsing and validating)
    read_seconds: float = 0.0

    @property
    def tables(self) -> Iterator[InspectionTable]:
        """Every chunk's table, the first one first, validated in this process."""
        yield self.first
        while True:
            t = time.perf_counter()
            chunk = next(self.chunks, None)
            if chunk is None:
                return
            grid = chunk.grid()
            self.read_seconds += time.perf_counter() - t
            yield _table_of_grid(grid, self.context)


def read_inspection_chunks(path: Path | str, *, layout: Layout | Path | str | None = None,
                           register: Path | str | None = None, limits: Limits | None = None,
                           chunk_rows: int = 50_000) -> ChunkedInspection:
    """Read a CSV, TSV or Parquet file in chunks, so memory stays bounded on large files.

    Each chunk is validated as :func:`read_inspection` validates the whole file, with the
    header, decimal mark and register found in the first chunk. Raises
    :class:`~qc.io.csvfile.NotStreamable` before anything is read when the file has to be
    read whole (a workbook, a wide sheet, text whose rows pyarrow would split differently
    from the csv module); a later chunk may raise it too, so a caller that has written
    results so far must start again with :func:`read_inspection`.
    """
    path = Path(path)
    lay = _layout(layout)
    suffix = path.suffix.lower()
    if lay.layout == "wide" or suffix not in (*TEXT_SUFFIXES, ".parquet"):
        raise NotStreamable(path.name)
    if not path.exists():
        raise FileReadError(f"{path.name}: no such file")
    decimal_opt = None if lay.decimal == "auto" else lay.decimal
    t = time.perf_counter()
    stream: DelimitedStream | ParquetStream
    if suffix == ".parquet":
        stream = stream_parquet(path, chunk_rows=chunk_rows)
    else:
        guard_file(path, limits, delimiter=lay.delimiter)
        stream = stream_delimited(path, delimiter=lay.delimiter, decimal=decimal_opt,
                                  chunk_rows=chunk_rows)
    chunks = stream.chunks
    first_chunk = next(chunks, None)
    if first_chunk is None:
        raise NotStreamable(path.name)
    first_grid = first_chunk.grid()
    read_seconds = time.perf_counter() - t
    first, scan = _first_table(path, first_grid, lay, register, whole=False)
    assert scan is not None  # a long sheet
    context = ChunkContext(file=first.file, layout=lay, columns=first.columns,
                           register=first.register, decimal=first.decimal_mark or ".",
                           delimiter=first.delimiter, header_row=first.header_row, scan=scan)
    return ChunkedInspection(first=first, context=context, chunks=chunks,
                             fraction=stream.fraction, read_seconds=read_seconds)


def _register(path: Path, grid: Grid, lay: Layout, register: Path | str | None, decimal: str,
              warnings: list[str]) -> Register | None:
    """The register: a separate file if given, else a register sheet of the same workbook."""
    reg: Register | None = None
    if register is not None:
        reg = read_register(Path(register))
    elif grid.sheet is not None:
        names = {s.lower(): s for s in grid.sheets}
        name = lay.register_sheet or next(
            (names[s] for s in REGISTER_SHEETS if s in names and names[s] != grid.sheet), None)
        if name is not None:
            reg_grid = read_workbook_sheet(path, name)
            reg = register_from_grid(reg_grid, decimal=decimal)
    if reg is not None:
        warnings.extend(reg.notes)
    return reg


def check(path: Path | str, **kwargs: object) -> InspectionTable:
    """Read and validate only (no correction, no verdicts): the same table as read_inspection."""
    return read_inspection(path, **kwargs)  # type: ignore[arg-type]


def record_of(frame: pd.DataFrame, i: int) -> InspectionRecord:
    """One frame row as a validated InspectionRecord (NaN and NaT become None).

    For single rows (reports, tests, write-back); the bulk path never builds models.
    """
    row = frame.iloc[i].to_dict()
    out: dict[str, object] = {}
    for k, v in row.items():
        if v is None or (isinstance(v, float) and np.isnan(v)) or v is pd.NaT:
            out[k] = None
        elif isinstance(v, pd.Timestamp):
            out[k] = v.to_pydatetime()
        elif isinstance(v, np.generic):
            out[k] = v.item()
        else:
            out[k] = v
    for k in ("part", "characteristic", "flags"):
        out[k] = out[k] or ""
    for k in ("kind", "instrument", "inspector", "note", "part_material", "gauge_material",
              "tolerance_text", "tolerance_description", "instrument_type"):
        out[k] = out[k] or None
    return InspectionRecord.model_validate(out)
