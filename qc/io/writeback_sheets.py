"""The workbook part of a package: its sheets, and new worksheet parts grafted into it.

A new sheet needs four edits besides its own part (ECMA-376 Part 1, 18.2.19–20 and Part 2):
a ``<sheet>`` entry in the workbook part, a relationship from the workbook, a content type
Override, and (for consistency of document properties) its title in ``docProps/app.xml``.
The workbook part is spliced as text so its other content (defined names, extensions,
``mc:Ignorable`` prefixes) stays as written.
"""

from __future__ import annotations

import posixpath
import re
from collections.abc import Callable, Iterator, Mapping, Sequence
from dataclasses import dataclass

import numpy as np
import pandas as pd
import pyarrow as pa

from qc.errors import ConfigError, FileReadError, UnknownNameError
from qc.io.writeback_cells import (
    CellNotes,
    column_cells,
    inline_string_cell,
    join_cells,
    row_numbers,
    string_bytes,
)
from qc.io.writeback_styles import HEADER_MARK, TITLE_MARK, StyleBook
from qc.io.xlsx_package import (
    CT_WORKSHEET,
    NS_DOC_REL,
    NS_MAIN,
    REL_EXTENDED_PROPERTIES,
    REL_WORKSHEET,
    Package,
    Relationship,
    column_letter,
    escape_attr,
    parse_xml,
)

#: Longest sheet name and the characters a sheet name cannot hold (Excel specifications).
MAX_SHEET_NAME = 31
_BAD_NAME_CHARS = re.compile(r"[\[\]:*?/\\]")
_ATTRS = r"""(?:[^>"']|"[^"]*"|'[^']*')*?"""
_NS_VT = "http://schemas.openxmlformats.org/officeDocument/2006/docPropsVTypes"


@dataclass(frozen=True)
class SheetEntry:
    """One sheet of the workbook: its name, part name (None if unresolvable) and content type."""

    name: str
    part: str | None
    content_type: str | None


