"""The inspection workbook written back: results beside the original data, nothing lost.

:func:`write_back` edits the original package at the zip/XML level (see
:mod:`qc.io.xlsx_package`): every member is copied byte for byte except the worksheet that
receives the results, the styles part (new cell formats appended) and, when sheets are added,
the workbook part, its relationships, ``[Content_Types].xml`` and ``docProps/app.xml``. Images,
charts, comments, data validation, conditional formats, defined names, other sheets and macros
therefore survive as they were. Macros are never run; they are only copied.

When the results cannot go beside the data without overwriting or hiding something, they go to
a new results sheet whose rows line up with the original rows, and the report says so.

:func:`write_new_workbook` writes a fresh workbook (for CSV inputs) with the same marking.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from pathlib import Path

import pandas as pd
import pyarrow as pa

from qc.errors import ConfigError, OutputError
from qc.io.writeback_cells import (
    CellNotes,
    column_cells,
    inline_string_cell,
    join_cells,
    row_numbers,
)
from qc.io.writeback_new import empty_workbook
from qc.io.writeback_sheet import Occupied, edited_worksheet, range_text, ranges_block
from qc.io.writeback_sheets import (
    SheetEntry,
    WorkbookPart,
    column_width,
    continuation_note,
    sheet_pieces,
    table_sheet,
    valid_sheet_name,
)
from qc.io.writeback_styles import HEADER_MARK, MINIMAL_STYLES, StyleBook
from qc.io.writers import atomic_output, check_output
from qc.io.xlsx_package import (
    CT_STYLES,
    CT_VBA_PROJECT,
    CT_WORKSHEET,
    MAIN_CONTENT_TYPE,
    REL_PIVOT_TABLE,
    REL_STYLES,
    REL_TABLE,
    REL_VBA_PROJECT,
    Package,
    Relationship,
    column_letter,
    parse_range_ref,
    parse_xml,
    rels_path,
)

__all__ = ["SheetTable", "WriteReport", "write_back", "write_new_workbook"]

_MAX_COLUMN = 16384
_MAX_ROW = 1048576


@dataclass(frozen=True)
class SheetTable:
    """A table written as a sheet of its own (a summary, a budget, an about page).

    ``column_formats`` and ``column_widths`` are keyed by column name; ``title_lines`` go above
    the header, one per row, followed by an empty row.
    """

    name: str
    frame: pd.DataFrame
    column_formats: Mapping[str, str] = field(default_factory=dict)
    column_widths: Mapping[str, float] = field(default_factory=dict)
    title_lines: Sequence[str] = ()
    freeze_header: bool = True


@dataclass(frozen=True)
class WriteReport:
    """What a workbook writer did.

    ``mode`` is ``"beside data"`` (results in the original sheet), ``"results sheet"`` (the
    fallback) or ``"new workbook"``. ``results_sheet`` and ``first_result_column`` say where the
    results are; ``added_sheets`` lists the final names of new sheets; ``notes`` are sentences
    for the user.
    """

    output: Path
    mode: str
    results_sheet: str
    first_result_column: str
    rows_written: int
    added_sheets: tuple[str, ...] = ()
    notes: tuple[str, ...] = ()


def write_back(
    original: Path,
    output: Path,
    *,
    sheet: str,
    header_row: int,
    data_rows: Sequence[int],
    last_column: int,
    results: pd.DataFrame,
    column_formats: Mapping[str, str] | None = None,
    extra_sheets: Sequence[SheetTable] = (),
    force: bool = False,
    verdict_column: str = "verdict",
) -> WriteReport:
    """Write ``results`` into a copy of the workbook ``original``, saved as ``output``.

    Each result row goes on its spreadsheet row ``data_rows[i]`` of ``sheet``, starting two
    columns after ``last_column`` (one empty column as a gap), with headers on ``header_row``.
    ``column_formats`` maps result column names to Excel number formats (e.g. ``"0.0000"``).
    The input file is only read. Raises OutputError for an output that cannot be written.
    """
    original, output = Path(original), Path(output)
    suffix = output.suffix.lower()
    if suffix not in MAIN_CONTENT_TYPE:
        raise OutputError(
            f"cannot write {output}: a workbook written back must end in .xlsx or .xlsm"
        )
    check_output(output, force=force, inputs=[original])
    rows = _check_rows(header_row, data_rows, results, last_column)
    formats = dict(column_formats or {})

    pkg = Package.read(original)
    book = WorkbookPart(pkg)
    target = book.sheet(sheet)
    styles_part, styles = _styles(pkg, book)
    notes: list[str] = []
    cell_notes = CellNotes()

    first_col = last_column + 2
    last_col = first_col + len(results.columns) - 1
    mode = "beside data"
    results_sheet = target.name
    first_letter = column_letter(first_col) if first_col <= _MAX_COLUMN else ""
    try:
        reason = _blocked(pkg, target, rows, header_row, last_column, last_col)
        if reason or target.part is None:
            raise Occupied(reason or "the sheet has no part in the file")
        targets, row_cells, widths = _result_cells(
            results,
            styles,
            header_row,
            rows,
            first_col,
            formats,
            verdict_column,
            book.date1904,
            cell_notes,
        )
        edited = edited_worksheet(
            pkg.get(target.part),
            target.part,
            rows=targets,
            cells=row_cells,
            last_column=last_column,
            first_col=first_col,
            last_col=last_col,
            widths=widths,
        )
        del row_cells  # the edited pieces hold the cells now
        pkg.replace_stream(target.part, edited)
    except Occupied as why:
        cell_notes = CellNotes()  # the cells made for beside the data are not written
        mode = "results sheet"
        results_sheet = valid_sheet_name(f"{target.name} results", book.names())
        first_letter = "C"
        pointers = pd.DataFrame(
            {"source_sheet": target.name, "source_row": rows}, index=results.index
        )
        frame = pd.concat([pointers, results], axis=1)
        xml = table_sheet(
            frame,
            styles,
            header_row=header_row,
            data_rows=rows,
            column_formats=formats,
            column_widths={},
            freeze_header=True,
            verdict_column=verdict_column,
            date1904=book.date1904,
            notes=cell_notes,
        )
        book.add_worksheet(results_sheet, xml)
        notes.append(
            f"The results are on the new sheet '{results_sheet}', not beside the data in "
            f"'{target.name}', because {why.reason}. Each result row stands on the same row "
            "number as its original row; the columns source_sheet and source_row point back to it."
        )

    added = [results_sheet] if mode == "results sheet" else []
    for extra in extra_sheets:
        added += _add_table(book, styles, extra, verdict_column, cell_notes, notes)
    # document properties only describe the workbook; an unusual layout is left as it was
    book.update_app_properties()

    notes.extend(_set_macro_content(pkg, book, suffix))
    _save(pkg, styles_part, styles, output)
    notes.extend(_cell_notes(cell_notes))
    return WriteReport(
        output=output,
        mode=mode,
        results_sheet=results_sheet,
        first_result_column=first_letter,
        rows_written=len(rows),
        added_sheets=tuple(added),
        notes=tuple(notes),
    )


def _save(pkg: Package, styles_part: str, styles: StyleBook, output: Path) -> None:
    """Write the package to ``output`` atomically; the new sheets' rows are built meanwhile."""
    if styles.changed or not pkg.has(styles_part):
        if pkg.has(styles_part):
            pkg.replace(styles_part, styles.render())
        else:
            pkg.add(styles_part, styles.render(), CT_STYLES)
    with atomic_output(output) as tmp, open(tmp, "wb") as fh:
        pkg.write(fh)


