"""Plausibility checks: values that parse but cannot be right, each with its message.

Reference facts: 0 K = −273.15 °C (SI Brochure, 9th ed., 2.3.1); t_F = 1.8·t_C + 32 so 68 °F =
20 °C (NIST SP 811, 2008, 4.2.1.1); 1 in = 25.4 mm exactly (NIST SP 811, B.9); steel gauge blocks
α = 11.5e-6/K (ISO 3650:1998, 6.2.2, from memory; also Swyt, J. Res. NIST 99, 1994); 1 ppm/K =
1e-6/K. The shop range 10–35 °C is common practice, no source (qc/data/limits.toml).
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pandas as pd

from qc.io import read_inspection
from qc.io.plausibility import ABSOLUTE_ZERO_C, INCH_MM, Plausibility, check_plausibility


def _frame(n: int, **cols: object) -> pd.DataFrame:
    base: dict[str, object] = {
        "part": [f"PX-{i}" for i in range(n)], "kind": [""] * n, "unit": ["mm"] * n,
        "nominal_mm": [25.0] * n, "lower_limit_mm": [24.98] * n, "upper_limit_mm": [25.02] * n,
        "reading_mean_mm": [25.001] * n, "reading_sd_mm": [np.nan] * n,
        "part_temp_c": [20.0] * n, "gauge_temp_c": [np.nan] * n, "room_temp_c": [np.nan] * n,
        "part_cte": [11.5e-6] * n, "gauge_cte": [11.5e-6] * n, "shared_room": [True] * n,
        "source_file": ["batch.xlsx"] * n, "source_sheet": ["Readings"] * n,
        "source_row": list(range(2, n + 2)),
    }
    base.update(cols)
    return pd.DataFrame(base)


def test_reference_constants() -> None:
    assert ABSOLUTE_ZERO_C == -273.15  # SI Brochure 9th ed., 2.3.1
    assert INCH_MM == 25.4  # NIST SP 811, B.9 (exact)


def test_clean_frame_has_nothing() -> None:
    assert check_plausibility(_frame(4)) == ({}, {}, [])


def test_below_absolute_zero_is_an_error() -> None:
    errors, warnings, _ = check_plausibility(_frame(2, part_temp_c=[20.0, -300.0]))
    assert errors == {1: [
        "batch.xlsx › Readings › row 3 › part_temp: part temperature -300 °C is below absolute "
        "zero (-273.15 °C); expected a temperature near 20 °C; correct the value or its unit"]}
    assert warnings == {}


def test_fahrenheit_in_a_celsius_column() -> None:
    temps = [20.1, 20.3, 68.0, 20.2, 19.9]
    _, warnings, notes = check_plausibility(_frame(5, part_temp_c=temps))
    assert warnings == {2: [
        "batch.xlsx › Readings › row 4 › part_temp: part temperature 68 °C is outside the shop "
        "range 10–35 °C and looks like °F (68 °F = 20.0 °C); if so, write the unit in the cell "
        "or header (e.g. '68 °F')"]}
    assert notes == []  # most of the column is °C: no note about the whole column
    _, w2, notes2 = check_plausibility(_frame(3, part_temp_c=[68.0, 68.5, 69.0]))
    assert sorted(w2) == [0, 1, 2]
    assert notes2 == ["batch.xlsx: 3 part temperatures lie between 50 and 95, the shop range in "
                      "°F: is the column in °F? Write the unit in the header, e.g. 'Temp (°F)'"]


def test_kelvin_and_out_of_range() -> None:
    _, warnings, _ = check_plausibility(_frame(2, part_temp_c=[293.2, 40.0]))
    assert warnings[0] == [
        "batch.xlsx › Readings › row 2 › part_temp: part temperature 293.2 °C is outside the "
        "shop range 10–35 °C and looks like kelvin (293.2 K = 20.05 °C); if so, write the unit "
        "(e.g. '293.2 K')"]
    assert warnings[1] == [
        "batch.xlsx › Readings › row 3 › part_temp: part temperature 40 °C is outside the shop "
        "range 10–35 °C; check the value (the correction to 20 °C grows with the difference)"]
    # the range is configurable
    _, w, _ = check_plausibility(_frame(1, part_temp_c=[40.0]),
                                 Plausibility().replace(shop_temp_c=(15.0, 45.0)))
    assert w == {}


def test_shared_room_gap() -> None:
    f = _frame(2, gauge_temp_c=[20.5, 27.0], part_temp_c=[20.0, 20.0])
    _, warnings, _ = check_plausibility(f)
    assert warnings == {1: [
        "batch.xlsx › Readings › row 3 › gauge_temp: the row is marked as part and gauge sharing "
        "one room, but the part is at 20 °C and the gauge at 27 °C (7.0 °C apart, more than 5 °C);"
        " check whether the two were swapped or the part was still warm"]}
    # not marked as shared: a different gauge temperature is legitimate
    f2 = _frame(2, gauge_temp_c=[20.5, 27.0], shared_room=[False, False])
    assert check_plausibility(f2)[1] == {}


def test_negative_size_unless_signed_kind() -> None:
    f = _frame(3, nominal_mm=[25.0, -5.0, -5.0], lower_limit_mm=[24.98, -5.1, -5.1],
               upper_limit_mm=[25.02, -4.9, -4.9], reading_mean_mm=[25.0, -5.0, -5.0],
               kind=["size", "size", "position"])
    errors, _, _ = check_plausibility(f)
    assert list(errors) == [1]
    assert errors[1][0] == (
        "batch.xlsx › Readings › row 3 › nominal: nominal size -5 mm is negative; a size cannot "
        "be; expected a positive length, or name the kind of characteristic (deviation, "
        "position) if signed values are meant")
    assert errors[1][1].startswith("batch.xlsx › Readings › row 3 › reading: reading -5 mm is")


def test_inverted_limits() -> None:
    errors, _, _ = check_plausibility(_frame(1, lower_limit_mm=[25.02], upper_limit_mm=[24.98]))
    assert errors == {0: ["batch.xlsx › Readings › row 2 › lower_limit: lower limit 25.02 mm is "
                          "above upper limit 24.98 mm; expected lower ≤ upper; swap the two"]}


def test_inch_read_as_mm_and_back() -> None:
    f = _frame(2, nominal_mm=[25.4, 1.0], lower_limit_mm=[25.38, 0.99],
               upper_limit_mm=[25.42, 1.01], reading_mean_mm=[1.0002, 25.41])
    _, warnings, _ = check_plausibility(f)
    assert warnings[0] == [
        "batch.xlsx › Readings › row 2 › reading: reading 1.0002 mm is about 1/25.4 of the "
        "nominal 25.4 mm: inch read as mm? (1.0002 in = 25.41 mm); write the unit in the cell "
        "(e.g. '1.0002 in') or the unit column"]
    assert warnings[1][0].startswith(
        "batch.xlsx › Readings › row 3 › reading: reading 25.41 mm is about 25.4 × the nominal "
        "1 mm")


def test_far_outside_and_spread_and_zero_width() -> None:
    f = _frame(3, reading_mean_mm=[27.0, 25.0, 25.0], reading_sd_mm=[np.nan, 0.03, np.nan],
               lower_limit_mm=[24.98, 24.98, 25.0], upper_limit_mm=[25.02, 25.02, 25.0])
    _, warnings, _ = check_plausibility(f)
    assert warnings[0] == [
        "batch.xlsx › Readings › row 2 › reading: reading 27 mm is far outside the tolerance "
        "24.98–25.02 mm (50 tolerance widths away); check for a typing mistake, a wrong row or a "
        "wrong unit"]
    assert warnings[1][0].startswith("batch.xlsx › Readings › row 3 › reading: the repeated "
                                     "readings scatter by 0.03 mm")
    assert warnings[2] == ["batch.xlsx › Readings › row 4 › upper_limit: lower and upper limits "
                           "are both 25 mm: a tolerance of zero width accepts nothing; check "
                           "the limits"]


def test_cte_in_ppm_without_unit() -> None:
    errors, _, _ = check_plausibility(_frame(2, part_cte=[11.5e-6, 11.5]))
    assert errors == {1: [
        "batch.xlsx › Readings › row 3 › part_cte: part expansion coefficient 11.5 /K is a "
        "million times too large for any material; expected about 11.5e-6 /K: it was probably "
        "written in ppm/K; write '11.5 ppm/K' or '11.5e-6'"]}


def test_through_the_reader_names_the_column(tmp_path: Path) -> None:
    p = tmp_path / "room.csv"
    p.write_text(
        "Part;Characteristic;Nominal;Lower limit;Upper limit;Reading;Part temp (°C)\n"
        "PX-1;D1;25;24.98;25.02;25.001;20.2\n"
        "PX-2;D1;25;24.98;25.02;25.002;68\n"
        "PX-3;D1;25;24.98;25.02;25.000;20.4\n", encoding="utf-8")
    t = read_inspection(p)
    assert t.errors == []
    errors, warnings, _ = check_plausibility(t.frame, columns=t.columns)
    assert errors == {}
    assert warnings == {1: [
        "room.csv › row 3 › G: Part temp (°C): part temperature 68 °C is outside the shop range "
        "10–35 °C and looks like °F (68 °F = 20.0 °C); if so, write the unit in the cell or "
        "header (e.g. '68 °F')"]}


def test_missing_columns_and_empty_frame() -> None:
    assert check_plausibility(pd.DataFrame()) == ({}, {}, [])
    only = pd.DataFrame({"part_temp_c": [-280.0], "source_row": [7]})
    errors, _, _ = check_plausibility(only)
    assert errors[0][0].startswith("input › row 7 › part_temp: part temperature -280 °C")
