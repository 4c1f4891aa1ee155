"""Flat-table outputs (CSV, Parquet, JSON Lines) and the atomic write every writer uses.

Atomic write: the output is first written to a temporary file in the output's own folder, then
moved over the final name with ``os.replace`` (atomic on one file system, POSIX ``rename``), so a
reader sees either the old file or the complete new one, never a partial file.

A table can be written in parts (:func:`open_table`): chunks of a large input go out as they
are evaluated, with one header and one set of column types.

CSV injection: a text cell beginning with ``=``, ``+``, ``-``, ``@``, tab or carriage return is
prefixed with a single quote, as the OWASP page "CSV Injection" recommends, so a spreadsheet
opening the file shows text instead of evaluating a formula. Numeric columns are never touched:
a negative number stays a number.
"""

from __future__ import annotations

import contextlib
import json
import math
import os
import tempfile
from collections.abc import Iterator, Sequence
from datetime import date, datetime
from pathlib import Path

import numpy as np
import pandas as pd
import pyarrow as pa
import pyarrow.compute as pc
import pyarrow.csv as pa_csv
import pyarrow.parquet as pq

from qc.errors import OutputError

#: Characters that make a spreadsheet read a CSV cell as a formula (OWASP, "CSV Injection").
FORMULA_TRIGGERS = ("=", "+", "-", "@", "\t", "\r")
TABLE_SUFFIXES = (".csv", ".parquet", ".jsonl")


def check_output(output: Path, *, force: bool, inputs: Sequence[Path] = ()) -> None:
    """Refuse an output that cannot or must not be written, before any work is done."""
    output = Path(output)
    for source in inputs:
        if _same_file(Path(source), output):
            raise OutputError(
                f"{output} is the input file; choose another output name "
                "(the input is never overwritten)"
            )
    parent = output.parent
    if not parent.is_dir():
        raise OutputError(f"cannot write {output}: the folder {parent} does not exist")
    if output.is_dir():
        raise OutputError(f"cannot write {output}: it is a folder")
    if output.exists() and not force:
        raise OutputError(f"{output} already exists; use --force to overwrite it")
    if not os.access(parent, os.W_OK):
        raise OutputError(f"cannot write {output}: no permission to write in {parent}")


def _same_file(a: Path, b: Path) -> bool:
    try:
        if a.exists() and b.exists():
            return os.path.samefile(a, b)
    except OSError:
        return False
    return a.resolve() == b.resolve()


def _umask() -> int:
    mask = os.umask(0)
    os.umask(mask)
    return mask


@contextlib.contextmanager
def atomic_output(output: Path) -> Iterator[Path]:
    """Yield a temporary path beside ``output``; on success move it over ``output``.

    On any error (or interruption) the temporary file is removed and ``output`` is untouched.
    """
    output = Path(output)
    try:
        fd, name = tempfile.mkstemp(prefix=f".{output.name}.", suffix=".tmp", dir=output.parent)
    except PermissionError as exc:
        raise OutputError(
            f"cannot write {output}: no permission to write in {output.parent}"
        ) from exc
    except OSError as exc:
        raise OutputError(f"cannot write {output}: {exc.strerror or exc}") from exc
    os.close(fd)
    tmp = Path(name)
    try:
        yield tmp
        os.chmod(tmp, 0o666 & ~_umask())
        os.replace(tmp, output)
    except OSError as exc:
        tmp.unlink(missing_ok=True)
        if isinstance(exc, OutputError):
            raise
        raise OutputError(f"cannot write {output}: {exc.strerror or exc}") from exc
    except BaseException:
        tmp.unlink(missing_ok=True)
        raise


def write_table(frame: pd.DataFrame, output: Path, *, force: bool = False) -> None:
    """Write ``frame`` as CSV, Parquet or JSON Lines, chosen by the extension of ``output``."""
    with open_table(output, force=force) as sink:
        sink.write(frame)