def _add_table(
    book: WorkbookPart,
    styles: StyleBook,
    extra: SheetTable,
    verdict_column: str,
    cell_notes: CellNotes,
    notes: list[str],
    *,
    note_rename: bool = True,
) -> list[str]:
    """Add ``extra`` as a new sheet, or as several when it has more rows than a sheet holds."""
    titles = list(extra.title_lines)
    header = len(titles) + 2 if titles else 1
    pieces = sheet_pieces(len(extra.frame), header)
    names: list[str] = []
    for piece in pieces:
        name = valid_sheet_name(extra.name, book.names())
        if note_rename and not names and name != extra.name:
            notes.append(
                f"The sheet '{extra.name}' was named '{name}' (names must be unique, "
                "at most 31 characters, without []:*?/\\)."
            )
        part = table_sheet(
            extra.frame.iloc[piece.start : piece.stop],
            styles,
            header_row=header,
            data_rows=range(header + 1, header + 1 + len(piece)),
            column_formats=extra.column_formats,
            column_widths=extra.column_widths,
            title_lines=titles,
            freeze_header=extra.freeze_header,
            verdict_column=verdict_column,
            date1904=book.date1904,
            notes=cell_notes,
        )
        book.add_worksheet(name, part)
        names.append(name)
    if len(names) > 1:
        notes.append(continuation_note(extra.name, len(extra.frame), names))
    return names


