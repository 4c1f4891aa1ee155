"""Soak model worked out per distinct value: the same numbers as solving every row alone.

Inspection rows repeat sizes, materials and coefficients, so the root solve and the part's
one-term terms run once per distinct value and are spread back to the rows.  These tests
hold that fast path to the direct (row-by-row) path, bit for bit, and check that values the
fast path leaves alone (0, inf, NaN, rows that do not repeat) still get the direct answer.
"""

import numpy as np
import pytest

from qc.core import soak
from qc.errors import InputError

# A made-up shop batch: a few sizes and three materials (ρ, c, k per material, rounded
# handbook-like values chosen for the scenario, not quoted from a source), part
# temperatures to 0.1 °C, the gauge near the room.
SIZES_MM = np.array([4.2, 9.995, 25.0, 62.0, 180.0, 400.0])
MATERIALS = np.array([[7850.0, 486.0, 51.9], [2700.0, 896.0, 167.0], [1410.0, 1470.0, 0.3]])


def _batch(n: int, seed: int = 7) -> dict[str, np.ndarray]:
    rng = np.random.default_rng(seed)
    mat = MATERIALS[rng.integers(0, len(MATERIALS), n)]
    return {
        "part_c": np.round(rng.uniform(14.0, 32.0, n), 1),
        "room_c": np.full(n, 20.0),
        "gauge_c": np.round(rng.uniform(19.6, 20.4, n), 1),
        "density": mat[:, 0], "specific_heat": mat[:, 1], "conductivity": mat[:, 2],
        "nominal_size_mm": SIZES_MM[rng.integers(0, len(SIZES_MM), n)],
    }


def _bitwise_equal(a: np.ndarray, b: np.ndarray) -> bool:
    a, b = np.asarray(a), np.asarray(b)
    if a.dtype.kind == "f":
        return a.shape == b.shape and bool(np.all(a.view(np.int64) == b.view(np.int64)))
    return a.shape == b.shape and a.dtype == b.dtype and bool(np.all(a == b))


@pytest.mark.parametrize("kind", ["wall", "cylinder", "sphere"])
def test_first_eigenvalue_per_distinct_matches_each_value_alone(kind: str) -> None:
    rng = np.random.default_rng(3)
    values = rng.choice(np.geomspace(1e-3, 50.0, 40), size=10_000)  # repeats: fast path
    together = soak.first_eigenvalue(kind, values)
    alone = np.array([float(soak.first_eigenvalue(kind, v)) for v in np.unique(values)])
    expected = alone[np.searchsorted(np.unique(values), values)]
    assert _bitwise_equal(together, expected)


@pytest.mark.parametrize("kind", ["wall", "cylinder", "sphere"])
def test_first_eigenvalue_special_values_take_the_direct_path(kind: str) -> None:
    # 0 → ζ₁ = 0 and inf → the upper bound (Incropera eqs. 5.39c, 5.49c, 5.50c: the limits
    # of the transcendental equations); such arrays are solved element by element.
    upper = {"wall": np.pi / 2, "cylinder": 2.404825557695773, "sphere": np.pi}[kind]
    values = np.tile([0.5, 2.0, 0.0, np.inf], 1000)
    z = soak.first_eigenvalue(kind, values)
    assert np.all(z[2::4] == 0.0)
    assert np.all(z[3::4] == upper)
    assert _bitwise_equal(z[0::4], np.full(1000, float(soak.first_eigenvalue(kind, 0.5))))


def test_soak_rows_by_body_match_the_range_row_by_row() -> None:
    b = _batch(6000)
    h = (4.0 + 5.7 * 0.3, 8.0 + 5.7 * 0.5, 15.0 + 5.7 * 0.7)
    rows = soak.soak_time_for_rows(b["part_c"], b["room_c"], 0.5, b["density"],
                                   b["specific_heat"], b["conductivity"], *h,
                                   b["nominal_size_mm"], gauge_c=b["gauge_c"])
    lc = b["nominal_size_mm"] / 6.0 / 1000.0
    ref = soak.soak_time_range(b["part_c"], b["room_c"], 0.5, b["density"], b["specific_heat"],
                               b["conductivity"], *h,
                               soak.Geometry(lc, (("sphere", 3.0 * lc),), "rows"),
                               gauge_c=b["gauge_c"])
    assert _bitwise_equal(rows.fast_s, ref.fast.centre_s)
    assert _bitwise_equal(rows.nominal_s, ref.nominal.centre_s)
    assert _bitwise_equal(rows.slow_s, ref.slow.centre_s)
    assert _bitwise_equal(rows.surface_nominal_s, ref.nominal.surface_s)
    assert _bitwise_equal(rows.method, ref.nominal.method)
    assert set(rows.method.tolist()) == {"lumped", "one-term"}  # both branches exercised


def test_soak_rows_large_batch_equals_small_chunks() -> None:
    # Chunks below the distinct-value threshold are solved row by row; the whole batch per
    # distinct part.  Same answer either way.
    b = _batch(4096, seed=11)
    args = ("part_c", "room_c"), ("density", "specific_heat", "conductivity")

    def run(sl: slice) -> soak.RowSoak:
        return soak.soak_time_for_rows(*(b[k][sl] for k in args[0]), 0.5,
                                       *(b[k][sl] for k in args[1]), 5.7, 10.9, 19.0,
                                       b["nominal_size_mm"][sl], gauge_c=b["gauge_c"][sl])

    whole = run(slice(None))
    parts = [run(slice(i, i + 500)) for i in range(0, 4096, 500)]
    for field in ("fast_s", "nominal_s", "slow_s", "surface_nominal_s", "method", "note"):
        joined = np.concatenate([getattr(p, field) for p in parts])
        assert _bitwise_equal(getattr(whole, field), joined), field


def test_body_index_declines_rows_that_do_not_repeat() -> None:
    n = 5000
    distinct = np.linspace(1.0, 2.0, n)
    assert soak._body_index((distinct, np.full(n, 3.0)), (n,)) is None
    body, (a, c) = soak._body_index((np.tile([1.0, 2.0], n // 2), np.full(n, 3.0)), (n,))
    assert body.tolist()[:4] == [0, 1, 0, 1]
    assert a.tolist() == [1.0, 2.0] and c.tolist() == [3.0, 3.0]


def test_soak_rows_checks_keep_their_messages() -> None:
    b = _batch(3000)
    common = (b["part_c"], b["room_c"])
    props = (b["density"], b["specific_heat"], b["conductivity"])
    with pytest.raises(InputError, match="expected low ≤ nominal ≤ high"):
        soak.soak_time_for_rows(*common, 0.5, *props, 9.0, 8.0, 15.0, b["nominal_size_mm"])
    with pytest.raises(InputError, match="temperature band: expected a positive"):
        soak.soak_time_for_rows(*common, 0.0, *props, 4.0, 8.0, 15.0, b["nominal_size_mm"])
    with pytest.raises(InputError, match="heat-transfer coefficient, density"):
        soak.soak_time_for_rows(*common, 0.5, *props, -1.0, 8.0, 15.0, b["nominal_size_mm"])
