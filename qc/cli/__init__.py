"""The `qc` command line: a thin layer that parses options, calls the library and renders.

Exit status: 0 after a successful run whatever the verdicts (unless ``--fail-on`` says
otherwise), 1 when ``check`` found row errors or ``--fail-on`` was triggered, 2 when the input
cannot be read or an option does not fit. Only :class:`qc.errors.QcError` is caught; its message
is printed on one line.
"""

from __future__ import annotations

from enum import StrEnum
from pathlib import Path
from typing import Annotated

import typer

from qc.cli import render
from qc.cli.thermal import register as _register_thermal
from qc.errors import QcError

app = typer.Typer(
    name="qc",
    help="Inspection sheets of machined parts: sizes at 20 °C, uncertainty budgets, verdicts.",
    no_args_is_help=True,
    pretty_exceptions_show_locals=False,
    add_completion=False,
)

#: Inputs larger than this get a progress bar while they are evaluated in chunks.
PROGRESS_MIN_BYTES = 8 << 20

LayoutOpt = Annotated[Path | None, typer.Option(
    "--layout", "-l", help="Layout file (TOML) pinning the shop's headers and defaults.",
    exists=True, dir_okay=False)]
RegisterOpt = Annotated[Path | None, typer.Option(
    "--instruments", help="Instrument register (CSV or XLSX) when it is not a sheet of the "
    "workbook.", exists=True, dir_okay=False)]
SheetOpt = Annotated[str | None, typer.Option("--sheet", help="Sheet to read (default: the "
                                              "first sheet with a recognisable header).")]
RuleOpt = Annotated[str | None, typer.Option(
    "--rule", "-r", help="Decision rule: iso14253 (default), simple, guard:R (w = R·U), "
    "risk:P (specific false-acceptance risk at most P).")]
CoverageOpt = Annotated[float, typer.Option(
    "--coverage", help="Coverage probability of the expanded uncertainty.")]
KOpt = Annotated[float | None, typer.Option("--k", help="Fixed coverage factor instead of a "
                                            "coverage probability.")]
RefOpt = Annotated[float, typer.Option(
    "--reference-temperature", help="Reference temperature in °C. Anything but 20 °C (ISO 1) "
    "is marked with a warning in every output.")]


def _limit_option(name: str, what: str):
    return typer.Option(name, help=f"Safety limit for untrusted files: {what}.",
                        rich_help_panel="Safety limits")


MaxUncompressed = Annotated[float | None, _limit_option("--max-uncompressed-mb",
                                                        "unpacked size of a workbook, MB")]
MaxRatio = Annotated[float | None, _limit_option("--max-ratio", "compression ratio of a part")]
MaxMembers = Annotated[int | None, _limit_option("--max-members", "parts in a workbook")]
MaxRows = Annotated[int | None, _limit_option("--max-rows", "rows of a sheet")]
MaxColumns = Annotated[int | None, _limit_option("--max-columns", "columns of a sheet")]
MaxCells = Annotated[int | None, _limit_option("--max-cells", "used cells of a sheet")]
MaxText = Annotated[float | None, _limit_option("--max-text-mb", "size of a CSV/TSV file, MB")]


def _limits(**given: float | int | None):
    """The bundled safety limits (qc/data/limits.toml), with the options given changed."""
    changes = {k: v for k, v in given.items() if v is not None}
    if not changes:
        return None
    from qc.io.guard import load_limits

    return load_limits().replace(**changes)


class FailOn(StrEnum):
    never = "never"
    nonconforming = "nonconforming"
    borderline = "borderline"


class Units(StrEnum):
    row = "row"
    mm = "mm"
    inch = "in"


def _fail(exc: QcError, code: int = 2) -> typer.Exit:
    render.error(str(exc))
    return typer.Exit(code)


def _settings(rule: str | None, coverage: float, k: float | None, t_ref: float,
              units: str = "row"):
    from qc.pipeline import Settings

    return Settings(rule=rule, coverage=coverage, k=k, t_ref=t_ref, output_unit=units)


def _layout(path: Path | None):
    if path is None:
        return None
    from qc.io.layout import load_layout

    return load_layout(path)


