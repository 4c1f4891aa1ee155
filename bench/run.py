"""Speed and memory of ``qc`` as ratios against the bare I/O floor: ``python bench/run.py``.

Each case (input file, output kind, rows) runs in a fresh subprocess so that its peak memory
(``ru_maxrss``) is its own; the floor of the same files runs in another. Each case goes the
way ``qc normalise`` takes it: CSV and Parquet inputs to a flat table in chunks
(``qc.streaming.evaluate_to_table``, stage times from the run), workbooks whole, stage by
stage: read (the file to a grid of cells, plus the input's SHA-256 that the method sheet
records), parse and validate (the rest of ``read_inspection``), compute (``evaluate_table``)
and write (``write_results``). The core alone (``qc.core.budget.evaluate`` and
``qc.core.decision.decide``) is timed again on the same measurements after the case.

``--quick`` runs 10 000 rows only (under a minute); the full run (10 k, 100 k, 1 M rows of CSV,
XLSX up to 100 k) takes several minutes. ``--profile`` also writes cProfile listings of the
largest case (up to 100 k rows) of each kind to ``bench/out/profile_<case>.txt``. Results:
``bench/out/latest.md`` (printed) and ``bench/out/latest.json``.
"""

from __future__ import annotations

import argparse
import itertools
import json
import os
import platform
import resource
import subprocess
import sys
import time
from dataclasses import dataclass
from pathlib import Path
from typing import Any

HERE = Path(__file__).resolve().parent
OUT = HERE / "out"
# run as a script: bench/ modules import each other, and qc is found even when not installed
sys.path[:0] = [str(HERE), str(HERE.parent)]

#: Goals this benchmark checks (set by the project lead).
GOAL_CORE_PER_S = 2e6
GOAL_FLOOR_RATIO = 1.5
GOAL_MEMORY_RATIO = 3.0
GOAL_LINEAR = 11.0

#: Outputs up to this size also get the (slow, informational) xlsxwriter floor.
XLSXWRITER_FLOOR_MAX_BYTES = 16 << 20

#: Largest case profiled (cProfile slows a run about twofold; 100 k rows show the same spots).
PROFILE_MAX_ROWS = 100_000

#: One case's figures as the workers report them and the report reads them.
Result = dict[str, Any]

QUICK_SIZES = (10_000,)
FULL_SIZES = (10_000, 100_000, 1_000_000)


@dataclass(frozen=True)
class Case:
    """One benchmark case: which input kind, which output kind, how many rows."""

    source: str  # "csv", "parquet" or "xlsx"
    target: str  # "csv", "parquet" or "xlsx"
    rows: int

    @property
    def name(self) -> str:
        return f"{self.source}→{self.target} {self.rows:,}"

    @property
    def slug(self) -> str:
        return f"{self.source}-{self.target}-{self.rows}"


def _now() -> tuple[float, float]:
    """Wall-clock and CPU seconds of this process (CPU time is less hurt by a busy machine)."""
    return time.perf_counter(), time.process_time()


def _maxrss_mb() -> float:
    """Peak resident memory of this process so far, MB (Linux reports KiB)."""
    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024


# -- the subprocess side ---------------------------------------------------------------------
def worker_pipeline(src: Path, out: Path) -> dict[str, float]:
    """Run one case the way ``qc normalise`` runs it: CSV or Parquet to a flat table in
    chunks (``qc.streaming``), anything else whole, stage by stage; figures as a dict."""
    from qc.streaming import streamable

    if streamable(src, out):
        return worker_streamed(src, out)
    return worker_whole(src, out)


def worker_streamed(src: Path, out: Path) -> dict[str, float]:
    """A run in chunks: stage times from the run itself; peak memory measured before the
    output table and the core are measured on a whole-file evaluation (not timed)."""
    from qc.streaming import evaluate_to_table

    base = _maxrss_mb()
    out.unlink(missing_ok=True)
    w, c = _now()
    run = evaluate_to_table(src, out, force=True)
    w1, c1 = _now()
    peak = _maxrss_mb()
    if not run.streamed:
        raise SystemExit(f"{src.name} was not read in chunks")
    figures = {k: run.timings[k] for k in ("read", "parse", "compute", "write")}
    figures["total"] = w1 - w  # stages overlap (the writer thread): the wall clock is the total
    figures["cpu_total"] = c1 - c  # CPU of every thread; no split per stage
    return figures | _after_case(src, out, base, peak) | {"chunks": float(run.chunks)}


