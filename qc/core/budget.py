"""GUM uncertainty budget of a whole batch: one call, arrays in, arrays out, no per-row loop.

Reference: JCGM 100:2008 (GUM) 5.1.2 (law of propagation, second-order note), 5.1.3
(sensitivity coefficients), G.4.1 (Welch–Satterthwaite ν_eff), G.3/G.4 and Table G.2
(coverage factor from the t-distribution), 6.2 (U = k·u_c), Annex H.1 (shared room).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from numpy.typing import NDArray

from qc.core import labels
from qc.core.distributions import NORMAL, PRODUCT, RECTANGULAR, coverage_factor
from qc.core.model import MeasurementArrays
from qc.core.sensitivity import sensitivities

__all__ = [
    "UNSCALED_NOTE",
    "BatchBudget",
    "BudgetEntry",
    "LongBudget",
    "RowBudget",
    "evaluate",
]

F64 = NDArray[np.float64]

UNSCALED_NOTE = (
    "angle or form/orientation/run-out characteristic: not scaled to the reference "
    "temperature, thermal terms are zero"
)

# Column layout of the contribution matrix; extras sit between the R group and the thermal group.
_R_NAMES = ("repeatability", "resolution", "instrument error", "setting master")
_T_NAMES = (
    "part temperature: thermometer",
    "part temperature: gradient",
    "gauge temperature: thermometer",
    "gauge temperature: gradient",
    "CTE of part",
    "CTE of gauge",
    "part–gauge temperature difference",
    "part–gauge CTE difference",
    "second order: part CTE × temperature",
    "second order: gauge CTE × temperature",
)
# Names in the shared-room parametrisation (GUM H.1), same columns.
_T_NAMES_SHARED = (
    "room temperature θ: thermometer",
    "room temperature θ: variation",
    "gauge temperature: thermometer",
    "gauge temperature: gradient",
    "CTE of part",
    "CTE of gauge",
    "part–gauge temperature difference δθ",
    "part–gauge CTE difference δα",
    "second order: δα × θ",
    "second order: α_g × δθ",
)
_T_UNITS = ("°C", "°C", "°C", "°C", "1/K", "1/K", "°C", "1/K", "(1/K)·°C", "(1/K)·°C")
# Which thermal columns apply: [independent, shared]
_T_INDEP = np.array([1, 1, 1, 1, 1, 1, 0, 0, 1, 1], dtype=bool)
_T_SHARED = np.array([1, 1, 0, 0, 0, 1, 1, 1, 1, 1], dtype=bool)


@dataclass(frozen=True)
class BudgetEntry:
    """One line of a measurement's budget (units: ``unit`` for estimate and u, mm for u_i(y))."""

    quantity: str
    estimate: float
    unit: str
    u: float
    distribution: str
    dof: float
    sensitivity: float
    contribution: float
    share: float
    source: str


@dataclass(frozen=True)
class RowBudget:
    """The budget of one measurement, ready for display or a budget sheet."""

    index: int
    entries: list[BudgetEntry]
    size_at_20: float
    uncorrected: float
    u_c: float
    u_c_first_order: float
    nu_eff: float
    k: float
    U: float
    t_ref: float
    note: str | None
    reference_warning: str | None


@dataclass(frozen=True)
class LongBudget:
    """One row per contribution per measurement, as plain arrays (row-major by measurement)."""

    measurement: NDArray[np.int64]
    quantity: NDArray[np.int64]
    quantity_names: tuple[str, ...]
    estimate: F64
    u: F64
    distribution: NDArray[np.int8]
    dof: F64
    sensitivity: F64
    contribution: F64
    share: F64