def _check_rows(
    header_row: int, data_rows: Sequence[int], results: pd.DataFrame, last_column: int
) -> list[int]:
    """The data rows as a list, after checking they fit the results and the sheet."""
    rows = [int(r) for r in data_rows]
    if len(rows) != len(results):
        raise ConfigError(
            f"{len(results)} result rows but {len(rows)} spreadsheet rows to put them on; "
            "there must be one row number per result"
        )
    if not 1 <= header_row < _MAX_ROW:
        raise ConfigError(f"header row {header_row} is outside the sheet (1 to {_MAX_ROW - 1})")
    if any(b <= a for a, b in zip([header_row, *rows], rows, strict=False)) or (
        rows and rows[-1] > _MAX_ROW
    ):
        raise ConfigError(
            "the data rows must be increasing spreadsheet row numbers below the header row"
        )
    if last_column < 1:
        raise ConfigError(f"the last data column must be 1 or more, got {last_column}")
    return rows


def _styles(pkg: Package, book: WorkbookPart) -> tuple[str, StyleBook]:
    """The styles part (created when the workbook has none) as a StyleBook."""
    for rel in book.rels:
        if rel.type == REL_STYLES and not rel.external:
            part = pkg.resolve(book.part, rel.target)
            if pkg.has(part):
                return part, StyleBook(pkg.get(part), part)
    # the usual name first: some readers (openpyxl) look for the styles there only
    taken = {n.lower() for n in pkg.names()}
    part = "xl/styles.xml" if "xl/styles.xml" not in taken else pkg.free_name("xl/styles{}.xml")
    book.rels.append(Relationship(_free_rid(book.rels), REL_STYLES, part.split("/")[-1]))
    pkg.set_rels(book.part, book.rels)
    return part, StyleBook(MINIMAL_STYLES.encode("utf-8"), part)


def _free_rid(rels: Sequence[Relationship]) -> str:
    ids = {r.id for r in rels}
    n = 1
    while f"rId{n}" in ids:
        n += 1
    return f"rId{n}"


def _blocked(
    pkg: Package,
    target: SheetEntry,
    rows: list[int],
    header_row: int,
    last_column: int,
    last_col: int,
) -> str | None:
    """Why the results cannot go beside the data, or None if they can."""
    part, ct, name = target.part, target.content_type, target.name
    if part is None or not pkg.has(part):
        return f"the sheet '{name}' has no readable part in the file"
    if ct != CT_WORKSHEET:
        kind = "a chart sheet" if ct and "chartsheet" in ct else "not an ordinary worksheet"
        return f"'{name}' is {kind}"
    if last_col > _MAX_COLUMN:
        return "the results would run past the last column of a sheet (XFD)"
    target_rows = sorted([header_row, *rows])
    ranges = []
    for rel in pkg.rels(part):
        if rel.external or rel.type not in (REL_TABLE, REL_PIVOT_TABLE):
            continue
        child = pkg.resolve(part, rel.target)
        if not pkg.has(child):
            continue
        root = parse_xml(pkg.get(child), child)
        refs = [root.get("ref")] + [el.get("ref") for el in root if el.tag.endswith("location")]
        kind = "a table" if rel.type == REL_TABLE else "a pivot table"
        for ref in refs:
            rng = parse_range_ref(ref) if ref else None
            if rng:
                ranges.append((rng, kind))
    for rng, kind in ranges:
        if ranges_block([rng], target_rows, last_column + 1, last_col):
            return f"{kind} at {range_text(*rng)} covers the columns for the results"
    return None


