"""The corpus of messy sheets (tests/corpus/builders.py) reads to the expected records and errors.

Expected values are hand-computed from the cells the builders write, with exact unit factors
(NIST SP 811, 2008: 1 in = 25.4 mm; t/°C = (t/°F − 32)/1.8). Row numbers are those a
spreadsheet program shows. Every data row gives exactly one record.
"""

from pathlib import Path

import numpy as np
import pytest

from qc.io import read_inspection
from tests.corpus import builders


@pytest.fixture(scope="module")
def long_table(tmp_path_factory: pytest.TempPathFactory):
    return read_inspection(builders.long_messy_xlsx(tmp_path_factory.mktemp("long")))


def test_header_found_below_title_logo_and_blank_rows(long_table) -> None:
    t = long_table
    assert t.header_row == 5
    assert t.data_rows == list(range(6, 16))
    assert len(t.frame) == len(builders.LONG_ROWS)  # row count preserved
    assert t.frame["source_row"].tolist() == list(range(6, 16))
    assert t.sheet == "Readings" and t.last_column == "O"
    assert t.columns["part_temp"].letter == "J" and t.columns["part_temp"].unit == "°F"
    assert t.columns["reading_1"].header == "Reading 1"
    assert set(t.frame["source_file"]) == {"batch-07.xlsx"}


def test_values_in_canonical_units(long_table) -> None:
    f = long_table.frame
    # row 6: three readings 25.001, 25.003, 25.002 mm → mean 25.002, s = 0.001 (hand-computed)
    assert f.loc[0, "reading_mean_mm"] == pytest.approx(25.002, abs=1e-12)
    assert f.loc[0, "reading_sd_mm"] == pytest.approx(0.001, rel=1e-9)
    assert f.loc[0, "n_readings"] == 3
    # 68 °F = 20 °C exactly (NIST SP 811, B.8)
    assert f.loc[0, "part_temp_c"] == pytest.approx(20.0, abs=1e-12)
    # 11.5 under a 'CTE (ppm/K)' header = 11.5e-6 /K
    assert f.loc[0, "part_cte"] == pytest.approx(11.5e-6, rel=1e-12)
    # row 7: '12.01; 12.02; 12.01' in one cell, '68 °F' as text
    assert f.loc[1, "n_readings"] == 3
    assert f.loc[1, "reading_mean_mm"] == pytest.approx((12.01 + 12.02 + 12.01) / 3)
    assert f.loc[1, "part_temp_c"] == pytest.approx(20.0)
    # row 10: a formula with a cached value: the cached value is used
    assert f.loc[4, "reading_mean_mm"] == pytest.approx(12.001)
    # row 12: '0.9843 in' = 25.00122 mm (1 in = 25.4 mm exactly)
    assert f.loc[6, "reading_mean_mm"] == pytest.approx(0.9843 * 25.4, abs=1e-12)
    assert f.loc[0, "lower_limit_mm"] == 24.98 and f.loc[0, "upper_limit_mm"] == 25.02
    assert f.loc[0, "unit"] == "mm" and f.loc[0, "mode"] == "direct"
    assert bool(f.loc[0, "scaled"]) and bool(f.loc[0, "shared_room"])
    assert str(f.loc[0, "measured_at"]) == "2026-01-05 09:30:00"


def test_register_sheet_supplies_instrument_data_and_overdue_flag(long_table) -> None:
    f = long_table.frame
    # MIC-01: resolution 0.001 mm, MPE ±2 µm; CAL-07: 0.01 mm, 0.02 mm, due 2025-12-01
    assert f.loc[0, "resolution_mm"] == 0.001
    assert f.loc[0, "mpe_a_mm"] == pytest.approx(0.002) and np.isinf(f.loc[0, "mpe_k_mm"])
    assert f.loc[6, "resolution_mm"] == 0.01 and f.loc[6, "mpe_a_mm"] == pytest.approx(0.02)
    # measured 2026-01-05, due 2025-12-01: overdue, a flag and not an error
    assert f["flags"].tolist() == [""] * 6 + ["calibration-overdue"] + [""] * 3
    assert f.loc[0, "gauge_material"] == "steel"
    assert not any(e.index == 6 for e in long_table.errors)


def test_exact_error_messages(long_table) -> None:
    got = [(e.index, e.row, e.column, e.message) for e in long_table.errors]
    assert got == [
        (2, 8, "J: Temp (°F)",
         "batch-07.xlsx › Readings › row 8 › J: Temp (°F): expected a number, got 'twenty'"),
        (3, 9, "G: Reading 1",
         "batch-07.xlsx › Readings › row 9 › G: Reading 1: expected a number, got '#N/A' "
         "(the cell holds the spreadsheet error #N/A)"),
        (5, 11, "G: Reading 1",
         "batch-07.xlsx › Readings › row 11 › G: Reading 1: expected a number, got =G8*1 "
         "(formula without a saved result; open and save the file in the spreadsheet program "
         "so it computes the value)"),
        (7, 13, "G: Reading 1",
         "batch-07.xlsx › Readings › row 13 › G: Reading 1: expected a number without comma "
         "grouping, got '12,004' (ambiguous: could be 12004 or 12.004; set decimal and "
         "thousands in the layout file)"),
        (8, 14, "G: Reading 1",
         "batch-07.xlsx › Readings › row 14 › G: Reading 1: expected a reading, got ''"),
        (9, 15, "K: Gauge",
         "batch-07.xlsx › Readings › row 15 › K: Gauge: expected an instrument id from the "
         "register or an instrument type, got 'MIC-1' (did you mean 'MIC-01'?)"),
    ]


