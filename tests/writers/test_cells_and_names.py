"""Cell text escaping, sheet names and unusual worksheet XML.

References: XML 1.0 (Fifth Edition) §2.2 (characters allowed in a document) and §2.4 (escaping
``&`` and ``<``); ECMA-376 Part 1, 22.9.2.19 ST_Xstring (``_xHHHH_`` escapes); Excel
specifications and limits (sheet names ≤ 31 characters, not ``[]:*?/\\``; 32 767 characters per
cell) — common practice, from memory.
"""

from __future__ import annotations

import re
import zipfile
from pathlib import Path

import numpy as np
import openpyxl
import pandas as pd

from qc.io.writeback import write_back
from qc.io.writeback_cells import xml_text
from qc.io.writeback_sheets import valid_sheet_name
from tests.writers.workbooks import package_problems


def test_xml_text_escapes() -> None:
    assert xml_text("a<b & c>d") == "a&lt;b &amp; c&gt;d"
    assert xml_text("bell\x07") == "bell_x0007_"  # XML 1.0 §2.2: U+0007 not allowed
    assert xml_text("_x0041_") == "_x005F_x0041_"  # ST_Xstring: a literal, not the letter A
    assert xml_text("tab\tnewline\n") == "tab\tnewline\n"


def test_sheet_names() -> None:
    assert valid_sheet_name("a/b:c*?[d]\\", []) == "a_b_c___d__"
    assert valid_sheet_name("Notes", ["notes"]) == "Notes (2)"
    assert valid_sheet_name("Notes", ["Notes", "Notes (2)"]) == "Notes (3)"
    long = "Uncertainty budget per characteristic"
    assert valid_sheet_name(long, []) == long[:31]
    assert valid_sheet_name(long, [long[:31]]) == long[:27] + " (2)"
    assert valid_sheet_name("'quoted'", []) == "quoted"
    assert valid_sheet_name("History", []) == "History_"  # reserved by Excel, from memory


def _prefixed_workbook(path: Path) -> Path:
    """A workbook whose sheet uses a namespace prefix (x:), as some generators write."""
    wb = openpyxl.Workbook()
    ws = wb.active
    ws.title = "Data"
    ws.append(["Part", "Size"])
    ws.append(["P1", 25.0])
    tmp = path.with_suffix(".plain.xlsx")
    wb.save(tmp)
    with zipfile.ZipFile(tmp) as a, zipfile.ZipFile(path, "w") as b:
        for info in a.infolist():
            data = a.read(info)
            if info.filename == "xl/worksheets/sheet1.xml":
                text = data.decode()
                text = text.replace("<", "<x:").replace("<x:/", "</x:")
                text = text.replace('x:worksheet xmlns="', 'x:worksheet xmlns:x="', 1)
                data = text.encode()
            b.writestr(info, data)
    return path


def test_prefixed_sheet_and_infinite_values(tmp_path: Path) -> None:
    src = _prefixed_workbook(tmp_path / "p.xlsx")
    out = tmp_path / "o.xlsx"
    report = write_back(
        src,
        out,
        sheet="Data",
        header_row=1,
        data_rows=[2],
        last_column=2,
        results=pd.DataFrame({"capability_index": [np.inf], "verdict": ["<ok & done>"]}),
    )
    assert report.mode == "beside data"
    assert report.notes == ("1 infinite value(s) were written as the text inf or -inf.",)
    assert package_problems(out) == []
    ws = openpyxl.load_workbook(out)["Data"]
    assert ws["D1"].value == "capability_index" and ws["D2"].value == "inf"
    assert ws["E2"].value == "<ok & done>" and ws["B2"].value == 25


