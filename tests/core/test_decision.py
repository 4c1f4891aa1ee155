"""Decision rules at every zone edge, one-sided limits, and the JCGM 106 figures.

Edges use binary-exact numbers (multiples of 1/64 mm) so that "at the edge" is exact.
"""

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy import stats

from qc.core.decision import (
    BORDERLINE,
    CONFORMS,
    ISO14253,
    NONCONFORMING,
    NOT_EVALUATED,
    VERDICT_NAMES,
    GuardBand,
    RiskGuardBand,
    SimpleAcceptance,
    conformance_probability,
    decide,
    rule_from_name,
)
from qc.errors import ConfigError, UnknownNameError

LSL, USL, U, u = 10.0, 10.5, 0.125, 0.0625


def verdicts(rule, ys, lsl=LSL, usl=USL):
    return decide(np.array(ys, float), U, u, lsl, usl, rule).verdict.tolist()


def nxt(x: float) -> float:
    return float(np.nextafter(x, np.inf))


def prv(x: float) -> float:
    return float(np.nextafter(x, -np.inf))


def test_verdict_names_are_the_public_codes() -> None:
    assert VERDICT_NAMES == ("conforms", "nonconforming", "borderline", "not evaluated")
    assert (CONFORMS, NONCONFORMING, BORDERLINE, NOT_EVALUATED) == (0, 1, 2, 3)


def test_iso14253_zone_edges() -> None:
    # ISO 14253-1:2017: conformance zone [T_L + U, T_U − U]; nonconformance beyond T ± U
    ys = [prv(9.875), 9.875, prv(10.125), 10.125, 10.375, nxt(10.375), 10.625, nxt(10.625)]
    assert verdicts(ISO14253(), ys) == [1, 2, 2, 0, 0, 2, 2, 1]


def test_simple_acceptance_edges() -> None:
    # ILAC-G8:09/2019 (pp. 8–10): w = 0, binary
    assert verdicts(SimpleAcceptance(), [prv(10.0), 10.0, 10.5, nxt(10.5)]) == [1, 0, 0, 1]


def test_guard_band_edges() -> None:
    # ILAC-G8:09/2019 (pp. 8–10): acceptance limit A = T − w, w = r·U; binary
    rule = GuardBand(0.5)
    ys = [prv(10.0625), 10.0625, 10.4375, nxt(10.4375)]
    assert verdicts(rule, ys) == [1, 0, 0, 1]
    # r = 1 accepts exactly the ISO 14253-1 conformance zone, and rejects the rest
    assert verdicts(GuardBand(1.0), [10.125, 10.5]) == [0, 1]


def test_risk_guard_band_one_sided_jcgm106() -> None:
    # JCGM 106:2012: at an acceptance limit with w = 2u, p_c = Φ(2) = 0.977 (one-sided)
    rule = RiskGuardBand(float(stats.norm.sf(2.0)))
    d = decide(np.array([10.375, nxt(10.375)]), U, u, np.nan, USL, rule)
    assert d.accept_high[0] == pytest.approx(USL - 2 * u, abs=1e-12)
    assert round(float(d.conformance_probability[0]), 3) == 0.977
    assert d.verdict[1] == NONCONFORMING
    assert np.isnan(d.capability_index[0])  # C_m is not defined one-sided


def test_risk_guard_band_two_sided_counts_both_tails() -> None:
    # JCGM 106:2012: specific risk of false acceptance = 1 − p_c at the acceptance limit
    rule = RiskGuardBand(0.025)
    d = decide(np.array([10.2]), U, 0.1, LSL, USL, rule)
    for a in (d.accept_low[0], d.accept_high[0]):
        p = stats.norm.cdf((USL - a) / 0.1) - stats.norm.cdf((LSL - a) / 0.1)
        assert p == pytest.approx(0.975, abs=1e-10)
    # tolerance too narrow for the stated risk: nothing conforms
    narrow = decide(np.array([10.25]), U, 0.2, LSL, USL, rule)
    assert narrow.verdict[0] == NONCONFORMING


def test_one_sided_limits() -> None:
    rule = ISO14253()
    assert verdicts(rule, [100.0, 10.375, 10.5], lsl=np.nan) == [1, 0, 2]
    assert verdicts(rule, [-100.0, 10.125, 10.0], usl=np.nan) == [1, 0, 2]
    assert verdicts(rule, [0.0, 1000.0], lsl=np.nan, usl=USL) == [0, 1]