def _inputs(target: Path) -> list[Path]:
    if target.is_dir():
        kinds = (".xlsx", ".xlsm", ".csv", ".tsv", ".ods", ".parquet")
        files = sorted(p for p in target.iterdir() if p.suffix.lower() in kinds
                       and ".checked" not in p.name and not p.name.startswith(("~$", ".")))
        if not files:
            raise typer.BadParameter(f"{target}: no inspection files (.xlsx, .xlsm, .csv, "
                                     ".tsv, .ods) in this folder")
        return files
    return [target]


@app.command()
def normalise(
    input: Annotated[Path, typer.Argument(help="Inspection file, or a folder of them.",
                                          exists=True)],
    output: Annotated[Path | None, typer.Option(
        "--output", "-o", help="Output file (.xlsx, .csv, .parquet, .jsonl) or folder. "
        "Default: NAME.checked.xlsx beside the input.")] = None,
    layout: LayoutOpt = None,
    sheet: SheetOpt = None,
    instruments: RegisterOpt = None,
    rule: RuleOpt = None,
    coverage: CoverageOpt = 0.9545,
    k: KOpt = None,
    reference_temperature: RefOpt = 20.0,
    units: Annotated[Units, typer.Option(help="Length unit of the results: each row's own "
                                         "(row), mm or in.")] = Units.row,
    report: Annotated[bool, typer.Option(help="Also build the inspection report (HTML and "
                                         "PDF) beside the output.")] = False,
    force: Annotated[bool, typer.Option("--force", help="Overwrite an existing output.")] = False,
    fail_on: Annotated[FailOn, typer.Option(help="Exit with status 1 when a row is "
                                            "nonconforming (or borderline too).")] =
    FailOn.never,
    max_uncompressed_mb: MaxUncompressed = None,
    max_ratio: MaxRatio = None,
    max_members: MaxMembers = None,
    max_rows: MaxRows = None,
    max_columns: MaxColumns = None,
    max_cells: MaxCells = None,
    max_text_mb: MaxText = None,
) -> None:
    """Correct every reading to 20 °C, add its uncertainty and verdict, write the results."""
    from qc.export import default_output, write_results
    from qc.pipeline import evaluate_file
    from qc.streaming import CHUNKED_INPUTS, evaluate_to_table, streamable

    settings = _settings(rule, coverage, k, reference_temperature, units.value)
    limits = _limits(max_uncompressed_mb=max_uncompressed_mb, max_ratio=max_ratio,
                     max_members=max_members, max_rows=max_rows, max_columns=max_columns,
                     max_cells=max_cells, max_text_mb=max_text_mb)
    files = _inputs(input)
    worst = 0
    failed = 0
    taken: set[Path] = set()
    with render.progress(len(files) > 1) as step:
        for path in files:
            try:
                out = _output_for(path, output, len(files) > 1, default_output)
                if out in taken:  # name.csv and name.xlsx in one folder: keep both results
                    out = out.with_name(f"{path.stem}-{path.suffix.lstrip('.').lower()}"
                                        f"{out.name[len(path.stem):]}")
                taken.add(out)
                if streamable(path, out) and not report:  # large files go in chunks
                    big = len(files) == 1 and path.stat().st_size > PROGRESS_MIN_BYTES
                    with render.rows_progress(big, path.name) as moved:
                        run = evaluate_to_table(path, out, layout=_layout(layout),
                                                register=instruments, settings=settings,
                                                limits=limits, force=force, progress=moved)
                    render.run_summary(run.file, run.rows, run.counts, run.actions,
                                       run.n_actions, run.notes, out)
                    counts = run.counts
                else:
                    ev = evaluate_file(path, layout=_layout(layout), sheet=sheet,
                                       register=instruments, settings=settings, limits=limits)
                    written = write_results(ev, out, force=force)
                    if path.suffix.lower() in CHUNKED_INPUTS and \
                            path.stat().st_size > PROGRESS_MIN_BYTES:  # shown, not written
                        ev.notes.append("a large CSV or Parquet file goes faster, in bounded "
                                        "memory, to a flat table: -o NAME.checked.parquet "
                                        "(or .csv)")
                    render.summary(ev, out, written)
                    if report:
                        _build_report(ev, out, force)
                    counts = ev.counts
            except QcError as exc:
                if len(files) == 1:
                    raise _fail(exc) from None
                render.error(f"skipped: {exc}")
                failed += 1
                step()
                continue
            if fail_on != FailOn.never and counts["nonconforming"]:
                worst = 1
            if fail_on == FailOn.borderline and counts["borderline"]:
                worst = 1
            step()
    if failed and failed == len(files):
        raise typer.Exit(2)
    raise typer.Exit(worst)


