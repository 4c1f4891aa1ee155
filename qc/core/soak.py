"""Soak time: how long a part must rest before it is within a band of the room (or gauge).

Transient conduction with a uniform effective surface coefficient h (convection plus
linearised radiation):

* Lumped capacitance (Newton cooling) where Bi = h·L_c/k < 0.1, L_c = V/A:
  θ/θ_i = exp(−t·h/(ρ·c·L_c)).  Reference: Incropera et al., *Fundamentals of Heat and
  Mass Transfer*, 6th ed., §5.1–5.2, eq. 5.6; Çengel, *Heat and Mass Transfer*, §4-1.
* Otherwise the one-term series for a plane wall, long cylinder or sphere,
  θ*/θ_i = C₁·exp(−ζ₁²·Fo)·S(ζ₁ r*), with ζ₁ from the transcendental equation solved
  numerically here; blocks and short cylinders by the product of one-dimensional
  solutions.  Reference: Incropera §5.5–5.6 (eqs. 5.40–5.53) and §5.8 (product solutions).

Lengths in mm at the interface (m inside), temperatures in °C, times in s,
h in W/(m²·K), ρ in kg/m³, c in J/(kg·K), k in W/(m·K).
Pure numpy/scipy: no file is read here.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike, NDArray
from scipy.special import j0, j1

from qc.errors import DataFileError, InputError

__all__ = [
    "BIOT_LUMPED_LIMIT",
    "STEFAN_BOLTZMANN",
    "Geometry",
    "RestingCondition",
    "RowSoak",
    "SoakRange",
    "SoakTime",
    "SurfaceFinish",
    "block",
    "combined_coefficient",
    "cylinder",
    "first_eigenvalue",
    "mass_and_area",
    "one_term_coefficient",
    "one_term_ratio",
    "parse_heat_transfer",
    "plate",
    "radiation_coefficient",
    "soak_time",
    "soak_time_for_rows",
    "soak_time_range",
    "sphere",
    "surface_factor",
]

FloatArray = NDArray[np.float64]

#: Biot number below which the lumped model is used (Incropera eq. 5.10).
BIOT_LUMPED_LIMIT = 0.1
#: Stefan–Boltzmann constant, W/(m²·K⁴) (CODATA 2018, exact in the SI since 2019).
STEFAN_BOLTZMANN = 5.670374419e-8
#: Below this Fourier number the one-term series is only approximate (Incropera §5.5.2).
FOURIER_ONE_TERM_MIN = 0.2

_KINDS = ("wall", "cylinder", "sphere")
_UPPER = {"wall": np.pi / 2, "cylinder": 2.404825557695773, "sphere": np.pi}


def _arr(x: ArrayLike) -> FloatArray:
    return np.asarray(x, dtype=float)


# --------------------------------------------------------------------------- surface coefficient
def radiation_coefficient(emissivity: ArrayLike, temperature_k: ArrayLike = 293.15) -> FloatArray:
    """Linearised radiation coefficient h_r = 4·ε·σ·T³, W/(m²·K).

    Valid for small part–room differences (a few K) against large surroundings;
    at 293 K it is about 5.7·ε.  Reference: Incropera eq. 1.9 linearised.
    """
    t = _arr(temperature_k)
    return 4.0 * _arr(emissivity) * STEFAN_BOLTZMANN * t**3


def combined_coefficient(
    h_convection: ArrayLike, emissivity: ArrayLike, temperature_k: ArrayLike = 293.15
) -> FloatArray:
    """Effective coefficient, convection plus linearised radiation, W/(m²·K)."""
    return _arr(h_convection) + radiation_coefficient(emissivity, temperature_k)


# --------------------------------------------------------------------------- eigenvalues
def _characteristic(kind: str, z: FloatArray) -> FloatArray:
    """Left side of the transcendental equation, increasing in z on (0, upper)."""
    if kind == "wall":
        return z * np.tan(z)  # ζ·tan ζ = Bi
    if kind == "cylinder":
        return z * j1(z) / j0(z)  # ζ·J₁(ζ)/J₀(ζ) = Bi
    return 1.0 - z / np.tan(z)  # 1 − ζ·cot ζ = Bi


def _check_kind(kind: str) -> None:
    if kind not in _KINDS:
        raise InputError(f"shape kind must be one of {', '.join(_KINDS)}, got {kind!r}")


#: Below this many values solving each one directly is as cheap as finding the distinct ones.
_DISTINCT_MIN_SIZE = 2048


def _distinct(values: FloatArray) -> tuple[FloatArray, NDArray[np.intp]] | None:
    """The sorted distinct values of ``values`` and each element's index among them.

    Inspection rows repeat sizes, materials and coefficients, so a Biot number has few
    distinct values; the costly root solve then runs once per value.  Returns None where a
    direct solve is as cheap (small arrays, few repeats) or where some value is not finite
    and positive (the special cases 0, inf and NaN stay on the direct path).
    """
    flat = values.ravel()
    if flat.size < _DISTINCT_MIN_SIZE or not (np.isfinite(flat).all() and (flat > 0).all()):
        return None
    try:
        uniq = np.unique(flat, sorted=False)  # hashed: no sort of the whole array
    except TypeError:  # numpy before 2.3 has no unsorted unique
        uniq = np.unique(flat)
    if uniq.size * 4 > flat.size:
        return None
    uniq.sort()
    return uniq, np.searchsorted(uniq, flat).reshape(values.shape)


def _per_distinct(func, values: FloatArray) -> tuple[FloatArray, ...]:
    """``func(values)`` for an elementwise ``func`` returning a tuple of arrays, evaluated
    once per distinct value and spread back (the same numbers as evaluating every element)."""
    found = _distinct(values)
    if found is None:
        return func(values)
    uniq, index = found
    return tuple(np.asarray(a)[index] for a in func(uniq))


def _bisect_eigenvalue(kind: str, bi: FloatArray) -> FloatArray:
    """Vectorised bisection for ζ₁ on (0, upper), one result per element of ``bi``."""
    upper = _UPPER[kind]
    lo = np.zeros_like(bi)
    hi = np.full_like(bi, upper)
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        for _ in range(80):  # halves an interval < π eighty times: far below 1e-15
            mid = 0.5 * (lo + hi)
            f = _characteristic(kind, mid)
            below = f < bi
            lo = np.where(below, mid, lo)
            hi = np.where(below, hi, mid)
    z = 0.5 * (lo + hi)
    return np.where(np.isinf(bi), upper, np.where(bi <= 0, 0.0, z))


def first_eigenvalue(kind: str, biot: ArrayLike) -> FloatArray:
    """First root ζ₁ of the one-term equation for ``kind`` ('wall', 'cylinder', 'sphere').

    Solved by vectorised bisection on (0, upper), where the left side rises from 0
    to infinity (upper = π/2, j₀,₁ = 2.4048, π), once per distinct Biot number.
    Bi = ∞ gives the upper bound.  Reference: Incropera eqs. 5.39c, 5.49c, 5.50c.
    """
    _check_kind(kind)
    bi = _arr(biot)
    return _per_distinct(lambda b: (_bisect_eigenvalue(kind, b),), bi)[0]


def one_term_coefficient(kind: str, zeta: ArrayLike) -> FloatArray:
    """C₁ of the one-term series for eigenvalue ζ₁ (Incropera eqs. 5.40b, 5.49b, 5.50b)."""
    _check_kind(kind)
    z = _arr(zeta)
    with np.errstate(divide="ignore", invalid="ignore"):
        if kind == "wall":
            c = 4.0 * np.sin(z) / (2.0 * z + np.sin(2.0 * z))
        elif kind == "cylinder":
            c = 2.0 / z * j1(z) / (j0(z) ** 2 + j1(z) ** 2)
        else:
            c = 4.0 * (np.sin(z) - z * np.cos(z)) / (2.0 * z - np.sin(2.0 * z))
    return np.where(z > 0, c, 1.0)


def surface_factor(kind: str, zeta: ArrayLike) -> FloatArray:
    """Surface-to-centre ratio of the one-term solution: cos ζ₁, J₀(ζ₁), sin ζ₁/ζ₁."""
    _check_kind(kind)
    z = _arr(zeta)
    if kind == "wall":
        return np.cos(z)
    if kind == "cylinder":
        return j0(z)
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(z > 0, np.sin(z) / z, 1.0)


def one_term_ratio(
    kind: str, biot: ArrayLike, fourier: ArrayLike, where: str = "centre"
) -> FloatArray:
    """Dimensionless temperature θ/θ_i of the one-term solution at the centre or the surface.

    ``fourier`` = α·t/L² with L the half-thickness (wall) or the radius.
    Reference: Incropera eqs. 5.41, 5.52; Çengel eqs. 4-13 to 4-15.
    """
    if where not in ("centre", "surface"):
        raise InputError(f"where must be 'centre' or 'surface', got {where!r}")
    z = first_eigenvalue(kind, biot)
    ratio = one_term_coefficient(kind, z) * np.exp(-(z**2) * _arr(fourier))
    return ratio * surface_factor(kind, z) if where == "surface" else ratio


def _factor_terms(kind: str, biot: FloatArray) -> tuple[FloatArray, FloatArray, FloatArray]:
    """ζ₁, ln C₁ and ln of the surface factor for one direction of the product solution;
    all depend on the Biot number alone, so :func:`soak_time` takes them per distinct value."""
    zeta = first_eigenvalue(kind, biot)
    return (zeta, np.log(one_term_coefficient(kind, zeta)),
            np.log(surface_factor(kind, zeta)))


# --------------------------------------------------------------------------- geometry
@dataclass(frozen=True)
class Geometry:
    """A part's shape for the soak model.

    ``lc_m`` is V/A in m (for the Biot number and the lumped model); ``factors`` are the
    one-dimensional solutions whose product gives the centre temperature: (kind,
    half-thickness or radius in m, inf where the part is unbounded that way).
    ``description`` says in words what was assumed.
    """

    lc_m: FloatArray
    factors: tuple[tuple[str, FloatArray], ...]
    description: str


def _mm(x: ArrayLike) -> FloatArray:
    v = _arr(x)
    if np.any(~(v > 0)):
        raise InputError(f"part dimensions: expected positive lengths in mm, got {x!r}")
    return v / 1000.0


def block(a_mm: ArrayLike, b_mm: ArrayLike, c_mm: ArrayLike) -> Geometry:
    """Rectangular block a × b × c (mm): product of three plane walls (Incropera Fig. 5.11)."""
    a, b, c = _mm(a_mm), _mm(b_mm), _mm(c_mm)
    lc = 1.0 / (2.0 * (1.0 / a + 1.0 / b + 1.0 / c))
    return Geometry(
        lc, (("wall", a / 2), ("wall", b / 2), ("wall", c / 2)), "block, three plane walls"
    )


def plate(
    thickness_mm: ArrayLike, width_mm: ArrayLike = np.inf, length_mm: ArrayLike = np.inf
) -> Geometry:
    """Plate of thickness × width × length (mm); width/length may be inf (an infinite slab)."""
    g = block(thickness_mm, width_mm, length_mm)
    return Geometry(g.lc_m, g.factors, "plate, product of plane walls")


def cylinder(diameter_mm: ArrayLike, length_mm: ArrayLike = np.inf) -> Geometry:
    """Solid cylinder (mm); a finite length multiplies by a plane wall (Incropera Fig. 5.11)."""
    r = _mm(diameter_mm) / 2
    length = _mm(length_mm)
    lc = 1.0 / (2.0 / r + 2.0 / length)
    return Geometry(
        lc, (("cylinder", r), ("wall", length / 2)), "cylinder, long cylinder × plane wall"
    )


def sphere(diameter_mm: ArrayLike) -> Geometry:
    """Solid sphere (mm)."""
    r = _mm(diameter_mm) / 2
    return Geometry(r / 3.0, (("sphere", r),), "sphere")


def mass_and_area(mass_kg: ArrayLike, area_mm2: ArrayLike, density: ArrayLike) -> Geometry:
    """Shape unknown, mass and wetted area known: V = m/ρ, L_c = V/A.

    Where the lumped model does not apply, an equivalent sphere of the same V/A
    (r = 3·L_c) is used: of wall, cylinder and sphere with equal V/A it cools slowest,
    so the time is on the long (safe) side.
    """
    m, area, rho = _arr(mass_kg), _arr(area_mm2) / 1e6, _arr(density)
    if np.any(~(m > 0)) or np.any(~(area > 0)):
        raise InputError("part mass and surface area: expected positive numbers (kg, mm²)")
    lc = m / rho / area
    return Geometry(
        lc, (("sphere", 3.0 * lc),), "shape unknown: V = m/ρ, equivalent sphere r = 3·V/A"
    )


# --------------------------------------------------------------------------- soak time
@dataclass(frozen=True)
class SoakTime:
    """Soak time for one effective coefficient, arrays broadcast over the inputs.

    ``centre_s`` governs (the core lags the surface); ``surface_s`` is when the slowest
    surface point is inside the band.  ``method`` is 'lumped' or 'one-term';
    ``fourier_ok`` is False where some direction has Fo < 0.2; there the one-term
    result overstates the centre temperature, so the time is a little long (safe side).
    inf means never (the band cannot be reached, e.g. gauge and room differ
    by more than the band); 0 means already inside.
    """

    centre_s: FloatArray
    surface_s: FloatArray
    biot: FloatArray
    method: NDArray[np.str_]
    fourier_ok: NDArray[np.bool_]
    h: FloatArray


def _target_ratio(
    part_c: FloatArray, room_c: FloatArray, band_k: FloatArray, gauge_c: FloatArray
) -> FloatArray:
    """θ/θ_i at which the part is within ``band_k`` of the gauge, approaching the room.

    The part approaches the room monotonically from one side, so being within the band of
    a gauge at T_g means |T − T_room| ≤ band + sign(T_i − T_room)·(T_g − T_room).
    Returns ≥ 1 where already inside, ≤ 0 where never (including |T_g − T_room| ≥ band).
    """
    d0 = part_c - room_c
    effective = band_k + np.sign(d0) * (gauge_c - room_c)
    with np.errstate(divide="ignore", invalid="ignore"):
        ratio = effective / np.abs(d0)
    already = np.abs(part_c - gauge_c) <= band_k
    # A part already at room temperature but outside the band of the gauge never gets in;
    # if room and gauge differ by the band or more, the part at best passes through the
    # band on its way to room temperature and does not stay: never.
    ratio = np.where(d0 == 0, 0.0, ratio)
    ratio = np.where(already, np.inf, ratio)
    return np.where(np.abs(gauge_c - room_c) >= band_k, 0.0, ratio)


def _check_soak_inputs(band: FloatArray, rho: FloatArray, cp: FloatArray, k: FloatArray,
                       hh: FloatArray) -> None:
    """The input checks of :func:`soak_time`, in its order and with its messages."""
    if np.any(~(band > 0)):
        raise InputError("temperature band: expected a positive number of kelvin (e.g. 0.5)")
    if np.any(~(hh > 0)) or np.any(~(rho > 0)) or np.any(~(cp > 0)) or np.any(~(k > 0)):
        raise InputError(
            "heat-transfer coefficient, density, specific heat and conductivity: "
            "expected positive numbers"
        )


@dataclass(frozen=True)
class _Body:
    """What the soak time needs of the part and its surface, apart from the temperatures.

    Everything here is elementwise in (ρ, c, k, h, geometry), so it may be worked out per
    distinct part and spread to its rows with :meth:`take`.  The combinations the times use
    (−τ, Σ ln C₁ + ln S, α·Σ ζ₁²/L², the lumped masks) are formed here once.
    """

    biot: FloatArray
    neg_tau: FloatArray  # −τ, τ = ρ·c·L_c/h the lumped time constant, s
    log_c: FloatArray  # Σ ln C₁ over the one-dimensional factors
    log_cs: FloatArray  # Σ ln C₁ + ln of the largest surface factor
    decay: FloatArray  # α·Σ ζ₁²/L² over the factors, 1/s
    lumped: NDArray[np.bool_]  # Bi < 0.1
    near_limit: NDArray[np.bool_]  # lumped with Bi ≥ 0.01: kept no shorter than one-term
    diffusivity: FloatArray
    longest: FloatArray  # the longest finite half-thickness or radius, m

    def take(self, index: NDArray[np.intp], fourier: bool = True) -> _Body:
        """The terms at ``index`` (one body number per row); scalars stay as they are.

        With ``fourier`` False the two terms only the Fourier check reads (α, longest
        length) are left per body: for callers that do not ask for that check.
        """
        skip = () if fourier else ("diffusivity", "longest")
        values = ((f, np.asarray(getattr(self, f))) for f in self.__dataclass_fields__)
        return _Body(*(v[index] if v.ndim and f not in skip else v for f, v in values))


def _body_terms(rho: FloatArray, cp: FloatArray, k: FloatArray, hh: FloatArray,
                geometry: Geometry) -> _Body:
    """Biot number, lumped time constant and the one-term product solution's terms."""
    biot = hh * geometry.lc_m / k
    diffusivity = k / (rho * cp)
    tau = rho * cp * geometry.lc_m / hh
    shape = np.shape(biot)
    sum_log_c = np.zeros(shape)
    rate = np.zeros_like(sum_log_c)
    best_surface = np.full_like(sum_log_c, -np.inf)
    lengths = []
    for kind, length in geometry.factors:
        finite = np.isfinite(length)
        safe_len = np.where(finite, length, 1.0)
        zeta, log_c, log_surface = _per_distinct(
            lambda bi, kind=kind: _factor_terms(kind, bi), hh * safe_len / k
        )
        sum_log_c = sum_log_c + np.where(finite, log_c, 0.0)
        rate = rate + np.where(finite, zeta**2 / safe_len**2, 0.0)
        best_surface = np.maximum(best_surface, np.where(finite, log_surface, -np.inf))
        lengths.append(np.where(finite, length, 0.0))
    longest = np.maximum.reduce([np.broadcast_to(x, rate.shape) for x in lengths])
    lumped = biot < BIOT_LUMPED_LIMIT
    return _Body(biot, -tau, sum_log_c, sum_log_c + best_surface, diffusivity * rate, lumped,
                 lumped & (biot >= 0.01), diffusivity, longest)


