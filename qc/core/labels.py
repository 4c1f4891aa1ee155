"""Plain-language source labels of budget entries ("5 repeated readings", "resolution 0.01 mm").

Built for one measurement at a time, for display and budget sheets; not on the bulk path.
"""

from __future__ import annotations

import math

from qc.core.distributions import (
    DISTRIBUTION_NAMES,
    NORMAL,
    divisor,
)
from qc.core.model import MeasurementArrays

__all__ = ["distribution_name", "source_label"]


def distribution_name(code: int) -> str:
    """The name of a distribution code ("normal", "rectangular", …)."""
    return DISTRIBUTION_NAMES[code]


def _g(x: float) -> str:
    return f"{x:.4g}"


def _spread(u: float, dist: int, unit: str) -> str:
    """'±a unit, rectangular' for bounded laws, 'u = … unit, normal' for the normal law."""
    if dist == NORMAL:
        return f"u = {_g(u)} {unit}, normal"
    a = u * float(divisor(dist))
    return f"±{_g(a)} {unit}, {DISTRIBUTION_NAMES[dist]}"


def _cte(alpha: float, u: float, dist: int, what: str) -> str:
    a = u * float(divisor(dist)) if dist != NORMAL else u
    if alpha and math.isfinite(alpha):
        rel = 100.0 * a / abs(alpha)
        sign = "±" if dist != NORMAL else "u = "
        return f"CTE of the {what} {sign}{rel:.3g} % ({DISTRIBUTION_NAMES[dist]})"
    return f"CTE of the {what}: {_spread(u, dist, '1/K')}"


def source_label(m: MeasurementArrays, i: int, quantity: str, column: int) -> str:
    """Where the uncertainty of ``quantity`` (matrix ``column``) of measurement ``i`` comes from."""
    nr = 4 + len(m.extras)
    if column == 0:
        s, n, nu = float(m.repeat_s[i]), int(m.repeat_n[i]), float(m.repeat_nu[i])
        if s == 0:
            return "no repeated readings: repeatability not evaluated separately"
        if math.isnan(nu):
            return f"{n} repeated readings, s = {_g(s)} mm"
        if n == 1:
            return f"prior standard deviation s = {_g(s)} mm (ν = {_g(nu)}), single reading"
        return f"mean of {n} readings, prior standard deviation s = {_g(s)} mm (ν = {_g(nu)})"
    if column == 1:
        return f"resolution {_g(float(m.resolution[i]))} mm"
    if column == 2:
        if not math.isnan(float(m.cert_U[i])):
            return (
                f"calibration certificate U = {_g(float(m.cert_U[i]))} mm, "
                f"k = {_g(float(m.cert_k[i]))}"
            )
        a, kk = float(m.mpe_a[i]), float(m.mpe_k[i])
        total = a + abs(float(m.reading[i])) / kk
        form = "" if math.isinf(kk) else f" (A + L/K, A = {_g(a)} mm, K = {_g(kk)})"
        return f"instrument MPE ±{_g(total)} mm, rectangular{form}"
    if column == 3:
        return (
            f"setting master certificate U = {_g(float(m.master_U[i]))} mm, "
            f"k = {_g(float(m.master_k[i]))}"
        )
    if column < nr:
        e = m.extras[column - 4]
        return e.source or f"{e.name}: {_spread(float(e.u[i]), e.distribution, 'mm')}"
    t = column - nr
    shared = bool(m.shared_room[i])
    if t == 0:
        what = "room thermometer" if shared else "part thermometer"
        return f"{what} {_spread(float(m.u_t_part[i]), int(m.dist_t_part[i]), '°C')}"
    if t == 1:
        what = "room temperature variation" if shared else "part temperature gradient allowance"
        return f"{what} {_spread(float(m.u_grad_part[i]), int(m.dist_grad_part[i]), '°C')}"
    if t == 2:
        return f"gauge thermometer {_spread(float(m.u_t_gauge[i]), int(m.dist_t_gauge[i]), '°C')}"
    if t == 3:
        sp = _spread(float(m.u_grad_gauge[i]), int(m.dist_grad_gauge[i]), "°C")
        return f"gauge temperature gradient allowance {sp}"
    if t == 4:
        return _cte(float(m.alpha_part[i]), float(m.u_alpha_part[i]),
                    int(m.dist_alpha_part[i]), "part material")
    if t == 5:
        return _cte(float(m.alpha_gauge[i]), float(m.u_alpha_gauge[i]),
                    int(m.dist_alpha_gauge[i]), "gauge scale or master")
    if t == 6:
        sp = _spread(float(m.u_dtheta[i]), int(m.dist_dtheta[i]), "°C")
        return f"part and gauge in one room, temperature difference {sp}"
    if t == 7:
        u = float(m.u_dalpha[i])
        if math.isnan(u):
            return "CTE difference part–gauge, from the two CTE uncertainties"
        return f"CTE difference part–gauge {_spread(u, int(m.dist_dalpha[i]), '1/K')}"
    return "second-order term of a product of two inputs (GUM 5.1.2, note)"
