"""Terminal rendering of `qc` results with rich (the only module that imports it)."""

from __future__ import annotations

import math
from collections.abc import Callable, Iterator
from contextlib import contextmanager
from pathlib import Path
from typing import Any

from rich.console import Console
from rich.progress import (
    BarColumn,
    MofNCompleteColumn,
    Progress,
    TaskProgressColumn,
    TextColumn,
    TimeElapsedColumn,
)
from rich.table import Table

from qc.units import MM_PER_UNIT

console = Console()
err_console = Console(stderr=True)

_VERDICT_STYLE = {"conforms": "bold", "nonconforming": "bold reverse", "borderline":
                  "bold italic underline", "not evaluated": "dim"}


def error(message: str) -> None:
    """One line, no traceback."""
    err_console.print(f"[bold]error:[/bold] {message}", highlight=False, soft_wrap=True)


def info(message: str) -> None:
    console.print(message, highlight=False, soft_wrap=True)


@contextmanager
def progress(show: bool) -> Iterator[Callable[[], None]]:
    """A progress bar over files when there are several; a no-op step otherwise."""
    if not show:
        yield lambda: None
        return
    with Progress(TextColumn("files"), BarColumn(), MofNCompleteColumn(),
                  console=err_console, transient=True) as bar:
        task = bar.add_task("files", total=None)
        yield lambda: bar.advance(task)


def _num(v: Any, digits: int = 4) -> str:
    if v is None or (isinstance(v, float) and math.isnan(v)):
        return ""
    if isinstance(v, float) and math.isinf(v):
        return "∞"
    if isinstance(v, float):
        return f"{v:.{digits}g}"
    return str(v)


def summary(ev, out: Path, written) -> None:
    """Counts per verdict and the rows that need action, of a whole-file evaluation."""
    run_summary(Path(ev.table.file).name, len(ev.results), ev.counts, ev.actions,
                len(ev.actions), [*ev.notes, *(written.notes if written else ())], out)


def run_summary(name: str, rows: int, counts: dict[str, int], actions, n_actions: int,
                notes: list[str], out: Path) -> None:
    """Counts per verdict, the first rows that need action, notes and where the results are."""
    t = Table(title=f"{name}: {rows} measurements", title_justify="left")
    t.add_column("verdict")
    t.add_column("rows", justify="right")
    for v, n in counts.items():
        t.add_row(f"[{_VERDICT_STYLE[v]}]{v}[/]", str(n))
    console.print(t)
    if n_actions:
        a = Table(title="Needs action", title_justify="left")
        for col in ("row", "part", "characteristic", "action"):
            a.add_column(col)
        shown = actions.head(15)
        for r in shown.itertuples(index=False):
            a.add_row(str(r.source_row), str(r.part), str(r.characteristic), str(r.action))
        console.print(a)
        if n_actions > len(shown):
            where = ("the flags and message columns of the output"
                     if out.suffix.lower() in (".csv", ".parquet", ".jsonl")
                     else "the Actions sheet")
            info(f"… and {n_actions - len(shown)} more in {where}")
    for note in notes:
        info(f"note: {note}")
    info(f"results: {out}")


@contextmanager
def rows_progress(show: bool, name: str) -> Iterator[Callable[[float, int], None]]:
    """A progress bar over one large file read in chunks: share read, rows written."""
    if not show:
        yield lambda fraction, rows: None
        return
    with Progress(TextColumn(name), BarColumn(), TaskProgressColumn(),
                  TextColumn("{task.fields[rows]:,} rows"), TimeElapsedColumn(),
                  console=err_console, transient=True) as bar:
        task = bar.add_task(name, total=1.0, rows=0)
        yield lambda fraction, rows: bar.update(task, completed=fraction, rows=rows,
                                                refresh=True)


def check(table) -> None:
    """Every problem with its place, then a one-line tally."""
    for w in table.warnings:
        info(f"note: {w}")
    for e in table.errors:
        console.print(e.message, highlight=False, soft_wrap=True)
    rows = len({e.index for e in table.errors})
    info(f"{len(table.frame)} rows read, {rows} with errors, {len(table.errors)} problems")


