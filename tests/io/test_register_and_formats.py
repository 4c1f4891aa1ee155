"""A separate instrument register file, the .ods and .tsv readers, a wide layout pinned by file."""

from pathlib import Path

import pytest

from qc.io import parse_layout, read_inspection, read_register
from tests.corpus import builders

REGISTER_CSV = (
    "Instrument ID;Type;Resolution (µm);MPE;Cal U (µm);k;Due date\n"
    "BORE-3;bore gauge;1;1,5 + L/333 µm;0,8;2;2026-03-01\n"
    "HGT-9;height gauge;10;;;;2025-06-30\n"
    "BAD-1;caliper;-5;;;;2026-01-01\n"
)


def test_separate_register_csv(tmp_path: Path) -> None:
    reg_path = tmp_path / "register.csv"
    reg_path.write_text(REGISTER_CSV, encoding="utf-8")
    reg = read_register(reg_path)
    e = reg.entries["BORE-3"]
    # '1,5 + L/333 µm': MPE = 1.5 µm + L/333 µm with L in mm → A = 0.0015 mm, K = 333 000
    assert e.mpe_a_mm == pytest.approx(0.0015) and e.mpe_k_mm == pytest.approx(333_000)
    assert e.resolution_mm == pytest.approx(0.001)
    assert e.cal_u_mm == pytest.approx(0.0004)  # U = 0.8 µm, k = 2 → u = 0.4 µm
    assert reg.invalid == {"BAD-1": "resolution_mm: Input should be greater than 0"}

    sheet = tmp_path / "bores.csv"
    sheet.write_text("Part;Nominal;Tolerance;Reading;Instrument;Date\n"
                     "B-1;30;±0,01;30,004;BORE-3;2026-02-01\n"
                     "B-2;30;±0,01;30,004;HGT-9;2026-02-01\n"
                     "B-3;30;±0,01;30,004;BAD-1;2026-02-01\n", encoding="utf-8")
    t = read_inspection(sheet, register=reg_path)
    f = t.frame
    assert f.loc[0, "cal_u_mm"] == pytest.approx(0.0004)
    assert f["flags"].tolist() == ["", "calibration-overdue", ""]
    assert [x.message for x in t.errors] == [
        "bores.csv › row 4 › E: Instrument: expected an instrument with a usable register entry, "
        "got 'BAD-1' (resolution_mm: Input should be greater than 0)"]
    assert "register.csv › row 4: resolution_mm: Input should be greater than 0" in t.warnings


def test_ods(tmp_path: Path) -> None:
    p = builders.ods_minimal(tmp_path, [["Inspection (invented)"], [],
                                        ["Part", "Nominal", "Lower limit", "Upper limit",
                                         "Reading"],
                                        ["O-1", 5, 4.9, 5.1, 5.02]])
    t = read_inspection(p)
    assert t.header_row == 3 and t.sheet == "Readings"
    assert t.frame.loc[0, "reading_mean_mm"] == 5.02 and not t.errors


def test_tsv(tmp_path: Path) -> None:
    p = tmp_path / "t.tsv"
    p.write_text("Part\tNominal\tMin\tMax\tReading\nT-1\t5\t4.9\t5.1\t5.01\n", encoding="utf-8")
    t = read_inspection(p)
    assert t.frame.loc[0, "reading_mean_mm"] == 5.01 and not t.errors


def test_wide_layout_pinned_by_layout_file(tmp_path: Path) -> None:
    layout = parse_layout("layout = \"wide\"\n[wide]\ncharacteristic_row = 3\nnominal_row = 4\n"
                          "first_part_row = 8\n[defaults]\ngeneral_tolerance = \"f\"\n")
    t = read_inspection(builders.wide_xlsx(tmp_path), layout=layout)
    # limits rows not named in the layout: ISO 2768-1 class f applies, 30–120 mm: ±0.15
    assert t.frame.loc[0, "upper_limit_mm"] == pytest.approx(50.15)
    assert len(t.frame) == 9


def test_register_sheet_first_is_not_taken_for_the_readings(tmp_path: Path) -> None:
    import xlsxwriter

    p = tmp_path / "order.xlsx"
    wb = xlsxwriter.Workbook(p)
    reg = wb.add_worksheet("Gauges")
    reg.write_row(0, 0, ["Instrument ID", "Type", "Resolution (mm)"])
    reg.write_row(1, 0, ["MIC-07", "micrometer", 0.001])
    ws = wb.add_worksheet("Data")
    ws.write_row(0, 0, ["Part", "Nominal", "Min", "Max", "Reading", "Instrument"])
    ws.write_row(1, 0, ["Q-1", 8, 7.99, 8.01, 8.002, "MIC-07"])
    wb.close()
    t = read_inspection(p)
    assert t.sheet == "Data" and not t.errors
    assert t.frame.loc[0, "resolution_mm"] == 0.001


def test_thousands_and_date_order_from_layout(tmp_path: Path) -> None:
    p = tmp_path / "big.csv"
    p.write_text("Part,Nominal,Min,Max,Reading,Date\n"
                 "L-1,\"1,250\",\"1,249.5\",\"1,250.5\",\"1,250.1\",3/4/2026\n", encoding="utf-8")
    plain = read_inspection(p)
    assert {e.field for e in plain.errors} == {"nominal", "measured_at"}
    t = read_inspection(p, layout=parse_layout('thousands = ","\ndate_order = "mdy"\n'))
    assert not t.errors
    assert t.frame.loc[0, "nominal_mm"] == 1250.0
    assert t.frame.loc[0, "reading_mean_mm"] == pytest.approx(1250.1)
    assert str(t.frame.loc[0, "measured_at"]) == "2026-03-04 00:00:00"


def test_unknown_unit_in_header(tmp_path: Path) -> None:
    p = tmp_path / "u.csv"
    p.write_text("Part;Min;Max;Reading [furlong]\nA;1;2;1,5\n", encoding="utf-8")
    t = read_inspection(p)
    assert [e.message for e in t.errors] == [
        "u.csv › row 2 › D: Reading [furlong]: expected a length unit (mm, µm, in, thou) in the "
        "header, got '1,5' (the unit 'furlong' written in the header is not known)"]


def test_wide_header_cell_error_is_named_with_its_row(tmp_path: Path) -> None:
    import xlsxwriter

    p = tmp_path / "w.xlsx"
    wb = xlsxwriter.Workbook(p)
    ws = wb.add_worksheet("W")
    ws.write_row(0, 0, ["Characteristic", "A", "B"])
    ws.write_row(1, 0, ["Nominal", 10, "abc"])
    ws.write_row(2, 0, ["Tolerance", "±0.1", "±0.1"])
    ws.write_row(3, 0, ["W-1", 10.01, 10.02])
    wb.close()
    t = read_inspection(p)
    assert t.errors[0].message == (
        "w.xlsx › W › row 4 › C: Nominal (row 2): expected a number, got 'abc'")
    # without a nominal the ± tolerance has no limits: the tolerance parser says so
    assert [(e.field, e.row, e.column) for e in t.errors[1:]] == [
        ("tolerance", 4, "C: Tolerance (row 3)")]
    assert t.frame.loc[0, "upper_limit_mm"] == pytest.approx(10.1)
