"""The batch budget: sensitivities, propagation, degrees of freedom, layout, invalid rows."""

import dataclasses

import numpy as np
import pytest
import uncertainties
from hypothesis import given, settings
from scipy import stats

from qc.core.budget import UNSCALED_NOTE, evaluate
from qc.core.distributions import NORMAL
from qc.core.model import MeasurementArrays
from qc.errors import InputError
from tests.core.strategies import measurement_columns

RNG = np.random.default_rng(20260)


def _random_batch(n: int, shared: bool, comparison: bool = False) -> MeasurementArrays:
    r = RNG
    return MeasurementArrays.from_columns(
        reading=r.uniform(1, 1000, n) if not comparison else r.uniform(-0.05, 0.05, n),
        comparison=comparison,
        master_size=r.uniform(1, 500, n),
        master_U=r.uniform(0, 2e-3, n),
        repeat_s=r.uniform(0, 0.01, n),
        repeat_n=r.integers(2, 10, n),
        resolution=0.001,
        mpe_a=r.uniform(0, 0.01, n),
        mpe_k=r.uniform(1e4, 1e5, n),
        t_part=r.uniform(12, 32, n),
        t_gauge=r.uniform(12, 32, n),
        u_t_part=r.uniform(0, 1, n),
        u_grad_part=r.uniform(0, 1, n),
        u_t_gauge=r.uniform(0, 1, n),
        u_grad_gauge=r.uniform(0, 1, n),
        alpha_part=r.uniform(1e-6, 150e-6, n),
        u_alpha_part=r.uniform(0, 5e-6, n),
        alpha_gauge=r.uniform(1e-6, 25e-6, n),
        u_alpha_gauge=r.uniform(0, 2e-6, n),
        dtheta=r.uniform(-0.5, 0.5, n),
        u_dtheta=r.uniform(0, 0.5, n),
        u_dalpha=r.uniform(0, 3e-6, n),
        shared_room=shared,
        extras=(("fixture", r.uniform(0, 1e-3, n), 10.0),),
    )


# Column → the input field a unit change of that quantity moves (shared room: δα moves α_p
# with α_g fixed; α_g moves both CTEs so that δα stays fixed).
def _perturb(m: MeasurementArrays, name: str, h: float, shared: bool) -> MeasurementArrays:
    fields_for = {
        "repeatability": ["reading"],
        "resolution": ["reading"],
        "instrument error": ["reading"],
        "fixture": ["reading"],
        "setting master": ["master_size"],
        "part temperature: thermometer": ["t_part"],
        "part temperature: gradient": ["t_part"],
        "gauge temperature: thermometer": ["t_gauge"],
        "gauge temperature: gradient": ["t_gauge"],
        "CTE of part": ["alpha_part"],
        "CTE of gauge": ["alpha_gauge", "alpha_part"] if shared else ["alpha_gauge"],
        "part–gauge temperature difference": ["dtheta"],
        "part–gauge CTE difference": ["alpha_part"],
    }[name]
    if shared and name.startswith("part temperature"):
        fields_for = ["t_part"]  # θ: the common temperature, δθ held
    return dataclasses.replace(m, **{f: getattr(m, f) + h for f in fields_for})


STEP = {"mm": 1e-5, "°C": 1e-4, "1/K": 1e-8}


@pytest.mark.parametrize("shared", [False, True])
@pytest.mark.parametrize("comparison", [False, True])
def test_every_sensitivity_against_finite_difference(shared: bool, comparison: bool) -> None:
    # Checks c_i = ∂f/∂x_i (JCGM 100:2008, 5.1.3) by central differences, as the uncertainties
    # library checks its own derivatives.
    m = _random_batch(50, shared, comparison)
    b = evaluate(m)
    first = [j for j, nm in enumerate(b.quantity_names) if not nm.startswith("second order")]
    for j in first:
        name = b.quantity_names[j]
        if not b.applicable[:, j].any():
            continue
        h = STEP[b.units[j]]
        up = evaluate(_perturb(m, name, h, shared)).size_at_20
        dn = evaluate(_perturb(m, name, -h, shared)).size_at_20
        fd = (up - dn) / (2 * h)
        c = b.sensitivities[:, j]
        mask = b.applicable[:, j]
        scale = np.maximum(np.abs(c), np.abs(fd)).max() + 1e-300
        assert np.abs(c - fd)[mask].max() <= 1e-5 * scale, name