@dataclass(frozen=True)
class BatchBudget:
    """Results and the n × m contribution matrix of a batch (mm unless stated).

    ``contributions`` = |c_i|·u(x_i); their squares sum to u_c² per row (second-order columns
    included when they were requested). ``nu_eff`` is truncated down (GUM G.4.1).
    """

    size_at_20: F64
    thermal_correction: F64
    uncorrected: F64
    u_c: F64
    u_c_first_order: F64
    nu_eff: F64
    k: F64
    U: F64
    valid: NDArray[np.bool_]
    scaled: NDArray[np.bool_]
    shared_room: NDArray[np.bool_]
    t_ref: float
    coverage: float | None
    quantity_names: tuple[str, ...]
    quantity_names_shared: tuple[str, ...]
    units: tuple[str, ...]
    std_uncertainties: F64
    sensitivities: F64
    applicable: NDArray[np.bool_]
    inputs: MeasurementArrays

    @property
    def estimates(self) -> F64:
        """Estimates x_i of the quantities, shape (n, m), in ``units`` (NaN for product terms).

        Built on request from the inputs (not needed for the bulk results).
        """
        return _estimates(self.inputs, self.t_ref).T

    @property
    def dof(self) -> F64:
        """Degrees of freedom ν_i, shape (n, m) (∞ for Type B and for product terms)."""
        n = self.inputs.n
        return np.stack([np.broadcast_to(c, n) for c in _dof_columns(self.inputs)], axis=1)

    @property
    def distributions(self) -> NDArray[np.int8]:
        """Distribution codes (qc.core.distributions), shape (n, m)."""
        n = self.inputs.n
        cols = [np.broadcast_to(np.asarray(c, np.int8), n) for c in _dist_columns(self.inputs)]
        return np.stack(cols, axis=1)

    @property
    def contributions(self) -> F64:
        """|c_i|·u(x_i) in mm, shape (n, m)."""
        return np.abs(self.sensitivities) * self.std_uncertainties

    @property
    def nonstandard_reference(self) -> bool:
        """True when the reference temperature is not the ISO 1 standard 20 °C."""
        return self.t_ref != 20.0

    @property
    def reference_warning(self) -> str | None:
        """Warning every output should carry when t_ref is not 20 °C, else None."""
        if not self.nonstandard_reference:
            return None
        return (
            f"sizes are referred to {self.t_ref:g} °C, not to the standard reference "
            "temperature of 20 °C (ISO 1)"
        )

    def long_form(self) -> LongBudget:
        """The budget as one row per applicable contribution per measurement (no pandas)."""
        rows, cols = np.nonzero(self.applicable & self.valid[:, None])
        contrib = self.contributions[rows, cols]
        uc2 = self.u_c[rows] ** 2
        with np.errstate(divide="ignore", invalid="ignore"):
            share = np.where(uc2 > 0, contrib**2 / uc2, 0.0)
        return LongBudget(
            measurement=rows.astype(np.int64),
            quantity=cols.astype(np.int64),
            quantity_names=self.quantity_names,
            estimate=self.estimates[rows, cols],
            u=self.std_uncertainties[rows, cols],
            distribution=self.distributions[rows, cols],
            dof=self.dof[rows, cols],
            sensitivity=self.sensitivities[rows, cols],
            contribution=contrib,
            share=share,
        )

    def row(self, i: int) -> RowBudget:
        """The budget of measurement ``i`` with names, units and plain-language sources."""
        shared = bool(self.shared_room[i])
        names = self.quantity_names_shared if shared else self.quantity_names
        uc2 = float(self.u_c[i]) ** 2
        entries = []
        for j in np.nonzero(self.applicable[i])[0]:
            c = float(self.sensitivities[i, j])
            u = float(self.std_uncertainties[i, j])
            ui = abs(c) * u
            entries.append(
                BudgetEntry(
                    quantity=names[j],
                    estimate=float(self.estimates[i, j]),
                    unit=self.units[j],
                    u=u,
                    distribution=labels.distribution_name(int(self.distributions[i, j])),
                    dof=float(self.dof[i, j]),
                    sensitivity=c,
                    contribution=ui,
                    share=ui * ui / uc2 if uc2 > 0 else 0.0,
                    source=labels.source_label(self.inputs, i, names[j], int(j)),
                )
            )
        return RowBudget(
            index=i,
            entries=entries,
            size_at_20=float(self.size_at_20[i]),
            uncorrected=float(self.uncorrected[i]),
            u_c=float(self.u_c[i]),
            u_c_first_order=float(self.u_c_first_order[i]),
            nu_eff=float(self.nu_eff[i]),
            k=float(self.k[i]),
            U=float(self.U[i]),
            t_ref=self.t_ref,
            note=None if self.scaled[i] else UNSCALED_NOTE,
            reference_warning=self.reference_warning,
        )


