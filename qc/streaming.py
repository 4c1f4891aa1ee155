"""The main job on large CSV, TSV and Parquet files: read, evaluate and write in chunks.

A file of a million rows is read a chunk of rows at a time (:func:`qc.io.reader.
read_inspection_chunks`), each chunk is evaluated as a table of its own (every result of a row
depends on that row alone) and appended to the flat output (CSV, Parquet or JSON Lines) while
the next chunk is read, so memory stays bounded by the chunk size, not the file. The output
holds the same rows and cells as a whole-file run. What describes the file as a whole (the
per-characteristic statistics and temperature bands) is in the workbook output and the report,
not in a flat table, and is not computed here.

Files that must be read whole (workbooks, wide sheets, text that pyarrow would split otherwise
than the csv module) go through :func:`qc.pipeline.evaluate_file` instead, with the same
result.
"""

from __future__ import annotations

import time
from collections.abc import Callable
from concurrent.futures import Future, ThreadPoolExecutor
from dataclasses import dataclass, field
from pathlib import Path

import pandas as pd

from qc.core.decision import VERDICT_NAMES
from qc.errors import OutputError
from qc.io.guard import Limits
from qc.io.reader import NotStreamable, read_inspection_chunks
from qc.io.writers import TABLE_SUFFIXES, check_output, open_table
from qc.models import Layout
from qc.pipeline import Evaluation, Settings, evaluate_file, evaluate_table

__all__ = ["CHUNK_ROWS", "StreamedRun", "evaluate_to_table", "streamable"]

#: Rows per chunk: large enough that per-chunk overhead is small, small enough that a chunk's
#: working set (about 4 kB a row, measured with bench/run.py) stays near 200 MB.
CHUNK_ROWS = 50_000
#: Rows needing action kept for the summary (the output's flags and messages hold them all).
ACTIONS_KEPT = 50

#: Called after each chunk with the share of the input read so far and the rows written.
Progress = Callable[[float, int], None]


@dataclass
class StreamedRun:
    """What a run to a flat table produced: counts and notes for the summary, not the rows
    (they are in the output file)."""

    file: str
    output: Path
    rows: int = 0
    counts: dict[str, int] = field(default_factory=lambda: dict.fromkeys(VERDICT_NAMES, 0))
    actions: pd.DataFrame = field(default_factory=pd.DataFrame)
    n_actions: int = 0
    notes: list[str] = field(default_factory=list)
    chunks: int = 0
    streamed: bool = True
    #: wall-clock seconds per stage: read, parse (and validate), compute, write
    timings: dict[str, float] = field(
        default_factory=lambda: dict.fromkeys(("read", "parse", "compute", "write"), 0.0))

    def add(self, ev: Evaluation) -> None:
        """Fold one evaluated chunk (or the whole file) into the summary."""
        self.chunks += 1
        self.rows += len(ev.results)
        for verdict, n in ev.counts.items():
            self.counts[verdict] += n
        self.n_actions += len(ev.actions)
        if len(self.actions) < ACTIONS_KEPT and len(ev.actions):
            self.actions = pd.concat([self.actions, ev.actions.head(ACTIONS_KEPT)],
                                     ignore_index=True).head(ACTIONS_KEPT)
        for note in (*ev.table.warnings, *ev.notes):
            if note not in self.notes:
                self.notes.append(note)


def streamable(path: Path, output: Path) -> bool:
    """Whether a run from ``path`` to ``output`` can go in chunks (by the files' kinds)."""
    return (Path(output).suffix.lower() in TABLE_SUFFIXES
            and Path(path).suffix.lower() in (".csv", ".tsv", ".txt", ".parquet"))


def evaluate_to_table(path: Path | str, output: Path | str, *, layout: Layout | None = None,
                      register: Path | None = None, settings: Settings | None = None,
                      limits: Limits | None = None, force: bool = False,
                      chunk_rows: int = CHUNK_ROWS,
                      progress: Progress | None = None) -> StreamedRun:
    """Evaluate ``path`` and write the flat table ``output`` (.csv, .parquet or .jsonl).

    In chunks of ``chunk_rows`` rows where the input allows it, else in one piece; the output
    is the same either way and appears only when complete. The input file is only read.
    """
    path, output = Path(path), Path(output)
    settings = settings or Settings()
    if output.suffix.lower() not in TABLE_SUFFIXES:
        raise OutputError(f"{output.name}: a run in chunks writes .csv, .parquet or .jsonl")
    check_output(output, force=force, inputs=[path])
    try:
        return _in_chunks(path, output, layout, register, settings, limits, force,
                          chunk_rows, progress)
    except NotStreamable:
        return _whole(path, output, layout, register, settings, limits, force, progress)


def _in_chunks(path: Path, output: Path, layout: Layout | None, register: Path | None,
               settings: Settings, limits: Limits | None, force: bool, chunk_rows: int,
               progress: Progress | None) -> StreamedRun:
    run = StreamedRun(file=path.name, output=output)
    clock = run.timings
    t = time.perf_counter()
    chunked = read_inspection_chunks(path, layout=layout, register=register, limits=limits,
                                     chunk_rows=chunk_rows)
    clock["parse"] += time.perf_counter() - t
    # one writer thread: a chunk is written (pyarrow, outside the GIL) while the next is read
    with open_table(output, force=force) as sink, ThreadPoolExecutor(max_workers=1) as pool:
        pending: Future[float] | None = None

        def timed_write(frame: pd.DataFrame) -> float:
            t0 = time.perf_counter()
            sink.write(frame)
            return time.perf_counter() - t0

        tables = chunked.tables
        while True:
            t = time.perf_counter()
            table = next(tables, None)
            if table is None:
                break
            t1 = time.perf_counter()
            ev = evaluate_table(table, settings, summaries=False)
            ev.source = path
            flat = ev.flat()
            run.add(ev)
            t2 = time.perf_counter()
            if pending is not None:
                clock["write"] += pending.result()
            pending = pool.submit(timed_write, flat)
            clock["compute"] += t2 - t1
            clock["parse"] += t1 - t
            if progress is not None:
                progress(chunked.fraction(), run.rows)
        if pending is not None:
            clock["write"] += pending.result()
    if progress is not None:
        progress(1.0, run.rows)
    # reading and parsing interleave; the reader measured its share of the two
    clock["read"] = chunked.read_seconds
    clock["parse"] -= chunked.read_seconds
    return run


def _whole(path: Path, output: Path, layout: Layout | None, register: Path | None,
           settings: Settings, limits: Limits | None, force: bool,
           progress: Progress | None) -> StreamedRun:
    """The same run with the whole file in memory (inputs that cannot be read in chunks)."""
    from qc.export import write_results

    run = StreamedRun(file=path.name, output=output, streamed=False)
    t = time.perf_counter()
    ev = evaluate_file(path, layout=layout, register=register, settings=settings, limits=limits)
    t1 = time.perf_counter()
    write_results(ev, output, force=force)
    run.timings.update(parse=t1 - t, write=time.perf_counter() - t1)
    run.add(ev)
    if progress is not None:
        progress(1.0, run.rows)
    return run