@pytest.mark.parametrize("shared", [False, True])
def test_second_order_coefficients_against_finite_difference(shared: bool) -> None:
    # ∂²f/∂x_i∂x_j of GUM 5.1.2 (note) as the finite difference of a first-order coefficient
    m = _random_batch(50, shared)
    b = evaluate(m)
    names = list(b.quantity_names)
    pairs = (
        [("second order: part CTE × temperature", "part–gauge CTE difference", "t_part"),
         ("second order: gauge CTE × temperature", "part–gauge temperature difference",
          "alpha_gauge")]
        if shared
        else [("second order: part CTE × temperature", "CTE of part", "t_part"),
              ("second order: gauge CTE × temperature", "CTE of gauge", "t_gauge")]
    )
    for so, first, field in pairs:
        h = 1e-4 if field.startswith("t_") else 1e-8
        fields_moved = [field, "alpha_part"] if field == "alpha_gauge" else [field]

        def moved(d: float, fields_moved: list[str] = fields_moved) -> MeasurementArrays:
            return dataclasses.replace(m, **{f: getattr(m, f) + d for f in fields_moved})

        j = names.index(first)
        fd = (evaluate(moved(h)).sensitivities[:, j] - evaluate(moved(-h)).sensitivities[:, j])
        fd /= 2 * h
        c = b.sensitivities[:, names.index(so)]
        assert c == pytest.approx(fd, rel=1e-5, abs=1e-9 * np.abs(fd).max())


def test_propagation_agrees_with_uncertainties_library() -> None:
    # General-purpose reference: the `uncertainties` package's linear propagation
    m = _random_batch(40, shared=False)
    b = evaluate(m, second_order=False)
    def uf(x: float, u: float) -> float | uncertainties.UFloat:
        return uncertainties.ufloat(x, u) if u > 0 else float(x)

    for i in range(m.n):
        R = float(m.reading[i])
        for j in range(5):  # the R group and the extra
            R = R + uf(0, b.std_uncertainties[i, j])
        tp = uf(m.t_part[i], np.hypot(m.u_t_part[i], m.u_grad_part[i]))
        tg = uf(m.t_gauge[i], np.hypot(m.u_t_gauge[i], m.u_grad_gauge[i]))
        ap = uf(m.alpha_part[i], m.u_alpha_part[i])
        ag = uf(m.alpha_gauge[i], m.u_alpha_gauge[i])
        L = R * (1 + ag * (tg - 20)) / (1 + ap * (tp - 20))
        assert b.size_at_20[i] == pytest.approx(L.nominal_value, rel=1e-14)
        assert b.u_c_first_order[i] == pytest.approx(L.std_dev, rel=1e-9)


def test_welch_satterthwaite() -> None:
    # GUM G.4.1, eq. (G.2b): ν_eff = u_c⁴ / Σ u_i⁴/ν_i, truncated; hand-computed two-term case
    m = MeasurementArrays.from_columns(
        reading=10.0, repeat_s=0.003, repeat_n=4, t_part=20, mpe_a=0.002 * np.sqrt(3),
        instrument_nu=8,
    )
    b = evaluate(m)
    u1, u2 = 0.0015, 0.002
    nu = (u1**2 + u2**2) ** 2 / (u1**4 / 3 + u2**4 / 8)
    assert float(b.nu_eff[0]) == np.floor(nu)
    assert b.k[0] == pytest.approx(float(stats.t.ppf(0.977250, np.floor(nu))), rel=1e-5)


