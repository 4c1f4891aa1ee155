"""Conformance decisions under a named decision rule, for whole batches.

Verdict codes (a public interface, with :data:`VERDICT_NAMES`): 0 conforms, 1 nonconforming,
2 borderline, 3 not evaluated. Every rule defines an acceptance interval [A_L, A_U] and a
rejection boundary [R_L, R_U] (mm); for a measured value y::

    A_L ≤ y ≤ A_U            → 0 conforms
    y < R_L or y > R_U       → 1 nonconforming
    otherwise                → 2 borderline   (only where R lies outside A: ISO 14253-1)
    y, U or u NaN, no limit  → 3 not evaluated

A missing limit (NaN) makes the rule one-sided. References: ISO 14253-1:2017 (zones reduced
and enlarged by U); ILAC-G8:09/2019 (simple acceptance, guard band w); JCGM 106:2012
(conformance probability, capability index, specific risk of false acceptance).
"""

from __future__ import annotations

from abc import ABC, abstractmethod
from dataclasses import dataclass
from typing import ClassVar

import numpy as np
from numpy.typing import ArrayLike, NDArray
from scipy.special import ndtr, ndtri

from qc.errors import ConfigError, UnknownNameError

__all__ = [
    "BORDERLINE",
    "CONFORMS",
    "ISO14253",
    "NONCONFORMING",
    "NOT_EVALUATED",
    "RULE_NAMES",
    "SAFETY_NOTE",
    "VERDICT_NAMES",
    "Decision",
    "DecisionRule",
    "GuardBand",
    "RiskGuardBand",
    "SimpleAcceptance",
    "conformance_probability",
    "decide",
    "rule_from_name",
]

F64 = NDArray[np.float64]

CONFORMS, NONCONFORMING, BORDERLINE, NOT_EVALUATED = 0, 1, 2, 3
VERDICT_NAMES: tuple[str, ...] = ("conforms", "nonconforming", "borderline", "not evaluated")

#: Caution for any user-facing output carrying a verdict.
SAFETY_NOTE = (
    "These verdicts support, but do not replace, the customer's acceptance requirements, "
    "accredited procedures (ISO/IEC 17025) and qualified judgement; for safety-critical parts "
    "follow the agreed decision rule and sign-off."
)

Limits = tuple[F64, F64]


class DecisionRule(ABC):
    """A decision rule: acceptance and rejection limits from specification limits (mm)."""

    @property
    @abstractmethod
    def name(self) -> str:
        """The configuration name, accepted back by :func:`rule_from_name`."""

    @property
    @abstractmethod
    def description(self) -> str:
        """One line saying what the rule does, for reports."""

    @abstractmethod
    def acceptance(self, lsl: F64, usl: F64, U: F64, u: F64) -> Limits:
        """Acceptance limits (A_L, A_U); ±inf where a specification limit is absent."""

    def rejection(self, lsl: F64, usl: F64, U: F64, u: F64) -> Limits:
        """Rejection boundaries (R_L, R_U); binary rules reject everything not accepted."""
        return self.acceptance(lsl, usl, U, u)


def _open(lsl: F64, usl: F64) -> Limits:
    return np.where(np.isnan(lsl), -np.inf, lsl), np.where(np.isnan(usl), np.inf, usl)


@dataclass(frozen=True)
class ISO14253(DecisionRule):
    """ISO 14253-1:2017: conformance zone = specification zone reduced by U at each limit,
    nonconformance zone = outside the specification zone enlarged by U, borderline between."""

    name: ClassVar[str] = "iso14253"  # type: ignore[misc]
    description: ClassVar[str] = (  # type: ignore[misc]
        "ISO 14253-1: conforms inside the tolerance reduced by U, nonconforming outside the "
        "tolerance enlarged by U, borderline in between"
    )

    def acceptance(self, lsl: F64, usl: F64, U: F64, u: F64) -> Limits:
        lo, hi = _open(lsl, usl)
        return lo + U, hi - U

    def rejection(self, lsl: F64, usl: F64, U: F64, u: F64) -> Limits:
        lo, hi = _open(lsl, usl)
        return lo - U, hi + U


