"""The main job on large CSV, TSV and Parquet files: read, evaluate and write in chunks.

A file of a million rows is read a chunk of rows at a time (:func:`qc.io.reader.
read_inspection_chunks`), each chunk is evaluated as a table of its own (every result of a row
depends on that row alone) and appended to the flat output (CSV, Parquet or JSON Lines), so
memory stays bounded by the chunk size, not the file. The output holds the same rows and cells
as a whole-file run. What describes the file as a whole (the per-characteristic statistics and
temperature bands) is in the workbook output and the report, not in a flat table, and is not
computed here.

A writer thread writes one chunk while the next is read and evaluated (pyarrow writes mostly
outside the GIL).

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
from qc.io.reader import ChunkedInspection, InspectionTable, NotStreamable, read_inspection_chunks
from qc.io.writers import TABLE_SUFFIXES, TableSink, check_output, open_table
from qc.models import Layout
from qc.pipeline import Settings, evaluate_file, evaluate_table

__all__ = ["CHUNKED_INPUTS", "CHUNK_ROWS", "StreamedRun", "evaluate_to_table", "streamable"]

#: Rows per chunk: large enough that per-chunk overhead is small, small enough that a chunk's
#: working set (about 4 kB a row, measured with bench/run.py) stays near 200 MB.
CHUNK_ROWS = 50_000
#: Kinds of input that can be read in chunks (a file may still turn out to need a whole read).
CHUNKED_INPUTS = (".csv", ".tsv", ".txt", ".parquet")
#: Rows needing action kept for the summary (the output's flags and messages hold them all).
ACTIONS_KEPT = 50

#: Called after each chunk with the share of the input read so far and the rows written.
Progress = Callable[[float, int], None]

_STAGES = ("read", "parse", "compute", "write")


@dataclass
class ChunkSummary:
    """What one evaluated chunk tells the summary of the run."""

    rows: int
    counts: dict[str, int]
    actions: pd.DataFrame
    n_actions: int
    notes: list[str]
    timings: dict[str, float]


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
    #: seconds per stage: read, parse (and validate), compute, write (the writer thread
    #: overlaps the others, so they can add up to more than the run took)
    timings: dict[str, float] = field(default_factory=lambda: dict.fromkeys(_STAGES, 0.0))

    def add(self, part: ChunkSummary) -> None:
        """Fold one evaluated chunk (or the whole file) into the summary."""
        self.chunks += 1
        self.rows += part.rows
        for verdict, n in part.counts.items():
            self.counts[verdict] += n
        self.n_actions += part.n_actions
        if len(self.actions) < ACTIONS_KEPT and len(part.actions):
            self.actions = pd.concat([self.actions, part.actions],
                                     ignore_index=True).head(ACTIONS_KEPT)
        for note in part.notes:
            if note not in self.notes:
                self.notes.append(note)
        for k, v in part.timings.items():
            self.timings[k] += v


def streamable(path: Path, output: Path) -> bool:
    """Whether a run from ``path`` to ``output`` can go in chunks (by the files' kinds)."""
    return (Path(output).suffix.lower() in TABLE_SUFFIXES
            and Path(path).suffix.lower() in CHUNKED_INPUTS)


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
        t = time.perf_counter()
        chunked = read_inspection_chunks(path, layout=layout, register=register,
                                         limits=limits, chunk_rows=chunk_rows)
        run = StreamedRun(file=path.name, output=output)
        run.timings["parse"] += time.perf_counter() - t
        with open_table(output, force=force) as sink:
            _chunk_by_chunk(chunked, sink, settings, path, run, progress)
        # reading and parsing interleave in this process: the reader measured its share
        run.timings["read"] += chunked.read_seconds
        run.timings["parse"] -= chunked.read_seconds
    except NotStreamable:
        return _whole(path, output, layout, register, settings, limits, force, progress)
    if progress is not None:
        progress(1.0, run.rows)
    return run


def _evaluated(table: InspectionTable, settings: Settings, source: Path,
               ) -> tuple[pd.DataFrame, ChunkSummary]:
    """One chunk's flat output rows and its summary."""
    t = time.perf_counter()
    ev = evaluate_table(table, settings, summaries=False)
    ev.source = source
    flat = ev.flat()
    summary = ChunkSummary(rows=len(ev.results), counts=ev.counts,
                           actions=ev.actions.head(ACTIONS_KEPT), n_actions=len(ev.actions),
                           notes=[*table.warnings, *ev.notes],
                           timings={"compute": time.perf_counter() - t})
    return flat, summary


def _chunk_by_chunk(chunked: ChunkedInspection, sink: TableSink, settings: Settings,
                    path: Path, run: StreamedRun, progress: Progress | None) -> None:
    """Every chunk read, evaluated and handed to one writer thread, which writes it (pyarrow,
    mostly outside the GIL) while the next is read and evaluated."""
    with ThreadPoolExecutor(max_workers=1) as pool:
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
            run.timings["parse"] += time.perf_counter() - t
            flat, summary = _evaluated(table, settings, path)
            run.add(summary)
            if pending is not None:
                run.timings["write"] += pending.result()
            pending = pool.submit(timed_write, flat)
            if progress is not None:
                progress(chunked.fraction(), run.rows)
        if pending is not None:
            run.timings["write"] += pending.result()


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
    run.add(ChunkSummary(rows=len(ev.results), counts=ev.counts,
                         actions=ev.actions.head(ACTIONS_KEPT), n_actions=len(ev.actions),
                         notes=[*ev.table.warnings, *ev.notes],
                         timings={"parse": t1 - t, "write": time.perf_counter() - t1}))
    if progress is not None:
        progress(1.0, run.rows)
    return run
