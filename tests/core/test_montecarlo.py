"""Monte Carlo (JCGM 101:2008) against the GUM result and against exact distributions."""

import numpy as np
import pytest

from qc.core.distributions import ARCSINE, NORMAL, RECTANGULAR, TRIANGULAR
from qc.core.model import MeasurementArrays
from qc.core.montecarlo import monte_carlo, numerical_tolerance, sample
from qc.errors import InputError
from tests.core.gum_h1 import h1_inputs

# Invented shop cases: 0 micrometer with a calibration certificate; 1 CMM, 480 mm aluminium
# part at 24 °C; 2 bore gauge set with a ring, part and gauge in one room; 3 height gauge;
# 4 a caliper reading whose budget is its 0.01 mm resolution alone.
SHOP = MeasurementArrays.from_columns(
    reading=[25.004, 480.03, 0.004, 150.02, 60.0],
    comparison=[False, False, True, False, False],
    master_size=[np.nan, np.nan, 40.0, np.nan, np.nan],
    master_U=[0, 0, 0.0015, 0, 0],
    resolution=[0.001, 0.0001, 0.001, 0.01, 0.01],
    mpe_a=[0.0, 0.0018, 0.002, 0.02, 0.0],
    mpe_k=[np.inf, 300000, np.inf, 30000, np.inf],
    cert_U=[0.002, np.nan, np.nan, np.nan, np.nan],
    repeat_s=[0.0012, 0.002, 0.0015, 0.01, 0.0],
    repeat_n=5,
    repeat_nu=50,
    t_part=[23.0, 24.0, 22.0, 22.0, 20.0],
    u_t_part=[0.3, 0.3, 0.3, 0.3, 0.0],
    dist_t_part=NORMAL,
    u_grad_part=[0.3, 0.3, 0.3, 0.3, 0.0],
    t_gauge=[21.0, 20.5, 22.0, 22.0, 20.0],
    u_t_gauge=[0.3, 0.2, 0.3, 0.3, 0.0],
    alpha_part=[11.7e-6, 23.6e-6, 11.7e-6, 11.7e-6, 11.5e-6],
    u_alpha_part=[0.6e-6, 1.2e-6, 0.6e-6, 0.6e-6, 0.0],
    alpha_gauge=[11.5e-6, 11.5e-6, 11.5e-6, 10.4e-6, 11.5e-6],
    u_alpha_gauge=[0.58e-6, 0.58e-6, 0.58e-6, 0.58e-6, 0.0],
    shared_room=[False, False, True, False, False],
    u_dtheta=[0, 0, 0.3, 0, 0],
    u_dalpha=[np.nan, np.nan, 1e-6, np.nan, np.nan],
)


@pytest.mark.parametrize("index", [1, 2, 3])
def test_gum_validated_on_shop_cases(index: int) -> None:
    # JCGM 101:2008 clause 8 with n_dig = 1 (7.9.2 allows 1 or 2)
    r = monte_carlo(SHOP, index, ndig=1)
    assert r.validated
    assert r.u == pytest.approx(r.gum_u, rel=0.02)
    assert r.y == pytest.approx(r.gum_y, abs=r.delta)


def test_gum_validated_to_two_digits_when_normal_terms_dominate() -> None:
    r = monte_carlo(SHOP, 0, ndig=2)
    assert r.validated and r.d_low <= r.delta and r.d_high <= r.delta


def test_rectangular_resolution_fails_validation() -> None:
    # JCGM 101:2008, 9.2 (additive model; a dominant rectangular input, from memory): the
    # output is itself rectangular, its 95.45 % interval is ±0.9545·a while the GUM gives
    # ±2·a/√3 = ±1.155·a, so the GUM result is not validated.
    r = monte_carlo(SHOP, 4, ndig=1)
    a = 0.005
    assert not r.validated
    assert r.high - 60.0 == pytest.approx(0.9545 * a, rel=2e-3)
    assert 60.0 - r.low == pytest.approx(0.9545 * a, rel=2e-3)
    assert r.gum_U == pytest.approx(2 * a / np.sqrt(3), rel=1e-5)  # k = z(0.9545) ≈ 2.000002


def test_h1_against_gum() -> None:
    # JCGM 101:2008, 9.5 treats the GUM H.1 gauge-block example; its Monte Carlo u is close
    # to the second-order GUM value and the product term makes the output non-normal
    # (from memory). Here: u agrees with the second-order u_c to a few per cent.
    r = monte_carlo(h1_inputs(), 0, draws=200_000)
    assert r.u == pytest.approx(r.gum_u, rel=0.06)
    assert r.y == pytest.approx(50.000838, abs=2e-6)


def test_seeded_and_reproducible() -> None:
    a = monte_carlo(SHOP, 1, seed=7)
    b = monte_carlo(SHOP, 1, seed=7)
    c = monte_carlo(SHOP, 1, seed=8)
    assert a == b and a.low != c.low


@pytest.mark.parametrize("dist", [NORMAL, RECTANGULAR, TRIANGULAR, ARCSINE])
def test_sample_has_the_stated_standard_uncertainty(dist: int) -> None:
    # JCGM 101:2008 6.4: each law scaled so that its standard deviation is u
    x = sample(np.random.default_rng(3), dist, 0.5, 400_000)
    assert x.std() == pytest.approx(0.5, rel=5e-3)
    assert abs(x.mean()) < 5e-3


def test_numerical_tolerance() -> None:
    # JCGM 101:2008 7.9.2: u_c = 0.0123 mm, two digits → 12 × 10⁻³, δ = ½ × 10⁻³
    assert numerical_tolerance(0.0123, 2) == pytest.approx(0.0005)
    assert numerical_tolerance(0.0123, 1) == pytest.approx(0.005)


def test_messages() -> None:
    with pytest.raises(InputError, match=r"^measurement 9 does not exist: the batch has 5$"):
        monte_carlo(SHOP, 8)
    bad = MeasurementArrays.from_columns(reading=[np.nan])
    with pytest.raises(InputError, match=r"^measurement 1 has a missing value or a negative "
                                         r"uncertainty; complete it before running Monte Carlo$"):
        monte_carlo(bad, 0)
    with pytest.raises(InputError, match=r"^Monte Carlo needs at least 100 000 draws, got 100$"):
        monte_carlo(SHOP, 0, draws=100)