class WorkbookPart:
    """The sheets of a package's workbook part, and the means to add worksheets to it."""

    def __init__(self, package: Package) -> None:
        self.package = package
        self.part = package.main_part()
        if not package.has(self.part):
            raise FileReadError("the workbook part named by the package is missing")
        root = parse_xml(package.get(self.part), self.part)
        self.rels = package.rels(self.part)
        targets = {r.id: package.resolve(self.part, r.target) for r in self.rels if not r.external}
        self.sheets: list[SheetEntry] = []
        self._sheet_ids: list[int] = []
        self.date1904 = False
        for el in root.iter():
            tag = el.tag.rsplit("}", 1)[-1]
            if tag == "workbookPr":
                self.date1904 = el.get("date1904", "0").lower() in ("1", "true")
            if tag == "sheet":
                rid = el.get(f"{{{NS_DOC_REL}}}id", "")
                part = targets.get(rid)
                ct = package.content_type(part) if part else None
                self.sheets.append(SheetEntry(el.get("name", ""), part, ct))
                self._sheet_ids.append(int(el.get("sheetId", "0") or 0))
        self._new_titles: list[str] = []

    def sheet(self, name: str) -> SheetEntry:
        """The sheet called ``name``; UnknownNameError with close matches otherwise."""
        for s in self.sheets:
            if s.name == name:
                return s
        for s in self.sheets:
            if s.name.lower() == name.lower():
                return s
        raise UnknownNameError("sheet", name, [s.name for s in self.sheets])

    def names(self) -> list[str]:
        return [s.name for s in self.sheets]

    def add_worksheet(self, name: str, xml: bytes | SheetPart) -> None:
        """Graft a worksheet part called ``name`` (already unique and valid) into the package."""
        pkg = self.package
        folder = posixpath.dirname(self.part)
        part = pkg.free_name(posixpath.join(folder, "worksheets", "sheet{}.xml"))
        if isinstance(xml, SheetPart):
            pkg.add_stream(part, xml.chunks, CT_WORKSHEET)
        else:
            pkg.add(part, xml, CT_WORKSHEET)
        ids = {r.id for r in self.rels}
        n = 1
        while f"rId{n}" in ids:
            n += 1
        rid = f"rId{n}"
        self.rels.append(Relationship(rid, REL_WORKSHEET, posixpath.relpath(part, folder or ".")))
        pkg.set_rels(self.part, self.rels)
        sheet_id = max([0, *self._sheet_ids]) + 1
        self._sheet_ids.append(sheet_id)

        text = pkg.get(self.part).decode("utf-8-sig")
        root = re.search(r"<(?:(\w+):)?workbook\b(" + _ATTRS + ")>", text)
        if root is None:
            raise FileReadError("the workbook part has no workbook element")
        p = (root.group(1) + ":") if root.group(1) else ""
        rp = re.search(rf"""xmlns:(\w+)\s*=\s*["']{re.escape(NS_DOC_REL)}["']""", root.group(2))
        rid_attr = f'{rp.group(1)}:id="{rid}"' if rp else f'xmlns:r="{NS_DOC_REL}" r:id="{rid}"'
        entry = f'<{p}sheet name="{escape_attr(name)}" sheetId="{sheet_id}" {rid_attr}/>'
        end = text.find(f"</{p}sheets>")
        if end < 0:
            raise FileReadError("the workbook part has no list of sheets")
        pkg.replace(self.part, (text[:end] + entry + text[end:]).encode("utf-8"))
        self.sheets.append(SheetEntry(name, part, CT_WORKSHEET))
        self._new_titles.append(name)

    def update_app_properties(self) -> bool:
        """Add the new sheets' titles to ``docProps/app.xml``; False if left as it was.

        The part only describes the workbook, so an unexpected layout is left untouched.
        """
        if not self._new_titles:
            return True
        pkg = self.package
        app = next(
            (pkg.resolve("", r.target) for r in pkg.rels("") if r.type == REL_EXTENDED_PROPERTIES),
            None,
        )
        if app is None or not pkg.has(app):
            return False
        root = parse_xml(pkg.get(app), app)
        pairs: list[tuple[str, int]] = []
        titles: list[str] = []
        for el in root:
            tag = el.tag.rsplit("}", 1)[-1]
            values = [
                v.text or "" for v in el.iter() if v.tag.rsplit("}", 1)[-1] in ("lpstr", "i4")
            ]
            if tag == "HeadingPairs":
                try:
                    pairs = [(values[i], int(values[i + 1])) for i in range(0, len(values) - 1, 2)]
                except ValueError:
                    return False
            elif tag == "TitlesOfParts":
                titles = values
        if not pairs or sum(c for _, c in pairs) != len(titles):
            return False
        group = next((i for i, (n, _) in enumerate(pairs) if n == "Worksheets"), 0)
        offset = sum(c for _, c in pairs[:group]) + pairs[group][1]
        titles[offset:offset] = self._new_titles
        pairs[group] = (pairs[group][0], pairs[group][1] + len(self._new_titles))
        text = pkg.get(app).decode("utf-8-sig")
        vt = re.search(rf"""xmlns:(\w+)\s*=\s*["']{re.escape(_NS_VT)}["']""", text)
        if vt is None:
            return False
        v = vt.group(1) + ":"
        heading = "".join(
            f"<{v}variant><{v}lpstr>{_esc(n)}</{v}lpstr></{v}variant>"
            f"<{v}variant><{v}i4>{c}</{v}i4></{v}variant>"
            for n, c in pairs
        )
        heading = f'<{v}vector size="{2 * len(pairs)}" baseType="variant">{heading}</{v}vector>'
        names = "".join(f"<{v}lpstr>{_esc(t)}</{v}lpstr>" for t in titles)
        names = f'<{v}vector size="{len(titles)}" baseType="lpstr">{names}</{v}vector>'
        for element, body in (("HeadingPairs", heading), ("TitlesOfParts", names)):
            m = re.search(rf"<((?:\w+:)?){element}\b{_ATTRS}>.*?</\1{element}>", text, re.S)
            if m is None:
                return False
            q = m.group(1)
            text = text[: m.start()] + f"<{q}{element}>{body}</{q}{element}>" + text[m.end() :]
        pkg.replace(app, text.encode("utf-8"))
        return True


def _esc(text: str) -> str:
    return text.replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;")


