"""Invented inspection workbooks for the writer tests, built with openpyxl in the test run.

The data sheet carries one of each thing a write-back must keep: an image (a PNG drawn with
Pillow), a chart, a comment, data validation, a conditional format and a defined name; a second
sheet holds notes. Part ids and notes include formula-like text on purpose.
"""

from __future__ import annotations

import io
import zipfile
from pathlib import Path

from openpyxl import Workbook
from openpyxl.chart import BarChart, Reference
from openpyxl.comments import Comment
from openpyxl.drawing.image import Image
from openpyxl.formatting.rule import CellIsRule
from openpyxl.styles import PatternFill
from openpyxl.workbook.defined_name import DefinedName
from openpyxl.worksheet.datavalidation import DataValidation
from openpyxl.worksheet.table import Table
from PIL import Image as PILImage

SHEET = "Readings"
HEADER_ROW = 3
#: Invented readings of bore diameters, mm, with the part temperature, °C.
ROWS = [
    ("HX-101", 25.0123, 21.4, "first off"),
    ("=1+2", 25.0098, 21.6, "@SUM(A1:A2)"),
    ("HX-103", 25.0211, 21.9, "-5 flagged"),
    ("HX-104", 24.9987, 22.1, "+ check again"),
]
DATA_ROWS = [4, 5, 6, 7]
LAST_COLUMN = 4


def logo_png() -> bytes:
    """A small PNG: a dark square on white, 24 × 24 pixels."""
    img = PILImage.new("RGB", (24, 24), "white")
    for x in range(6, 18):
        for y in range(6, 18):
            img.putpixel((x, y), (40, 40, 40))
    buf = io.BytesIO()
    img.save(buf, format="PNG")
    return buf.getvalue()


def inspection_workbook(
    path: Path,
    *,
    occupied: bool = False,
    rows: int | None = None,
    styled_empty: bool = False,
    table_ref: str | None = None,
    skip_row: int | None = None,
) -> Path:
    """Write the invented inspection workbook to ``path`` and return it.

    ``occupied`` puts a remark in column G (where results would go) on the first data row;
    ``styled_empty`` gives G4 and K4 a fill but no value; ``table_ref`` adds a table object over
    that range; ``skip_row`` leaves that spreadsheet row out of the file entirely.
    ``rows`` repeats the readings to that many data rows (for timing).
    """
    wb = Workbook()
    ws = wb.active
    ws.title = SHEET
    ws["A1"] = "Bore check, housing batch 7 (invented)"
    ws.append([])
    ws.append(["Part", "Size (mm)", "Temp (°C)", "Notes"])
    data = ROWS if rows is None else [ROWS[i % len(ROWS)] for i in range(rows)]
    for rec in data:
        ws.append(list(rec))
    last = HEADER_ROW + len(data)
    for row in ws.iter_rows(min_row=HEADER_ROW + 1, max_row=last, max_col=1):
        row[0].data_type = "s"  # a part id like "=1+2" is text in the input too
    if occupied:
        ws["G4"] = "remark kept here"
    if styled_empty:
        ws["G4"].fill = PatternFill("solid", fgColor="DDEEFF")
        ws["K4"].fill = PatternFill("solid", fgColor="DDEEFF")
    if table_ref:
        ws.add_table(Table(displayName="Readings_table", ref=table_ref))
    if skip_row:
        for cell in list(ws[skip_row]):
            del ws._cells[(cell.row, cell.column)]  # no <row> element at all in the file
    ws["B4"].comment = Comment("checked twice", "inspector")
    dv = DataValidation(type="decimal", operator="between", formula1="20", formula2="30")
    dv.add(f"B4:B{last}")
    ws.add_data_validation(dv)
    ws.conditional_formatting.add(
        f"C4:C{last}",
        CellIsRule(
            operator="greaterThan", formula=["22"], fill=PatternFill("solid", fgColor="FFCCCC")
        ),
    )
    chart = BarChart()
    chart.add_data(
        Reference(ws, min_col=2, min_row=HEADER_ROW, max_row=min(last, 7)), titles_from_data=True
    )
    ws.add_chart(chart, "J2")
    ws.add_image(Image(io.BytesIO(logo_png())), "J20")
    wb.defined_names["bore_sizes"] = DefinedName("bore_sizes", attr_text=f"{SHEET}!$B$4:$B${last}")
    notes = wb.create_sheet("Notes")
    notes["A1"] = "Gauge: invented plug gauge 25 mm"
    wb.save(path)
    return path


def add_fake_macros(path: Path, out: Path) -> bytes:
    """Copy ``path`` to ``out`` as a macro-enabled package with an opaque vbaProject.bin part.

    Returns the bytes of the macro part (invented, never run) so tests can compare them.
    """
    vba = b"\xd0\xcf\x11\xe0invented macro container, never run" + bytes(range(256))
    with zipfile.ZipFile(path) as src, zipfile.ZipFile(out, "w", zipfile.ZIP_DEFLATED) as dst:
        for info in src.infolist():
            data = src.read(info)
            if info.filename == "[Content_Types].xml":
                data = data.replace(
                    b"application/vnd.openxmlformats-officedocument.spreadsheetml.sheet.main+xml",
                    b"application/vnd.ms-excel.sheet.macroEnabled.main+xml",
                ).replace(
                    b"</Types>",
                    b'<Override PartName="/xl/vbaProject.bin" '
                    b'ContentType="application/vnd.ms-office.vbaProject"/></Types>',
                )
            if info.filename == "xl/_rels/workbook.xml.rels":
                data = data.replace(
                    b"</Relationships>",
                    b'<Relationship Id="rIdVba" Type="http://schemas.microsoft.com/office/2006/'
                    b'relationships/vbaProject" Target="vbaProject.bin"/></Relationships>',
                )
            dst.writestr(info, data)
        dst.writestr("xl/vbaProject.bin", vba)
    return vba


def package_problems(path: Path) -> list[str]:
    """Structural problems of an xlsx package, per ECMA-376 Part 2 (Open Packaging Conventions).

    Checked: every part has a content type (a Default by extension or an Override), every
    Override names an existing part, every internal relationship target exists, and every XML
    part is well-formed. Empty list: no problem found.
    """
    import posixpath
    from xml.etree import ElementTree

    problems = []
    with zipfile.ZipFile(path) as zf:
        names = set(zf.namelist())
        ct = ElementTree.fromstring(zf.read("[Content_Types].xml"))
        defaults = {e.get("Extension", "").lower() for e in ct if e.tag.endswith("Default")}
        overrides = {e.get("PartName", "").lstrip("/") for e in ct if e.tag.endswith("Override")}
        for name in names:
            ext = name.rsplit(".", 1)[-1].lower()
            if name != "[Content_Types].xml" and name not in overrides and ext not in defaults:
                problems.append(f"no content type for {name}")
            if ext in ("xml", "rels", "vml"):
                try:
                    ElementTree.fromstring(zf.read(name))
                except ElementTree.ParseError as exc:
                    problems.append(f"{name} is not well-formed: {exc}")
        problems += [f"override for missing part {o}" for o in overrides - names]
        for name in names:
            if not name.endswith(".rels"):
                continue
            folder = posixpath.dirname(posixpath.dirname(name))
            for rel in ElementTree.fromstring(zf.read(name)):
                if rel.get("TargetMode") == "External":
                    continue
                target = rel.get("Target", "")
                part = (
                    target.lstrip("/")
                    if target.startswith("/")
                    else posixpath.normpath(posixpath.join(folder, target))
                )
                if part not in names:
                    problems.append(f"{name}: relationship target {target} is missing")
    return problems
