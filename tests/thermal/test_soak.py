"""Soak-time model against textbook examples, the published eigenvalue table and closed forms."""

import math

import numpy as np
import pytest
from scipy.optimize import brentq
from scipy.special import j0, j1

from qc.core import soak
from qc.errors import InputError

# ---------------------------------------------------------------- lumped capacitance


def test_incropera_example_5_1_thermocouple_junction() -> None:
    # Incropera, DeWitt, Bergman, Lavine, Fundamentals of Heat and Mass Transfer, 6th ed.,
    # Example 5.1 (from memory): h = 400 W/(m²·K), k = 20 W/(m·K), c = 400 J/(kg·K),
    # ρ = 8500 kg/m³; a time constant of 1 s needs D = 0.706 mm; from 25 °C in gas at
    # 200 °C the junction reaches 199 °C after t = 5.2 s; Bi = h·(D/6)/k = 2.35e-3, lumped.
    d_mm = 6 * 400 * 1.0 / (8500 * 400) * 1000  # τ = ρ·c·D/(6h) = 1 s solved for D
    assert d_mm == pytest.approx(0.706, abs=0.0005)
    r = soak.soak_time(25.0, 200.0, 1.0, 8500, 400, 20, 400, soak.sphere(d_mm))
    assert str(r.method) == "lumped"
    assert float(r.biot) == pytest.approx(2.35e-3, abs=0.005e-3)
    assert float(r.centre_s) == pytest.approx(5.2, abs=0.05)


def test_cengel_example_4_1_thermocouple_99_percent() -> None:
    # Çengel & Ghajar, Heat and Mass Transfer, Example 4-1 (from memory): D = 1 mm,
    # k = 35 W/(m·K), ρ = 8500 kg/m³, cp = 320 J/(kg·K), h = 210 W/(m²·K); 99 % of the
    # initial difference is reached after t ≈ 10 s (book rounds b = 0.462 1/s).
    r = soak.soak_time(0.0, 100.0, 1.0, 8500, 320, 35, 210, soak.sphere(1.0))
    assert float(r.centre_s) == pytest.approx(10.0, rel=0.01)


def test_lumped_closed_form_synthetic_cube() -> None:
    # Hand-computed: 20 mm aluminium cube, ρ 2700, c 897, k 237, h 10 W/(m²·K);
    # V/A = 20/6 mm; τ = ρ·c·(V/A)/h = 2700·897·0.0033333/10 = 807.3 s;
    # from 30 °C to within 0.5 K of 20 °C: t = τ·ln(10/0.5) = 807.3·2.99573 = 2418.5 s.
    r = soak.soak_time(30.0, 20.0, 0.5, 2700, 897, 237, 10.0, soak.block(20, 20, 20))
    tau = 2700 * 897 * (0.020 / 6) / 10.0
    assert tau == pytest.approx(807.3, abs=0.05)
    assert float(r.centre_s) == pytest.approx(tau * math.log(20.0), rel=1e-12)
    assert float(r.centre_s) == pytest.approx(2418.5, abs=0.2)


# ---------------------------------------------------------------- one-term series

# Incropera 6th ed. Table 5.1 / Çengel Table 4-2 (from memory): (Bi, ζ₁, C₁) per shape.
TABLE = {
    "wall": [
        (0.01, 0.0998, 1.0017),
        (0.1, 0.3111, 1.0161),
        (1.0, 0.8603, 1.1191),
        (10.0, 1.4289, 1.2620),
    ],
    "cylinder": [
        (0.01, 0.1412, 1.0025),
        (0.1, 0.4417, 1.0246),
        (1.0, 1.2558, 1.2071),
        (10.0, 2.1795, 1.5677),
    ],
    "sphere": [
        (0.01, 0.1730, 1.0030),
        (0.1, 0.5423, 1.0298),
        (1.0, 1.5708, 1.2732),
        (10.0, 2.8363, 1.9249),
    ],
}


@pytest.mark.parametrize("kind", sorted(TABLE))
def test_first_eigenvalue_matches_published_table(kind: str) -> None:
    bi, zeta, c1 = (np.array(col) for col in zip(*TABLE[kind], strict=True))
    z = soak.first_eigenvalue(kind, bi)
    assert z == pytest.approx(zeta, abs=1e-4)
    assert soak.one_term_coefficient(kind, z) == pytest.approx(c1, abs=1e-4)


