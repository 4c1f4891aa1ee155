"""The inputs of a batch of measurements, one array per quantity, and the measurement model.

Model (thermal correction to the reference temperature, ISO 1:2016 clause 3, t_ref = 20 °C)::

    L = R · (1 + α_g·(t_g − t_ref)) / (1 + α_p·(t_p − t_ref))

R is the indicated value after known instrument corrections: the reading itself (direct mode)
or the setting master's calibrated size plus the indicated difference (comparison mode).
With ``shared_room`` the temperatures are parametrised as in JCGM 100:2008 Annex H.1:
θ = t_p − t_ref, δθ = t_p − t_g, δα = α_p − α_g. Units: mm, °C, 1/K.
"""

from __future__ import annotations

from dataclasses import dataclass, field, fields
from typing import Any

import numpy as np
from numpy.typing import ArrayLike, NDArray

from qc.core.distributions import NORMAL, RECTANGULAR
from qc.errors import InputError

__all__ = ["Extra", "MeasurementArrays", "model_value"]

F64 = NDArray[np.float64]


@dataclass(frozen=True)
class Extra:
    """A further named contribution on R (mm), e.g. a comparator's random or systematic effect."""

    name: str
    u: F64
    nu: F64
    distribution: int = NORMAL
    source: str = ""


# name -> (default, kind); kind "f" float64, "b" bool, "i" int8 distribution code.
# A default of None means the field is required.
_FIELDS: dict[str, tuple[Any, str]] = {
    "reading": (None, "f"),
    "comparison": (False, "b"),
    "master_size": (np.nan, "f"),
    "master_U": (0.0, "f"),
    "master_k": (2.0, "f"),
    "master_nu": (np.inf, "f"),
    "repeat_s": (0.0, "f"),
    "repeat_n": (1.0, "f"),
    "repeat_nu": (np.nan, "f"),
    "resolution": (0.0, "f"),
    "mpe_a": (0.0, "f"),
    "mpe_k": (np.inf, "f"),
    "cert_U": (np.nan, "f"),
    "cert_k": (2.0, "f"),
    "instrument_nu": (np.inf, "f"),
    "scaled": (True, "b"),
    "shared_room": (False, "b"),
    "t_part": (20.0, "f"),
    "t_gauge": (20.0, "f"),
    "u_t_part": (0.0, "f"),
    "dist_t_part": (RECTANGULAR, "i"),
    "nu_t_part": (np.inf, "f"),
    "u_grad_part": (0.0, "f"),
    "dist_grad_part": (RECTANGULAR, "i"),
    "nu_grad_part": (np.inf, "f"),
    "u_t_gauge": (0.0, "f"),
    "dist_t_gauge": (RECTANGULAR, "i"),
    "nu_t_gauge": (np.inf, "f"),
    "u_grad_gauge": (0.0, "f"),
    "dist_grad_gauge": (RECTANGULAR, "i"),
    "nu_grad_gauge": (np.inf, "f"),
    "alpha_part": (11.5e-6, "f"),
    "u_alpha_part": (0.0, "f"),
    "dist_alpha_part": (RECTANGULAR, "i"),
    "nu_alpha_part": (np.inf, "f"),
    "alpha_gauge": (11.5e-6, "f"),
    "u_alpha_gauge": (0.0, "f"),
    "dist_alpha_gauge": (RECTANGULAR, "i"),
    "nu_alpha_gauge": (np.inf, "f"),
    "dtheta": (0.0, "f"),
    "u_dtheta": (0.0, "f"),
    "dist_dtheta": (RECTANGULAR, "i"),
    "nu_dtheta": (np.inf, "f"),
    "u_dalpha": (np.nan, "f"),
    "dist_dalpha": (RECTANGULAR, "i"),
    "nu_dalpha": (np.inf, "f"),
}
_DTYPES = {"f": np.float64, "b": np.bool_, "i": np.int8}


