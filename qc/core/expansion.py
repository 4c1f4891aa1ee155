"""Differential expansion: growth of a length, mismatch of two materials, bow of a strip.

* Free growth: ΔL = L·α·(t₂ − t₁) (linear thermal expansion, α constant over the span).
* Mismatch of a piece fixed to a base: ΔL = L·(α_piece − α_base)·ΔT; the strain is
  ε = (α_piece − α_base)·ΔT and, if the piece is fully restrained by a base taken as
  rigid, the uniaxial stress σ = −E·ε (compressive when the piece grows more).
* Bow of two bonded layers (bimetal strip): Timoshenko, "Analysis of bi-metal
  thermostats", J. Opt. Soc. Am. 11 (1925) 233–255 (citation from memory):
  κ = 6·Δα·ΔT·(1 + m)² / (h·[3·(1 + m)² + (1 + m·n)·(m² + 1/(m·n))]),
  m = t₁/t₂, n = E₁/E₂, h = t₁ + t₂; equal thickness and modulus give κ = 1.5·Δα·ΔT/h.
  The mid-span bow of a free length ℓ bent to that curvature is δ ≈ κ·ℓ²/8 (shallow
  circular arc) — an estimate: real joints slip, bolts restrain locally.

Lengths in mm, α in 1/K, temperatures in °C / K, E in GPa; growth and bow in µm,
stress in MPa, curvature in 1/m.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike, NDArray

from qc.errors import InputError

__all__ = ["Mismatch", "bimetal_curvature", "bow_um", "length_change_um", "mismatch"]

FloatArray = NDArray[np.float64]
_UM_PER_MM = 1000.0


def _f(x: ArrayLike) -> FloatArray:
    return np.asarray(x, dtype=float)


def length_change_um(
    length_mm: ArrayLike, cte: ArrayLike, t_from_c: ArrayLike, t_to_c: ArrayLike
) -> FloatArray:
    """Free growth ΔL = L·α·(t_to − t_from), µm (positive when the length grows)."""
    return _f(length_mm) * _UM_PER_MM * _f(cte) * (_f(t_to_c) - _f(t_from_c))


@dataclass(frozen=True)
class Mismatch:
    """Mismatch of a piece on a base over ΔT.

    ``free_um``: how much more the piece grows than the base over its length (µm);
    ``strain``: the mismatch strain (dimensionless, ×1e6 for µm/m);
    ``stress_mpa``: stress in the piece if fully restrained by a rigid base (NaN if no
    modulus given); negative = compression.
    """

    free_um: FloatArray
    strain: FloatArray
    stress_mpa: FloatArray


def mismatch(
    length_mm: ArrayLike,
    cte_piece: ArrayLike,
    cte_base: ArrayLike,
    delta_t_k: ArrayLike,
    modulus_piece_gpa: ArrayLike = np.nan,
) -> Mismatch:
    """Differential expansion of a piece fixed to a base over a change ΔT (K)."""
    strain = (_f(cte_piece) - _f(cte_base)) * _f(delta_t_k)
    free = _f(length_mm) * _UM_PER_MM * strain
    stress = -_f(modulus_piece_gpa) * 1000.0 * strain  # GPa → MPa
    return Mismatch(free_um=free, strain=strain, stress_mpa=stress)


def bimetal_curvature(
    cte_1: ArrayLike,
    cte_2: ArrayLike,
    thickness_1_mm: ArrayLike,
    thickness_2_mm: ArrayLike,
    modulus_1_gpa: ArrayLike,
    modulus_2_gpa: ArrayLike,
    delta_t_k: ArrayLike,
) -> FloatArray:
    """Curvature (1/m) of two bonded layers over ΔT, Timoshenko (1925) bimetal formula.

    Positive when layer 2 expands more (the strip is then concave on the side of layer 1).
    """
    t1, t2 = _f(thickness_1_mm) / 1000.0, _f(thickness_2_mm) / 1000.0
    e1, e2 = _f(modulus_1_gpa), _f(modulus_2_gpa)
    if np.any(~(t1 > 0)) or np.any(~(t2 > 0)) or np.any(~(e1 > 0)) or np.any(~(e2 > 0)):
        raise InputError("bow estimate: expected positive thicknesses (mm) and moduli (GPa)")
    m, n, h = t1 / t2, e1 / e2, t1 + t2
    d = 3.0 * (1.0 + m) ** 2 + (1.0 + m * n) * (m**2 + 1.0 / (m * n))
    return 6.0 * (_f(cte_2) - _f(cte_1)) * _f(delta_t_k) * (1.0 + m) ** 2 / (h * d)


def bow_um(curvature_per_m: ArrayLike, span_mm: ArrayLike) -> FloatArray:
    """Mid-span bow (µm) of a free length bent to a uniform curvature: δ ≈ κ·ℓ²/8.

    Shallow-arc approximation (δ ≪ ℓ); an estimate for a simple beam, not a stress analysis.
    """
    span_m = _f(span_mm) / 1000.0
    return _f(curvature_per_m) * span_m**2 / 8.0 * 1e6
