"""Monte Carlo propagation of distributions for one measurement (JCGM 101:2008).

Every input is drawn from its own distribution (normal, rectangular, triangular, arcsine;
a Type A repeatability with finite ν from the scaled and shifted t-distribution, JCGM 101
6.4.9), the model is evaluated on all draws at once, and the probabilistically symmetric
coverage interval (7.7) is compared with the GUM interval y ± U (clause 8).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from numpy.typing import NDArray

from qc.core.budget import evaluate
from qc.core.distributions import ARCSINE, NORMAL, RECTANGULAR, TRIANGULAR
from qc.core.model import MeasurementArrays, model_value
from qc.errors import InputError

__all__ = ["MonteCarloResult", "monte_carlo", "numerical_tolerance", "sample"]

F64 = NDArray[np.float64]


@dataclass(frozen=True)
class MonteCarloResult:
    """Monte Carlo estimate and interval for one measurement, and the JCGM 101 clause 8 check."""

    index: int
    draws: int
    seed: int
    coverage: float
    y: float
    u: float
    low: float
    high: float
    gum_y: float
    gum_u: float
    gum_U: float
    gum_low: float
    gum_high: float
    delta: float
    d_low: float
    d_high: float
    validated: bool


def sample(rng: np.random.Generator, dist: int, u: float, size: int) -> F64:
    """Zero-mean draws with standard uncertainty ``u`` from distribution code ``dist``.

    Half-widths: rectangular u√3, triangular u√6, arcsine u√2 (JCGM 101:2008, 6.4.2–6.4.6).
    """
    if u == 0:
        return np.zeros(size)
    if dist == NORMAL:
        return u * rng.standard_normal(size)
    r = rng.random(size)
    if dist == RECTANGULAR:
        return u * math.sqrt(3.0) * (2.0 * r - 1.0)
    if dist == TRIANGULAR:
        return u * math.sqrt(6.0) * (r + rng.random(size) - 1.0)
    if dist == ARCSINE:
        return u * math.sqrt(2.0) * np.sin(2.0 * np.pi * r)
    raise InputError(f"unknown distribution code {dist!r}")


def numerical_tolerance(u_c: float, ndig: int = 2) -> float:
    """δ = ½·10^l where u_c = c × 10^l and c has ``ndig`` significant digits (JCGM 101, 7.9.2)."""
    if not u_c > 0:
        return 0.0
    l_exp = math.floor(math.log10(u_c)) - (ndig - 1)
    return 0.5 * 10.0**l_exp


def monte_carlo(
    m: MeasurementArrays,
    index: int,
    *,
    draws: int = 200_000,
    seed: int = 1,
    coverage: float = 0.9545,
    t_ref: float = 20.0,
    ndig: int = 2,
) -> MonteCarloResult:
    """Propagate the distributions of measurement ``index`` with ``draws`` seeded draws.

    The GUM result compared against is :func:`qc.core.budget.evaluate` with the same coverage
    probability (second-order terms included). ``validated`` is JCGM 101 8.2: both
    |y − U − y_low| and |y + U − y_high| at most δ from ``ndig`` digits of u_c.
    """
    if not 0 <= index < m.n:
        raise InputError(f"measurement {index + 1} does not exist: the batch has {m.n}")
    if draws < 100_000:
        raise InputError(f"Monte Carlo needs at least 100 000 draws, got {draws}")
    one = m.take(np.array([index]))
    gum = evaluate(one, coverage=coverage, t_ref=t_ref)
    if not gum.valid[0]:
        raise InputError(
            f"measurement {index + 1} has a missing value or a negative uncertainty; "
            "complete it before running Monte Carlo"
        )
    rng = np.random.default_rng(seed)
    R = _draw_R(one, rng, draws)
    L = _draw_thermal(one, rng, draws, R, t_ref) if one.scaled[0] else R
    p = float(coverage)
    low, high = np.quantile(L, [(1.0 - p) / 2.0, (1.0 + p) / 2.0])
    gy, gu, gU = float(gum.size_at_20[0]), float(gum.u_c[0]), float(gum.U[0])
    delta = numerical_tolerance(gu, ndig)
    d_low, d_high = abs(gy - gU - float(low)), abs(gy + gU - float(high))
    return MonteCarloResult(
        index=index,
        draws=draws,
        seed=seed,
        coverage=p,
        y=float(L.mean()),
        u=float(L.std(ddof=1)),
        low=float(low),
        high=float(high),
        gum_y=gy,
        gum_u=gu,
        gum_U=gU,
        gum_low=gy - gU,
        gum_high=gy + gU,
        delta=delta,
        d_low=d_low,
        d_high=d_high,
        validated=bool(d_low <= delta and d_high <= delta),
    )


def _f(a: F64) -> float:
    return float(a[0])


def _draw_R(m: MeasurementArrays, rng: np.random.Generator, n: int) -> F64:
    """Draws of R: reading (plus master) and every error on it, mm."""
    R = np.full(n, _f(m.reading))
    s, k = _f(m.repeat_s), max(_f(m.repeat_n), 1.0)
    if s > 0:
        nu = _f(m.repeat_nu)
        nu = k - 1.0 if math.isnan(nu) else nu
        if math.isfinite(nu):  # JCGM 101 6.4.9: x̄ + (s/√n)·t_ν
            R += s / math.sqrt(k) * rng.standard_t(nu, n)
        else:
            R += s / math.sqrt(k) * rng.standard_normal(n)
    R += sample(rng, RECTANGULAR, _f(m.resolution) / (2.0 * math.sqrt(3.0)), n)
    if math.isnan(_f(m.cert_U)):
        mpe = _f(m.mpe_a) + abs(_f(m.reading)) / _f(m.mpe_k)
        R += sample(rng, RECTANGULAR, mpe / math.sqrt(3.0), n)
    else:
        R += sample(rng, NORMAL, _f(m.cert_U) / _f(m.cert_k), n)
    if m.comparison[0]:
        R += _f(m.master_size) + sample(rng, NORMAL, _f(m.master_U) / _f(m.master_k), n)
    for e in m.extras:
        R += sample(rng, e.distribution, _f(e.u), n)
    return R


def _draw_thermal(
    m: MeasurementArrays, rng: np.random.Generator, n: int, R: F64, t_ref: float
) -> F64:
    """Model values on the draws of temperatures and expansion coefficients, mm."""
    tp = _f(m.t_part) + sample(rng, int(m.dist_t_part[0]), _f(m.u_t_part), n)
    tp += sample(rng, int(m.dist_grad_part[0]), _f(m.u_grad_part), n)
    ag = _f(m.alpha_gauge) + sample(rng, int(m.dist_alpha_gauge[0]), _f(m.u_alpha_gauge), n)
    if m.shared_room[0]:
        u_da = _f(m.u_dalpha)
        if math.isnan(u_da):
            u_da = math.hypot(_f(m.u_alpha_part), _f(m.u_alpha_gauge))
        dth = _f(m.dtheta) + sample(rng, int(m.dist_dtheta[0]), _f(m.u_dtheta), n)
        dal = _f(m.alpha_part) - _f(m.alpha_gauge)
        dal = dal + sample(rng, int(m.dist_dalpha[0]), u_da, n)
        return model_value(R, ag, tp - dth, ag + dal, tp, t_ref)
    tg = _f(m.t_gauge) + sample(rng, int(m.dist_t_gauge[0]), _f(m.u_t_gauge), n)
    tg += sample(rng, int(m.dist_grad_gauge[0]), _f(m.u_grad_gauge), n)
    ap = _f(m.alpha_part) + sample(rng, int(m.dist_alpha_part[0]), _f(m.u_alpha_part), n)
    return model_value(R, ag, tg, ap, tp, t_ref)
