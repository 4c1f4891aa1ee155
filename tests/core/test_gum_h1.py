"""JCGM 100:2008 (GUM) Annex H.1, end-gauge calibration, through the public API."""

import numpy as np
import pytest

from qc.core.budget import evaluate
from tests.core.gum_h1 import h1_inputs


@pytest.fixture(scope="module")
def first_order():
    return evaluate(h1_inputs(), coverage=0.99, second_order=False)


@pytest.fixture(scope="module")
def with_second_order():
    return evaluate(h1_inputs(), coverage=0.99)


def test_result_l(first_order) -> None:
    # JCGM 100:2008 H.1.5: l = l_S + d = 50.000 838 mm
    assert round(float(first_order.size_at_20[0]), 6) == 50.000838


def test_u_c_first_order_32_nm(first_order) -> None:
    # JCGM 100:2008 H.1.4, Table H.1: u_c(l) = 32 nm (Σ = 1002 nm² as printed)
    assert round(float(first_order.u_c[0]) * 1e6) == 32
    assert float(first_order.u_c_first_order[0]) ** 2 * 1e12 == pytest.approx(1002, abs=3)


def test_contributions_of_table_h1(first_order) -> None:
    # JCGM 100:2008 Table H.1: l_S 25 nm, d 9.7 nm, δα 2.9 nm, δθ 16.6 nm, α_S and θ zero
    b = first_order
    names = b.quantity_names_shared
    contrib = dict(zip(names, b.contributions[0] * 1e6, strict=True))
    assert contrib["setting master"] == pytest.approx(25.0, abs=0.05)
    d = np.sqrt(
        contrib["repeatability"] ** 2
        + contrib["comparator random effects"] ** 2
        + contrib["comparator systematic effects"] ** 2
    )
    assert d == pytest.approx(9.7, abs=0.05)
    assert contrib["part–gauge CTE difference δα"] == pytest.approx(2.9, abs=0.05)
    assert contrib["part–gauge temperature difference δθ"] == pytest.approx(16.6, abs=0.05)
    assert contrib["CTE of gauge"] == pytest.approx(0.0, abs=1e-9)
    assert contrib["room temperature θ: thermometer"] == pytest.approx(0.0, abs=1e-9)
    # Sensitivity coefficients of Table H.1: −l_S·θ = 5 mm·°C, −l_S·α_S = −575 nm/°C
    c = dict(zip(names, b.sensitivities[0], strict=True))
    assert c["part–gauge CTE difference δα"] == pytest.approx(5.0, rel=1e-3)
    assert c["part–gauge temperature difference δθ"] * 1e6 == pytest.approx(-575, rel=1e-3)


def test_nu_eff_16_and_k99(first_order) -> None:
    # JCGM 100:2008 H.1.6: ν_eff = 16.7 → 16; t99(16) = 2.92; U99 = 93 nm
    b = first_order
    assert float(b.nu_eff[0]) == 16
    assert round(float(b.k[0]), 2) == 2.92
    # The GUM multiplies the rounded figures, 2.92 × 32 nm = 93 nm; unrounded U99 is 92.5 nm.
    assert round(round(float(b.k[0]), 2) * round(float(b.u_c[0]) * 1e6)) == 93
    assert float(b.U[0]) * 1e6 == pytest.approx(93, abs=0.6)


def test_second_order_34_nm(with_second_order) -> None:
    # JCGM 100:2008 H.1.7: second-order terms l_S·u(δα)·u(θ) ≈ 11.7 nm and
    # l_S·u(α_S)·u(δθ) = 1.7 nm raise u_c from 32 nm to 34 nm
    b = with_second_order
    assert round(float(b.u_c[0]) * 1e6) == 34
    assert round(float(b.u_c_first_order[0]) * 1e6) == 32
    names = b.quantity_names_shared
    contrib = dict(zip(names, b.contributions[0] * 1e6, strict=True))
    assert contrib["second order: δα × θ"] == pytest.approx(11.7, abs=0.2)
    assert contrib["second order: α_g × δθ"] == pytest.approx(1.7, abs=0.05)
    # ν_eff stays that of the first-order budget, as in H.1.6
    assert float(b.nu_eff[0]) == 16


def test_long_form_sums_to_u_c(with_second_order) -> None:
    # JCGM 100:2008 eq. (10) (uncorrelated inputs): u_c² = Σ u_i²(y)
    lf = with_second_order.long_form()
    assert np.sum(lf.contribution**2) == pytest.approx(float(with_second_order.u_c[0]) ** 2)
    assert np.sum(lf.share) == pytest.approx(1.0)