def _dof_columns(m: MeasurementArrays) -> list[F64 | float]:
    """ν_i of each quantity column: an array per row, or a scalar when constant."""
    repeat_n = np.maximum(m.repeat_n, 1.0)
    nu_rep = np.where(np.isnan(m.repeat_nu), repeat_n - 1.0, m.repeat_nu)
    return [
        np.where(m.repeat_s > 0, nu_rep, np.inf),  # GUM G.3.3 (n − 1) or the prior's ν
        np.inf,  # resolution
        m.instrument_nu,
        m.master_nu,
        *(e.nu for e in m.extras),
        m.nu_t_part,
        m.nu_grad_part,
        m.nu_t_gauge,
        m.nu_grad_gauge,
        m.nu_alpha_part,
        m.nu_alpha_gauge,
        m.nu_dtheta,
        m.nu_dalpha,
        np.inf,
        np.inf,
    ]


def _dist_columns(m: MeasurementArrays) -> list[NDArray[np.int8] | int]:
    """Distribution code of each quantity column."""
    instrument = np.where(np.isnan(m.cert_U), RECTANGULAR, NORMAL).astype(np.int8)
    return [
        NORMAL,
        RECTANGULAR,
        instrument,
        NORMAL,
        *(e.distribution for e in m.extras),
        m.dist_t_part,
        m.dist_grad_part,
        m.dist_t_gauge,
        m.dist_grad_gauge,
        m.dist_alpha_part,
        m.dist_alpha_gauge,
        m.dist_dtheta,
        m.dist_dalpha,
        PRODUCT,
        PRODUCT,
    ]


def _estimates(m: MeasurementArrays, t_ref: float) -> F64:
    """Quantity-major (m, n) estimates: reading, master size, temperatures, CTEs, δθ, δα."""
    nr = len(_R_NAMES) + len(m.extras)
    X = np.zeros((nr + len(_T_NAMES), m.n))
    X[0] = m.reading
    X[3] = np.where(m.comparison, m.master_size, np.nan)
    t = nr
    X[t + 0] = np.where(m.shared_room, m.t_part - t_ref, m.t_part)
    X[t + 2] = m.t_gauge
    X[t + 4] = m.alpha_part
    X[t + 5] = m.alpha_gauge
    X[t + 6] = m.dtheta
    X[t + 7] = m.alpha_part - m.alpha_gauge
    X[t + 8 :] = np.nan
    return X


def _bad(*arrays: F64) -> NDArray[np.bool_]:
    """True where any array is NaN or negative (an uncertainty or count that cannot be used)."""
    out = np.zeros(arrays[0].shape, dtype=bool)
    for a in arrays:
        out |= ~(a >= 0)
    return out


def _validity(m: MeasurementArrays) -> NDArray[np.bool_]:
    """Rows whose required inputs are all usable; the others are 'not evaluated'."""
    bad = np.isnan(m.reading)
    bad |= _bad(m.repeat_s, m.resolution, m.mpe_a, m.instrument_nu)
    bad |= ~(m.repeat_n >= 1) | ~(m.mpe_k > 0)
    # A prior standard deviation of single readings needs its degrees of freedom.
    bad |= (m.repeat_s > 0) & (m.repeat_n < 2) & np.isnan(m.repeat_nu)
    cert = ~np.isnan(m.cert_U)
    bad |= cert & (_bad(m.cert_U) | ~(m.cert_k > 0))
    cmp_bad = np.isnan(m.master_size) | _bad(m.master_U, m.master_nu) | ~(m.master_k > 0)
    bad |= m.comparison & cmp_bad
    th = np.isnan(m.t_part) | np.isnan(m.alpha_part) | np.isnan(m.alpha_gauge)
    th |= _bad(m.u_t_part, m.u_grad_part, m.u_alpha_gauge, m.nu_t_part, m.nu_grad_part)
    indep = np.isnan(m.t_gauge) | _bad(m.u_t_gauge, m.u_grad_gauge, m.u_alpha_part)
    udalpha_bad = ~np.isnan(m.u_dalpha) & ~(m.u_dalpha >= 0)
    shared = np.isnan(m.dtheta) | _bad(m.u_dtheta) | udalpha_bad
    shared |= np.isnan(m.u_dalpha) & _bad(m.u_alpha_part)
    th |= np.where(m.shared_room, shared, indep)
    bad |= m.scaled & th
    for e in m.extras:
        bad |= _bad(e.u)
    return ~bad


