"""Allowable temperature band: hand-computed cases and a check with the uncertainties library."""

import math

import numpy as np
import pytest
from uncertainties import ufloat

from qc.core.band import allowable_band, corrected_residual_um
from qc.errors import InputError


def test_uncorrected_band_hand_computed() -> None:
    # Hand-computed: 100 mm aluminium (α 23e-6/K) on a steel gauge (11e-6/K), tolerance
    # 20 µm, share 20 % → 4 µm; |θ| ≤ 4 µm / (100 000 µm · 12e-6/K) = 3.333 K,
    # i.e. measure only between 16.67 and 23.33 °C.
    b = allowable_band(100.0, 20.0, 0.2, 23e-6, 11e-6)
    assert float(b.budget_um) == pytest.approx(4.0)
    assert float(b.uncorrected_k) == pytest.approx(10 / 3, rel=1e-12)
    low, high = b.uncorrected_c
    assert (float(low), float(high)) == pytest.approx((16.667, 23.333), abs=0.001)


def test_corrected_band_hand_computed() -> None:
    # Same part, u(α_part) = 1e-6/K, u(α_gauge) = 0, thermometer u = 0.1 K, k = 2:
    # (budget/k/L)² = (2/1e5)² = 4e-10; (δα·u_t)² = (12e-6·0.1)² = 1.44e-12;
    # |θ| ≤ √(4e-10 − 1.44e-12) / 1e-6 = 19.964 K  (JCGM 100:2008, H.1.3, first order).
    b = allowable_band(100.0, 20.0, 0.2, 23e-6, 11e-6, 1e-6, 0.0, 0.1, 2.0)
    assert float(b.corrected_k) == pytest.approx(19.964, abs=0.001)
    # Uncorrected with the CTE uncertainty: 4 / (1e5·(12e-6 + 2·1e-6)) = 2.857 K true
    # temperature; the reading must stay k·u_t = 0.2 K inside that: 2.657 K.
    assert float(b.uncorrected_k) == pytest.approx(2.657, abs=0.001)
    # Part–gauge offset: 4 / (1e5·(23e-6 + 2e-6)) = 1.6 K.
    assert float(b.offset_k) == pytest.approx(1.6, rel=1e-12)


def test_residual_at_band_edge_uses_exactly_the_budget() -> None:
    b = allowable_band([50.0, 250.0], [25.0, 46.0], 0.1, 23.6e-6, 11.5e-6, 1.2e-6, 0.58e-6, 0.2)
    u = corrected_residual_um(
        [50.0, 250.0], b.corrected_k, 12.1e-6, math.hypot(1.2e-6, 0.58e-6), 0.2
    )
    assert 2.0 * u == pytest.approx(b.budget_um, rel=1e-12)


def test_residual_agrees_with_uncertainties_library() -> None:
    # Reference: the general-purpose `uncertainties` package propagating e = L·δα·θ
    # with δα and θ uncorrelated (first order, as in JCGM 100:2008, 5.1.2).
    length_um, d_alpha, u_da, theta, u_t = 120_000.0, 12.1e-6, 1.3e-6, 6.0, 0.25
    e = length_um * ufloat(d_alpha, u_da) * ufloat(theta, u_t)
    ours = float(corrected_residual_um(120.0, theta, d_alpha, u_da, u_t))
    assert ours == pytest.approx(e.std_dev, rel=1e-12)


def test_same_material_without_cte_uncertainty_has_no_limit() -> None:
    b = allowable_band(100.0, 20.0, 0.2, 11.5e-6, 11.5e-6)
    assert math.isinf(float(b.uncorrected_k)) and math.isinf(float(b.corrected_k))


def test_thermometer_too_poor_gives_zero_band() -> None:
    # δα·u_t·L = 12e-6 · 5 K · 1e5 µm = 6 µm > budget/k = 2 µm: no temperature is good enough.
    b = allowable_band(100.0, 20.0, 0.2, 23e-6, 11e-6, 1e-6, 0.0, 5.0)
    assert float(b.corrected_k) == 0.0


def test_vectorised_per_characteristic_and_narrower_for_longer_parts() -> None:
    sizes = np.array([10.0, 100.0, 1000.0])
    b = allowable_band(sizes, 30.0, 0.1, 23e-6, 11.5e-6, 1e-6, 0.6e-6, 0.2)
    assert b.uncorrected_k.shape == (3,)
    assert np.all(np.diff(b.uncorrected_k) < 0) and np.all(np.diff(b.corrected_k) < 0)
    assert np.all(b.corrected_k >= b.uncorrected_k)
    # 1000 mm: the thermometer alone (L·δα·u_t = 2.3 µm > budget/k = 1.5 µm) leaves no band
    assert b.corrected_k[2] == 0.0 and b.uncorrected_k[2] == 0.0


@pytest.mark.parametrize(
    ("kwargs", "message"),
    [
        ({"length_mm": 0.0}, "size: expected a positive length in mm"),
        (
            {"tolerance_um": -5.0},
            "tolerance: expected a positive width in µm (upper minus lower limit)",
        ),
        ({"share": 10.0}, "share of the tolerance: expected a fraction above 0 and at most 1"),
        (
            {"u_thermometer_k": -0.1},
            "uncertainties and the coverage factor: expected non-negative numbers",
        ),
    ],
)
def test_error_messages(kwargs: dict, message: str) -> None:
    args = {
        "length_mm": 100.0,
        "tolerance_um": 20.0,
        "share": 0.2,
        "cte_part": 23e-6,
        "cte_gauge": 11e-6,
    } | kwargs
    with pytest.raises(InputError) as info:
        allowable_band(**args)
    assert str(info.value) == message
