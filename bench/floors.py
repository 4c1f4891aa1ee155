"""The bare I/O floor: the same file read, and the same cells written, by the same libraries.

What ``qc`` does between reading and writing (header matching, parsing and validating cells,
the thermal correction, the budget, the verdicts, the result columns) is left out, so the
ratio ``qc time / floor time`` says how much the program adds to I/O it cannot avoid.

* CSV read: ``pyarrow.csv`` with every column as text, as ``qc.io.csvfile`` splits the file.
  The standard-library ``csv`` module on the same file is timed too (reported, not used in
  the ratio).
* XLSX read: ``python-calamine`` ``to_python`` of the same sheet, as ``qc.io.xlsx`` reads.
* Parquet read: ``pyarrow.parquet.read_table`` of the same file, as ``qc.io.parquetfile``.
* CSV/Parquet write: the output ``qc`` wrote is loaded untimed into an Arrow table (same cells,
  same types), then written with the writer ``qc.io.writers`` uses (``pyarrow.csv`` with
  ``quoting_style="needed"``, ``pyarrow.parquet`` with its defaults).
* XLSX write: the zip members of the output workbook (its XML parts, as ``qc`` made them) are
  loaded untimed and deflated into a new package with ``zipfile`` at the levels
  ``qc.io.xlsx_package`` uses: the cost of writing those cells with the library the
  write-back uses, without building any XML. For comparison, every cell of every sheet can
  also be written with ``xlsxwriter`` in constant-memory mode (values only; reported, not
  used in the ratio, and only for small outputs since it is slow).

Each function returns a :class:`Timing`: wall-clock and CPU seconds of the timed part only.
"""

from __future__ import annotations

import csv
import io
import time
import zipfile
from collections.abc import Iterator
from contextlib import contextmanager
from pathlib import Path
from typing import NamedTuple

__all__ = ["Timing", "read_floor", "stdlib_read_floor", "write_floor", "xlsxwriter_floor",
           "zip_floor"]


class Timing(NamedTuple):
    """Seconds of one timed step: wall clock (``perf_counter``) and CPU (``process_time``)."""

    wall: float
    cpu: float


@contextmanager
def _timed(into: list[Timing]) -> Iterator[None]:
    """Time the ``with`` block; the Timing is appended to ``into``."""
    w, c = time.perf_counter(), time.process_time()
    yield
    into.append(Timing(time.perf_counter() - w, time.process_time() - c))

def read_floor(path: Path) -> Timing:
    """Read ``path`` bare with the library the ``qc`` reader uses for its type."""
    path = Path(path)
    t: list[Timing] = []
    if path.suffix.lower() == ".csv":
        # qc.io.csvfile splits CSV with pyarrow, every column as text: so does the floor
        import pyarrow as pa
        import pyarrow.csv as pa_csv

        with _timed(t):
            rows = pa_csv.read_csv(
                path, read_options=pa_csv.ReadOptions(autogenerate_column_names=True),
                convert_options=pa_csv.ConvertOptions(
                    column_types=_all_text(path, pa.string())))
    elif path.suffix.lower() == ".parquet":
        import pyarrow.dataset  # noqa: F401  (read_table imports it on first use: not timed)
        import pyarrow.parquet as pq

        with _timed(t):
            rows = pq.read_table(path)
    else:
        import python_calamine as pc

        with _timed(t):
            wb = pc.CalamineWorkbook.from_path(str(path))
            rows = wb.get_sheet_by_index(0).to_python(skip_empty_area=False)
            wb.close()
    del rows
    return t[0]


def _all_text(path: Path, text_type) -> dict[str, object]:
    """Column types mapping every column of a CSV (named f0, f1, …) to text."""
    with open(path, encoding="utf-8-sig") as fh:
        width = len(next(csv.reader(fh)))
    return {f"f{i}": text_type for i in range(width)}


def stdlib_read_floor(path: Path) -> Timing:
    """The standard library's ``csv`` module on the same file (for comparison)."""
    t: list[Timing] = []
    with _timed(t):
        text = Path(path).read_bytes().decode("utf-8-sig")
        rows = list(csv.reader(io.StringIO(text)))
    del rows
    return t[0]


def write_floor(output: Path, scratch: Path) -> Timing:
    """Write the cells of ``output`` again, to ``scratch``, with the same writer."""
    output, scratch = Path(output), Path(scratch)
    suffix = output.suffix.lower()
    t: list[Timing] = []
    if suffix == ".csv":
        import pyarrow.csv as pa_csv

        table = pa_csv.read_csv(output)
        with _timed(t):
            pa_csv.write_csv(table, scratch, write_options=pa_csv.WriteOptions(
                include_header=True, quoting_style="needed"))
        return t[0]
    if suffix == ".parquet":
        import pyarrow.parquet as pq

        table = pq.read_table(output)
        with _timed(t):
            pq.write_table(table, scratch)
        return t[0]
    if suffix in (".xlsx", ".xlsm"):
        return zip_floor(output, scratch)
    raise ValueError(f"no write floor for {suffix!r} files")


def xlsxwriter_floor(output: Path, scratch: Path) -> Timing:
    """Seconds to write every cell of the workbook ``output`` with xlsxwriter (values only)."""
    import python_calamine as pc
    import xlsxwriter

    wb = pc.CalamineWorkbook.from_path(str(output))
    sheets = [(name, wb.get_sheet_by_name(name).to_python(skip_empty_area=False))
              for name in wb.sheet_names]
    wb.close()
    t: list[Timing] = []
    with _timed(t):
        out = xlsxwriter.Workbook(str(scratch), {"constant_memory": True,
                                                 "nan_inf_to_errors": True})
        for name, rows in sheets:
            ws = out.add_worksheet(name)
            for i, row in enumerate(rows):
                ws.write_row(i, 0, row)
        out.close()
    return t[0]


def zip_floor(output: Path, scratch: Path) -> Timing:
    """Deflate the members of the zip package ``output`` again (no XML work)."""
    from qc.io.xlsx_package import FAST_COMPRESSION_BYTES

    with zipfile.ZipFile(output) as zf:
        members = [(i.filename, zf.read(i)) for i in zf.infolist()]
    t: list[Timing] = []
    with _timed(t), zipfile.ZipFile(scratch, "w", zipfile.ZIP_DEFLATED) as zf:
        for name, data in members:
            zf.writestr(name, data, compresslevel=1 if len(data) > FAST_COMPRESSION_BYTES else 6)
    return t[0]
