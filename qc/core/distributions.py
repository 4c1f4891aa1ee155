"""Probability distributions of input quantities, degrees of freedom and coverage factors.

Distribution codes are small integers so a whole batch carries them in an ``int8`` array.
Reference: JCGM 100:2008 (GUM) 4.3.7, 4.3.9, F.2.2.1 (divisors), G.3 and G.4 (degrees of
freedom, t-distribution), Table G.2 (coverage factors).
"""

from __future__ import annotations

from functools import lru_cache

import numpy as np
from numpy.typing import ArrayLike, NDArray
from scipy.special import ndtri, stdtrit

from qc.errors import ConfigError

__all__ = [
    "ARCSINE",
    "DISTRIBUTION_NAMES",
    "NORMAL",
    "PRODUCT",
    "RECTANGULAR",
    "TRIANGULAR",
    "coverage_factor",
    "divisor",
    "dof_from_reliability",
    "dof_type_a",
    "standard_from_expanded",
    "standard_from_half_width",
    "standard_from_resolution",
]

NORMAL = 0
RECTANGULAR = 1
TRIANGULAR = 2
ARCSINE = 3
#: Not an input distribution: marks a second-order term (a product of two inputs) in a budget.
PRODUCT = 4

DISTRIBUTION_NAMES: tuple[str, ...] = ("normal", "rectangular", "triangular", "arcsine", "product")

# Half-width a of a symmetric distribution over standard uncertainty u = a / divisor.
# GUM 4.3.7 (rectangular, √3), 4.3.9 (triangular, √6), arcsine (U-shaped, √2: JCGM 101 6.4.6).
_DIVISORS = np.array([1.0, np.sqrt(3.0), np.sqrt(6.0), np.sqrt(2.0), np.nan])

# Beyond this many degrees of freedom the t quantile comes from its asymptotic series.
_TABLE_NU = 100_000


def divisor(dist: ArrayLike) -> NDArray[np.float64]:
    """Divisor turning a half-width into a standard uncertainty (1 for normal: a is then u)."""
    return _DIVISORS[np.asarray(dist, dtype=np.int64)]


def standard_from_half_width(a: ArrayLike, dist: ArrayLike) -> NDArray[np.float64]:
    """Standard uncertainty from half-width ``a`` of a rectangular, triangular or arcsine law.

    Reference: GUM 4.3.7 (a/√3), 4.3.9 (a/√6); arcsine a/√2 (JCGM 101:2008, 6.4.6).
    For ``NORMAL`` the value is taken to be the standard uncertainty already.
    """
    return np.asarray(a, dtype=np.float64) / divisor(dist)


def standard_from_expanded(U: ArrayLike, k: ArrayLike) -> NDArray[np.float64]:
    """Standard uncertainty U/k from a certificate's expanded uncertainty (GUM 4.3.3)."""
    return np.asarray(U, dtype=np.float64) / np.asarray(k, dtype=np.float64)


def standard_from_resolution(delta: ArrayLike) -> NDArray[np.float64]:
    """Standard uncertainty δ/(2√3) of an indication with resolution δ (GUM F.2.2.1)."""
    return np.asarray(delta, dtype=np.float64) / (2.0 * np.sqrt(3.0))


def dof_type_a(n: ArrayLike) -> NDArray[np.float64]:
    """Degrees of freedom n − 1 of a standard deviation from n readings (GUM G.3.3)."""
    return np.asarray(n, dtype=np.float64) - 1.0


def dof_from_reliability(relative: ArrayLike) -> NDArray[np.float64]:
    """Degrees of freedom ν ≈ ½·(Δu/u)⁻² of a Type B uncertainty (GUM G.4.2, eq. G.3).

    ``relative`` is the relative uncertainty Δu/u of the uncertainty itself (0.10 for
    "reliable to 10 %" gives ν = 50); 0 gives infinite degrees of freedom.
    """
    r = np.asarray(relative, dtype=np.float64)
    with np.errstate(divide="ignore"):
        return 0.5 / (r * r)


@lru_cache(maxsize=16)
def _t_table(p: float) -> NDArray[np.float64]:
    """t_p(ν) for ν = 0 … _TABLE_NU (entry 0 is NaN), computed once per coverage probability."""
    nu = np.arange(_TABLE_NU + 1, dtype=np.float64)
    table = stdtrit(nu, 0.5 + p / 2.0)
    table[0] = np.nan
    table.flags.writeable = False
    return table


def coverage_factor(nu: ArrayLike, p: float = 0.9545) -> NDArray[np.float64]:
    """Coverage factor k = t_p(ν) for coverage probability ``p`` (GUM G.3.4, G.4.1, Table G.2).

    ``nu`` is truncated down to an integer (GUM G.4.1 note 1); ν < 1 or NaN gives NaN; ν = ∞
    gives the normal quantile. Vectorised through a table, so a million rows cost one gather.
    """
    if not 0.0 < p < 1.0:
        raise ConfigError(f"coverage probability must lie between 0 and 1, got {p!r}")
    v0 = np.floor(np.asarray(nu, dtype=np.float64))
    v = v0.ravel()
    table = _t_table(float(p))
    # NaN and ν < 1 index the NaN entry 0; ν beyond the table (and ∞) use the series below.
    idx = np.clip(np.nan_to_num(v, nan=0.0, posinf=0.0), 0, _TABLE_NU).astype(np.int64)
    k = table[idx]
    big = np.flatnonzero(v > _TABLE_NU)
    if big.size:
        # Asymptotic series t ≈ z + (z³ + z)/(4ν) (Abramowitz & Stegun 26.7.5); the next
        # term is below 1e-10 for ν > 1e5, and ν = ∞ gives z exactly.
        z = float(ndtri(0.5 + p / 2.0))
        k[big] = z + (z**3 + z) / (4.0 * v[big])
    return k.reshape(v0.shape)