def evaluate(
    m: MeasurementArrays,
    *,
    coverage: float = 0.9545,
    k: float | None = None,
    t_ref: float = 20.0,
    second_order: bool = True,
) -> BatchBudget:
    """Correct every reading to ``t_ref`` and attach its GUM budget, for the whole batch.

    ``coverage`` chooses k = t_p(ν_eff) (GUM G.4.1, Table G.2) unless a fixed ``k`` is given.
    ``second_order`` adds the bilinear second-order terms of GUM 5.1.2 (note) for the products
    α·Δt, whose first-order coefficients vanish at 20 °C or in the shared-room case (H.1.7);
    ν_eff always comes from the first-order budget. Units: mm, °C, 1/K.
    """
    n = m.n
    nx = len(m.extras)
    nr = len(_R_NAMES) + nx
    ncol = nr + len(_T_NAMES)
    valid = _validity(m)
    scaled = m.scaled
    shared = m.shared_room & scaled
    indep = ~m.shared_room & scaled

    R = np.where(m.comparison, m.master_size + m.reading, m.reading)
    theta = m.t_part - t_ref
    d_g = np.where(m.shared_room, theta - m.dtheta, m.t_gauge - t_ref)
    sv = sensitivities(R, m.alpha_part, theta, m.alpha_gauge, d_g)

    def pick(a: F64, b: F64) -> F64:
        """Coefficient a (independent temperatures) or b (shared room); 0 when unscaled."""
        return np.where(scaled, np.where(m.shared_room, b, a), 0.0)

    c_R = np.where(scaled, sv.c_R, 1.0)
    L = np.where(scaled, sv.value, R)

    # Quantity-major (m, n) storage: filling one quantity for all rows is a contiguous write.
    # The (n, m) matrices handed out are transposed views of these.
    U_ = np.zeros((ncol, n))
    C = np.zeros((ncol, n))

    # --- R group ----------------------------------------------------------------------------
    repeat_n = np.maximum(m.repeat_n, 1.0)
    U_[0] = m.repeat_s / np.sqrt(repeat_n)
    U_[1] = m.resolution * (1.0 / (2.0 * np.sqrt(3.0)))  # GUM F.2.2.1
    cert = ~np.isnan(m.cert_U)
    mpe = m.mpe_a + np.abs(m.reading) / m.mpe_k  # MPE = A + L/K
    U_[2] = np.where(cert, m.cert_U / m.cert_k, mpe * (1.0 / np.sqrt(3.0)))
    U_[3] = np.where(m.comparison, m.master_U / m.master_k, 0.0)
    for j, e in enumerate(m.extras, start=len(_R_NAMES)):
        U_[j] = e.u
    C[:nr] = c_R

    # --- thermal group ----------------------------------------------------------------------
    t = nr
    u_tp2 = m.u_t_part**2 + m.u_grad_part**2
    u_tg2 = m.u_t_gauge**2 + m.u_grad_gauge**2
    u_dalpha = np.where(
        np.isnan(m.u_dalpha), np.sqrt(m.u_alpha_part**2 + m.u_alpha_gauge**2), m.u_dalpha
    )
    U_[t + 0] = m.u_t_part
    U_[t + 1] = m.u_grad_part
    U_[t + 2] = m.u_t_gauge
    U_[t + 3] = m.u_grad_gauge
    U_[t + 4] = m.u_alpha_part
    U_[t + 5] = m.u_alpha_gauge
    U_[t + 6] = m.u_dtheta
    U_[t + 7] = u_dalpha
    # second-order "inputs" are the products u(x_i)·u(x_j); their coefficient ∂²f/∂x_i∂x_j
    U_[t + 8] = np.where(m.shared_room, u_dalpha, m.u_alpha_part) * np.sqrt(u_tp2)
    U_[t + 9] = m.u_alpha_gauge * np.sqrt(np.where(m.shared_room, m.u_dtheta**2, u_tg2))

    C[t + 0] = C[t + 1] = pick(sv.c_tp, sv.c_theta)
    C[t + 2] = C[t + 3] = np.where(indep, sv.c_tg, 0.0)
    C[t + 4] = np.where(indep, sv.c_ap, 0.0)
    C[t + 5] = pick(sv.c_ag, sv.c_ag_shared)
    C[t + 6] = np.where(shared, sv.c_dtheta, 0.0)
    C[t + 7] = np.where(shared, sv.c_dalpha, 0.0)
    if second_order:
        C[t + 8] = pick(sv.h_p, sv.h_dalpha_theta)
        C[t + 9] = pick(sv.h_g, sv.h_ag_dtheta)

    applicable = np.ones((ncol, n), dtype=bool)
    applicable[3] = m.comparison
    for j in range(len(_T_NAMES)):
        if _T_INDEP[j] and _T_SHARED[j]:
            applicable[t + j] = second_order or j < 8
        elif _T_INDEP[j]:
            applicable[t + j] = ~m.shared_room
        else:
            applicable[t + j] = m.shared_room
    for j in (3, t + 2, t + 3, t + 4, t + 6, t + 7, t + 8, t + 9):
        U_[j] *= applicable[j]

    # Sums over quantities one column at a time: no (m, n) temporaries on the bulk path.
    f = t + 8  # first-order columns; the last two are second-order terms
    var1 = np.zeros(n)
    denom = np.zeros(n)
    for j, nu_j in enumerate(_dof_columns(m)[:f]):
        w2 = C[j] * U_[j]
        w2 *= w2  # u_i²(y)
        var1 += w2
        if not (np.ndim(nu_j) == 0 and np.isinf(nu_j)):
            with np.errstate(divide="ignore", invalid="ignore"):
                denom += np.where(np.isinf(nu_j), 0.0, w2 * w2 / nu_j)  # u_i⁴/ν_i
    var = var1.copy()
    for j in range(f, ncol):
        w2 = C[j] * U_[j]
        var += w2 * w2
    u_c1 = np.sqrt(var1)
    u_c = np.sqrt(var)
    with np.errstate(divide="ignore", invalid="ignore"):
        nu_eff = np.floor(np.where(denom > 0, var1 * var1 / denom, np.inf))
    kk = np.full(n, float(k)) if k is not None else coverage_factor(nu_eff, coverage)

    nan = np.nan
    L = np.where(valid, L, nan)
    u_c = np.where(valid, u_c, nan)
    u_c1 = np.where(valid, u_c1, nan)
    nu_eff = np.where(valid, nu_eff, nan)
    kk = np.where(valid, kk, nan)
    Rv = np.where(valid, R, nan)
    names = _R_NAMES + tuple(e.name for e in m.extras)
    return BatchBudget(
        size_at_20=L,
        thermal_correction=L - Rv,
        uncorrected=Rv,
        u_c=u_c,
        u_c_first_order=u_c1,
        nu_eff=nu_eff,
        k=kk,
        U=kk * u_c,
        valid=valid,
        scaled=scaled.copy(),
        shared_room=m.shared_room.copy(),
        t_ref=float(t_ref),
        coverage=None if k is not None else float(coverage),
        quantity_names=names + _T_NAMES,
        quantity_names_shared=names + _T_NAMES_SHARED,
        units=("mm",) * nr + _T_UNITS,
        std_uncertainties=U_.T,
        sensitivities=C.T,
        applicable=applicable.T,
        inputs=m,
    )
