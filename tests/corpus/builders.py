"""Builders of messy inspection sheets, written by the tests into a temporary folder.

Every scenario is invented: part numbers, people and instruments are made up. Each builder
returns the path it wrote; the expected records are stated in the tests that use them.
"""

from __future__ import annotations

import datetime as dt
import re
import shutil
import zipfile
from pathlib import Path

import xlsxwriter

__all__ = ["csv_semicolon", "long_messy_xlsx", "merged_header_xlsx", "ods_minimal",
           "strip_cached_value",
           "wide_xlsx"]

LONG_HEADER = ["Part No.", "Char", "Kind", "Nominal (mm)", "Lower Limit", "Upper Limit",
               "Reading 1", "Reading 2", "Reading 3", "Temp (°F)", "Gauge", "CTE (ppm/K)",
               "Date", "Inspector", "Remarks"]
# header on spreadsheet row 5; data from row 6
LONG_ROWS: list[list[object]] = [
    ["P-001", "D1", "size", 25, 24.98, 25.02, 25.001, 25.003, 25.002, 68, "MIC-01", 11.5,
     dt.datetime(2026, 1, 5, 9, 30), "AB", ""],
    ["P-001", "D2", "size", 12, 11.95, 12.05, "12.01; 12.02; 12.01", "", "", "68 °F", "MIC-01",
     11.5, dt.datetime(2026, 1, 5, 9, 35), "AB", "three readings in one cell"],
    ["P-001", "D3", "size", 40, 39.9, 40.1, 40.02, "", "", "twenty", "MIC-01", 11.5,
     dt.datetime(2026, 1, 5, 9, 40), "AB", "text in a number cell"],
    ["P-002", "D1", "size", 25, 24.98, 25.02, "=NA()", "", "", 68, "MIC-01", 11.5,
     dt.datetime(2026, 1, 5, 10, 0), "AB", "Excel error"],
    ["P-002", "D2", "size", 12, 11.95, 12.05, "=G6-13", "", "", 68, "MIC-01", 11.5,
     dt.datetime(2026, 1, 5, 10, 5), "AB", "formula with a cached value"],
    ["P-002", "D3", "size", 40, 39.9, 40.1, "=G8*1", "", "", 68, "MIC-01", 11.5,
     dt.datetime(2026, 1, 5, 10, 10), "AB", "formula without a cached value"],
    ["P-003", "D1", "size", 25, 24.98, 25.02, "0.9843 in", "", "", 68, "CAL-07", 11.5,
     dt.datetime(2026, 1, 5, 11, 0), "CD", "inch reading, overdue caliper"],
    ["P-003", "D2", "size", 12, 11.95, 12.05, "12,004", "", "", 68, "MIC-01", 11.5,
     dt.datetime(2026, 1, 5, 11, 5), "CD", "comma decimal as text"],
    ["P-003", "D3", "size", 40, 39.9, 40.1, "", "", "", 68, "MIC-01", 11.5,
     dt.datetime(2026, 1, 5, 11, 10), "CD", "no reading"],
    ["P-004", "D1", "size", 25, 24.98, 25.02, 25.0, "", "", 68, "MIC-1", 11.5,
     dt.datetime(2026, 1, 5, 12, 0), "CD", "unknown instrument"],
]
REGISTER = [
    ["Instrument ID", "Type", "Resolution (mm)", "MPE", "Calibration due", "Scale material"],
    ["MIC-01", "outside micrometer", 0.001, "±2 µm", dt.date(2026, 6, 30), "steel"],
    ["CAL-07", "caliper", 0.01, "0.02 mm", dt.date(2025, 12, 1), "steel"],
]


def strip_cached_value(path: Path, cell: str) -> None:
    """Remove the saved result of one formula cell, as a program that never computed it would."""
    tmp = path.with_suffix(".tmp")
    with zipfile.ZipFile(path) as src, zipfile.ZipFile(tmp, "w", zipfile.ZIP_DEFLATED) as dst:
        for item in src.infolist():
            data = src.read(item.filename)
            if item.filename.startswith("xl/worksheets/sheet"):
                text = data.decode("utf-8")
                text = re.sub(rf'(<c r="{cell}"[^>]*>)(<f>[^<]*</f>)<v>[^<]*</v>', r"\1\2", text)
                data = text.encode("utf-8")
            dst.writestr(item, data)
    shutil.move(tmp, path)


def long_messy_xlsx(folder: Path, name: str = "batch-07.xlsx") -> Path:
    """Title rows, a merged logo area and blank rows above the header; a register sheet."""
    path = folder / name
    wb = xlsxwriter.Workbook(path)
    ws = wb.add_worksheet("Readings")
    date_fmt = wb.add_format({"num_format": "yyyy-mm-dd hh:mm"})
    ws.write("A1", "Housing inspection — batch 07 (invented example)")
    ws.merge_range("A2:C3", "[logo]")
    ws.write_row(4, 0, LONG_HEADER)
    for i, row in enumerate(LONG_ROWS):
        r = 5 + i
        for c, v in enumerate(row):
            if isinstance(v, dt.datetime):
                ws.write_datetime(r, c, v, date_fmt)
            elif isinstance(v, str) and v.startswith("="):
                cached = {"=NA()": "#N/A", "=G6-13": 12.001}.get(v, 0)
                ws.write_formula(r, c, v, None, cached)
            else:
                ws.write(r, c, v)
    reg = wb.add_worksheet("Instruments")
    date_only = wb.add_format({"num_format": "yyyy-mm-dd"})
    for r, row in enumerate(REGISTER):
        for c, v in enumerate(row):
            if isinstance(v, dt.date):
                reg.write_datetime(r, c, dt.datetime(v.year, v.month, v.day), date_only)
            else:
                reg.write(r, c, v)
    wb.close()
    strip_cached_value(path, "G11")
    return path