def test_fixed_k_and_reference_flag() -> None:
    m = MeasurementArrays.from_columns(reading=[10.0, 20.0], mpe_a=0.01, t_part=23.0)
    b = evaluate(m, k=2.0, t_ref=23.0)
    assert np.all(b.k == 2.0) and pytest.approx(2 * b.u_c) == b.U
    assert b.coverage is None
    assert b.nonstandard_reference
    assert b.reference_warning == (
        "sizes are referred to 23 °C, not to the standard reference temperature of 20 °C (ISO 1)"
    )
    assert evaluate(m).reference_warning is None


def test_plain_thermal_cases() -> None:
    # Common practice, no source: ΔL = L·α·ΔT.
    # 100 mm of steel at 11e-6/K over 10 K grows 0.011 mm (read warm with a gauge at 20 °C)
    m = MeasurementArrays.from_columns(reading=100.0, t_part=30.0, alpha_part=11e-6,
                                       t_gauge=20.0)
    assert float(evaluate(m).thermal_correction[0]) == pytest.approx(-0.011, abs=2e-6)
    # A 13 m steel plate over 10 K grows about 1.43 mm
    m = MeasurementArrays.from_columns(reading=13000.0, t_part=30.0, alpha_part=11e-6,
                                       t_gauge=20.0)
    assert float(-evaluate(m).thermal_correction[0]) == pytest.approx(1.43, abs=0.002)
    # 500 mm of aluminium (23.6e-6/K) checked with a steel gauge (11.5e-6/K), both 10 K off
    m = MeasurementArrays.from_columns(reading=500.0, t_part=30.0, t_gauge=30.0,
                                       alpha_part=23.6e-6, alpha_gauge=11.5e-6)
    assert float(-evaluate(m).thermal_correction[0]) == pytest.approx(0.06, abs=0.001)


def test_unscaled_rows_have_zero_thermal_terms_and_a_note() -> None:
    m = MeasurementArrays.from_columns(reading=[30.0, 30.0], scaled=[True, False], t_part=28.0,
                                       u_t_part=0.5, u_alpha_part=1e-6, mpe_a=0.01)
    b = evaluate(m)
    assert b.size_at_20[1] == 30.0 and b.thermal_correction[1] == 0.0
    thermal = [j for j, nm in enumerate(b.quantity_names) if j >= 4]
    assert np.all(b.sensitivities[1, thermal] == 0)
    assert b.row(1).note == UNSCALED_NOTE and b.row(0).note is None
    assert b.size_at_20[0] != 30.0


def test_invalid_rows_are_not_evaluated() -> None:
    m = MeasurementArrays.from_columns(
        reading=[10.0, np.nan, 10.0, 10.0, 10.0, 10.0],
        t_part=[20.0, 20.0, np.nan, 21.0, 21.0, 21.0],
        repeat_s=[0.0, 0.0, 0.0, 0.001, 0.0, 0.0],
        repeat_n=1,
        mpe_a=[0.01, 0.01, 0.01, 0.01, -0.01, 0.01],
        comparison=[False, False, False, False, False, True],
    )
    b = evaluate(m)
    # 1 NaN reading; 2 NaN temperature; 3 prior s without ν; 4 negative MPE; 5 no master size
    assert b.valid.tolist() == [True, False, False, False, False, False]
    assert np.isnan(b.size_at_20[1:]).all() and np.isnan(b.U[1:]).all()
    assert len(b.long_form().measurement) == int(b.applicable[0].sum())