@pytest.mark.parametrize(
    ("kind", "limit"), [("wall", math.pi / 2), ("cylinder", 2.4048), ("sphere", math.pi)]
)
def test_eigenvalue_at_infinite_biot_is_the_table_limit(kind: str, limit: float) -> None:
    # Incropera Table 5.1, Bi = ∞ row (from memory): π/2, 2.4048, π.
    assert float(soak.first_eigenvalue(kind, np.inf)) == pytest.approx(limit, abs=1e-4)


@pytest.mark.parametrize("kind", ["wall", "cylinder", "sphere"])
def test_eigenvalue_agrees_with_scipy_brentq(kind: str) -> None:
    # Independent root finder (scipy.optimize.brentq) on the same transcendental equations.
    eq = {
        "wall": lambda z, bi: z * math.tan(z) - bi,
        "cylinder": lambda z, bi: z * j1(z) / j0(z) - bi,
        "sphere": lambda z, bi: 1 - z / math.tan(z) - bi,
    }[kind]
    upper = {"wall": math.pi / 2, "cylinder": 2.404825557695773, "sphere": math.pi}[kind]
    for bi in (0.05, 0.3, 2.0, 50.0):
        ref = brentq(eq, 1e-9, upper - 1e-12, args=(bi,), xtol=1e-14)
        assert float(soak.first_eigenvalue(kind, bi)) == pytest.approx(ref, abs=1e-10)


def test_cengel_example_4_3_boiling_egg_sphere() -> None:
    # Çengel & Ghajar, Heat and Mass Transfer, Example 4-3 (from memory): egg as a 5 cm
    # sphere, k = 0.6 W/(m·K), α = 0.14e-6 m²/s, from 5 °C in water at 95 °C, h = 1200;
    # Bi = h·r₀/k = 50, λ₁ = 3.0788, A₁ = 1.9962; the centre reaches 70 °C after 933 s
    # (book rounds τ = 0.209).  Band: 95 − 70 = 25 K.
    k, alpha = 0.6, 0.14e-6
    rho_c = k / alpha
    r = soak.soak_time(5.0, 95.0, 25.0, rho_c, 1.0, k, 1200.0, soak.sphere(50.0))
    assert str(r.method) == "one-term"
    assert float(r.centre_s) == pytest.approx(933.0, rel=0.01)
    assert float(soak.first_eigenvalue("sphere", 50.0)) == pytest.approx(3.0788, abs=2e-4)


def test_cengel_long_shaft_centre_and_surface() -> None:
    # Çengel & Ghajar, Heat and Mass Transfer, §4-2, long stainless-steel shaft example
    # (Example 4-5 in the edition we recall; from memory): D = 20 cm, 600 °C into 200 °C,
    # h = 80 W/(m²·K), k = 14.9 W/(m·K), α = 3.95e-6 m²/s, t = 45 min; Bi = 0.537,
    # τ = 1.07; centre 364 °C, surface 328 °C.
    bi = 80 * 0.1 / 14.9
    fo = 3.95e-6 * 45 * 60 / 0.1**2
    centre = 200 + 400 * float(soak.one_term_ratio("cylinder", bi, fo))
    surface = 200 + 400 * float(soak.one_term_ratio("cylinder", bi, fo, "surface"))
    assert centre == pytest.approx(364, abs=1.0)
    assert surface == pytest.approx(328, abs=1.0)


def test_one_term_matches_full_series_for_fourier_above_0_2() -> None:
    # Incropera §5.5.2: for Fo > 0.2 the one-term approximation is within 2 % of the full
    # series.  Full plane-wall series (Incropera eq. 5.39a) summed here with 60 roots.
    bi, fo = 2.0, 0.3
    roots = [
        brentq(
            lambda z: z * math.tan(z) - bi, n * math.pi + 1e-12, n * math.pi + math.pi / 2 - 1e-12
        )
        for n in range(60)
    ]
    full = sum(4 * math.sin(z) / (2 * z + math.sin(2 * z)) * math.exp(-z * z * fo) for z in roots)
    one = float(soak.one_term_ratio("wall", bi, fo))
    assert one == pytest.approx(full, rel=0.02)
    assert one != pytest.approx(full, rel=1e-6)  # the higher terms are not zero at Fo = 0.3
    # Below Fo = 0.2 the one-term centre value stays above the full series (the second term
    # is negative), so a soak time from it errs long, on the safe side; checked at Fo = 0.1.
    full_early = sum(
        4 * math.sin(z) / (2 * z + math.sin(2 * z)) * math.exp(-z * z * 0.1) for z in roots
    )
    assert float(soak.one_term_ratio("wall", bi, 0.1)) > full_early