def _output_for(path: Path, output: Path | None, many: bool, default_output) -> Path:
    if output is None:
        return default_output(path)
    if many or output.is_dir():
        if not output.is_dir():
            raise _fail(QcError(f"{output}: for a folder of inputs, --output must be an "
                                "existing folder"))
        return output / default_output(path).name
    return output


def _build_report(ev, out: Path, force: bool) -> None:
    from qc.report.build import report_from_evaluation

    for p in report_from_evaluation(ev, out.with_suffix(""), force=force):
        render.info(f"report: {p}")


@app.command()
def check(
    input: Annotated[Path, typer.Argument(help="Inspection file to validate.", exists=True,
                                          dir_okay=False)],
    layout: LayoutOpt = None,
    sheet: SheetOpt = None,
    instruments: RegisterOpt = None,
    max_uncompressed_mb: MaxUncompressed = None,
    max_ratio: MaxRatio = None,
    max_members: MaxMembers = None,
    max_rows: MaxRows = None,
    max_columns: MaxColumns = None,
    max_cells: MaxCells = None,
    max_text_mb: MaxText = None,
) -> None:
    """Validate a sheet without evaluating it: every problem with its place.

    Exit status 0 when all rows are valid, 1 when some rows have errors, 2 when the file
    cannot be read.
    """
    from qc.io.reader import read_inspection

    try:
        limits = _limits(max_uncompressed_mb=max_uncompressed_mb, max_ratio=max_ratio,
                         max_members=max_members, max_rows=max_rows, max_columns=max_columns,
                         max_cells=max_cells, max_text_mb=max_text_mb)
        table = read_inspection(input, layout=_layout(layout), sheet=sheet,
                                register=instruments, limits=limits)
    except QcError as exc:
        raise _fail(exc) from None
    render.check(table)
    raise typer.Exit(1 if table.errors else 0)


@app.command()
def explain(
    input: Annotated[Path, typer.Argument(help="Inspection file.", exists=True, dir_okay=False)],
    row: Annotated[int | None, typer.Option(help="Spreadsheet row number of the "
                                            "measurement.")] = None,
    part: Annotated[str | None, typer.Option(help="Part id (with --characteristic).")] = None,
    characteristic: Annotated[str | None, typer.Option(help="Characteristic id.")] = None,
    monte_carlo: Annotated[bool, typer.Option(help="Compare with a Monte Carlo propagation "
                                              "(JCGM 101).")] = False,
    draws: Annotated[int, typer.Option(help="Monte Carlo draws.")] = 200_000,
    layout: LayoutOpt = None,
    sheet: SheetOpt = None,
    instruments: RegisterOpt = None,
    rule: RuleOpt = None,
    coverage: CoverageOpt = 0.9545,
    k: KOpt = None,
    reference_temperature: RefOpt = 20.0,
) -> None:
    """The full uncertainty budget and decision of one measurement."""
    from qc.explain import find_row
    from qc.pipeline import evaluate_file

    try:
        ev = evaluate_file(input, layout=_layout(layout), sheet=sheet, register=instruments,
                           settings=_settings(rule, coverage, k, reference_temperature))
        i = find_row(ev, row=row, part=part, characteristic=characteristic)
        mc = None
        if monte_carlo:
            from qc.core.montecarlo import monte_carlo as run_mc

            mc = run_mc(ev.measurements, i, draws=draws, coverage=coverage)
    except QcError as exc:
        raise _fail(exc) from None
    render.explain(ev, i, mc)