def test_dates_follow_the_1904_system(tmp_path: Path) -> None:
    # ECMA-376 Part 1, 18.17.4.1: serial dates count from 1899-12-30 or, with date1904, 1904-01-01
    wb = openpyxl.Workbook()
    wb.epoch = openpyxl.utils.datetime.CALENDAR_MAC_1904
    ws = wb.active
    ws.append(["Part"])
    ws.append(["P1"])
    src = tmp_path / "mac.xlsx"
    wb.save(src)
    out = tmp_path / "o.xlsx"
    when = pd.Timestamp("2026-01-05 08:30")
    write_back(
        src,
        out,
        sheet="Sheet",
        header_row=1,
        data_rows=[2],
        last_column=1,
        results=pd.DataFrame({"measured_at": [when]}),
    )
    back = openpyxl.load_workbook(out)["Sheet"]["C2"]
    assert back.value == when.to_pydatetime() and back.is_date


def test_excel_style_markup_is_kept(tmp_path: Path) -> None:
    """Sheet XML as Excel writes it: mc:Ignorable prefixes, x14ac row attributes, spans.

    ECMA-376 Part 3 (Markup Compatibility): a prefix named in mc:Ignorable must stay declared,
    so the root element has to come through unchanged.
    """
    wb = openpyxl.Workbook()
    ws = wb.active
    ws.title = "Data"
    ws.append(["Part", "Size"])
    ws.append(["P1", 25.0])
    plain = tmp_path / "plain.xlsx"
    wb.save(plain)
    root = (
        '<worksheet xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main" '
        'xmlns:r="http://schemas.openxmlformats.org/officeDocument/2006/relationships" '
        'xmlns:mc="http://schemas.openxmlformats.org/markup-compatibility/2006" '
        'mc:Ignorable="x14ac" '
        'xmlns:x14ac="http://schemas.microsoft.com/office/spreadsheetml/2009/9/ac">'
    )
    src = tmp_path / "excel_like.xlsx"
    with zipfile.ZipFile(plain) as a, zipfile.ZipFile(src, "w") as b:
        for info in a.infolist():
            data = a.read(info)
            if info.filename == "xl/worksheets/sheet1.xml":
                text = data.decode()
                text = root + text.split(">", 1)[1]
                text = text.replace('<row r="2">', '<row r="2" spans="1:2" x14ac:dyDescent="0.25">')
                data = text.encode()
            b.writestr(info, data)
    out = tmp_path / "o.xlsx"
    write_back(
        src,
        out,
        sheet="Data",
        header_row=1,
        data_rows=[2],
        last_column=2,
        results=pd.DataFrame({"verdict": ["conforms"]}),
    )
    with zipfile.ZipFile(out) as zf:
        xml = zf.read("xl/worksheets/sheet1.xml").decode()
    assert xml.startswith(root)
    assert '<row r="2" x14ac:dyDescent="0.25">' in xml  # spans dropped: optional, now stale
    assert openpyxl.load_workbook(out)["Data"]["D2"].value == "conforms"
    assert package_problems(out) == []


def test_column_spans_are_split_around_the_results(tmp_path: Path) -> None:
    # ECMA-376 Part 1, 18.3.1.13: <col> spans are sorted and must not overlap
    wb = openpyxl.Workbook()
    ws = wb.active
    ws.title = "Data"
    ws.append(["Part", "Size"])
    ws.append(["P1", 25.0])
    ws.column_dimensions.group("C", "H", hidden=True)  # hidden columns over the results
    src = tmp_path / "cols.xlsx"
    wb.save(src)
    out = tmp_path / "o.xlsx"
    write_back(
        src,
        out,
        sheet="Data",
        header_row=1,
        data_rows=[2],
        last_column=2,
        results=pd.DataFrame({"verdict": ["conforms"], "size_at_20c": [25.0012]}),
    )
    with zipfile.ZipFile(out) as zf:
        xml = zf.read("xl/worksheets/sheet1.xml").decode()
    spans = [(int(a), int(b)) for a, b in re.findall(r'<col [^>]*?min="(\d+)" max="(\d+)"', xml)]
    assert spans == [(3, 3), (4, 4), (5, 5), (6, 8)]
    dims = openpyxl.load_workbook(out)["Data"].column_dimensions
    assert not dims["D"].hidden and not dims["E"].hidden  # the results are visible
    assert dims["F"].hidden  # the rest of the hidden span stays hidden