def csv_semicolon(folder: Path, name: str = "lathe-2.csv") -> Path:
    """';' separators, comma decimals, °C temperatures, a title line and a blank line."""
    path = folder / name
    lines = [
        "Inspection lathe 2 (invented example);;;;;;",
        ";;;;;;",
        "Part;Characteristic;Nominal;Tolerance;Measured;Temp [°C];Material",
        "S-10;A;20,000;±0,05;20,012;21,5;",
        "S-10;B;8,000;±0,02;8,004 mm;21,5;",
        "S-11;A;20,000;±0,05;20,1;1,250;",
        "S-11;B;8,000;±0,02;;21,5;",
        "S-12;A;20,000;±0,05;0,7874 in;20 C;",
    ]
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return path


def wide_xlsx(folder: Path, name: str = "flanges-wide.xlsx") -> Path:
    """Characteristics across, parts down; a per-part temperature column."""
    path = folder / name
    wb = xlsxwriter.Workbook(path)
    ws = wb.add_worksheet("Sheet1")
    ws.write("A1", "Flange check (invented example)")
    ws.write_row(2, 0, ["Characteristic", "F1", "F2", "F3", "Part temp (°C)"])
    ws.write_row(3, 0, ["Nominal", 50, 10, 30])
    ws.write_row(4, 0, ["Lower limit", 49.95, 9.98, 29.9])
    ws.write_row(5, 0, ["Upper limit", 50.05, 10.02, 30.1])
    ws.write_row(6, 0, ["Part", "", "", "", ""])
    ws.write_row(7, 0, ["FL-1", 50.01, 10.005, 30.02, 20.5])
    ws.write_row(8, 0, ["FL-2", 49.99, "#VALUE!", 29.95, 21.0])
    ws.write_row(9, 0, ["FL-3", 50.02, 10.001, "", 20.0])
    wb.close()
    return path


def merged_header_xlsx(folder: Path, name: str = "merged.xlsx") -> Path:
    """A merged 'Readings' cell above sub-headers 1, 2, 3 (repeated readings in columns)."""
    path = folder / name
    wb = xlsxwriter.Workbook(path)
    ws = wb.add_worksheet("Data")
    ws.merge_range("D1:F1", "Readings")
    ws.write_row(1, 0, ["Part", "Characteristic", "Tolerance", 1, 2, 3, "Size [in]"])
    ws.write_row(2, 0, ["K-1", "L", "", 1.0001, 1.0003, 1.0002, 1.0])
    ws.write_row(3, 0, ["K-2", "L", "", 1.0004, "", "", 1.0])
    wb.close()
    return path


def ods_minimal(folder: Path, rows: list[list[object]], name: str = "sheet.ods") -> Path:
    """A minimal OpenDocument spreadsheet written by hand (no ODS writer is a dependency)."""
    from xml.sax.saxutils import escape

    def cell(v: object) -> str:
        if isinstance(v, int | float):
            return (f'<table:table-cell office:value-type="float" office:value="{v}">'
                    f"<text:p>{v}</text:p></table:table-cell>")
        if v in ("", None):
            return "<table:table-cell/>"
        return (f'<table:table-cell office:value-type="string"><text:p>{escape(str(v))}'
                "</text:p></table:table-cell>")

    body = "".join("<table:table-row>" + "".join(cell(v) for v in r) + "</table:table-row>"
                   for r in rows)
    content = (
        '<?xml version="1.0" encoding="UTF-8"?>'
        '<office:document-content xmlns:office="urn:oasis:names:tc:opendocument:xmlns:office:1.0"'
        ' xmlns:table="urn:oasis:names:tc:opendocument:xmlns:table:1.0"'
        ' xmlns:text="urn:oasis:names:tc:opendocument:xmlns:text:1.0" office:version="1.2">'
        '<office:body><office:spreadsheet><table:table table:name="Readings">'
        f"{body}</table:table></office:spreadsheet></office:body></office:document-content>"
    )
    manifest = (
        '<?xml version="1.0" encoding="UTF-8"?>'
        '<manifest:manifest xmlns:manifest="urn:oasis:names:tc:opendocument:xmlns:manifest:1.0"'
        ' manifest:version="1.2"><manifest:file-entry manifest:full-path="/" manifest:media-type='
        '"application/vnd.oasis.opendocument.spreadsheet"/><manifest:file-entry manifest:full-'
        'path="content.xml" manifest:media-type="text/xml"/></manifest:manifest>'
    )
    path = folder / name
    with zipfile.ZipFile(path, "w") as z:
        z.writestr("mimetype", "application/vnd.oasis.opendocument.spreadsheet",
                   compress_type=zipfile.ZIP_STORED)
        z.writestr("content.xml", content, compress_type=zipfile.ZIP_DEFLATED)
        z.writestr("META-INF/manifest.xml", manifest, compress_type=zipfile.ZIP_DEFLATED)
    return path