def _log_target(target: FloatArray) -> FloatArray:
    """ln θ*, NaN where the band is never reached."""
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.log(np.where(target > 0, target, np.nan))


def _reach(target: FloatArray) -> tuple[NDArray[np.bool_], NDArray[np.bool_]]:
    """Rows that never get inside the band, and rows already inside."""
    return ~(target > 0), np.isinf(target) | (target >= 1.0)


def _times(target: FloatArray, log_target: FloatArray, b: _Body, fourier: bool = True,
           reach: tuple[NDArray[np.bool_], NDArray[np.bool_]] | None = None
           ) -> tuple[FloatArray, FloatArray, NDArray[np.bool_] | None]:
    """Centre and surface times and (if asked) the Fourier check, per row."""
    # Lumped: θ* = exp(−t·h/(ρ c L_c)).
    t_lumped = b.neg_tau * log_target
    # One-term product solution.
    t_series = (b.log_c - log_target) / b.decay
    t_series_surface = (b.log_cs - log_target) / b.decay

    # Near the limit the lumped time can be shorter than the one-term centre time (the core
    # lags), so that a larger h would seem to take longer across Bi = 0.1. From Bi = 0.01 on,
    # the lumped answer is kept no shorter than the one-term centre time (the safe side).
    checked = b.near_limit & np.isfinite(t_series)
    t_lumped_safe = np.where(checked, np.maximum(t_lumped, t_series), t_lumped)
    centre = np.where(b.lumped, t_lumped_safe, t_series)
    surface = np.where(b.lumped, t_lumped, t_series_surface)
    never, inside = _reach(target) if reach is None else reach
    centre = np.where(never, np.inf, np.where(inside, 0.0, np.maximum(centre, 0.0)))
    surface = np.where(never, np.inf, np.where(inside, 0.0, np.maximum(surface, 0.0)))
    surface = np.minimum(surface, centre)
    fourier_ok = None
    if fourier:
        fo_min = b.diffusivity * t_series / b.longest**2
        fourier_ok = b.lumped | inside | never | (fo_min >= FOURIER_ONE_TERM_MIN)
    return centre, surface, fourier_ok


