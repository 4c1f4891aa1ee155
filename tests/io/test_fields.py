"""Field handling on small invented sheets: temperatures, CTE, materials, instruments, limits.

Each expected value is hand-computed from the cells; unit factors from NIST SP 811 (2008).
"""

from pathlib import Path

import numpy as np
import pytest

from qc.io import parse_layout, read_inspection


def sheet(tmp_path: Path, header: list[str], *rows: list[object], name: str = "s.csv",
          layout: str | None = None):
    p = tmp_path / name
    lines = [";".join(header)] + [";".join("" if v is None else str(v) for v in r) for r in rows]
    p.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return read_inspection(p, layout=parse_layout(layout) if layout else None)


def test_thermometer_accuracy_in_fahrenheit_is_a_difference(tmp_path: Path) -> None:
    t = sheet(tmp_path, ["Part", "Nominal", "Tolerance", "Reading", "Temp (°F)",
                         "Thermometer accuracy (°F)"], ["A", "10", "±0,1", "10,01", "77", "0,9"])
    f = t.frame
    assert f.loc[0, "part_temp_c"] == pytest.approx(25.0)  # (77 − 32)/1.8, NIST SP 811 B.8
    assert f.loc[0, "thermometer_accuracy_c"] == pytest.approx(0.5)  # 0.9 × 5/9, no offset
    # rectangular distribution, half-width a: u = a/√3 (JCGM 100:2008, 4.3.7)
    assert f.loc[0, "u_part_temp_c"] == pytest.approx(0.5 / np.sqrt(3))


def test_layout_default_thermometer_accuracy(tmp_path: Path) -> None:
    t = sheet(tmp_path, ["Part", "Nominal", "Tolerance", "Reading"], ["A", "10", "±0,1", "10"],
              layout='[defaults]\nthermometer_accuracy = "0.36 °F"\n')
    assert t.frame.loc[0, "thermometer_accuracy_c"] == pytest.approx(0.2)  # 0.36 × 5/9


@pytest.mark.parametrize(("header", "cell", "per_kelvin"), [
    ("CTE (ppm/K)", "11,5", 11.5e-6), ("CTE", "11,5 ppm/K", 11.5e-6),
    ("CTE", "0,0000115", 11.5e-6), ("CTE (1/°F)", "6,4e-6", 6.4e-6 * 1.8),
    ("CTE (µm/(m·K))", "23,6", 23.6e-6),
])
def test_cte_units(tmp_path: Path, header: str, cell: str, per_kelvin: float) -> None:
    t = sheet(tmp_path, ["Part", "Nominal", "Tolerance", "Reading", header],
              ["A", "10", "±0,1", "10", cell])
    assert not t.errors
    assert t.frame.loc[0, "part_cte"] == pytest.approx(per_kelvin, rel=1e-12)


def test_cte_without_unit_in_ppm_is_an_error(tmp_path: Path) -> None:
    t = sheet(tmp_path, ["Part", "Nominal", "Tolerance", "Reading", "CTE"],
              ["A", "10", "±0,1", "10", "11,5"])
    assert [e.message for e in t.errors] == [
        "s.csv › row 2 › E: CTE: expected an expansion coefficient in 1/K (such as 11.5e-6) or "
        "with its unit (11.5 ppm/K), got '11,5'"]
    assert np.isnan(t.frame.loc[0, "part_cte"])


def test_fahrenheit_value_in_celsius_column_fails_plausibility(tmp_path: Path) -> None:
    t = sheet(tmp_path, ["Part", "Nominal", "Tolerance", "Reading", "Temp (°C)"],
              ["A", "10", "±0,1", "10", "168"])
    assert [e.message for e in t.errors] == [
        "s.csv › row 2 › E: Temp (°C): expected a part temperature less than or equal to 150 "
        "°C, got '168'"]


def test_materials_resolve_through_the_library(tmp_path: Path) -> None:
    pytest.importorskip("qc.library.materials")
    from qc.library.materials import load_materials

    t = sheet(tmp_path, ["Part", "Nominal", "Tolerance", "Reading", "Material",
                         "Gauge material"],
              ["A", "10", "±0,1", "10", "6061", "steel"],
              ["B", "10", "±0,1", "10", "unobtainium", ""])
    lib = load_materials()
    assert t.frame.loc[0, "part_cte"] == lib.get("6061").cte
    assert t.frame.loc[0, "part_cte_u"] == lib.get("6061").cte_u
    assert t.frame.loc[0, "gauge_cte"] == lib.get("steel").cte
    assert len(t.errors) == 1
    e = t.errors[0]
    assert (e.row, e.column, e.expected) == (3, "E: Material", "a known material")