def test_rows_with_errors_keep_a_frame_row_with_nan(long_table) -> None:
    f = long_table.frame
    assert np.isnan(f.loc[2, "part_temp_c"]) and f.loc[2, "reading_mean_mm"] == 40.02
    assert np.isnan(f.loc[3, "reading_mean_mm"]) and f.loc[3, "n_readings"] == 0
    assert np.isnan(f.loc[5, "reading_mean_mm"])
    assert f.loc[9, "part"] == "P-004" and np.isnan(f.loc[9, "resolution_mm"])


def test_semicolon_csv_with_comma_decimals(tmp_path: Path) -> None:
    t = read_inspection(builders.csv_semicolon(tmp_path))
    assert t.warnings[:2] == ["lathe-2.csv: fields separated by semicolon (detected)",
                              "lathe-2.csv: decimal comma (detected)"]
    assert t.header_row == 3 and t.sheet is None and len(t.frame) == 5
    f = t.frame
    assert f["reading_mean_mm"].iloc[[0, 1, 2]].tolist() == pytest.approx([20.012, 8.004, 20.1])
    # '0,7874 in' = 19.99996 mm; '20 C' in a °C column
    assert f.loc[4, "reading_mean_mm"] == pytest.approx(0.7874 * 25.4)
    assert f.loc[4, "part_temp_c"] == 20.0
    # under the comma convention '1,250' is 1.25 (°C here: plausible, so no error)
    assert f.loc[2, "part_temp_c"] == pytest.approx(1.25)
    assert f["source_row"].tolist() == [4, 5, 6, 7, 8]
    assert [e.message for e in t.errors] == [
        "lathe-2.csv › row 7 › E: Measured: expected a reading, got ''"]


def test_tolerance_notation_column(tmp_path: Path) -> None:
    # the notation parser belongs to qc.tolerances; here: that its limits arrive in mm
    t = read_inspection(builders.csv_semicolon(tmp_path))
    f = t.frame
    assert f.loc[0, "lower_limit_mm"] == pytest.approx(19.95)
    assert f.loc[0, "upper_limit_mm"] == pytest.approx(20.05)
    assert f.loc[1, "tolerance_text"] == "±0,02"
    assert f.loc[1, "tolerance_description"] != ""


def test_wide_layout_becomes_long_records(tmp_path: Path) -> None:
    t = read_inspection(builders.wide_xlsx(tmp_path))
    assert t.kind == "wide"
    f = t.frame
    assert len(f) == 3 * 3  # three parts × three characteristics
    assert f["part"].tolist() == ["FL-1"] * 3 + ["FL-2"] * 3 + ["FL-3"] * 3
    assert f["characteristic"].tolist() == ["F1", "F2", "F3"] * 3
    assert f["source_row"].tolist() == [8, 8, 8, 9, 9, 9, 10, 10, 10]
    assert f["source_column"].tolist() == ["B", "C", "D"] * 3
    assert f["nominal_mm"].tolist() == [50.0, 10.0, 30.0] * 3
    assert f["lower_limit_mm"].tolist() == [49.95, 9.98, 29.9] * 3
    assert f["part_temp_c"].tolist() == [20.5] * 3 + [21.0] * 3 + [20.0] * 3
    assert t.columns["part_temp"].letter == "E"
    assert [e.message for e in t.errors] == [
        "flanges-wide.xlsx › Sheet1 › row 9 › C: F2: expected a number, got '#VALUE!' "
        "(the cell holds the spreadsheet error #VALUE!)",
        "flanges-wide.xlsx › Sheet1 › row 10 › D: F3: expected a reading, got ''",
    ]


def test_merged_header_over_repeated_reading_columns(tmp_path: Path) -> None:
    t = read_inspection(builders.merged_header_xlsx(tmp_path))
    assert [t.columns[f"reading_{i}"].letter for i in (1, 2, 3)] == ["D", "E", "F"]
    f = t.frame
    # 'Size [in]' sets the row unit: readings 1.0001, 1.0003, 1.0002 in → mean 1.0002 in
    assert f.loc[0, "unit"] == "in"
    assert f.loc[0, "reading_mean_mm"] == pytest.approx(1.0002 * 25.4)
    assert f.loc[0, "nominal_mm"] == pytest.approx(25.4)
    assert f["n_readings"].tolist() == [3, 1]
    assert [e.message for e in t.errors] == [
        "merged.xlsx › Data › row 3 › C: Tolerance: expected a tolerance, limits or a general "
        "tolerance class, got '' (give one in the sheet or set defaults.general_tolerance in "
        "the layout file)",
        "merged.xlsx › Data › row 4 › C: Tolerance: expected a tolerance, limits or a general "
        "tolerance class, got '' (give one in the sheet or set defaults.general_tolerance in "
        "the layout file)",
    ]


def test_frame_columns_are_the_record_model(long_table) -> None:
    from qc.io import record_of
    from qc.models import InspectionRecord

    assert list(long_table.frame.columns) == list(InspectionRecord.model_fields)
    bad = {e.index for e in long_table.errors}
    for i in range(len(long_table.frame)):
        if i not in bad:  # rows without errors are valid records of the one schema
            rec = record_of(long_table.frame, i)
            assert rec.source_row == long_table.frame.loc[i, "source_row"]


def test_check_is_the_same_read(tmp_path: Path) -> None:
    from qc.io import check

    p = builders.csv_semicolon(tmp_path)
    a, b = check(p), read_inspection(p)
    assert a.frame.equals(b.frame) and a.errors == b.errors