def soak_time(
    part_c: ArrayLike,
    room_c: ArrayLike,
    band_k: ArrayLike,
    density: ArrayLike,
    specific_heat: ArrayLike,
    conductivity: ArrayLike,
    h: ArrayLike,
    geometry: Geometry,
    gauge_c: ArrayLike | None = None,
) -> SoakTime:
    """Time (s) until a part at ``part_c`` resting in a room at ``room_c`` is within
    ``band_k`` of the room (or of ``gauge_c``), for one effective coefficient ``h``.

    Lumped where Bi = h·L_c/k < 0.1 (Incropera eq. 5.6 solved for t; from Bi = 0.01 on, no
    shorter than the one-term centre time), else the one-term
    product solution solved for t in closed form:
    t = (Σ ln C₁ᵢ − ln θ*) / (α·Σ ζ₁ᵢ²/Lᵢ²), α = k/(ρ·c).
    """
    part, room, band = _arr(part_c), _arr(room_c), _arr(band_k)
    gauge = room if gauge_c is None else _arr(gauge_c)
    rho, cp, k, hh = _arr(density), _arr(specific_heat), _arr(conductivity), _arr(h)
    _check_soak_inputs(band, rho, cp, k, hh)
    target = _target_ratio(part, room, band, gauge)
    body = _body_terms(rho, cp, k, hh, geometry)
    centre, surface, fourier_ok = _times(target, _log_target(target), body)
    method = np.where(body.lumped, "lumped", "one-term")
    shape = np.broadcast(centre, body.biot).shape
    return SoakTime(
        centre_s=np.broadcast_to(centre, shape).copy(),
        surface_s=np.broadcast_to(surface, shape).copy(),
        biot=np.broadcast_to(body.biot, shape).copy(),
        method=np.broadcast_to(method, shape).copy(),
        fourier_ok=np.broadcast_to(fourier_ok, shape).copy(),
        h=np.broadcast_to(hh, shape).copy(),
    )


