"""Analytic sensitivity coefficients of the thermal measurement model, whole batches at once.

Model: L = R·G/P with G = 1 + α_g·Δ_g, P = 1 + α_p·Δ_p, Δ = t − t_ref (mm, °C, 1/K).
The shared-room parametrisation of GUM Annex H.1 (θ = Δ_p, δθ = t_p − t_g, δα = α_p − α_g)
follows by the chain rule from the same partial derivatives, so they are computed once:
∂L/∂θ = ∂L/∂t_p + ∂L/∂t_g, ∂L/∂δθ = −∂L/∂t_g, ∂L/∂δα = ∂L/∂α_p,
∂L/∂α_g|δα = ∂L/∂α_g + ∂L/∂α_p.
Reference: JCGM 100:2008, 5.1.3 (c_i = ∂f/∂x_i); 5.1.2 note (second-order terms); H.1.3.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from numpy.typing import NDArray

__all__ = ["Sensitivities", "sensitivities"]

F64 = NDArray[np.float64]


@dataclass(frozen=True)
class Sensitivities:
    """Coefficients of L in both parametrisations (mm per unit of each input).

    Independent temperatures: ``c_tp`` = ∂L/∂t_p, ``c_tg`` = ∂L/∂t_g, ``c_ap`` = ∂L/∂α_p,
    ``c_ag`` = ∂L/∂α_g, ``h_p`` = ∂²L/∂α_p∂t_p, ``h_g`` = ∂²L/∂α_g∂t_g.
    Shared room (GUM H.1): ``c_theta`` = ∂L/∂θ, ``c_dtheta`` = ∂L/∂δθ, ``c_dalpha`` = ∂L/∂δα,
    ``c_ag_shared`` = ∂L/∂α_g at fixed δα, ``h_dalpha_theta`` = ∂²L/∂δα∂θ,
    ``h_ag_dtheta`` = ∂²L/∂α_g∂δθ.
    """

    value: F64
    c_R: F64
    c_tp: F64
    c_tg: F64
    c_ap: F64
    c_ag: F64
    h_p: F64
    h_g: F64

    @property
    def c_theta(self) -> F64:
        return self.c_tp + self.c_tg

    @property
    def c_dtheta(self) -> F64:
        return -self.c_tg

    @property
    def c_dalpha(self) -> F64:
        return self.c_ap

    @property
    def c_ag_shared(self) -> F64:
        return self.c_ag + self.c_ap

    @property
    def h_dalpha_theta(self) -> F64:
        # ∂/∂θ (∂L/∂α_p) = ∂²L/∂α_p∂t_p + ∂²L/∂α_p∂t_g, the latter = c_ap·α_g/G
        return self.h_p + self._h_ap_tg

    @property
    def h_ag_dtheta(self) -> F64:
        # ∂/∂α_g|δα (−∂L/∂t_g) = −(∂²L/∂α_g∂t_g + ∂²L/∂α_p∂t_g)
        return -(self.h_g + self._h_ap_tg)

    _h_ap_tg: F64


def sensitivities(R: F64, alpha_p: F64, d_p: F64, alpha_g: F64, d_g: F64) -> Sensitivities:
    """All coefficients at R (mm), α (1/K) and Δ = t − t_ref (°C) of part and gauge."""
    G = 1.0 + alpha_g * d_g
    inv_p = 1.0 / (1.0 + alpha_p * d_p)
    c_R = G * inv_p
    L = R * c_R
    r_p = R * inv_p
    c_ap = -L * d_p * inv_p
    return Sensitivities(
        value=L,
        c_R=c_R,
        c_tp=-L * alpha_p * inv_p,
        c_tg=r_p * alpha_g,
        c_ap=c_ap,
        c_ag=r_p * d_g,
        h_p=-L * (1.0 - alpha_p * d_p) * inv_p * inv_p,
        h_g=r_p,
        _h_ap_tg=-r_p * alpha_g * d_p * inv_p,
    )