def valid_sheet_name(name: str, taken: Sequence[str]) -> str:
    """``name`` made a valid sheet name (≤ 31 characters, none of ``[]:*?/\\``) not in ``taken``.

    Sheet names compare case-insensitively; a taken name gets a suffix `` (2)``, `` (3)``, ….
    """
    clean = _BAD_NAME_CHARS.sub("_", name).strip().strip("'") or "Sheet"
    if clean.lower() == "history":  # reserved by Excel for change tracking
        clean += "_"
    clean = clean[:MAX_SHEET_NAME]
    used = {t.lower() for t in taken}
    n = 1
    candidate = clean
    while candidate.lower() in used:
        n += 1
        suffix = f" ({n})"
        candidate = clean[: MAX_SHEET_NAME - len(suffix)] + suffix
    return candidate


def column_width(header: str, values: pd.Series, number_format: str | None) -> float:
    """A readable width, in characters, from the header and the first values."""
    sample = values.head(200)
    if sample.dtype.kind in "fiu":
        longest = max(len(number_format or "0.000000"), 8)
    else:
        longest = max((len(str(v)) for v in sample.dropna().tolist()), default=0)
    return float(min(60, max(8, len(header) + 2, longest + 2)))


#: Rows of a worksheet (ECMA-376 Part 1, 18.3.1.73: r is at most 1 048 576; Excel's limit too).
MAX_SHEET_ROWS = 1048576
#: Rows built and written at a time: bounds memory (tens of MB a chunk) on sheets of any length.
CHUNK_ROWS = 50_000


@dataclass(frozen=True)
class SheetPart:
    """A worksheet part produced in pieces: its head, its rows chunk by chunk, its tail.

    ``body`` is called when the package is written, so a sheet of a million rows never has to
    exist as one string. Styles are fixed when the part is made; ``notes`` fill as rows are built.
    """

    head: bytes
    body: Callable[[], Iterator[bytes | memoryview]]
    tail: bytes

    def chunks(self) -> Iterator[bytes | memoryview]:
        yield self.head
        yield from self.body()
        yield self.tail

    def to_bytes(self) -> bytes:
        return b"".join(bytes(c) for c in self.chunks())


def sheet_pieces(n_rows: int, header_row: int) -> list[range]:
    """Row positions of a table of ``n_rows`` records for each sheet it needs.

    A sheet holds :data:`MAX_SHEET_ROWS` rows; ``header_row`` of them go to the title lines,
    the empty line after them and the header, which every continuation sheet repeats.
    """
    room = MAX_SHEET_ROWS - header_row
    if room < 1:
        raise ConfigError(
            f"a sheet of {MAX_SHEET_ROWS} rows has no room left for data below "
            f"{header_row} title and header rows"
        )
    if n_rows <= room:
        return [range(n_rows)]
    return [range(a, min(a + room, n_rows)) for a in range(0, n_rows, room)]


def continuation_note(table: str, n_rows: int, names: Sequence[str]) -> str:
    """The report sentence for a table spread over several sheets."""
    listed = ", ".join(f"'{n}'" for n in names[:-1]) + f" and '{names[-1]}'"
    return (
        f"The table '{table}' has {n_rows} rows, more than one sheet holds "
        f"({MAX_SHEET_ROWS} rows with its title and header); it continues over the sheets "
        f"{listed}, each with the same title and header."
    )


