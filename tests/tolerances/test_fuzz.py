"""parse_tolerance never raises anything but ToleranceError, whatever the text.

Property test (common practice, no source): bounded, derandomized examples so runs are stable.
"""

from __future__ import annotations

import math

from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from qc.errors import ToleranceError
from qc.tolerances import parse_tolerance

PIECES = st.sampled_from(
    ["±", "+/-", "+", "-", "\u2212", "–", "—", "…", "...", "/", " ", "0", "1", "2", "5", ".",
     ",", "25", "0.05", "12.00", "max", "MIN", "≤", ">=", "Ø", "H7", "g6", "js", "JS", "h",
     "ZC", "mm", "µm", "in", '"', "ISO", "2768", "-m", "e", "1e400", "nan", "inf", "9" * 30]
)
TEXTS = st.one_of(st.text(max_size=40), st.lists(PIECES, max_size=8).map("".join))
FUZZ = settings(max_examples=400, derandomize=True, deadline=None,
                suppress_health_check=[HealthCheck.too_slow])


@FUZZ
@given(
    text=TEXTS,
    nominal=st.one_of(st.none(), st.floats(allow_nan=True, allow_infinity=True)),
    feature=st.sampled_from([None, "hole", "shaft", "x"]),
    unit=st.sampled_from(["mm", "in", 25.4]),
    decimal=st.sampled_from([".", ","]),
)
def test_only_tolerance_errors(text, nominal, feature, unit, decimal) -> None:
    try:
        tol = parse_tolerance(text, nominal=nominal, feature=feature, unit=unit, decimal=decimal)
    except ToleranceError as exc:
        assert str(exc)
        return
    lo, hi = tol.lower_limit, tol.upper_limit
    assert math.isnan(lo) or math.isnan(hi) or lo <= hi