@dataclass(frozen=True)
class SoakRange:
    """Soak times for the low, nominal and high effective coefficient.

    The low coefficient gives the longest time (``slow``), the high one the shortest
    (``fast``); quote the range, not the nominal alone.
    """

    fast: SoakTime
    nominal: SoakTime
    slow: SoakTime
    geometry: str


def soak_time_range(
    part_c: ArrayLike,
    room_c: ArrayLike,
    band_k: ArrayLike,
    density: ArrayLike,
    specific_heat: ArrayLike,
    conductivity: ArrayLike,
    h_low: ArrayLike,
    h_nominal: ArrayLike,
    h_high: ArrayLike,
    geometry: Geometry,
    gauge_c: ArrayLike | None = None,
) -> SoakRange:
    """:func:`soak_time` at the low, nominal and high coefficient (W/(m²·K))."""
    if np.any(_arr(h_low) > _arr(h_nominal)) or np.any(_arr(h_nominal) > _arr(h_high)):
        raise InputError("heat-transfer coefficient range: expected low ≤ nominal ≤ high")
    args = (part_c, room_c, band_k, density, specific_heat, conductivity)

    def run(h: ArrayLike) -> SoakTime:
        return soak_time(*args, h=h, geometry=geometry, gauge_c=gauge_c)

    return SoakRange(run(h_high), run(h_nominal), run(h_low), geometry.description)