def _result_cells(
    results: pd.DataFrame,
    styles: StyleBook,
    header_row: int,
    rows: list[int],
    first_col: int,
    formats: Mapping[str, str],
    verdict_column: str,
    date1904: bool,
    notes: CellNotes,
) -> tuple[list[int], pa.ChunkedArray, list[float]]:
    """The rows to edit (the header's, then the results' when there are result columns),
    the cell XML of each, and the new columns' widths."""
    header_style = styles.style(None, HEADER_MARK)
    verdicts = styles.verdict_styles()
    columns = []
    header = []
    widths = []
    numbers = row_numbers(rows)
    for i, name in enumerate(results.columns):
        letter = column_letter(first_col + i)
        label = str(name)
        series = results.iloc[:, i]
        fmt = formats.get(label) or ("yyyy-mm-dd hh:mm:ss" if series.dtype.kind == "M" else None)
        header.append(inline_string_cell(f"{letter}{header_row}", label, header_style, notes))
        columns.append(
            column_cells(
                series,
                letter,
                numbers,
                styles.style(fmt),
                value_styles=verdicts if label == verdict_column else None,
                date1904=date1904,
                notes=notes,
            )
        )
        widths.append(column_width(label, series, fmt))
    top = pa.array(["".join(header)], pa.string())
    if not columns:
        return [header_row], pa.chunked_array([top]), widths
    # chunks side by side: the result rows' cells are not copied behind the header's
    return [header_row, *rows], pa.chunked_array([top, join_cells(columns)]), widths


def _set_macro_content(pkg: Package, book: WorkbookPart, suffix: str) -> list[str]:
    """Make the workbook's content type match the output extension; drop macros for .xlsx."""
    notes: list[str] = []
    vba = [r for r in book.rels if r.type == REL_VBA_PROJECT and not r.external]
    if suffix == ".xlsx" and vba:
        for rel in vba:
            part = pkg.resolve(book.part, rel.target)
            for sub in pkg.rels(part):
                child = pkg.resolve(part, sub.target)
                if not sub.external and pkg.has(child):
                    pkg.remove(child)
            for extra in (part, rels_path(part)):
                if pkg.has(extra):
                    pkg.remove(extra)
        book.rels[:] = [r for r in book.rels if r not in vba]
        pkg.set_rels(book.part, book.rels)
        if pkg.defaults().get("bin") == CT_VBA_PROJECT and not any(
            n.lower().endswith(".bin") for n in pkg.names()
        ):
            pkg.drop_default("bin")
        notes.append(
            "The macros of the original were left out because the output is .xlsx; "
            "write to .xlsm to keep them (they are copied, never run)."
        )
    if pkg.content_type(book.part) != MAIN_CONTENT_TYPE[suffix]:
        pkg.set_content_type(book.part, MAIN_CONTENT_TYPE[suffix])
    return notes


def _cell_notes(notes: CellNotes) -> list[str]:
    out = []
    if notes.truncated:
        out.append(
            f"{notes.truncated} text value(s) longer than 32 767 characters were cut to fit a cell."
        )
    if notes.infinite:
        out.append(f"{notes.infinite} infinite value(s) were written as the text inf or -inf.")
    return out + notes.other


def write_new_workbook(
    output: Path,
    *,
    data: pd.DataFrame,
    sheet_name: str,
    column_formats: Mapping[str, str] | None = None,
    extra_sheets: Sequence[SheetTable] = (),
    force: bool = False,
    verdict_column: str = "verdict",
) -> WriteReport:
    """Write ``data`` (original and result columns) to a new workbook ``output``.

    For inputs that were not workbooks (CSV). The sheets are written as in :func:`write_back`:
    text always as text, never as a formula, the same verdict marking, long tables split.
    """
    output = Path(output)
    if output.suffix.lower() != ".xlsx":
        raise OutputError(f"cannot write {output}: a new workbook must end in .xlsx")
    check_output(output, force=force)
    pkg = empty_workbook()
    book = WorkbookPart(pkg)
    styles_part, styles = _styles(pkg, book)
    notes: list[str] = []
    cell_notes = CellNotes()
    main = SheetTable(valid_sheet_name(sheet_name, []), data, dict(column_formats or {}))
    names = _add_table(book, styles, main, verdict_column, cell_notes, notes, note_rename=False)
    for extra in extra_sheets:
        names += _add_table(book, styles, extra, verdict_column, cell_notes, notes)
    book.update_app_properties()
    _save(pkg, styles_part, styles, output)
    notes.extend(_cell_notes(cell_notes))
    return WriteReport(
        output=output,
        mode="new workbook",
        results_sheet=names[0],
        first_result_column="A",
        rows_written=len(data),
        added_sheets=tuple(names[1:]),
        notes=tuple(notes),
    )