def test_source_labels_and_row() -> None:
    m = MeasurementArrays.from_columns(
        reading=25.0, repeat_s=0.002, repeat_n=5, resolution=0.01, mpe_a=0.02,
        t_part=22.0, u_t_part=0.5 / np.sqrt(3), alpha_part=11.5e-6,
        u_alpha_part=0.08 * 11.5e-6 / np.sqrt(3),
    )
    r = evaluate(m).row(0)
    src = {e.quantity: e.source for e in r.entries}
    assert src["repeatability"] == "5 repeated readings, s = 0.002 mm"
    assert src["resolution"] == "resolution 0.01 mm"
    assert src["instrument error"] == "instrument MPE ±0.02 mm, rectangular"
    assert src["part temperature: thermometer"] == "part thermometer ±0.5 °C, rectangular"
    assert src["CTE of part"] == "CTE of the part material ±8 % (rectangular)"
    assert "setting master" not in src
    assert r.entries[0].dof == 4 and r.entries[0].distribution == "normal"


def test_from_columns_messages() -> None:
    with pytest.raises(InputError, match=r"^unknown measurement field\(s\): temp$"):
        MeasurementArrays.from_columns(reading=1.0, temp=20.0)
    with pytest.raises(InputError, match=r"^columns have different lengths: \[2, 3\]$"):
        MeasurementArrays.from_columns(reading=[1.0, 2.0], t_part=[20.0, 21.0, 22.0])
    with pytest.raises(InputError, match=r"^the field 'reading' is required$"):
        MeasurementArrays.from_columns(t_part=20.0)


def test_take_keeps_extras() -> None:
    m = MeasurementArrays.from_columns(reading=[1.0, 2.0, 3.0],
                                       extras=(("fixture", [1e-3, 2e-3, 3e-3], np.inf, NORMAL),))
    sub = m.take(np.array([2]))
    assert sub.reading.tolist() == [3.0] and sub.extras[0].u.tolist() == [3e-3]


@settings(max_examples=60, derandomize=True, deadline=None)
@given(measurement_columns())
def test_identity_at_reference_temperature(cols: dict) -> None:
    # ISO 1: at 20 °C no thermal correction applies
    cols = {**cols, "t_part": 20.0, "t_gauge": 20.0, "dtheta": 0.0}
    b = evaluate(MeasurementArrays.from_columns(**cols))
    assert b.size_at_20[0] == cols["reading"]
    assert b.thermal_correction[0] == 0.0


@settings(max_examples=60, derandomize=True, deadline=None)
@given(measurement_columns())
def test_u_c_at_least_largest_contribution(cols: dict) -> None:
    # JCGM 100:2008 eq. (10): u_c² is the sum of the squared contributions
    b = evaluate(MeasurementArrays.from_columns(**cols))
    assert b.u_c[0] >= b.contributions[0].max() * (1 - 1e-12)
    assert b.u_c[0] ** 2 == pytest.approx(np.sum(b.contributions[0] ** 2), rel=1e-12)
    assert b.u_c[0] >= b.u_c_first_order[0] * (1 - 1e-12)


def test_long_form_sums_per_measurement() -> None:
    # JCGM 100:2008 eq. (10): per measurement the squared contributions sum to u_c²
    m = dataclasses.replace(_random_batch(200, shared=False),
                            shared_room=RNG.random(200) < 0.5,
                            scaled=RNG.random(200) < 0.8)
    b = evaluate(m)
    lf = b.long_form()
    sums = np.bincount(lf.measurement, weights=lf.contribution**2, minlength=m.n)
    assert sums == pytest.approx(b.u_c**2, rel=1e-12)
    assert np.bincount(lf.measurement, weights=lf.share, minlength=m.n) == pytest.approx(1.0)


def test_shared_room_row_names_and_sources() -> None:
    from tests.core.gum_h1 import h1_inputs

    r = evaluate(h1_inputs()).row(0)
    src = {e.quantity: e.source for e in r.entries}
    assert src["room temperature θ: variation"] == (
        "room temperature variation ±0.5 °C, arcsine"
    )
    assert src["part–gauge temperature difference δθ"] == (
        "part and gauge in one room, temperature difference ±0.05 °C, rectangular"
    )
    assert src["setting master"] == "setting master certificate U = 7.5e-05 mm, k = 3"
    assert "gauge temperature: thermometer" not in src and "CTE of part" not in src