def test_block_centre_is_product_of_walls() -> None:
    # Incropera §5.8 product solution: a cube's centre ratio is the plane-wall ratio cubed.
    k, rho, c, h, a_mm = 0.25, 1400.0, 1500.0, 8.0, 60.0  # an acetal cube: Bi ≫ 0.1
    r = soak.soak_time(30.0, 20.0, 0.5, rho, c, k, h, soak.block(a_mm, a_mm, a_mm))
    assert str(r.method) == "one-term"
    fo = k / (rho * c) * float(r.centre_s) / (a_mm / 2000) ** 2
    ratio = float(soak.one_term_ratio("wall", h * a_mm / 2000 / k, fo)) ** 3
    assert ratio == pytest.approx(0.5 / 10.0, rel=1e-9)
    assert float(r.surface_s) < float(r.centre_s)  # the core lags the surface


def test_lumped_and_one_term_agree_at_small_biot() -> None:
    # As Bi → 0 the one-term sphere solution tends to Newton cooling (Incropera §5.2):
    # at Bi(V/A) = 0.003 the centre ratio after the lumped time equals the target within 1 %.
    k, rho, c, d_mm = 50.0, 7870.0, 486.0, 60.0
    h = 0.003 * k / (d_mm / 6000)
    r = soak.soak_time(30, 20, 0.5, rho, c, k, h, soak.sphere(d_mm))
    assert str(r.method) == "lumped"
    r0 = d_mm / 2000
    fo = k / (rho * c) * float(r.centre_s) / r0**2
    assert float(soak.one_term_ratio("sphere", h * r0 / k, fo)) == pytest.approx(0.05, rel=0.01)


def test_models_meet_within_ten_percent_at_the_biot_limit() -> None:
    # Across Bi = 0.1 the model switches; the centre time must not jump by more than 10 %
    # (the core lag of the one-term solution is what the lumped model leaves out). Near the
    # limit the lumped time is kept no shorter than the one-term centre time, so the times
    # meet and a slightly larger h never takes longer.
    g = soak.sphere(60.0)
    k = 10.0
    h = 0.1 * k / (0.030 / 3)  # Bi = h·(r/3)/k = 0.1
    lumped = soak.soak_time(30, 20, 0.5, 8000, 500, k, h * 0.999, g)
    series = soak.soak_time(30, 20, 0.5, 8000, 500, k, h * 1.001, g)
    assert (str(lumped.method), str(series.method)) == ("lumped", "one-term")
    assert float(series.centre_s) == pytest.approx(float(lumped.centre_s), rel=0.10)
    assert float(series.centre_s) <= float(lumped.centre_s)
    assert float(series.centre_s) == pytest.approx(float(lumped.centre_s), rel=0.01)


# ---------------------------------------------------------------- bands, gauge, radiation


def test_radiation_coefficient_at_293_k() -> None:
    # published-checks.md §8 [C]: linearised radiation adds about 5.7·ε W/(m²·K) at 293 K;
    # hand-computed 4·5.670374e-8·293.15³ = 5.714.
    assert float(soak.radiation_coefficient(1.0)) == pytest.approx(5.714, abs=0.001)
    assert float(soak.combined_coefficient(4.0, 0.5)) == pytest.approx(4.0 + 2.857, abs=0.001)


def test_band_relative_to_gauge() -> None:
    # Part at 25 °C, room 20 °C, gauge 20.3 °C, band 0.5 K: inside once T ≤ 20.8 °C,
    # i.e. |T − T_room| ≤ 0.8 K: t = τ·ln(5/0.8) (hand-computed from the lumped law).
    g = soak.block(20, 20, 20)
    r = soak.soak_time(25.0, 20.0, 0.5, 2700, 897, 237, 10.0, g, gauge_c=20.3)
    tau = 2700 * 897 * (0.020 / 6) / 10.0
    assert float(r.centre_s) == pytest.approx(tau * math.log(5 / 0.8), rel=1e-12)


