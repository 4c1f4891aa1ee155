"""Unit conversions against exact factors (NIST SP 811) and against pint itself."""

import numpy as np
import pytest

from qc.units import (
    Q_,
    canonical_unit,
    cte_factor,
    length_factor,
    temperature_difference_to_c,
    temperature_to_c,
)


def test_inch_is_exactly_25_4_mm() -> None:
    # NIST SP 811 (2008), B.9: 1 in = 2.54 cm exactly
    assert length_factor("inch") == 25.4
    # NIST SP 811, B.9: 1 mil (thou) = 2.54e-5 m exactly
    assert length_factor("thou") == pytest.approx(0.0254, rel=1e-15)
    assert length_factor("micrometer") == pytest.approx(1e-3, rel=1e-15)


@pytest.mark.parametrize("unit", ["inch", "thou", "micrometer", "centimeter", "meter"])
def test_length_factors_agree_with_pint(unit: str) -> None:
    # general-purpose reference library: pint's own definitions
    assert length_factor(unit) == pytest.approx(Q_(1.0, unit).to("mm").magnitude, rel=1e-12)


def test_absolute_temperatures() -> None:
    # NIST SP 811 (2008), 4.2.1.1 and B.8: t/°C = (t/°F − 32)/1.8; t/°C = T/K − 273.15
    assert temperature_to_c(np.array([68.0]), "degF")[0] == pytest.approx(20.0, abs=1e-12)
    assert temperature_to_c(np.array([32.0, 212.0]), "degF") == pytest.approx([0.0, 100.0])
    assert temperature_to_c(np.array([293.15]), "kelvin")[0] == pytest.approx(20.0, abs=1e-12)
    for f in (50.0, 68.0, 77.0):  # and pint agrees
        assert temperature_to_c(np.array([f]), "degF")[0] == pytest.approx(
            Q_(f, "degF").to("degC").magnitude, abs=1e-9)


def test_temperature_differences_have_no_offset() -> None:
    # NIST SP 811 (2008), B.8: a temperature interval of 1 °F = 5/9 K, no offset
    assert temperature_difference_to_c(np.array([0.9]), "degF")[0] == pytest.approx(0.5)
    assert temperature_difference_to_c(np.array([0.2]), "kelvin")[0] == 0.2
    assert temperature_difference_to_c(np.array([1.0]), "degF")[0] == pytest.approx(
        Q_(1.0, "delta_degF").to("delta_degC").magnitude)


@pytest.mark.parametrize(("spelling", "per_kelvin"), [
    ("1/K", 1.0), ("ppm/K", 1e-6), ("µm/(m·K)", 1e-6), ("um/m/K", 1e-6),
    ("1/°F", 1.8),  # NIST SP 811, B.8: 1 K = 1.8 °F as intervals, so 1/°F = 1.8/K
    ("ppm/°F", 1.8e-6), ("10^-6/K", 1e-6),
])
def test_cte_units(spelling: str, per_kelvin: float) -> None:
    unit = canonical_unit(spelling, "cte")
    assert unit is not None
    assert cte_factor(unit) == pytest.approx(per_kelvin, rel=1e-12)


@pytest.mark.parametrize(("text", "kind", "unit"), [
    ("mm", "length", "millimeter"), ("µm", "length", "micrometer"),
    ("μm", "length", "micrometer"), ("um", "length", "micrometer"), ("in", "length", "inch"),
    ('"', "length", "inch"), ("in.", "length", "inch"), ("thou", "length", "thou"),
    ("mil", "length", "thou"),  # a shop's mil is a thousandth of an inch, not pint's angle
    ("°F", "temperature", "degF"), ("F", "temperature", "degF"), ("deg F", "temperature", "degF"),
    ("°C", "temperature", "degC"), ("C", "temperature", "degC"), ("℃", "temperature", "degC"),
    ("K", "temperature", "kelvin"), ("degrees C", "temperature", "degC"),
])
def test_spreadsheet_spellings(text: str, kind: str, unit: str) -> None:
    assert canonical_unit(text, kind) == unit  # type: ignore[arg-type]


def test_unknown_spelling_is_none() -> None:
    assert canonical_unit("furlong", "length") is None
    assert canonical_unit("mm", "temperature") is None
