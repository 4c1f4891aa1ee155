"""Cp and Cpk against worked examples, and when the report states them at all."""

from __future__ import annotations

import math
import statistics

import numpy as np
import pytest

from qc.report.stats import CAUTION_N, MIN_N_CAPABILITY, capability, describe


def test_capability_two_sided_published_example() -> None:
    # NIST/SEMATECH e-Handbook of Statistical Methods, section 6.1.6 "What is process
    # capability?", worked example (from memory): USL = 20, LSL = 8, mean 16, s = 2
    # gives Cp = (20 − 8)/(6·2) = 1.00 and Cpk = min(20 − 16, 16 − 8)/(3·2) = 0.667.
    cp, cpk = capability(16.0, 2.0, 8.0, 20.0)
    assert cp == pytest.approx(1.0, abs=5e-3)
    assert cpk == pytest.approx(0.667, abs=5e-4)


def test_describe_matches_hand_computation() -> None:
    # Hand computation (ISO 22514-2 formulas): 12 sizes at 10.001, 12 at 10.009 and one at
    # 10.005 mm. Mean 10.005; Σ(x − mean)² = 24·0.004², so s = √(24·0.004²/24) = 0.004 mm.
    # LSL 9.98, USL 10.02: Cp = 0.04/(6·0.004) = 1.6667;
    # Cpk = min(10.02 − 10.005, 10.005 − 9.98)/(3·0.004) = 0.015/0.012 = 1.25.
    sizes = np.array([10.001] * 12 + [10.009] * 12 + [10.005])
    assert sizes.size == MIN_N_CAPABILITY
    st = describe(sizes, np.full(25, 9.98), np.full(25, 10.02))
    assert st.n == 25
    assert st.mean == pytest.approx(10.005, abs=1e-12)
    assert st.std == pytest.approx(0.004, rel=1e-9)
    # the general-purpose reference: Python's statistics.stdev (n − 1 divisor)
    assert st.std == pytest.approx(statistics.stdev(sizes.tolist()), rel=1e-12)
    assert st.cp == pytest.approx(1.6667, abs=1e-4)
    assert st.cpk == pytest.approx(1.25, abs=1e-9)
    assert (st.minimum, st.maximum) == (10.001, 10.009)
    assert st.note == f"caution: n = 25 is below {CAUTION_N}, the indices are uncertain"


def test_one_sided_upper_limit_gives_cpu_only() -> None:
    # Hand computation: mean 0.245 in, s 0.001 in, USL 0.250 in only:
    # Cpk = (0.250 − 0.245)/(3·0.001) = 1.6667; Cp is not defined without two limits.
    cp, cpk = capability(0.245, 0.001, math.nan, 0.250)
    assert math.isnan(cp)
    assert cpk == pytest.approx(1.6667, abs=1e-4)
    # lower limit only: Cpk = (mean − LSL)/(3s) = (0.125 − 0.120)/(3·0.002) = 0.8333
    cp, cpk = capability(0.125, 0.002, 0.120, math.nan)
    assert math.isnan(cp)
    assert cpk == pytest.approx(0.8333, abs=1e-4)


def test_one_sided_sample_is_flagged_in_the_note() -> None:
    rng = np.random.default_rng(2)
    sizes = 0.245 + 0.001 * rng.standard_normal(60)
    st = describe(sizes, np.full(60, np.nan), np.full(60, 0.250))
    assert math.isnan(st.cp)
    assert st.cpk == pytest.approx((0.250 - sizes.mean()) / (3 * sizes.std(ddof=1)))
    assert st.note == "one-sided limit: Cpk of that limit only"


def test_small_sample_states_no_capability() -> None:
    st = describe(np.array([24.985, 24.987, 24.990]), np.full(3, 24.980), np.full(3, 24.993))
    assert st.n == 3
    assert math.isnan(st.cp) and math.isnan(st.cpk)
    assert st.note == "Cp, Cpk not stated: n = 3 is below 25"
    assert st.mean == pytest.approx(statistics.mean([24.985, 24.987, 24.990]))


def test_capability_not_stated_when_limits_differ_or_spread_is_zero() -> None:
    sizes = np.linspace(9.99, 10.01, 30)
    lower = np.full(30, 9.98)
    upper = np.r_[np.full(15, 10.02), np.full(15, 10.03)]
    assert describe(sizes, lower, upper).note == (
        "Cp, Cpk not stated: the limits differ between parts")
    flat = describe(np.full(30, 10.0), lower, np.full(30, 10.02))
    assert flat.note == "Cp, Cpk not stated: all sizes are equal"
    assert math.isnan(flat.cpk)


def test_missing_sizes_are_left_out() -> None:
    sizes = np.r_[np.full(26, np.nan), np.array([1.0, 2.0])]
    st = describe(sizes, np.full(28, 0.0), np.full(28, 3.0))
    assert st.n == 2
    assert st.mean == 1.5
    assert describe(np.full(4, np.nan), np.zeros(4), np.ones(4)).note == "no corrected size"