def _table_suffix(output: Path) -> str:
    suffix = output.suffix.lower()
    if suffix not in TABLE_SUFFIXES:
        raise OutputError(
            f"cannot write {output}: unknown table type {output.suffix or '(none)'!r}; "
            "use .csv, .parquet or .jsonl"
        )
    return suffix


class TableSink:
    """A flat table written in parts (CSV, Parquet or JSON Lines): every part has the first
    part's columns and types; the file appears under its name only when all are written."""

    def __init__(self, path: Path, suffix: str) -> None:
        self.path, self.suffix = path, suffix
        self.schema: pa.Schema | None = None
        self._writer: pa_csv.CSVWriter | pq.ParquetWriter | None = None
        self.rows = 0

    def write(self, frame: pd.DataFrame) -> None:
        """Append the rows of ``frame`` (the header is written with the first part)."""
        if self.suffix == ".jsonl":
            _write_jsonl(frame, self.path, append=self.rows > 0)
            self.rows += len(frame)
        else:
            self._write_arrow(_arrow_table(frame, neutralise=self.suffix == ".csv"))

    def _write_arrow(self, table: pa.Table) -> None:
        if self.schema is None:
            self.schema = table.schema
            self._writer = pa_csv.CSVWriter(
                str(self.path), table.schema, write_options=pa_csv.WriteOptions(
                    include_header=True, quoting_style="needed")) \
                if self.suffix == ".csv" else pq.ParquetWriter(str(self.path), table.schema)
        elif table.schema != self.schema:
            table = _conform(table, self.schema)
        self._writer.write_table(table)  # type: ignore[union-attr]
        self.rows += table.num_rows

    def close(self) -> None:
        """Finish the file (a table with no part at all is written as an empty table)."""
        if self._writer is None and self.suffix != ".jsonl":
            self.write(pd.DataFrame())
        if self._writer is not None:
            self._writer.close()
            self._writer = None


def _conform(table: pa.Table, schema: pa.Schema) -> pa.Table:
    """A later part cast to the first part's types (a column of nulls, an integer column
    that met a float), so that every part of the file has one schema."""
    if table.schema.names != schema.names:
        raise OutputError("internal error: parts of one output table differ in their columns")
    try:
        return table.cast(schema)
    except (pa.ArrowInvalid, pa.ArrowNotImplementedError) as exc:
        raise OutputError(f"cannot append a part of the results: {exc}") from exc


@contextlib.contextmanager
def open_table(output: Path, *, force: bool = False) -> Iterator[TableSink]:
    """A :class:`TableSink` for ``output`` (kind by extension), written atomically: on an
    error nothing is left under the output's name."""
    output = Path(output)
    suffix = _table_suffix(output)
    check_output(output, force=force)
    with atomic_output(output) as tmp:
        sink = TableSink(tmp, suffix)
        try:
            yield sink
        finally:
            sink.close()


_TRIGGER_REGEX = "^[=+@\\t\\r-]"


def neutralise_text(values: pa.Array, text_cells: pa.Array | None = None) -> pa.Array:
    """Text cells that a spreadsheet would read as a formula, prefixed with ``'`` (OWASP).

    ``text_cells`` (booleans) limits this to cells that were text, in a column of mixed values.
    """
    risky = pc.fill_null(pc.match_substring_regex(values, _TRIGGER_REGEX), False)
    if text_cells is not None:
        risky = pc.and_(risky, text_cells)
    if not pc.any(risky).as_py():
        return values
    quoted = pc.binary_join_element_wise(pa.scalar("'"), values, "")
    return pc.if_else(risky, quoted, values)


def _text_like(series: pd.Series) -> bool:
    return series.dtype.kind == "O" or isinstance(series.dtype, pd.StringDtype)