def table_sheet(
    frame: pd.DataFrame,
    styles: StyleBook,
    *,
    header_row: int,
    data_rows: Sequence[int] | np.ndarray,
    column_formats: Mapping[str, str],
    column_widths: Mapping[str, float],
    title_lines: Sequence[str] = (),
    freeze_header: bool = True,
    verdict_column: str = "verdict",
    date1904: bool = False,
    notes: CellNotes | None = None,
) -> SheetPart:
    """A complete worksheet part holding ``frame``: titles, one header row, one row per record.

    ``data_rows`` are increasing row numbers below ``header_row``, at most
    :data:`MAX_SHEET_ROWS`; split longer tables first (:func:`sheet_pieces`).
    """
    notes = notes if notes is not None else CellNotes()
    rows = np.asarray(data_rows, dtype=np.int64)
    if len(rows) != len(frame):
        raise ValueError(f"{len(frame)} records for {len(rows)} rows")
    if len(rows) and (rows[-1] > MAX_SHEET_ROWS or rows[0] <= header_row):
        raise ValueError(f"rows {rows[0]}..{rows[-1]} do not fit below header row {header_row}")
    header_style = styles.style(None, HEADER_MARK)
    title_style = styles.style(None, TITLE_MARK)
    verdicts = styles.verdict_styles()
    names = [str(c) for c in frame.columns]
    letters = [column_letter(i + 1) for i in range(len(names))]
    top = [
        f'<row r="{i + 1}">{inline_string_cell(f"A{i + 1}", line, title_style, notes)}</row>'
        for i, line in enumerate(title_lines)
    ]
    header = "".join(
        inline_string_cell(f"{letter}{header_row}", name, header_style, notes)
        for letter, name in zip(letters, names, strict=True)
    )
    top.append(f'<row r="{header_row}">{header}</row>')
    plans = []
    widths = []
    for j, (letter, name) in enumerate(zip(letters, names, strict=True)):
        series = frame.iloc[:, j]
        fmt = column_formats.get(name) or _default_format(series)
        value_styles = verdicts if name == verdict_column else None
        plans.append((series, letter, styles.style(fmt), value_styles))
        widths.append(column_widths.get(name) or column_width(name, series, fmt))
    last_row = int(rows[-1]) if len(rows) else header_row
    last_letter = letters[-1] if letters else "A"
    pane = ""
    if freeze_header:
        first = f"A{header_row + 1}"
        pane = (
            f'<pane ySplit="{header_row}" topLeftCell="{first}" activePane="bottomLeft" '
            'state="frozen"/>'
            f'<selection pane="bottomLeft" activeCell="{first}" sqref="{first}"/>'
        )
    cols = "".join(
        f'<col min="{i + 1}" max="{i + 1}" width="{w:.2f}" customWidth="1"/>'
        for i, w in enumerate(widths)
    )
    head = (
        '<?xml version="1.0" encoding="UTF-8" standalone="yes"?>\n'
        f'<worksheet xmlns="{NS_MAIN}" xmlns:r="{NS_DOC_REL}">'
        f'<dimension ref="A1:{last_letter}{last_row}"/>'
        f'<sheetViews><sheetView workbookViewId="0">{pane}</sheetView></sheetViews>'
        '<sheetFormatPr defaultRowHeight="15"/>'
        + (f"<cols>{cols}</cols>" if cols else "")
        + "<sheetData>"
        + "".join(top)
    )
    tail = (
        "</sheetData>"
        '<pageMargins left="0.7" right="0.7" top="0.75" bottom="0.75" header="0.3" footer="0.3"/>'
        "</worksheet>"
    )

    def rows_xml(start: int, stop: int) -> Iterator[memoryview]:
        """The rows of records ``start:stop``, halved until each piece fits an Arrow string
        array (2 GiB of text: only very long texts in many cells come near it)."""
        numbers = row_numbers(rows[start:stop])
        scratch = CellNotes()
        try:
            cells = [
                column_cells(
                    series.iloc[start:stop],
                    letter,
                    numbers,
                    style,
                    value_styles=value_styles,
                    date1904=date1904,
                    notes=scratch,
                )
                for series, letter, style, value_styles in plans
            ]
            text = join_cells(cells, ['<row r="', numbers, '">'], "</row>")
        except (pa.ArrowCapacityError, pa.ArrowInvalid):
            if stop - start < 2:
                raise
            middle = (start + stop) // 2
            yield from rows_xml(start, middle)
            yield from rows_xml(middle, stop)
            return
        notes.truncated += scratch.truncated
        notes.infinite += scratch.infinite
        notes.other += scratch.other
        yield string_bytes(text)

    def body() -> Iterator[memoryview]:
        for start in range(0, len(rows), CHUNK_ROWS):
            yield from rows_xml(start, min(start + CHUNK_ROWS, len(rows)))

    return SheetPart(head.encode("utf-8"), body, tail.encode("utf-8"))


def _default_format(series: pd.Series) -> str | None:
    """Dates need a date format to show as dates; other columns keep General."""
    return "yyyy-mm-dd hh:mm:ss" if series.dtype.kind == "M" else None
