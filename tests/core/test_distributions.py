"""Divisors, degrees of freedom and coverage factors against the GUM."""

import numpy as np
import pytest
from scipy import stats

from qc.core.distributions import (
    ARCSINE,
    NORMAL,
    RECTANGULAR,
    TRIANGULAR,
    coverage_factor,
    dof_from_reliability,
    dof_type_a,
    standard_from_expanded,
    standard_from_half_width,
    standard_from_resolution,
)
from qc.errors import ConfigError

# JCGM 100:2008 Table G.2 (as reproduced in NIST TN 1297, Table B.1)
TABLE_G2 = {
    0.9545: {2: 4.53, 5: 2.65, 10: 2.28, 16: 2.17, 20: 2.13, 50: 2.05, np.inf: 2.00},
    0.9973: {2: 19.21, 5: 5.51, 10: 3.96, 16: 3.54, 20: 3.42, 50: 3.16, np.inf: 3.00},
}


@pytest.mark.parametrize("p", sorted(TABLE_G2))
def test_coverage_factors_table_g2(p: float) -> None:
    nus = np.array(list(TABLE_G2[p]))
    expected = np.array(list(TABLE_G2[p].values()))
    assert np.round(coverage_factor(nus, p), 2) == pytest.approx(expected, abs=1e-9)


def test_t99_16_and_t95_5() -> None:
    # JCGM 100:2008 H.1.6: t99(16) = 2.92; Table G.2: t95(5) = 2.57
    assert round(float(coverage_factor(16, 0.99)), 2) == 2.92
    assert round(float(coverage_factor(5, 0.95)), 2) == 2.57


def test_coverage_factor_truncates_and_rejects() -> None:
    # GUM G.4.1 note 1: ν_eff is truncated to the next lower integer
    assert coverage_factor(16.9, 0.99) == coverage_factor(16, 0.99)
    assert np.isnan(coverage_factor(0.5)) and np.isnan(coverage_factor(np.nan))
    msg = r"^coverage probability must lie between 0 and 1, got 1\.5$"
    with pytest.raises(ConfigError, match=msg):
        coverage_factor(10, 1.5)


def test_large_nu_series_matches_scipy() -> None:
    # General-purpose reference: scipy.stats.t.ppf, beyond the lookup table
    nu = np.array([2e5, 1e6, 1e9])
    assert coverage_factor(nu, 0.9545) == pytest.approx(stats.t.ppf(0.977250, nu), rel=1e-9)


def test_divisors() -> None:
    # GUM 4.3.7 (a/√3), 4.3.9 (a/√6); arcsine a/√2 (JCGM 101:2008 6.4.6); F.2.2.1 δ/(2√3)
    a = 1.0
    assert standard_from_half_width(a, RECTANGULAR) == pytest.approx(1 / np.sqrt(3))
    assert standard_from_half_width(a, TRIANGULAR) == pytest.approx(1 / np.sqrt(6))
    assert standard_from_half_width(a, ARCSINE) == pytest.approx(1 / np.sqrt(2))
    assert standard_from_half_width(a, NORMAL) == 1.0
    assert standard_from_resolution(0.01) == pytest.approx(0.01 / (2 * np.sqrt(3)))
    # GUM H.1.3.1: U = 0.075 µm, k = 3 → 25 nm
    assert standard_from_expanded(0.075, 3) == pytest.approx(0.025)


def test_degrees_of_freedom() -> None:
    # GUM G.4.2: relative reliability 10 % → 50, 25 % → 8, 50 % → 2; G.3.3: n − 1
    assert dof_from_reliability([0.10, 0.25, 0.5]) == pytest.approx([50, 8, 2])
    assert np.isinf(dof_from_reliability(0.0))
    assert dof_type_a(5) == 4