@app.command()
def limits(
    notation: Annotated[str, typer.Argument(help="A tolerance as written on the drawing, e.g. "
                                            "'Ø25 H7', '12 ±0.05', '25 g6'.")],
    nominal: Annotated[float | None, typer.Option(help="Nominal size when the notation has "
                                                  "none.")] = None,
    feature: Annotated[str | None, typer.Option(help="hole or shaft, for a fit such as "
                                                "H7/g6.")] = None,
    unit: Annotated[str, typer.Option(help="Unit of the sizes: mm or in.")] = "mm",
) -> None:
    """The limits of a tolerance notation, for a quick look-up at the bench."""
    from qc.tolerances import parse_tolerance

    try:
        tol = parse_tolerance(notation, nominal=nominal, feature=feature, unit=unit)
    except QcError as exc:
        raise _fail(exc) from None
    render.limits(notation, tol, unit)


@app.command()
def materials(
    search: Annotated[str | None, typer.Argument(help="Show only names containing this.")]
    = None,
) -> None:
    """The material library: expansion coefficient with its uncertainty, and sources."""
    from qc.library.materials import load_materials

    render.materials(load_materials(), search)


@app.command()
def instruments() -> None:
    """The generic instrument types (typical values: replace with your certificates)."""
    from qc.library.instruments import load_instrument_types

    render.instruments(load_instrument_types())


@app.command()
def schemas(
    out: Annotated[Path, typer.Option("--out", help="Folder for the JSON Schemas.")] =
    Path("schemas"),
) -> None:
    """Export the JSON Schemas of records, layout file and instrument register."""
    from qc.models import export_schemas

    for p in export_schemas(out):
        render.info(f"wrote {p}")


@app.command("propose-layout")
def propose_layout(
    sample: Annotated[Path, typer.Argument(help="A sample inspection sheet.", exists=True,
                                           dir_okay=False)],
    output: Annotated[Path | None, typer.Option("--output", "-o", help="Where to write the "
                                                "layout file (default: print it).")] = None,
    sheet: SheetOpt = None,
    force: Annotated[bool, typer.Option("--force", help="Overwrite an existing file.")] = False,
) -> None:
    """Propose a layout file from a sample sheet: which header matched which field."""
    from qc.io.layout import propose_layout as propose

    try:
        proposal = propose(sample, sheet=sheet)
        if output is not None and output.exists() and not force:
            raise QcError(f"{output}: exists; use --force to overwrite it")
    except QcError as exc:
        raise _fail(exc) from None
    render.proposal(proposal)
    if output is not None:
        output.write_text(proposal.toml, encoding="utf-8")
        render.info(f"wrote {output}")


@app.command()
def report(
    input: Annotated[Path, typer.Argument(help="Inspection sheet (or a written-back "
                                          "workbook's original).", exists=True,
                                          dir_okay=False)],
    output: Annotated[Path | None, typer.Option("--output", "-o", help="Report file stem "
                                                "(default: NAME.report beside the input).")]
    = None,
    paper: Annotated[str, typer.Option(help="A4 or Letter.")] = "A4",
    units: Annotated[str | None, typer.Option(help="Lengths in the report: mm or in "
                                              "(default: in when every row is in inches, "
                                              "else mm).")] = None,
    layout: LayoutOpt = None,
    sheet: SheetOpt = None,
    instruments: RegisterOpt = None,
    rule: RuleOpt = None,
    coverage: CoverageOpt = 0.9545,
    k: KOpt = None,
    reference_temperature: RefOpt = 20.0,
    html_only: Annotated[bool, typer.Option("--html-only", help="Skip the PDF.")] = False,
    force: Annotated[bool, typer.Option("--force", help="Overwrite existing files.")] = False,
) -> None:
    """Build the inspection report (self-contained HTML and PDF) for a customer or auditor."""
    from qc.pipeline import evaluate_file
    from qc.report.build import report_from_evaluation

    try:
        ev = evaluate_file(input, layout=_layout(layout), sheet=sheet, register=instruments,
                           settings=_settings(rule, coverage, k, reference_temperature))
        stem = output or input.with_name(f"{input.stem}.report")
        formats = ("html",) if html_only else ("html", "pdf")
        for p in report_from_evaluation(ev, stem, formats=formats, paper=paper,
                                        length_unit=units, force=force):
            render.info(f"wrote {p}")
    except QcError as exc:
        raise _fail(exc) from None


_register_thermal(app)


def main() -> None:
    """Entry point of the `qc` command."""
    app()