@dataclass(frozen=True)
class RowSoak:
    """Per-row soak advice for the action list (times in s; inf = never, 0 = already in)."""

    fast_s: FloatArray
    nominal_s: FloatArray
    slow_s: FloatArray
    surface_nominal_s: FloatArray
    method: NDArray[np.str_]
    note: NDArray[np.str_]


def _body_index(
    columns: tuple[FloatArray, ...], shape: tuple[int, ...]
) -> tuple[NDArray[np.intp], tuple[FloatArray, ...]] | None:
    """Number the distinct combinations of ``columns`` (each broadcast to ``shape``).

    Returns the body number per row and each column's value per body, or None where the
    values do not repeat enough for this to pay (then every row is worked out on its own).
    """
    if len(shape) != 1:
        return None
    combined = np.zeros(shape, dtype=np.int64)
    radix = 1
    found = []
    for col in columns:
        d = _distinct(np.broadcast_to(col, shape))
        if d is None:
            return None
        found.append((d[0], radix))
        combined += d[1] * radix
        radix *= d[0].size
        if radix > max(shape[0], 1):
            return None
    present = np.zeros(radix, dtype=bool)
    present[combined] = True
    ids = np.flatnonzero(present)  # the combinations that occur, in increasing code
    body = (np.cumsum(present) - 1)[combined]
    per_body = tuple(u[(ids // r) % u.size] for u, r in found)
    return body.astype(np.intp), per_body


def soak_time_for_rows(
    part_c: ArrayLike,
    room_c: ArrayLike,
    band_k: ArrayLike,
    density: ArrayLike,
    specific_heat: ArrayLike,
    conductivity: ArrayLike,
    h_low: ArrayLike,
    h_nominal: ArrayLike,
    h_high: ArrayLike,
    nominal_size_mm: ArrayLike,
    characteristic_length_mm: ArrayLike | None = None,
    gauge_c: ArrayLike | None = None,
) -> RowSoak:
    """Soak times per inspection row, vectorised.

    Geometry per row: ``characteristic_length_mm`` (V/A, mm) where given (not NaN); else a
    proxy, a solid cube whose edge is the nominal size (V/A = size/6) — a stated
    assumption, returned in ``note``.  One-term rows use the equivalent sphere r = 3·V/A
    (the slowest shape for a given V/A).

    The same numbers as :func:`soak_time_range` on the rows' geometry; rows repeat sizes and
    materials, so the part's terms (eigenvalues, time constants) are worked out once per
    distinct (V/A, ρ, c, k) and only the temperatures are handled row by row.
    """
    size = _arr(nominal_size_mm)
    lc_given = (
        np.full_like(size, np.nan)
        if characteristic_length_mm is None
        else _arr(characteristic_length_mm) * np.ones_like(size)
    )
    proxy = ~np.isfinite(lc_given) | ~(lc_given > 0)
    lc_mm = np.where(proxy, np.abs(size) / 6.0, lc_given)
    if np.any(~(lc_mm > 0)):
        raise InputError(
            "soak time: each row needs a positive nominal size or characteristic length (mm)"
        )
    lc = lc_mm / 1000.0
    h_all = (_arr(h_high), _arr(h_nominal), _arr(h_low))  # fastest first, as the range runs
    if np.any(h_all[2] > h_all[1]) or np.any(h_all[1] > h_all[0]):
        raise InputError("heat-transfer coefficient range: expected low ≤ nominal ≤ high")
    part, room, band = _arr(part_c), _arr(room_c), _arr(band_k)
    gauge = room if gauge_c is None else _arr(gauge_c)
    rho, cp, k = _arr(density), _arr(specific_heat), _arr(conductivity)
    for hh in h_all:
        _check_soak_inputs(band, rho, cp, k, hh)

    target = _target_ratio(part, room, band, gauge)
    log_target = _log_target(target)
    index = None
    if all(hh.ndim == 0 for hh in h_all):
        shape = np.broadcast_shapes(target.shape, rho.shape, cp.shape, k.shape, lc.shape)
        index = _body_index((lc, rho, cp, k), shape)

    def body(hh: FloatArray) -> _Body:
        """The part's terms per row for coefficient ``hh``: per distinct part if numbered."""
        if index is None:
            return _body_terms(rho, cp, k, hh, Geometry(lc, (("sphere", 3.0 * lc),), "rows"))
        lc_b, rho_b, cp_b, k_b = index[1]
        geometry = Geometry(lc_b, (("sphere", 3.0 * lc_b),), "rows")
        return _body_terms(rho_b, cp_b, k_b, hh, geometry).take(index[0], fourier=False)

    reach = _reach(target)
    runs = []
    for hh in h_all:
        b = body(hh)
        centre, surface, _ = _times(target, log_target, b, fourier=False, reach=reach)
        runs.append((centre, surface, b.lumped, b.biot))
    def full(x: ArrayLike, run: int = 1) -> NDArray:
        """``x`` at the shape of the run's result (rows by coefficient), as its own array."""
        return np.broadcast_to(x, np.broadcast(runs[run][0], runs[run][3]).shape).copy()

    shape = np.broadcast(runs[1][0], runs[1][3]).shape
    method = full(np.where(runs[1][2], "lumped", "one-term"))
    proxy_b = np.broadcast_to(proxy, shape)
    never = np.isinf(runs[1][0])
    # the note has few variants: pick them by code instead of joining strings per row
    basis = ("V/A as given",
             "geometry unknown: assumed a solid cube with edge = nominal size (V/A = size/6)")
    lag = ("", "; one-term series, core lags the surface: centre time given")
    extra = ("", "; gauge and room differ by more than the band: never inside")
    table = np.array([b + "; time range from h low–high" + lg + ex
                      for b in basis for lg in lag for ex in extra], dtype=object)
    code = proxy_b.astype(np.int8) * 4 + np.broadcast_to(~runs[1][2], shape).astype(np.int8) * 2 \
        + np.broadcast_to(never, shape).astype(np.int8)
    return RowSoak(
        fast_s=full(runs[0][0], 0),
        nominal_s=full(runs[1][0]),
        slow_s=full(runs[2][0], 2),
        surface_nominal_s=full(runs[1][1]),
        method=method,
        note=np.asarray(table[code]),
    )


# --------------------------------------------------------------------------- data-table model
@dataclass(frozen=True)
class RestingCondition:
    """How a part rests: convective/contact coefficient range, W/(m²·K), without radiation."""

    id: str
    name: str
    h_low: float
    h_nominal: float
    h_high: float
    source: str


@dataclass(frozen=True)
class SurfaceFinish:
    """A surface finish and its emissivity range (dimensionless)."""

    id: str
    name: str
    eps_low: float
    eps_nominal: float
    eps_high: float
    source: str


def parse_heat_transfer(
    table: dict[str, object], origin: str = "heat_transfer.toml"
) -> tuple[dict[str, RestingCondition], dict[str, SurfaceFinish]]:
    """Validate an already-parsed heat-transfer table (see qc/data/heat_transfer.toml).

    Raises :class:`qc.errors.DataFileError` naming the entry and field at fault.
    """
    if table.get("format_version") != 1:
        raise DataFileError(
            f"{origin}: expected format_version = 1, got {table.get('format_version')!r}"
        )

    def section(key: str, cls: type, names: tuple[str, str, str]) -> dict:
        out = {}
        raw = table.get(key)
        if not isinstance(raw, dict) or not raw:
            raise DataFileError(f"{origin}: expected a [{key}.<name>] section, found none")
        for ident, entry in raw.items():
            where = f"{origin} › [{key}.{ident}]"
            if not isinstance(entry, dict):
                raise DataFileError(f"{where}: expected a table of fields")
            for field in ("name", "source"):
                if not isinstance(entry.get(field), str) or not entry[field].strip():
                    raise DataFileError(f"{where}: '{field}' must be non-empty text")
            values = []
            for field in names:
                v = entry.get(field)
                if isinstance(v, bool) or not isinstance(v, int | float) or not v > 0:
                    raise DataFileError(f"{where}: '{field}' must be a positive number, got {v!r}")
                values.append(float(v))
            if not values[0] <= values[1] <= values[2]:
                raise DataFileError(f"{where}: expected {names[0]} ≤ {names[1]} ≤ {names[2]}")
            out[ident] = cls(ident, entry["name"], *values, entry["source"])
        return out

    resting = section("resting", RestingCondition, ("h_low", "h_nominal", "h_high"))
    surfaces = section("surface", SurfaceFinish, ("eps_low", "eps_nominal", "eps_high"))
    for s in surfaces.values():
        if s.eps_high > 1:
            raise DataFileError(f"{origin} › [surface.{s.id}]: emissivity cannot exceed 1")
    return resting, surfaces
