"""Machine drift study: thermal sensitivity of each axis from readings against temperature.

For each axis, ordinary least squares of the reading y (µm) on the temperature t (°C),
y = a + b·t.  The slope b (µm/K) has the standard uncertainty
u(b) = s/√Σ(tᵢ − t̄)², s² = Σ residual² / (n − 2)  (JCGM 100:2008, H.3; Draper & Smith,
*Applied Regression Analysis*, ch. 1).  Two questions decide whether the axis "moves with
the room":

* is the slope significant?  |b|/u(b) against Student's t with n − 2 degrees of freedom
  (two-sided, default 5 %);
* is the drift it implies over the observed span, |b|·(t_max − t_min), larger than the
  indicator's resolution?  Below that the indicator cannot show it.

Missing readings (NaN) are left out axis by axis.  Readings in µm, temperatures in °C.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike, NDArray
from scipy import stats

from qc.errors import InputError

__all__ = ["DriftFit", "fit_drift"]

FloatArray = NDArray[np.float64]


@dataclass(frozen=True)
class DriftFit:
    """Per-axis fit (arrays of length = number of axes).

    slope_um_per_k, u_slope_um_per_k: sensitivity and its standard uncertainty;
    intercept_um: reading extrapolated to 0 °C; at_20c_um: reading predicted at 20 °C;
    n, dof: points used and n − 2; t_ratio, p_value: the slope's significance;
    span_k: temperature span observed on the points used; drift_um: |slope|·span;
    residual_sd_um: scatter about the line; significant: p < alpha;
    above_resolution: drift_um > resolution; moves_with_room: both.
    """

    slope_um_per_k: FloatArray
    u_slope_um_per_k: FloatArray
    intercept_um: FloatArray
    at_20c_um: FloatArray
    n: NDArray[np.int64]
    dof: NDArray[np.int64]
    t_ratio: FloatArray
    p_value: FloatArray
    span_k: FloatArray
    drift_um: FloatArray
    residual_sd_um: FloatArray
    significant: NDArray[np.bool_]
    above_resolution: NDArray[np.bool_]
    moves_with_room: NDArray[np.bool_]
    resolution_um: FloatArray
    alpha: float


def fit_drift(
    temperature_c: ArrayLike,
    readings_um: ArrayLike,
    resolution_um: ArrayLike,
    alpha: float = 0.05,
) -> DriftFit:
    """Fit µm/K per axis; ``readings_um`` is (points, axes) or (points,) for one axis.

    ``resolution_um`` is the indicator's resolution (digit step), one value or one per axis.
    """
    t = np.asarray(temperature_c, dtype=float)
    y = np.asarray(readings_um, dtype=float)
    if y.ndim == 1:
        y = y[:, None]
    if t.ndim != 1 or y.ndim != 2 or y.shape[0] != t.shape[0]:
        raise InputError(
            "drift study: expected one temperature per row of readings, "
            f"got {t.shape[0] if t.ndim else 0} temperatures and {y.shape[0]} rows"
        )
    if not 0 < alpha < 1:
        raise InputError("drift study: significance level must lie between 0 and 1")
    res = np.broadcast_to(np.asarray(resolution_um, dtype=float), (y.shape[1],)).copy()
    if np.any(~(res > 0)):
        raise InputError("drift study: expected a positive indicator resolution in µm")

    w = (np.isfinite(y) & np.isfinite(t)[:, None]).astype(float)  # (points, axes)
    n = w.sum(axis=0)
    if np.any(n < 3):
        raise InputError("drift study: each axis needs at least 3 readings with a temperature")
    tt = np.where(np.isfinite(t), t, 0.0)[:, None] * np.ones_like(y)
    yy = np.where(w > 0, y, 0.0)
    t_mean = (w * tt).sum(axis=0) / n
    y_mean = (w * yy).sum(axis=0) / n
    dt = (tt - t_mean) * w
    sxx = (dt**2).sum(axis=0)
    if np.any(~(sxx > 0)):
        raise InputError(
            "drift study: the temperature did not change, so no sensitivity can be fitted"
        )
    sxy = (dt * (yy - y_mean)).sum(axis=0)
    slope = sxy / sxx
    intercept = y_mean - slope * t_mean
    resid = (yy - intercept - slope * tt) * w
    dof = n - 2
    with np.errstate(divide="ignore", invalid="ignore"):
        s = np.sqrt((resid**2).sum(axis=0) / dof)
        u_slope = s / np.sqrt(sxx)
        t_ratio = np.where(u_slope > 0, slope / u_slope, np.inf * np.sign(slope))
    p = np.where(np.isfinite(t_ratio), 2.0 * stats.t.sf(np.abs(t_ratio), dof), 0.0)
    t_hi = np.where(w > 0, tt, -np.inf).max(axis=0)
    t_lo = np.where(w > 0, tt, np.inf).min(axis=0)
    span = t_hi - t_lo
    drift = np.abs(slope) * span
    significant = p < alpha
    above = drift > res
    return DriftFit(
        slope_um_per_k=slope,
        u_slope_um_per_k=u_slope,
        intercept_um=intercept,
        at_20c_um=intercept + 20.0 * slope,
        n=n.astype(np.int64),
        dof=dof.astype(np.int64),
        t_ratio=t_ratio,
        p_value=p,
        span_k=span,
        drift_um=drift,
        residual_sd_um=s,
        significant=significant,
        above_resolution=above,
        moves_with_room=significant & above,
        resolution_um=res,
        alpha=float(alpha),
    )