@dataclass(frozen=True)
class SimpleAcceptance(DecisionRule):
    """Simple acceptance, ILAC-G8:09/2019 (pp. 8–10): guard band w = 0, binary."""

    name: ClassVar[str] = "simple"  # type: ignore[misc]
    description: ClassVar[str] = (  # type: ignore[misc]
        "simple acceptance (ILAC-G8): conforms inside the tolerance, binary"
    )

    def acceptance(self, lsl: F64, usl: F64, U: F64, u: F64) -> Limits:
        return _open(lsl, usl)


@dataclass(frozen=True)
class GuardBand(DecisionRule):
    """Binary guard band w = r·U inside each limit (ILAC-G8:09/2019 (pp. 8–10))."""

    r: float = 1.0

    @property
    def name(self) -> str:
        return f"guard:{self.r:g}"

    @property
    def description(self) -> str:
        return f"guard band w = {self.r:g}·U inside each limit (ILAC-G8), binary"

    def acceptance(self, lsl: F64, usl: F64, U: F64, u: F64) -> Limits:
        lo, hi = _open(lsl, usl)
        return lo + self.r * U, hi - self.r * U


@dataclass(frozen=True)
class RiskGuardBand(DecisionRule):
    """Guard band keeping the specific risk of false acceptance ≤ ``risk`` (JCGM 106:2012).

    Normal model: at a single limit w = z·u with z = Φ⁻¹(1 − risk). With two limits the
    acceptance limits are refined (Newton steps) so that p_c = 1 − risk exactly at them,
    counting both tails; when even the mid-tolerance p_c is below 1 − risk nothing conforms.
    """

    risk: float = 0.025

    @property
    def name(self) -> str:
        return f"risk:{self.risk:g}"

    @property
    def description(self) -> str:
        return (
            f"guard band keeping the specific risk of false acceptance at most "
            f"{100 * self.risk:g} % (JCGM 106, normal model), binary"
        )

    def acceptance(self, lsl: F64, usl: F64, U: F64, u: F64) -> Limits:
        lo, hi = _open(lsl, usl)
        target = 1.0 - self.risk
        w = float(ndtri(target)) * u
        a_lo, a_hi = lo + w, hi - w
        two = np.isfinite(lo) & np.isfinite(hi) & (u > 0)
        if np.any(two):
            with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
                mid = 0.5 * (lo + hi)
                feasible = conformance_probability(mid, u, lo, hi) >= target
                for _ in range(6):
                    a_hi = a_hi - _newton(a_hi, u, lo, hi, target)
                    a_lo = a_lo - _newton(a_lo, u, lo, hi, target)
            a_lo = np.where(two & ~feasible, np.inf, np.where(two, a_lo, lo + w))
            a_hi = np.where(two & ~feasible, -np.inf, np.where(two, a_hi, hi - w))
        return a_lo, a_hi


def _newton(y: F64, u: F64, lo: F64, hi: F64, target: float) -> F64:
    """Newton step for p_c(y) = target; zero where the slope vanishes."""
    f = conformance_probability(y, u, lo, hi) - target
    phi = np.exp(-0.5 * ((hi - y) / u) ** 2) - np.exp(-0.5 * ((lo - y) / u) ** 2)
    slope = -phi / (u * np.sqrt(2.0 * np.pi))
    step = np.where(slope != 0, f / slope, 0.0)
    return np.where(np.isfinite(step), step, 0.0)


RULE_NAMES: tuple[str, ...] = ("iso14253", "simple", "guard:<r>", "risk:<probability>")
_ALIASES = {
    "iso14253": ISO14253,
    "iso14253-1": ISO14253,
    "iso 14253-1": ISO14253,
    "default": ISO14253,
    "simple": SimpleAcceptance,
    "simple acceptance": SimpleAcceptance,
}


def rule_from_name(text: str) -> DecisionRule:
    """A rule from its configuration name: "iso14253", "simple", "guard:0.5", "risk:0.025"."""
    t = str(text).strip().lower()
    if t in _ALIASES:
        return _ALIASES[t]()
    head, sep, arg = t.partition(":")
    head = head.strip()
    if head in ("guard", "risk"):
        example = "guard:0.5" if head == "guard" else "risk:0.025"
        try:
            value = float(arg)
        except ValueError:
            value = float("nan")
        if head == "guard" and sep and value >= 0:
            return GuardBand(value)
        if head == "risk" and sep and 0 < value < 0.5:
            return RiskGuardBand(value)
        what = "a number of at least 0" if head == "guard" else "a probability between 0 and 0.5"
        raise ConfigError(
            f"decision rule {text!r}: expected {what} after '{head}:', for example {example!r}"
        )
    raise UnknownNameError("decision rule", str(text), ["iso14253", "simple", "guard", "risk"])