def test_already_inside_and_never_inside() -> None:
    g = soak.block(20, 20, 20)
    args = (2700, 897, 237, 10.0, g)
    assert float(soak.soak_time(20.3, 20.0, 0.5, *args).centre_s) == 0.0
    # gauge 1 K from the room, band 0.5 K: the part passes through the band but cannot stay
    assert math.isinf(float(soak.soak_time(25.0, 20.0, 0.5, *args, gauge_c=21.0).centre_s))
    assert math.isinf(float(soak.soak_time(21.2, 20.0, 0.5, *args, gauge_c=21.0).centre_s))
    assert math.isinf(float(soak.soak_time(20.0, 20.0, 0.5, *args, gauge_c=21.0).centre_s))


def test_range_orders_times_and_uses_h_high_for_fast() -> None:
    g = soak.cylinder(80, 200)
    r = soak.soak_time_range(28, 20, 0.5, 7870, 486, 51.9, 4.0, 8.0, 16.0, g)
    assert float(r.fast.centre_s) < float(r.nominal.centre_s) < float(r.slow.centre_s)
    assert float(r.fast.h) == 16.0 and float(r.slow.h) == 4.0


def test_mass_and_area_uses_v_over_a() -> None:
    # 1 kg steel (ρ 7850) with 20 000 mm² surface: V/A = 1/7850/0.02 m = 6.369 mm.
    g = soak.mass_and_area(1.0, 20000.0, 7850.0)
    assert float(g.lc_m) * 1000 == pytest.approx(6.369, abs=0.001)
    assert "shape unknown" in g.description


def test_soak_time_for_rows_is_vectorised_and_states_assumption() -> None:
    out = soak.soak_time_for_rows(
        part_c=[27.0, 24.0, 20.1],
        room_c=20.0,
        band_k=0.5,
        density=[7870, 2700, 1410],
        specific_heat=[486, 896, 1470],
        conductivity=[51.9, 167, 0.3],
        h_low=4.0,
        h_nominal=8.0,
        h_high=15.0,
        nominal_size_mm=[50.0, 120.0, 30.0],
        characteristic_length_mm=[np.nan, 10.0, np.nan],
    )
    assert out.nominal_s.shape == (3,)
    assert np.all(out.fast_s[:2] < out.nominal_s[:2]) and np.all(out.nominal_s < out.slow_s + 1)
    assert out.nominal_s[2] == 0.0  # already within 0.5 K
    assert "assumed a solid cube with edge = nominal size (V/A = size/6)" in out.note[0]
    assert out.note[1].startswith("V/A as given")
    # Row 0 by hand: V/A = 50/6 mm, lumped (Bi = 8·0.008333/51.9 = 0.0013):
    tau = 7870 * 486 * (0.050 / 6) / 8.0
    assert out.nominal_s[0] == pytest.approx(tau * math.log(7 / 0.5), rel=1e-12)


def test_soak_time_for_rows_plastic_uses_one_term_and_says_so() -> None:
    out = soak.soak_time_for_rows(30, 20, 0.5, 1410, 1470, 0.3, 4, 8, 15, 90.0)
    assert str(out.method[()]) == "one-term"
    assert "core lags the surface" in str(out.note[()])


@pytest.mark.parametrize(
    ("call", "message"),
    [
        (lambda: soak.block(0, 10, 10), "part dimensions: expected positive lengths in mm, got 0"),
        (
            lambda: soak.soak_time(30, 20, 0, 1, 1, 1, 1, soak.sphere(10)),
            "temperature band: expected a positive number of kelvin (e.g. 0.5)",
        ),
        (
            lambda: soak.soak_time(30, 20, 1, 1, 1, 1, -2, soak.sphere(10)),
            "heat-transfer coefficient, density, specific heat and conductivity: "
            "expected positive numbers",
        ),
        (
            lambda: soak.soak_time_range(30, 20, 1, 1, 1, 1, 5, 4, 6, soak.sphere(10)),
            "heat-transfer coefficient range: expected low ≤ nominal ≤ high",
        ),
        (
            lambda: soak.mass_and_area(0, 10, 1),
            "part mass and surface area: expected positive numbers (kg, mm²)",
        ),
        (
            lambda: soak.first_eigenvalue("cone", 1.0),
            "shape kind must be one of wall, cylinder, sphere, got 'cone'",
        ),
    ],
)
def test_error_messages(call, message: str) -> None:
    with pytest.raises(InputError) as info:
        call()
    assert str(info.value) == message