def test_not_evaluated() -> None:
    d = decide(np.array([np.nan, 10.2, 10.2, 10.2]), np.array([U, U, np.nan, U]), u,
               np.array([LSL, np.nan, LSL, 11.0]), np.array([USL, np.nan, USL, USL]), ISO14253())
    assert d.verdict.tolist() == [3, 3, 3, 3]
    assert np.isnan(d.conformance_probability).all()


def test_conformance_probability_and_capability() -> None:
    # JCGM 106:2012: p_c = Φ((T_U − y)/u) − Φ((T_L − y)/u); C_m = (T_U − T_L)/(4u)
    y = np.array([10.1, 10.25, 10.45])
    d = decide(y, U, u, LSL, USL, ISO14253())
    ref = stats.norm.cdf((USL - y) / u) - stats.norm.cdf((LSL - y) / u)
    assert d.conformance_probability == pytest.approx(ref, rel=1e-12)
    assert d.capability_index == pytest.approx([2.0, 2.0, 2.0])
    assert d.margin_in_U == pytest.approx([0.8, 2.0, 0.4])
    assert conformance_probability(10.2, 0.0, LSL, USL) == 1.0
    assert conformance_probability(10.6, 0.0, LSL, USL) == 0.0


def test_temperature_decides() -> None:
    # corrected value conforms, the uncorrected reading would have been borderline
    d = decide(np.array([10.3, 10.3]), U, u, LSL, USL, ISO14253(),
               uncorrected=np.array([10.4, 10.31]))
    assert d.temperature_decides.tolist() == [True, False]


def test_rule_from_name() -> None:
    assert isinstance(rule_from_name(" ISO14253 "), ISO14253)
    assert isinstance(rule_from_name("simple"), SimpleAcceptance)
    assert rule_from_name("guard:0.5") == GuardBand(0.5)
    assert rule_from_name("risk:0.025") == RiskGuardBand(0.025)
    for r in (ISO14253(), SimpleAcceptance(), GuardBand(0.5), RiskGuardBand(0.025)):
        assert rule_from_name(r.name) == r


def test_rule_messages() -> None:
    with pytest.raises(UnknownNameError) as e:
        rule_from_name("simpel")
    assert str(e.value) == "unknown decision rule 'simpel'; did you mean 'simple'?"
    with pytest.raises(ConfigError) as c:
        rule_from_name("guard:abc")
    assert str(c.value) == (
        "decision rule 'guard:abc': expected a number of at least 0 after 'guard:', "
        "for example 'guard:0.5'"
    )
    with pytest.raises(ConfigError) as c:
        rule_from_name("risk:0.7")
    assert str(c.value) == (
        "decision rule 'risk:0.7': expected a probability between 0 and 0.5 after 'risk:', "
        "for example 'risk:0.025'"
    )


SEVERITY = {CONFORMS: 0, BORDERLINE: 1, NONCONFORMING: 2}


@settings(max_examples=50, derandomize=True, deadline=None)
@given(
    rule=st.sampled_from(["iso14253", "simple", "guard:0.5", "guard:1", "risk:0.05"]),
    Uv=st.floats(min_value=0.0, max_value=0.2),
    one_sided=st.booleans(),
)
def test_verdict_monotone_across_the_upper_limit(rule: str, Uv: float, one_sided: bool) -> None:
    # Moving a reading outward across a limit never makes its verdict better
    y = np.linspace(10.25, 11.0, 301)  # from mid-tolerance outward
    lsl = np.nan if one_sided else LSL
    v = decide(y, Uv, Uv / 2, lsl, USL, rule_from_name(rule)).verdict
    sev = np.array([SEVERITY[int(x)] for x in v])
    assert np.all(np.diff(sev) >= 0)
    assert sev[-1] == 2


def test_reported_limits() -> None:
    # ISO 14253-1:2017: acceptance at T ∓ U, rejection beyond T ± U; binary rules reject = accept
    d = decide(np.array([10.2]), U, u, LSL, USL, ISO14253())
    assert (d.accept_low[0], d.accept_high[0]) == (10.125, 10.375)
    assert (d.reject_low[0], d.reject_high[0]) == (9.875, 10.625)
    s = decide(np.array([10.2]), U, u, LSL, USL, SimpleAcceptance())
    assert (s.reject_low[0], s.reject_high[0]) == (s.accept_low[0], s.accept_high[0]) == (10, 10.5)
    assert d.rule == "iso14253" and s.rule == "simple"