def _text_array(series: pd.Series) -> tuple[pa.Array, pa.Array | None]:
    """A column of text (or of mixed objects, written with ``str``) as an Arrow string array.

    For a mixed column, also which cells were text (a number there is not neutralised).
    Text and categorical columns of text are converted by Arrow, without a Python object per
    cell.
    """
    if isinstance(series.dtype, pd.StringDtype) and series.dtype.storage == "pyarrow":
        return pa.chunked_array(pa.array(series.array)).combine_chunks().cast(pa.string()), None
    if isinstance(series.dtype, pd.CategoricalDtype) and \
            pd.api.types.infer_dtype(series.cat.categories, skipna=True) in ("string", "empty"):
        categories = pa.array(series.cat.categories.astype(object), type=pa.string())
        codes = series.cat.codes.to_numpy()
        return categories.take(pa.array(codes, mask=codes < 0)), None
    values = series.tolist()
    kind = pd.api.types.infer_dtype(values, skipna=True)
    if kind in ("string", "empty"):
        return pa.array(values, type=pa.string(), from_pandas=True), None
    text_cells = pa.array([isinstance(v, str) for v in values], type=pa.bool_())
    values = [None if _missing(v) else v if isinstance(v, str) else str(v) for v in values]
    return pa.array(values, type=pa.string()), text_cells


def _arrow_table(frame: pd.DataFrame, *, neutralise: bool = False) -> pa.Table:
    """An Arrow table of ``frame``: text columns as strings, other columns as their type."""
    arrays = []
    for name in frame.columns:
        series = frame[name]
        if _text_like(series):
            array, text_cells = _text_array(series)
            arrays.append(neutralise_text(array, text_cells) if neutralise else array)
        else:
            arrays.append(pa.Array.from_pandas(series))
    names = [str(c) for c in frame.columns]
    if neutralise:  # header names can come from an input file too
        names = neutralise_text(pa.array(names, type=pa.string())).to_pylist()
    return pa.Table.from_arrays(arrays, names=names)


def _missing(value: object) -> bool:
    if value is None or value is pd.NA or value is pd.NaT:
        return True
    return isinstance(value, float) and math.isnan(value)


def _json_fragments(series: pd.Series) -> list[str]:
    """JSON text of each value of a column: numbers with every digit, NaN and inf as null."""
    kind = series.dtype.kind
    if kind == "f":
        arr = series.to_numpy(dtype=float, na_value=np.nan)
        out = [repr(v) for v in arr.tolist()]
        for i in np.flatnonzero(~np.isfinite(arr)).tolist():
            out[i] = "null"
        return out
    if kind in "iu" and not series.isna().any():
        return [str(v) for v in series.tolist()]
    if kind == "b" and not series.isna().any():
        return ["true" if v else "false" for v in series.tolist()]
    dumps = json.JSONEncoder(ensure_ascii=False, allow_nan=False).encode
    cache: dict[object, str] = {}
    out = []
    for v in series.tolist():
        try:
            text = cache.get(v)
        except TypeError:  # an unhashable value
            text = None
        if text is None:
            text = dumps(_json_value(v))
            with contextlib.suppress(TypeError):
                cache[v] = text
        out.append(text)
    return out


def _json_value(value: object) -> object:
    if _missing(value):
        return None
    if isinstance(value, np.generic):
        value = value.item()
    if isinstance(value, float) and not math.isfinite(value):
        return None
    if isinstance(value, pd.Timestamp | datetime | date):
        return value.isoformat()
    if isinstance(value, str | int | float | bool):
        return value
    return str(value)


def _write_jsonl(frame: pd.DataFrame, path: Path, *, append: bool = False) -> None:
    """One JSON object per line, keys in column order."""
    dumps = json.JSONEncoder(ensure_ascii=False).encode
    columns = [
        [f"{dumps(str(name))}:{frag}" for frag in _json_fragments(frame[name])]
        for name in frame.columns
    ]
    with open(path, "a" if append else "w", encoding="utf-8", newline="\n") as fh:
        if not columns:
            fh.write("{}\n" * len(frame))
            return
        fh.writelines(f"{{{','.join(row)}}}\n" for row in zip(*columns, strict=True))