def _after_case(src: Path, out: Path, base: float, peak: float) -> dict[str, float]:
    """Figures taken after a case from a whole-file evaluation of the same input: the
    in-memory size of the flat output table and the core's throughput."""
    from qc.pipeline import Settings, evaluate_file

    ev = evaluate_file(src)
    return _core_figures(ev, Settings()) | {
        "base_mb": base, "peak_mb": peak,
        "table_mb": float(ev.flat().memory_usage(deep=True, index=False).sum()) / 2**20,
        "rows_in": float(len(ev.table.frame)), "rows_out": float(len(ev.results)),
        "row_errors": float(len(ev.table.errors)),
        "output_mb": out.stat().st_size / 2**20,
    }


def _core_figures(ev: Any, settings: Any) -> dict[str, float]:
    """``qc.core.budget.evaluate`` + ``qc.core.decision.decide`` on the case's measurements:
    first pass and best of two more (the first pays for fresh memory pages)."""
    import numpy as np

    from qc.core.budget import evaluate
    from qc.core.decision import decide

    m, frame = ev.measurements, ev.table.frame
    lsl = frame["lower_limit_mm"].to_numpy(dtype=float, na_value=np.nan)
    usl = frame["upper_limit_mm"].to_numpy(dtype=float, na_value=np.nan)
    core = []
    for _ in range(3):
        c0 = time.perf_counter()
        b = evaluate(m, coverage=settings.coverage, k=settings.k, t_ref=settings.t_ref)
        decide(b.size_at_20, b.U, b.u_c, lsl, usl, ev.rule, uncorrected=b.uncorrected)
        core.append(time.perf_counter() - c0)
    return {"core_first": core[0], "core_best": min(core[1:])}


def worker_whole(src: Path, out: Path) -> dict[str, float]:
    """Run one case through the library API with the whole file in memory, stage by stage."""
    import qc.io.reader as reader
    from qc.export import write_results
    from qc.pipeline import Settings, evaluate_table, sha256_of

    base = _maxrss_mb()
    in_grid = [0.0, 0.0]  # wall, CPU seconds spent in read_grid
    real_read_grid = reader.read_grid

    def timed_read_grid(*args: object, **kwargs: object) -> object:
        t, c = time.perf_counter(), time.process_time()
        try:
            return real_read_grid(*args, **kwargs)  # type: ignore[arg-type]
        finally:
            in_grid[0] += time.perf_counter() - t
            in_grid[1] += time.process_time() - c

    reader.read_grid = timed_read_grid  # type: ignore[assignment]
    out.unlink(missing_ok=True)
    marks = [_now()]
    table = reader.read_inspection(src)
    marks.append(_now())
    settings = Settings()
    ev = evaluate_table(table, settings)
    marks.append(_now())
    ev.input_sha256 = sha256_of(src)
    ev.source = src
    marks.append(_now())
    write_results(ev, out, force=True)
    marks.append(_now())
    peak = _maxrss_mb()

    figures: dict[str, float] = {}
    for clock, prefix in ((0, ""), (1, "cpu_")):
        step = [b[clock] - a[clock] for a, b in itertools.pairwise(marks)]
        stages = {"read": in_grid[clock] + step[2], "parse": step[0] - in_grid[clock],
                  "compute": step[1], "write": step[3]}
        stages["total"] = sum(stages.values())
        figures.update({prefix + k: v for k, v in stages.items()})

    flat = ev.flat()
    return figures | _core_figures(ev, settings) | {
        "rows_in": float(len(ev.table.frame)), "rows_out": float(len(flat)),
        "base_mb": base, "peak_mb": peak,
        "table_mb": float(flat.memory_usage(deep=True, index=False).sum()) / 2**20,
        "row_errors": float(len(ev.table.errors)),
        "output_mb": out.stat().st_size / 2**20,
    }


