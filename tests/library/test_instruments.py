"""The instrument-type library: required types, MPE form, scale materials, messages."""

import pytest

from qc.errors import UnknownNameError
from qc.library.instruments import load_instrument_types
from qc.library.materials import load_materials

LIB = load_instrument_types()
NOTE = "typical; replace with your calibration certificate"


@pytest.mark.parametrize(
    ("name", "kind"),
    [("caliper", "direct"), ("outside micrometer", "direct"), ("dial indicator", "comparison"),
     ("digital indicator", "comparison"), ("height gauge", "direct"),
     ("bore gauge with setting ring", "comparison"), ("gauge block comparator", "comparison"),
     ("CMM", "direct")],
)
def test_required_types(name: str, kind: str) -> None:
    t = LIB.get(name)
    assert t.kind == kind and t.note == NOTE and t.source.strip()
    assert t.scale_material in load_materials()


def test_cmm_mpe_a_plus_l_over_k() -> None:
    # ISO 10360-2 form MPE = A + L/K; typical 1.8 µm + L/300 (L in mm), from memory
    cmm = LIB.get("cmm")
    assert cmm.mpe(500.0) == pytest.approx(0.0018 + 500.0 / 300000)
    assert LIB.get("dial indicator").mpe_k is None
    assert LIB.get("dial indicator").mpe(5.0) == LIB.get("dial indicator").mpe_a


def test_unknown_instrument_message() -> None:
    with pytest.raises(UnknownNameError) as e:
        LIB.get("micrometr")
    assert str(e.value) == (
        "unknown instrument type 'micrometr'; did you mean 'micrometer' or "
        "'outside-micrometer' or 'digital micrometer'?"
    )