@dataclass(frozen=True)
class MeasurementArrays:
    """Inputs of n measurements, each field an array of shape (n,). Units mm, °C, 1/K.

    Uncertainties (``u_*``, ``repeat_s``) are standard uncertainties; ``dist_*`` are codes of
    :mod:`qc.core.distributions`; ``nu_*`` degrees of freedom (∞ for Type B by default).

    - ``reading``: direct mode R; comparison mode the indicated difference d from the master.
    - ``comparison``, ``master_size``, ``master_U``/``master_k``/``master_nu``: setting master
      and its certificate (comparison mode only).
    - ``repeat_s`` standard deviation of single readings, ``repeat_n`` readings averaged,
      ``repeat_nu`` its degrees of freedom (NaN: n − 1; required when a prior s is used, n = 1).
    - ``resolution`` δ of the indication; ``mpe_a`` + L/``mpe_k`` the instrument's MPE (mm,
      rectangular; ``mpe_k`` dimensionless, ∞ for a constant MPE; L = |reading|), or
      ``cert_U``/``cert_k`` a calibration certificate instead (used when ``cert_U`` is given).
    - ``t_part``/``t_gauge`` temperatures; ``u_t_*`` thermometer, ``u_grad_*`` gradient
      allowance. With ``shared_room`` the part fields describe the common temperature θ + t_ref,
      ``dtheta``/``u_dtheta`` the part–gauge difference δθ, ``u_dalpha`` the CTE difference's
      uncertainty (NaN: √(u_αp² + u_αg²)); the gauge-temperature fields are not used.
    - ``scaled`` False for angles and form, orientation or run-out: no thermal correction.
    """

    reading: F64
    comparison: NDArray[np.bool_]
    master_size: F64
    master_U: F64
    master_k: F64
    master_nu: F64
    repeat_s: F64
    repeat_n: F64
    repeat_nu: F64
    resolution: F64
    mpe_a: F64
    mpe_k: F64
    cert_U: F64
    cert_k: F64
    instrument_nu: F64
    scaled: NDArray[np.bool_]
    shared_room: NDArray[np.bool_]
    t_part: F64
    t_gauge: F64
    u_t_part: F64
    dist_t_part: NDArray[np.int8]
    nu_t_part: F64
    u_grad_part: F64
    dist_grad_part: NDArray[np.int8]
    nu_grad_part: F64
    u_t_gauge: F64
    dist_t_gauge: NDArray[np.int8]
    nu_t_gauge: F64
    u_grad_gauge: F64
    dist_grad_gauge: NDArray[np.int8]
    nu_grad_gauge: F64
    alpha_part: F64
    u_alpha_part: F64
    dist_alpha_part: NDArray[np.int8]
    nu_alpha_part: F64
    alpha_gauge: F64
    u_alpha_gauge: F64
    dist_alpha_gauge: NDArray[np.int8]
    nu_alpha_gauge: F64
    dtheta: F64
    u_dtheta: F64
    dist_dtheta: NDArray[np.int8]
    nu_dtheta: F64
    u_dalpha: F64
    dist_dalpha: NDArray[np.int8]
    nu_dalpha: F64
    extras: tuple[Extra, ...] = field(default=())

    def __post_init__(self) -> None:
        n = self.reading.shape
        if self.reading.ndim != 1:
            raise InputError(f"reading must be one-dimensional, got shape {n}")
        for name, (_, kind) in _FIELDS.items():
            arr = getattr(self, name)
            if not isinstance(arr, np.ndarray) or arr.shape != n or arr.dtype != _DTYPES[kind]:
                raise InputError(
                    f"field {name!r} must be a {np.dtype(_DTYPES[kind])} array of shape {n}"
                )
        for e in self.extras:
            if e.u.shape != n or e.nu.shape != n:
                raise InputError(f"extra contribution {e.name!r} must have arrays of shape {n}")

    @property
    def n(self) -> int:
        """Number of measurements."""
        return int(self.reading.shape[0])

    @classmethod
    def from_columns(
        cls, *, extras: tuple[tuple[Any, ...] | Extra, ...] = (), **columns: ArrayLike
    ) -> MeasurementArrays:
        """Build from columns and scalars, broadcasting to a common length and filling defaults.

        ``extras`` items are :class:`Extra` or tuples ``(name, u, nu[, distribution[, source]])``.
        Only shapes are checked; values (NaN, negative) are judged by the budget.
        """
        unknown = set(columns) - set(_FIELDS)
        if unknown:
            raise InputError(f"unknown measurement field(s): {', '.join(sorted(unknown))}")
        if "reading" not in columns:
            raise InputError("the field 'reading' is required")
        raw = {k: np.asarray(v) for k, v in columns.items()}
        ex_raw = [e if isinstance(e, Extra) else Extra(*e) for e in extras]
        shapes = [a.shape for a in raw.values()]
        shapes += [np.shape(e.u) for e in ex_raw] + [np.shape(e.nu) for e in ex_raw]
        try:
            shape = np.broadcast_shapes(*shapes)
        except ValueError as exc:
            lengths = sorted({sh[0] for sh in shapes if len(sh) == 1})
            raise InputError(f"columns have different lengths: {lengths}") from exc
        if len(shape) == 0:
            shape = (1,)
        if len(shape) != 1:
            raise InputError(f"columns must be one-dimensional, got shape {shape}")
        out: dict[str, Any] = {}
        for name, (default, kind) in _FIELDS.items():
            value = raw.get(name, default)
            out[name] = np.ascontiguousarray(
                np.broadcast_to(np.asarray(value, dtype=_DTYPES[kind]), shape)
            )
        out["extras"] = tuple(
            Extra(
                str(e.name),
                np.ascontiguousarray(np.broadcast_to(np.asarray(e.u, np.float64), shape)),
                np.ascontiguousarray(np.broadcast_to(np.asarray(e.nu, np.float64), shape)),
                int(e.distribution),
                str(e.source),
            )
            for e in ex_raw
        )
        return cls(**out)

    def take(self, index: ArrayLike) -> MeasurementArrays:
        """The measurements at ``index`` (an integer array or slice), as a new batch."""
        idx = np.atleast_1d(np.arange(self.n)[index])
        kw: dict[str, Any] = {f.name: getattr(self, f.name)[idx] for f in fields(self)
                              if f.name != "extras"}
        kw["extras"] = tuple(
            Extra(e.name, e.u[idx], e.nu[idx], e.distribution, e.source) for e in self.extras
        )
        return MeasurementArrays(**kw)


def model_value(
    R: ArrayLike,
    alpha_gauge: ArrayLike,
    t_gauge: ArrayLike,
    alpha_part: ArrayLike,
    t_part: ArrayLike,
    t_ref: float = 20.0,
) -> F64:
    """L = R·(1 + α_g·(t_g − t_ref)) / (1 + α_p·(t_p − t_ref)) in mm (the measurement model)."""
    R = np.asarray(R, dtype=np.float64)
    g = 1.0 + np.asarray(alpha_gauge) * (np.asarray(t_gauge) - t_ref)
    p = 1.0 + np.asarray(alpha_part) * (np.asarray(t_part) - t_ref)
    return R * g / p