def worker_floor(src: Path, out: Path) -> dict[str, float]:
    """The floor of one case: bare read of ``src``, bare write of the cells of ``out``."""
    import floors

    scratch = out.with_name(f"floor-{out.name}")
    base = _maxrss_mb()
    read = floors.read_floor(src)
    figures = {"peak_read_mb": _maxrss_mb(), "base_mb": base}
    write = floors.write_floor(out, scratch)
    figures |= {"read": read.wall, "write": write.wall, "total": read.wall + write.wall,
                "cpu_read": read.cpu, "cpu_write": write.cpu, "cpu_total": read.cpu + write.cpu}
    if src.suffix.lower() == ".csv":
        figures["read_stdlib"] = floors.stdlib_read_floor(src).wall
    if out.suffix.lower() == ".xlsx" and out.stat().st_size < XLSXWRITER_FLOOR_MAX_BYTES:
        figures["write_xlsxwriter"] = floors.xlsxwriter_floor(out, scratch).wall
    scratch.unlink(missing_ok=True)
    return figures


def worker_profile(src: Path, out: Path, listing: Path) -> dict[str, float]:
    """The case under cProfile; the top functions by own and by cumulative time to ``listing``."""
    import cProfile
    import io
    import pstats

    import qc.export
    import qc.io.reader
    import qc.pipeline  # noqa: F401  (imports outside the profile: a long run pays them once)

    prof = cProfile.Profile()
    prof.enable()
    worker_pipeline(src, out)
    prof.disable()
    prof.dump_stats(listing.with_suffix(".prof"))  # for pstats/snakeviz: callers, callees
    text = io.StringIO()
    stats = pstats.Stats(prof, stream=text).strip_dirs()
    print("== by own time ==", file=text)
    stats.sort_stats("tottime").print_stats(30)
    print("== by cumulative time ==", file=text)
    stats.sort_stats("cumulative").print_stats(40)
    listing.write_text(text.getvalue(), encoding="utf-8")
    return {}


# -- the parent side -------------------------------------------------------------------------
def _spawn(*args: str) -> dict[str, float]:
    """Run this script as a worker in a fresh interpreter; its figures from its last line."""
    env = dict(os.environ, PYTHONHASHSEED="0")
    proc = subprocess.run([sys.executable, str(Path(__file__).resolve()), "--worker", *args],
                          capture_output=True, text=True, env=env, check=False)
    if proc.returncode != 0:
        raise SystemExit(f"benchmark worker {args[0]} failed:\n{proc.stderr[-4000:]}")
    return json.loads(proc.stdout.strip().splitlines()[-1])


def cases(sizes: tuple[int, ...]) -> list[Case]:
    """CSV → CSV, CSV → Parquet and Parquet → Parquet at every size, XLSX → XLSX up to the
    XLSX limit."""
    from generate import XLSX_MAX_ROWS

    out = [Case(a, b, n) for a, b in (("csv", "csv"), ("csv", "parquet"), ("parquet", "parquet"))
           for n in sizes]
    out += [Case("xlsx", "xlsx", n) for n in sizes if n <= XLSX_MAX_ROWS]
    return out


def run_cases(todo: list[Case], inputs: dict[str, Path]) -> list[Result]:
    """Every case and its floor, each in its own subprocess."""
    work = OUT / "work"
    work.mkdir(parents=True, exist_ok=True)
    results = []
    for case in todo:
        src = inputs[f"{case.source}-{case.rows}"]
        dst = work / f"{case.slug}.{case.target}"
        print(f"  {case.name} …", end="", flush=True)
        qc_fig = _spawn("pipeline", str(src), str(dst))
        floor_fig = _spawn("floor", str(src), str(dst))
        dst.unlink(missing_ok=True)
        print(f" {qc_fig['total']:.2f} s (floor {floor_fig['total']:.2f} s)", flush=True)
        results.append({"case": case.name, "source": case.source, "target": case.target,
                        "rows": case.rows, "qc": qc_fig, "floor": floor_fig})
    return results


def profile_cases(todo: list[Case], inputs: dict[str, Path]) -> list[Path]:
    """cProfile listings of the largest case up to PROFILE_MAX_ROWS of each input/output pair."""
    largest: dict[tuple[str, str], Case] = {}
    for c in todo:
        if c.rows > PROFILE_MAX_ROWS:
            continue
        key = (c.source, c.target)
        if key not in largest or c.rows > largest[key].rows:
            largest[key] = c
    paths = []
    for case in largest.values():
        src = inputs[f"{case.source}-{case.rows}"]
        dst = OUT / "work" / f"profile-{case.slug}.{case.target}"
        listing = OUT / f"profile_{case.slug}.txt"
        print(f"  profiling {case.name} …", flush=True)
        _spawn("profile", str(src), str(dst), str(listing))
        dst.unlink(missing_ok=True)
        paths.append(listing)
    return paths