def test_instrument_type_from_library(tmp_path: Path) -> None:
    pytest.importorskip("qc.library.instruments")
    from qc.library.instruments import load_instrument_types

    name = load_instrument_types().names()[0]
    spec = load_instrument_types().get(name)
    t = sheet(tmp_path, ["Part", "Nominal", "Tolerance", "Reading", "Instrument"],
              ["A", "10", "±0,1", "10", name])
    assert not t.errors
    assert t.frame.loc[0, "resolution_mm"] == spec.resolution
    assert t.frame.loc[0, "mpe_a_mm"] == spec.mpe_a
    assert t.frame.loc[0, "instrument_type"] == spec.id


def test_limits_deviations_and_general_class(tmp_path: Path) -> None:
    t = sheet(tmp_path, ["Part", "Nominal", "-Tol", "+Tol", "Reading", "General tolerance"],
              ["A", "25", "0,02", "0,01", "25"],       # '−Tol' column: size of lower deviation
              ["B", "25", "-0,02", "0,01", "25"],
              ["C", "25", "", "", "25", "m"],          # ISO 2768-1 m, over 6 up to 30: ±0.2
              ["D", "0,4", "", "", "0,4", "m"])        # below 0.5 mm: no general tolerance
    f = t.frame
    assert f["lower_limit_mm"].iloc[:3].tolist() == pytest.approx([24.98, 24.98, 24.8])
    assert f["upper_limit_mm"].iloc[:3].tolist() == pytest.approx([25.01, 25.01, 25.2])
    assert len(t.errors) == 1 and t.errors[0].row == 5
    assert t.errors[0].column == "F: General tolerance"


def test_inverted_limits(tmp_path: Path) -> None:
    t = sheet(tmp_path, ["Part", "Reading", "Min", "Max"], ["A", "10", "10,1", "9,9"])
    assert [e.message for e in t.errors] == [
        "s.csv › row 2 › C: Min: expected a lower limit not above the upper limit, got '10,1' "
        "(swap the two columns)"]


def test_comparison_mode_and_certificates(tmp_path: Path) -> None:
    t = sheet(tmp_path, ["Part", "Nominal", "Tolerance", "Reading", "Master size",
                         "Master uncertainty (µm)", "Master coverage"],
              ["A", "50", "±0,01", "50,002", "50,0006", "0,075", "3"],
              ["B", "50", "±0,01", "50,002", "50,0006", "0,075", ""])
    f = t.frame
    assert f["mode"].tolist() == ["comparison", "comparison"]
    # certificate U = 0.075 µm with k = 3 → u = 25 nm (JCGM 100:2008, H.1.3.1)
    assert f.loc[0, "master_u_mm"] == pytest.approx(25e-6)
    assert [e.expected for e in t.errors] == [
        "the coverage factor k of the certificate uncertainty"]


def test_kind_and_angle_rows_are_not_scaled(tmp_path: Path) -> None:
    t = sheet(tmp_path, ["Part", "Kind", "Nominal", "Tolerance", "Reading", "Unit"],
              ["A", "flatness", "0", "0,01", "0,004", "mm"],
              ["B", "size", "10", "±0,1", "10", "mm"],
              ["C", "angle", "30", "", "30,1", "deg"])
    assert t.frame["scaled"].tolist() == [False, True, False]
    assert t.frame.loc[2, "unit"] == "°"


def test_unit_column_and_unknown_unit(tmp_path: Path) -> None:
    t = sheet(tmp_path, ["Part", "Nominal", "Tolerance", "Reading", "Unit"],
              ["A", "1", "±0,001", "1,0004", "in"],
              ["B", "1", "±0,001", "1,0004", "furlong"])
    assert t.frame.loc[0, "reading_mean_mm"] == pytest.approx(1.0004 * 25.4)
    assert t.frame.loc[0, "upper_limit_mm"] == pytest.approx(1.001 * 25.4)
    assert t.errors[0].message == (
        "s.csv › row 3 › E: Unit: expected a length unit (mm, µm, in, thou), got 'furlong'")


def test_unmatched_header_is_a_warning_with_suggestion(tmp_path: Path) -> None:
    t = sheet(tmp_path, ["Part", "Nomnal", "Tolerance", "Reading"], ["A", "10", "±0,1", "10"])
    assert "s.csv › B: header 'Nomnal' not recognised, column ignored; did you mean " \
           "'nominal'?" in t.warnings


def test_angle_row_gets_no_general_tolerance(tmp_path: Path) -> None:
    t = sheet(tmp_path, ["Part", "Kind", "Nominal", "Reading", "Unit"],
              ["A", "angle", "30", "30,1", "deg"], layout='[defaults]\ngeneral_tolerance = "m"\n')
    assert [e.expected for e in t.errors] == ["a tolerance, limits or a general tolerance class"]
    assert np.isnan(t.frame.loc[0, "upper_limit_mm"])