def conformance_probability(y: ArrayLike, u: ArrayLike, lsl: ArrayLike, usl: ArrayLike) -> F64:
    """p_c = Φ((T_U − y)/u) − Φ((T_L − y)/u); a NaN limit drops its term (JCGM 106:2012).

    With u = 0 the result is 1 inside the closed tolerance and 0 outside.
    """
    y, u = np.asarray(y, np.float64), np.asarray(u, np.float64)
    lo, hi = _open(np.asarray(lsl, np.float64), np.asarray(usl, np.float64))
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        p = ndtr((hi - y) / u) - ndtr((lo - y) / u)
        exact = ((y >= lo) & (y <= hi)).astype(np.float64)
    return np.where(u == 0, exact, p)


@dataclass(frozen=True)
class Decision:
    """Per measurement: verdict code, JCGM 106 figures and the limits that were applied (mm)."""

    verdict: NDArray[np.int8]
    conformance_probability: F64
    capability_index: F64
    margin_in_U: F64
    accept_low: F64
    accept_high: F64
    reject_low: F64
    reject_high: F64
    temperature_decides: NDArray[np.bool_]
    rule: str


def _verdict(y: F64, acc: Limits, rej: Limits, ok: NDArray[np.bool_]) -> NDArray[np.int8]:
    conf = (y >= acc[0]) & (y <= acc[1])
    nonc = (y < rej[0]) | (y > rej[1])
    v = np.where(conf, CONFORMS, np.where(nonc, NONCONFORMING, BORDERLINE))
    return np.where(ok, v, NOT_EVALUATED).astype(np.int8)


def decide(
    y: ArrayLike,
    U: ArrayLike,
    u: ArrayLike,
    lsl: ArrayLike,
    usl: ArrayLike,
    rule: DecisionRule,
    *,
    uncorrected: ArrayLike | None = None,
) -> Decision:
    """Verdicts for measured values ``y`` with expanded ``U`` and standard ``u`` (mm).

    ``lsl``/``usl`` are the specification limits (NaN: absent). ``uncorrected`` (the reading
    before the thermal correction) sets ``temperature_decides`` where its verdict differs.
    Capability index C_m = (T_U − T_L)/(4u) (JCGM 106:2012), NaN when one-sided;
    margin = signed distance to the nearest limit over U, positive inside the tolerance.
    """
    arrays = (np.asarray(a, np.float64) for a in (y, U, u, lsl, usl))
    y, U, u, lsl, usl = np.broadcast_arrays(*arrays)
    ok = ~np.isnan(y) & (U >= 0) & (u >= 0) & ~(np.isnan(lsl) & np.isnan(usl))
    ok &= ~(lsl > usl)
    acc = rule.acceptance(lsl, usl, U, u)
    rej = rule.rejection(lsl, usl, U, u)
    verdict = _verdict(y, acc, rej, ok)
    pc = np.where(ok, conformance_probability(y, u, lsl, usl), np.nan)
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        cm = np.where(ok, (usl - lsl) / (4.0 * u), np.nan)
        margin = np.where(ok, np.fmin(y - lsl, usl - y) / U, np.nan)
    if uncorrected is None:
        temp = np.zeros(verdict.shape, dtype=bool)
    else:
        yr = np.broadcast_to(np.asarray(uncorrected, np.float64), y.shape)
        v0 = _verdict(yr, acc, rej, ok & ~np.isnan(yr))
        temp = (v0 != verdict) & (v0 != NOT_EVALUATED) & (verdict != NOT_EVALUATED)
    return Decision(
        verdict=verdict,
        conformance_probability=pc,
        capability_index=cm,
        margin_in_U=margin,
        accept_low=acc[0],
        accept_high=acc[1],
        reject_low=rej[0],
        reject_high=rej[1],
        temperature_decides=temp,
        rule=rule.name,
    )
