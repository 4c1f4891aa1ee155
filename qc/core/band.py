"""Allowable temperature band: how far from 20 °C a characteristic may be measured.

The length error of a measurement made at θ = t − 20 °C with part and gauge at the same
temperature is e = L·δα·θ, δα = α_part − α_gauge (JCGM 100:2008, H.1.2 linearised:
l = l_S + d − l_S·(δα·θ + α_S·δθ)).  Given the share of the tolerance this error may use:

* uncorrected — the whole error counts, with the expansion coefficients known only to
  u(δα) = √(u(α_p)² + u(α_g)²):  |θ|·L·(|δα| + k·u(δα)) ≤ share·T; the band for the
  thermometer *reading* is then narrowed by k·u(θ) so the true temperature stays inside;
* corrected — the error is computed and removed using a thermometer of standard
  uncertainty u(θ); only the residual counts (H.1.3.3, H.1.3.4):
  u_res² = L²·(θ²·u(δα)² + δα²·u(θ)²),  k·u_res ≤ share·T;
* part–gauge offset — the part at δθ from the gauge, both near 20 °C, uncorrected:
  |δθ|·L·(α_p + k·u(α_p)) ≤ share·T.

Units: lengths in mm, tolerance and budget in µm, α in 1/K, temperatures in °C / K.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike, NDArray

from qc.errors import InputError

__all__ = ["REFERENCE_C", "TemperatureBand", "allowable_band", "corrected_residual_um"]

FloatArray = NDArray[np.float64]

#: ISO 1:2016, clause 3: standard reference temperature for dimensional specification.
REFERENCE_C = 20.0
_UM_PER_MM = 1000.0


def corrected_residual_um(
    length_mm: ArrayLike,
    theta_k: ArrayLike,
    delta_alpha: ArrayLike,
    u_delta_alpha: ArrayLike,
    u_thermometer_k: ArrayLike,
) -> FloatArray:
    """Standard uncertainty (µm) left after correcting to 20 °C at deviation θ (K).

    u_res = L·√(θ²·u(δα)² + δα²·u(θ)²); JCGM 100:2008, H.1.3.3–H.1.3.4, first order.
    """
    length = np.asarray(length_mm, dtype=float) * _UM_PER_MM
    theta = np.asarray(theta_k, dtype=float)
    return length * np.hypot(
        theta * np.asarray(u_delta_alpha, dtype=float),
        np.asarray(delta_alpha, dtype=float) * np.asarray(u_thermometer_k, dtype=float),
    )


@dataclass(frozen=True)
class TemperatureBand:
    """Allowable deviations (K, half-widths about 20 °C) per characteristic.

    ``uncorrected_k`` and ``corrected_k`` apply to the thermometer reading of a part and
    gauge at one temperature; ``offset_k`` is the true part–gauge difference allowed.

    inf: any temperature within the model's validity; 0: no temperature is good enough
    (e.g. the thermometer alone uses up the budget).
    """

    budget_um: FloatArray
    uncorrected_k: FloatArray
    corrected_k: FloatArray
    offset_k: FloatArray
    coverage_factor: float
    reference_c: float

    @property
    def uncorrected_c(self) -> tuple[FloatArray, FloatArray]:
        """(lowest, highest) temperature in °C for measuring without correction."""
        return self.reference_c - self.uncorrected_k, self.reference_c + self.uncorrected_k

    @property
    def corrected_c(self) -> tuple[FloatArray, FloatArray]:
        """(lowest, highest) temperature in °C for measuring with correction."""
        return self.reference_c - self.corrected_k, self.reference_c + self.corrected_k


def allowable_band(
    length_mm: ArrayLike,
    tolerance_um: ArrayLike,
    share: ArrayLike,
    cte_part: ArrayLike,
    cte_gauge: ArrayLike,
    u_cte_part: ArrayLike = 0.0,
    u_cte_gauge: ArrayLike = 0.0,
    u_thermometer_k: ArrayLike = 0.0,
    coverage_factor: float = 2.0,
) -> TemperatureBand:
    """Temperature band that keeps the thermal error within ``share`` of the tolerance.

    ``tolerance_um`` is the full width of the tolerance zone (upper − lower limit), µm;
    ``share`` a fraction (0.1 = a tenth); CTEs and their standard uncertainties in 1/K;
    ``u_thermometer_k`` the standard uncertainty of the temperature reading, K.
    Vectorised: every argument broadcasts (one value per characteristic).
    """
    length = np.asarray(length_mm, dtype=float)
    tol = np.asarray(tolerance_um, dtype=float)
    frac = np.asarray(share, dtype=float)
    ap, ag = np.asarray(cte_part, dtype=float), np.asarray(cte_gauge, dtype=float)
    up, ug = np.asarray(u_cte_part, dtype=float), np.asarray(u_cte_gauge, dtype=float)
    ut = np.asarray(u_thermometer_k, dtype=float)
    k = float(coverage_factor)
    if np.any(~(length > 0)):
        raise InputError("size: expected a positive length in mm")
    if np.any(~(tol > 0)):
        raise InputError("tolerance: expected a positive width in µm (upper minus lower limit)")
    if np.any(~((frac > 0) & (frac <= 1))):
        raise InputError("share of the tolerance: expected a fraction above 0 and at most 1")
    if np.any(up < 0) or np.any(ug < 0) or np.any(ut < 0) or not k > 0:
        raise InputError("uncertainties and the coverage factor: expected non-negative numbers")

    budget = frac * tol
    span = length * _UM_PER_MM  # µm per unit strain
    d_alpha = ap - ag
    u_d_alpha = np.hypot(up, ug)
    with np.errstate(divide="ignore", invalid="ignore"):
        uncorrected = np.maximum(budget / (span * (np.abs(d_alpha) + k * u_d_alpha)) - k * ut, 0.0)
        radicand = (budget / k / span) ** 2 - (d_alpha * ut) ** 2
        corrected = np.where(
            radicand > 0,
            np.sqrt(np.maximum(radicand, 0.0)) / u_d_alpha,
            0.0,
        )
        offset = budget / (span * (np.abs(ap) + k * up))
    shape = np.broadcast(budget, uncorrected, corrected, offset).shape

    def out(x: FloatArray) -> FloatArray:
        return np.broadcast_to(np.where(np.isnan(x), np.inf, x), shape).copy()

    return TemperatureBand(
        budget_um=np.broadcast_to(budget, shape).copy(),
        uncorrected_k=out(uncorrected),
        corrected_k=out(corrected),
        offset_k=out(offset),
        coverage_factor=k,
        reference_c=REFERENCE_C,
    )