def machine() -> dict[str, str]:
    """What the figures were measured on."""
    cpu = "unknown"
    try:
        for line in Path("/proc/cpuinfo").read_text().splitlines():
            if line.startswith("model name"):
                cpu = line.split(":", 1)[1].strip()
                break
    except OSError:
        pass
    from importlib.metadata import version

    libs = ", ".join(f"{name} {version(name)}" for name in
                     ("numpy", "pandas", "pyarrow", "python-calamine", "xlsxwriter"))
    return {"date": time.strftime("%Y-%m-%d %H:%M UTC", time.gmtime()), "libraries": libs,
            "nproc": str(os.cpu_count()), "cpu": cpu,
            "python": platform.python_version(), "system": platform.platform(),
            "load": " ".join(f"{x:.2f}" for x in os.getloadavg())}


def _mark(ok: bool) -> str:
    return "met" if ok else "NOT met"



def summarise(results: list[Result], info: dict[str, str]) -> str:
    """The Markdown report: one row per case, then each goal with its figures."""
    lines = [f"# qc benchmark — {info['date']}", "",
             f"{info['cpu']}, {info['nproc']} CPUs, Python {info['python']}, {info['system']}; "
             f"load average {info['load']}", "", info["libraries"],
             "", "| case | read s | parse+validate s | compute s | write s | total s (CPU s) "
             "| rows/s | floor s: read+write (CPU s) | × floor (CPU) | peak MB | table MB "
             "| peak/table |",
             "|---|---:|---:|---:|---:|---:|---:|---:|---:|---:|---:|---:|"]
    for r in results:
        q, f = r["qc"], r["floor"]
        rise = q["peak_mb"] - q["base_mb"]
        lines.append(
            f"| {r['case']} | {q['read']:.2f} | {q['parse']:.2f} | {q['compute']:.2f} "
            f"| {q['write']:.2f} | {q['total']:.2f} ({q['cpu_total']:.2f}) "
            f"| {r['rows'] / q['total']:,.0f} "
            f"| {f['read']:.2f}+{f['write']:.2f} = {f['total']:.2f} ({f['cpu_total']:.2f}) "
            f"| {q['total'] / f['total']:.1f} ({q['cpu_total'] / f['cpu_total']:.1f}) "
            f"| {rise:,.0f} | {q['table_mb']:,.0f} | {rise / q['table_mb']:.1f} |")
    bases = ", ".join(sorted({f"{r['qc']['base_mb']:.0f}" for r in results}))
    lines += ["", "CSV and Parquet inputs to CSV or Parquet run in chunks, as `qc normalise` "
              "runs them (`qc.streaming`): the writer thread overlaps the other stages, so "
              "the total is the wall clock of the whole run and the stages may add up to "
              "more. For whole-file cases (XLSX), read includes the input's SHA-256 (the "
              "method sheet records it). Peak MB is "
              "the rise of the peak resident memory above the interpreter with `qc` imported "
              f"({bases} MB); table MB is the in-memory size of the flat output table "
              "(`Evaluation.flat()`, deep). The XLSX write floor is the output's zip members "
              "deflated again (see bench/floors.py). Goals are judged on wall-clock time; CPU "
              "time (in brackets) is less disturbed by other work on the machine.", ""]
    lines += ["## Goals", "", *goals(results)]
    extra = [r for r in results if "read_stdlib" in r["floor"] or "write_xlsxwriter" in r["floor"]]
    if extra:
        lines += ["", "## Other floors (not in the ratio)", ""]
        for r in extra:
            f = r["floor"]
            if "read_stdlib" in f:
                lines.append(f"- {r['case']}: pyarrow.csv reads the input in "
                             f"{f['read']:.2f} s (stdlib csv: {f['read_stdlib']:.2f} s)")
            if "write_xlsxwriter" in f:
                lines.append(f"- {r['case']}: xlsxwriter writes the output's cells in "
                             f"{f['write_xlsxwriter']:.2f} s (zip floor: {f['write']:.2f} s)")
    return "\n".join(lines) + "\n"


