"""Differential expansion: hand-computed cases, Timoshenko's formula and its Stoney limit."""

import pytest

from qc.core import expansion as ex
from qc.errors import InputError

AL_6061 = 23.6e-6  # published-checks.md §8: Aluminum Association / ASM data, 20–100 °C [S2]
CAST_IRON = 10.8e-6  # published-checks.md §8: grey cast iron 10.5–11.4e-6/K, Callister B.6 [S2]


def test_free_growth_hand_computed() -> None:
    # Hand-computed: 250 mm of steel, 11.5e-6/K, 20 → 28 °C: 250 000 µm · 11.5e-6 · 8 = 23 µm.
    assert float(ex.length_change_um(250.0, 11.5e-6, 20.0, 28.0)) == pytest.approx(23.0)
    assert float(ex.length_change_um(250.0, 11.5e-6, 28.0, 20.0)) == pytest.approx(-23.0)


def test_aluminium_strip_bolted_to_cast_iron_over_12_k() -> None:
    # Hand-computed: 600 mm aluminium strip bolted at both ends to a cast-iron base, +12 K.
    # Mismatch: 600 000 µm · (23.6 − 10.8)e-6 · 12 = 92.16 µm; strain 153.6 µm/m;
    # fully restrained with E = 69 GPa (6061-T6, from memory): σ = −69 000 MPa · 1.536e-4
    # = −10.60 MPa (compression).
    m = ex.mismatch(600.0, AL_6061, CAST_IRON, 12.0, 69.0)
    assert float(m.free_um) == pytest.approx(92.16, abs=1e-9)
    assert float(m.strain) * 1e6 == pytest.approx(153.6, abs=1e-9)
    assert float(m.stress_mpa) == pytest.approx(-10.598, abs=0.001)


def test_equal_layers_reduce_to_one_and_a_half() -> None:
    # Timoshenko, J. Opt. Soc. Am. 11 (1925) 233 (from memory): m = n = 1 gives
    # κ = 24·Δα·ΔT/(h·16) = 1.5·Δα·ΔT/h.  Hand-computed: 5 mm + 5 mm, Δα = 12.8e-6/K,
    # ΔT = 12 K: κ = 1.5·12.8e-6·12/0.010 = 0.02304 1/m; bow over 600 mm = κ·ℓ²/8 = 1036.8 µm.
    k = ex.bimetal_curvature(CAST_IRON, AL_6061, 5.0, 5.0, 100.0, 100.0, 12.0)
    assert float(k) == pytest.approx(0.02304, rel=1e-12)
    assert float(ex.bow_um(k, 600.0)) == pytest.approx(1036.8, rel=1e-12)


def test_thin_layer_limit_is_stoneys_formula() -> None:
    # Stoney, Proc. R. Soc. Lond. A 82 (1909) 172 (from memory): a thin layer (t_f, E_f)
    # with mismatch strain ε on a thick substrate (t_s, E_s): κ = 6·E_f·t_f·ε/(E_s·t_s²).
    tf, ts, ef, es, d_alpha, dt = 0.001, 10.0, 70.0, 200.0, 12e-6, 10.0
    stoney = 6 * ef * (tf / 1000) * d_alpha * dt / (es * (ts / 1000) ** 2)
    k = ex.bimetal_curvature(0.0, d_alpha, ts, tf, es, ef, dt)
    assert float(k) == pytest.approx(stoney, rel=1e-3)


def test_swapping_layers_flips_the_sign() -> None:
    a = ex.bimetal_curvature(10e-6, 20e-6, 3.0, 7.0, 200.0, 70.0, 5.0)
    b = ex.bimetal_curvature(20e-6, 10e-6, 7.0, 3.0, 70.0, 200.0, 5.0)
    assert float(a) == pytest.approx(-float(b), rel=1e-12)
    assert float(a) > 0


def test_bow_error_message() -> None:
    with pytest.raises(InputError) as info:
        ex.bimetal_curvature(1e-6, 2e-6, 0.0, 1.0, 1.0, 1.0, 1.0)
    assert str(info.value) == "bow estimate: expected positive thicknesses (mm) and moduli (GPa)"
