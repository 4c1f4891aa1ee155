"""Properties that must hold for any input (hypothesis), and the public names of each module."""

import importlib

import numpy as np
from hypothesis import given, settings
from hypothesis import strategies as st

from qc.core import soak
from qc.core.band import allowable_band
from qc.core.expansion import length_change_um, mismatch

temps = st.floats(min_value=21.0, max_value=40.0)
bands = st.floats(min_value=0.05, max_value=0.9)
h_values = st.floats(min_value=1.0, max_value=60.0)
conductivities = st.floats(min_value=0.2, max_value=400.0)


@settings(max_examples=60, deadline=None)
@given(temps, bands, h_values, conductivities)
def test_wider_band_or_higher_h_never_takes_longer(t0, b, h, k) -> None:
    g = soak.block(80, 60, 40)
    base = soak.soak_time(t0, 20.0, b, 3000.0, 900.0, k, h, g)
    wider = soak.soak_time(t0, 20.0, b * 1.5, 3000.0, 900.0, k, h, g)
    stronger = soak.soak_time(t0, 20.0, b, 3000.0, 900.0, k, h * 1.5, g)
    assert float(wider.centre_s) <= float(base.centre_s)
    assert float(stronger.centre_s) <= float(base.centre_s)
    assert float(base.surface_s) <= float(base.centre_s)


@settings(max_examples=60, deadline=None)
@given(temps, bands, h_values, conductivities)
def test_warm_and_cold_parts_are_symmetric(t0, b, h, k) -> None:
    g = soak.cylinder(50, 120)
    warm = soak.soak_time(t0, 20.0, b, 3000.0, 900.0, k, h, g)
    cold = soak.soak_time(40.0 - t0, 20.0, b, 3000.0, 900.0, k, h, g)
    assert np.isclose(float(warm.centre_s), float(cold.centre_s), rtol=1e-12)


@settings(max_examples=60, deadline=None)
@given(
    st.floats(min_value=1.0, max_value=2000.0),
    st.floats(min_value=2.0, max_value=200.0),
    st.floats(min_value=0.0, max_value=30e-6),
)
def test_band_shrinks_with_size_and_growth_is_zero_at_equal_temperatures(length, tol, alpha):
    a = allowable_band(length, tol, 0.1, alpha, 11.5e-6, 1e-6, 0.5e-6, 0.1)
    b = allowable_band(length * 2, tol, 0.1, alpha, 11.5e-6, 1e-6, 0.5e-6, 0.1)
    assert float(b.uncorrected_k) <= float(a.uncorrected_k)
    assert float(b.corrected_k) <= float(a.corrected_k)
    assert float(length_change_um(length, alpha, 20.0, 20.0)) == 0.0
    assert float(mismatch(length, alpha, alpha, 12.0).free_um) == 0.0


def test_public_names_exist() -> None:
    for name in (
        "qc.core.soak",
        "qc.core.band",
        "qc.core.expansion",
        "qc.core.drift",
        "qc.io.driftlog",
        "qc.report.drift_plot",
        "qc.cli.thermal",
    ):
        module = importlib.import_module(name)
        assert module.__all__ and all(hasattr(module, n) for n in module.__all__), name