def explain(ev, i: int, mc) -> None:
    """The budget table of one measurement, its decision and zones, and optionally MC."""
    res = ev.results.iloc[i]
    f = ev.table.frame.iloc[i]
    b = ev.budget.row(i)
    unit = res["unit"]
    scale = MM_PER_UNIT.get(unit, 1.0)
    info(f"[bold]{f['part']} · {f['characteristic']}[/bold]  (row {f['source_row']}, "
         f"{f['source_sheet'] or f['source_file']})")
    t = Table(title=f"Uncertainty budget (u_i(y) in {unit})", title_justify="left")
    for col in ("#", "quantity", "estimate", "u(x_i)", "distribution", "ν", "c_i", "u_i(y)",
                "share"):
        t.add_column(col, justify="left" if col in ("quantity", "distribution") else "right")
    for n, e in enumerate(b.entries, 1):
        t.add_row(str(n), e.quantity, f"{_num(e.estimate)} {e.unit}", f"{_num(e.u, 3)} {e.unit}",
                  e.distribution, _num(e.dof, 3), _num(e.sensitivity, 3),
                  _num(e.contribution / scale, 3), f"{e.share:.1%}")
    console.print(t)
    for n, e in enumerate(b.entries, 1):
        info(f"  {n}. {e.quantity}: {e.source}")
    if b.note:
        info(f"note: {b.note}")
    info(f"reading {_num(res['reading'], 8)} {unit} → size at {ev.settings.t_ref:g} °C "
         f"{_num(res['size_at_20c'], 8)} {unit} (thermal correction "
         f"{_num(res['thermal_correction'])} {unit})")
    info(f"u_c = {_num(res['combined_uncertainty'])} {unit} (first order "
         f"{_num(b.u_c_first_order / scale)}), ν_eff = {_num(res['effective_dof'], 3)}, "
         f"k = {_num(res['coverage_factor'], 3)}, U = {_num(res['expanded_uncertainty'])} {unit}")
    info(f"limits {_num(res['lower_limit'], 8)} … {_num(res['upper_limit'], 8)} {unit}; "
         f"conformance zone {_num(res['accept_low'], 8)} … {_num(res['accept_high'], 8)} "
         f"({ev.rule.name})")
    v = res["verdict"]
    info(f"verdict: [{_VERDICT_STYLE[v]}]{v}[/]  conformance probability "
         f"{_num(res['conformance_probability'], 3)}, C_m {_num(res['capability_index'], 3)}"
         + (f"; flags: {res['flags']}" if res["flags"] else "")
         + (f"; {res['message']}" if res["message"] else ""))
    if b.reference_warning:
        info(f"[bold]warning:[/bold] {b.reference_warning}")
    if mc is not None:
        info(f"Monte Carlo (JCGM 101, {mc.draws} draws, seed {mc.seed}): y = "
             f"{_num(mc.y / scale, 8)}, u = {_num(mc.u / scale)}, {mc.coverage:.2%} interval "
             f"[{_num(mc.low / scale, 8)}, {_num(mc.high / scale, 8)}] {unit}; GUM interval "
             f"[{_num(mc.gum_low / scale, 8)}, {_num(mc.gum_high / scale, 8)}]; "
             f"d_low {_num(mc.d_low / scale, 2)}, d_high {_num(mc.d_high / scale, 2)}, "
             f"δ {_num(mc.delta / scale, 2)}: GUM "
             + ("validated" if mc.validated else "NOT validated (use the Monte Carlo interval)"))


def limits(notation: str, tol, unit: str) -> None:
    info(tol.description or notation)
    info(f"lower limit {_num(tol.lower_limit, 8)} {unit}, upper limit "
         f"{_num(tol.upper_limit, 8)} {unit}")


def materials(lib, search: str | None) -> None:
    t = Table(title="Materials (α near 20 °C)", title_justify="left")
    for col in ("id", "name", "α 1e-6/K", "u(α)", "aliases", "source"):
        t.add_column(col)
    for name in lib.names():
        m = lib.get(name)
        text = " ".join([m.id, m.name, *m.aliases]).lower()
        if search and search.lower() not in text:
            continue
        t.add_row(m.id, m.name, f"{m.cte * 1e6:.2f}", f"{m.cte_u * 1e6:.2f}",
                  ", ".join(m.aliases[:4]), m.source)
    console.print(t)


def instruments(lib) -> None:
    t = Table(title="Instrument types (typical; replace with your calibration certificate)",
              title_justify="left")
    for col in ("id", "name", "kind", "resolution mm", "MPE", "scale"):
        t.add_column(col)
    for name in lib.names():
        it = lib.get(name)
        mpe = f"{it.mpe_a:g} mm" + (f" + L/{it.mpe_k:g}" if it.mpe_k else "")
        t.add_row(it.id, it.name, it.kind, f"{it.resolution:g}", mpe, it.scale_material)
    console.print(t)


def proposal(p) -> None:
    console.print(p.report(), highlight=False)
