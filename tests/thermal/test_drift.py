"""Drift fit: recovers a known slope from seeded synthetic data; agrees with scipy.stats."""

import numpy as np
import pytest
from scipy import stats

from qc.core.drift import fit_drift
from qc.errors import InputError


def _synthetic(seed: int = 7, n: int = 40) -> tuple[np.ndarray, np.ndarray]:
    # Invented study: room 19 → 23 °C over a shift; X moves 3.0 µm/K, Y 0.1 µm/K,
    # Z −1.5 µm/K; indicator noise 0.5 µm (standard deviation).
    rng = np.random.default_rng(seed)
    t = np.linspace(19.0, 23.0, n) + rng.normal(0, 0.05, n)
    true = np.array([3.0, 0.1, -1.5])
    y = (t[:, None] - 20.0) * true + 4.0 + rng.normal(0, 0.5, (n, 3))
    return t, y


def test_recovers_known_slope_within_its_uncertainty() -> None:
    t, y = _synthetic()
    fit = fit_drift(t, y, resolution_um=1.0)
    true = np.array([3.0, 0.1, -1.5])
    assert np.all(np.abs(fit.slope_um_per_k - true) < 3 * fit.u_slope_um_per_k)
    # and the uncertainty is about σ/√Σ(t − t̄)² = 0.5/√(40·var(t)) ≈ 0.068 µm/K
    assert fit.u_slope_um_per_k == pytest.approx(0.5 / np.sqrt(40 * np.var(t)), rel=0.3)


def test_coverage_of_the_stated_uncertainty_over_many_seeds() -> None:
    # Over 200 seeded studies the true slope lies within ±2u in about 95 % of them
    # (t with 38 degrees of freedom: 94.8 %); accept 90–99 %.
    hits = 0
    for seed in range(200):
        t, y = _synthetic(seed)
        fit = fit_drift(t, y[:, 0], 1.0)
        hits += bool(abs(fit.slope_um_per_k[0] - 3.0) < 2 * fit.u_slope_um_per_k[0])
    assert 180 <= hits <= 198


def test_agrees_with_scipy_linregress_with_missing_values() -> None:
    # Reference: scipy.stats.linregress (slope, stderr, p-value) on each axis's own points.
    t, y = _synthetic(3)
    y[[2, 5, 11], 1] = np.nan
    fit = fit_drift(t, y, 1.0)
    for i in range(3):
        ok = np.isfinite(y[:, i])
        ref = stats.linregress(t[ok], y[ok, i])
        assert fit.slope_um_per_k[i] == pytest.approx(ref.slope, rel=1e-10)
        assert fit.u_slope_um_per_k[i] == pytest.approx(ref.stderr, rel=1e-10)
        assert fit.p_value[i] == pytest.approx(ref.pvalue, rel=1e-6, abs=1e-300)
        assert fit.intercept_um[i] == pytest.approx(ref.intercept, rel=1e-10)
    assert list(fit.n) == [40, 37, 40]


def test_verdicts_moves_with_room_and_below_resolution() -> None:
    t, y = _synthetic()
    fit = fit_drift(t, y, resolution_um=1.0)
    # X: 3 µm/K over ~4 K = 12 µm ≫ 1 µm and significant; Y: 0.1 µm/K · 4 K = 0.4 µm.
    assert list(fit.moves_with_room) == [True, False, True]
    assert not fit.above_resolution[1]
    assert fit.drift_um[0] == pytest.approx(abs(fit.slope_um_per_k[0]) * fit.span_k[0])


def test_significant_but_below_resolution() -> None:
    # Noise-free 0.2 µm/K over 2 K: significant, but 0.4 µm drift is below a 1 µm digit.
    t = np.linspace(19, 21, 10)
    y = 0.2 * t + np.array([0, 1e-3, -1e-3] * 3 + [0])
    fit = fit_drift(t, y, 1.0)
    assert fit.significant[0] and not fit.above_resolution[0] and not fit.moves_with_room[0]


@pytest.mark.parametrize(
    ("t", "y", "message"),
    [
        (
            [20, 20, 20, 20],
            [1, 2, 3, 4],
            "drift study: the temperature did not change, so no sensitivity can be fitted",
        ),
        ([20, 21], [1, 2], "drift study: each axis needs at least 3 readings with a temperature"),
        (
            [20, 21, 22],
            [1, 2],
            "drift study: expected one temperature per row of readings, got 3 temperatures "
            "and 2 rows",
        ),
    ],
)
def test_error_messages(t, y, message: str) -> None:
    with pytest.raises(InputError) as info:
        fit_drift(t, y, 1.0)
    assert str(info.value) == message


def test_resolution_message() -> None:
    with pytest.raises(InputError) as info:
        fit_drift([1, 2, 3], [1, 2, 3], 0.0)
    assert str(info.value) == "drift study: expected a positive indicator resolution in µm"
