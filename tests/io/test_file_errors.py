"""Whole-file problems are one FileReadError with a message a user understands."""

from pathlib import Path

import pytest
import xlsxwriter

from qc.errors import FileReadError, QcError
from qc.io import read_inspection


def test_empty_csv(tmp_path: Path) -> None:
    p = tmp_path / "empty.csv"
    p.write_text("\n\n", encoding="utf-8")
    with pytest.raises(FileReadError) as e:
        read_inspection(p)
    assert str(e.value) == "empty.csv: the file is empty"


def test_no_header(tmp_path: Path) -> None:
    p = tmp_path / "notes.csv"
    p.write_text("shopping;list\nbread;milk\n", encoding="utf-8")
    with pytest.raises(FileReadError) as e:
        read_inspection(p)
    assert str(e.value) == (
        "notes.csv: no header row found in the first 60 rows; expected column names such as "
        "'Part', 'Characteristic', 'Nominal', 'Tolerance', 'Reading' (or name your headers in "
        "a layout file)")


def test_empty_sheet(tmp_path: Path) -> None:
    p = tmp_path / "blank.xlsx"
    wb = xlsxwriter.Workbook(p)
    wb.add_worksheet("Readings")
    wb.close()
    with pytest.raises(FileReadError) as e:
        read_inspection(p)
    assert str(e.value) == "blank.xlsx › Readings: the sheet is empty"


def test_damaged_workbook(tmp_path: Path) -> None:
    p = tmp_path / "broken.xlsx"
    p.write_bytes(b"PK\x03\x04 not really a workbook")
    with pytest.raises(FileReadError) as e:
        read_inspection(p)
    # refused by the safety checks before any reader opens it (qc/io/guard.py)
    assert str(e.value) == (
        "broken.xlsx: damaged or not a workbook: its ZIP directory is missing or broken (File "
        "is not a zip file); the file may be truncated (an interrupted download or copy); ask "
        "for the file again")


def test_unknown_file_type_and_missing_file(tmp_path: Path) -> None:
    p = tmp_path / "scan.pdf"
    p.write_bytes(b"%PDF-1.4")
    with pytest.raises(FileReadError) as e:
        read_inspection(p)
    assert str(e.value) == ("scan.pdf: files of type .pdf cannot be read; use .xlsx, .xlsm, "
                            ".ods, .csv, .tsv or .parquet")
    with pytest.raises(FileReadError) as e:
        read_inspection(tmp_path / "gone.csv")
    assert str(e.value) == "gone.csv: no such file"


def test_unknown_sheet_suggests(tmp_path: Path) -> None:
    p = tmp_path / "two.xlsx"
    wb = xlsxwriter.Workbook(p)
    wb.add_worksheet("Readings").write_row(0, 0, ["Part", "Reading"])
    wb.close()
    with pytest.raises(FileReadError) as e:
        read_inspection(p, sheet="Reading")
    assert str(e.value) == "two.xlsx: unknown sheet 'Reading'; did you mean 'Readings'?"


def test_binary_saved_as_csv(tmp_path: Path) -> None:
    p = tmp_path / "odd.csv"
    p.write_bytes(b"\x00\x01\x02PK")
    with pytest.raises(QcError) as e:
        read_inspection(p)
    assert str(e.value) == ("odd.csv: not a text file: it looks like binary data (not text, "
                            "not a workbook); expected delimited text (CSV or TSV); export the "
                            "sheet as CSV or .xlsx")


def test_windows_1252_csv_is_read_with_a_note(tmp_path: Path) -> None:
    p = tmp_path / "legacy.csv"
    p.write_bytes("Part;Nominal;Tolerance;Reading;Temp (°C)\nA;10;±0,1;10,02;20\n"
                  .encode("cp1252"))
    t = read_inspection(p)
    assert t.warnings[0] == "legacy.csv: not UTF-8; read as Windows-1252 (Western European)"
    assert t.frame.loc[0, "part_temp_c"] == 20.0
