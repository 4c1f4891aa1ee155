"""parse_tolerance_column: one parse per distinct combination, errors per row, never raising.

Expected limits are the same notations as in test_notation.py; ISO values [PC5] are from
../shared/reference/published-checks.md §5 and [PC6] from §6.
"""

from __future__ import annotations

import numpy as np
import pytest

from qc.errors import ToleranceError
from qc.tolerances import column, parse_tolerance_column


def test_mixed_column_matches_single_parses() -> None:
    texts = ["±0.05", "H7", "", "12.00-12.05", "bad", None, "Ø25 H7/g6", "H7/g6"]
    nominals = [12.0, 25.0, 30.0, np.nan, 1.0, 5.0, np.nan, 25.0]
    features = [None, None, None, None, None, None, "shaft", None]
    lo, hi, nom, desc, errors = parse_tolerance_column(
        texts, nominals, features=features, general_class="m"
    )
    want_lo = [11.95, 25.0, 29.8, 12.0, np.nan, 4.9, 24.980, np.nan]  # ISO 2768-m [PC6]
    want_hi = [12.05, 25.021, 30.2, 12.05, np.nan, 5.1, 24.993, np.nan]  # H7, g6 [PC5]
    np.testing.assert_allclose(lo, want_lo, atol=1e-12)
    np.testing.assert_allclose(hi, want_hi, atol=1e-12)
    np.testing.assert_allclose(nom, [12, 25, 30, np.nan, np.nan, 5, 25, np.nan])
    assert sorted(errors) == [4, 7]
    assert all(isinstance(e, ToleranceError) for e in errors.values())
    assert str(errors[7]).startswith("'H7/g6' is a fit of a hole and a shaft")
    assert desc[0] == "12 ±0.05 mm" and desc[4] == ""


def test_blank_without_general_class_is_a_row_error() -> None:
    lo, hi, _, _, errors = parse_tolerance_column(["", "±0.1"], [10.0, 10.0])
    assert str(errors[0]) == "no tolerance given and no ISO 2768-1 general class declared"
    assert np.isnan(lo[0]) and hi[1] == pytest.approx(10.1)


def test_relative_tolerance_without_nominal_is_a_row_error() -> None:
    _, _, _, _, errors = parse_tolerance_column(["+0.02/-0.01"], [np.nan])
    assert str(errors[0]) == (
        "the tolerance '+0.02/-0.01' is relative to a nominal size, but the row has none"
    )


def test_units_per_row_and_comma_decimals() -> None:
    lo, hi, _, _, errors = parse_tolerance_column(
        ["±0,05", "±0,002"], [10.0, 1.0], unit=["mm", "in"], decimal=","
    )
    assert not errors
    np.testing.assert_allclose(lo, [9.95, 0.998])
    np.testing.assert_allclose(hi, [10.05, 1.002])


def test_each_distinct_combination_is_parsed_once(monkeypatch: pytest.MonkeyPatch) -> None:
    calls: list[str] = []
    real = column.parse_tolerance

    def counting(text: str, **kw: object):
        calls.append(text)
        return real(text, **kw)

    monkeypatch.setattr(column, "parse_tolerance", counting)
    n = 100_000
    texts = np.array(["±0.05", "H7", "12.00-12.05", "nonsense"] * (n // 4), dtype=object)
    nominals = np.tile([12.0, 25.0, 12.0, 3.0], n // 4)
    lo, hi, _, _, errors = parse_tolerance_column(texts, nominals)
    assert sorted(calls) == sorted(["±0.05", "H7", "12.00-12.05", "nonsense"])
    assert len(lo) == n and len(errors) == n // 4
    assert set(errors) == set(range(3, n, 4))
    assert hi[1] == pytest.approx(25.021) and hi[n - 3] == pytest.approx(25.021)  # [PC5]


def test_rows_in_equal_rows_out_for_string_arrays() -> None:
    texts = np.array(["±0.05", "g6"] * 10)
    lo, hi, nom, desc, errors = parse_tolerance_column(texts, np.full(20, 25.0))
    assert lo.shape == hi.shape == nom.shape == desc.shape == (20,)
    assert not errors
    assert hi[1] == pytest.approx(24.993)  # g6 at 25 mm: es = -7 µm [PC5]


def test_length_mismatch() -> None:
    with pytest.raises(ToleranceError) as info:
        parse_tolerance_column(["±0.05"], [1.0, 2.0])
    assert str(info.value) == "nominals has 2 entries for 1 rows"