def goals(results: list[Result]) -> list[str]:
    """One line per goal: met / not met, with the figures behind it."""
    out = []
    by_pair: dict[tuple[str, str], list[Result]] = {}
    for r in results:
        by_pair.setdefault((r["source"], r["target"]), []).append(r)
    for rs in by_pair.values():
        rs.sort(key=lambda x: int(x["rows"]))
    core_case = by_pair.get(("csv", "csv"), [None])[-1]
    if core_case is not None:
        q = core_case["qc"]
        rate = q["rows_in"] / q["core_best"]
        out.append(f"- core ≥ {GOAL_CORE_PER_S / 1e6:.0f} M measurements/s on "
                   f"{core_case['rows']:,} rows: {_mark(rate >= GOAL_CORE_PER_S)} — "
                   f"{rate / 1e6:.2f} M/s ({q['core_best']:.3f} s; first pass "
                   f"{q['core_first']:.3f} s)")
    for rs in by_pair.values():
        r = rs[-1]
        q, f = r["qc"], r["floor"]
        ratio = q["total"] / f["total"]
        line = (f"- {r['case']} ≤ {GOAL_FLOOR_RATIO}× floor: {_mark(ratio <= GOAL_FLOOR_RATIO)} "
                f"— {ratio:.1f}× ({q['total']:.2f} s vs {f['total']:.2f} s; CPU time "
                f"{q['cpu_total'] / f['cpu_total']:.1f}×)")
        if r["source"] in ("csv", "parquet"):
            rise = q["peak_mb"] - q["base_mb"]
            mem = rise / q["table_mb"]
            line += (f"; peak memory ≤ {GOAL_MEMORY_RATIO:g}× table: "
                     f"{_mark(mem <= GOAL_MEMORY_RATIO)} — {mem:.1f}× ({rise:,.0f} MB vs "
                     f"{q['table_mb']:,.0f} MB)")
        out.append(line)
    for (s, t), rs in by_pair.items():
        for a, b in itertools.pairwise(rs):
            k = int(b["rows"]) // int(a["rows"])
            limit = GOAL_LINEAR * k / 10
            ratio = b["qc"]["total"] / a["qc"]["total"]
            cpu = b["qc"]["cpu_total"] / a["qc"]["cpu_total"]
            out.append(f"- linear growth {s}→{t} {a['rows']:,} → {b['rows']:,} rows (×{k}), "
                       f"time ratio ≤ {limit:g}: {_mark(ratio <= limit)} — ×{ratio:.1f} "
                       f"(CPU time ×{cpu:.1f})")
    return out


def main(argv: list[str] | None = None) -> None:
    """Command line (see the module docstring)."""
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--quick", action="store_true", help="10 000 rows only (under a minute)")
    ap.add_argument("--profile", action="store_true", help="also profile the largest cases")
    ap.add_argument("--worker", nargs="+", help=argparse.SUPPRESS)
    args = ap.parse_args(argv)
    if args.worker:
        kind, *paths = args.worker
        fn = {"pipeline": worker_pipeline, "floor": worker_floor, "profile": worker_profile}[kind]
        print(json.dumps(fn(*(Path(p) for p in paths))))
        return

    from generate import ensure_inputs

    sizes = QUICK_SIZES if args.quick else FULL_SIZES
    print(f"inputs ({', '.join(f'{n:,}' for n in sizes)} rows) …", flush=True)
    load_start = " ".join(f"{x:.2f}" for x in os.getloadavg())
    inputs = ensure_inputs(list(sizes))
    todo = cases(sizes)
    results = run_cases(todo, inputs)
    info = machine()
    info["load"] = f"{load_start} at the start, {info['load']} at the end"
    report = summarise(results, info)
    OUT.mkdir(exist_ok=True)
    (OUT / "latest.md").write_text(report, encoding="utf-8")
    (OUT / "latest.json").write_text(json.dumps({"machine": info, "results": results}, indent=1),
                                     encoding="utf-8")
    print()
    print(report)
    if args.profile:
        for p in profile_cases(todo, inputs):
            print(f"profile: {p.relative_to(HERE.parent)}")


if __name__ == "__main__":
    main()
