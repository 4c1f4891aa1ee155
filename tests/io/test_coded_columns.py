"""Work per distinct value gives, row by row, what the same work per row gives.

References:
- pandas 3.0 release notes, "Dedicated string data type by default": an object column of
  Python strings (missing values allowed) becomes the ``str`` dtype; a frame column built
  from codes must be exactly the column pandas builds from the strings.
- Python language reference, "Value comparisons": ``True == 1 == 1.0`` hash alike, so grouping
  by value must not merge them where the result depends on the type.
- The rest is common practice, no source: a value-by-value function of a column, computed on
  the distinct values and spread back by code, equals the function of the whole column; a
  fast path and its fallback give the same answer.
"""

from __future__ import annotations

import math

import numpy as np
import pandas as pd
import pytest

from qc.errors import QcError
from qc.io.assemble import _text_column
from qc.io.mpe import parse_mpe
from qc.io.plausibility import check_plausibility
from qc.io.resolve import general_tolerances, material_cte, parse_tolerances
from qc.io.values import (
    CellMarker,
    Coded,
    joint_codes,
    parse_numbers,
    parse_texts,
    parse_texts_coded,
)
from qc.tolerances import parse_tolerance_column
from qc.tolerances.iso2768 import general_tolerance


def _objects(items: list[object]) -> np.ndarray:
    out = np.empty(len(items), dtype=object)
    out[:] = items
    return out


@pytest.mark.parametrize("values, codes", [
    (["P-1", "P-2", ""], [0, 1, 2, 0, 2]),  # all text: the str dtype
    (["hole", None, "shaft"], [1, 0, 1, 2]),  # text and None: str dtype, None missing
    ([None], [0, 0, 0]),  # only None: pandas keeps object
    (["a", 7, None], [0, 1, 2]),  # text mixed with a number: object, as pandas infers
    (["a", 7, "b"], [0, 2, 0]),  # the number is in no row: a string column again
    ([True, 1.0], [0, 1]),  # equal in Python, kept apart by type
    (["a", "b"], []),  # no rows: object, as pandas gives for an empty object array
    (["batch.csv"], [0, 0, 0]),  # one text on every row: built from two buffers
    (["", "unused"], [0, 0]),  # one blank text in use
    (["Ø 25 µm"], [0, 0]),  # non-ASCII text: UTF-8 bytes, one character each
])
def test_frame_column_from_codes_is_the_column_pandas_builds(values: list[object],
                                                              codes: list[int]) -> None:
    col = Coded(np.asarray(codes, dtype=np.intp), _objects(values))
    expected = pd.Series(col.dense())
    got = pd.Series(_text_column(col))
    assert got.dtype == expected.dtype
    pd.testing.assert_series_equal(got, expected, check_exact=True)
    frame_fast = pd.DataFrame({"x": _text_column(col)})
    frame_slow = pd.DataFrame({"x": col.dense()})
    pd.testing.assert_frame_equal(frame_fast, frame_slow, check_exact=True)


def test_per_value_functions_never_see_a_value_no_row_holds() -> None:
    col = Coded(np.array([0, 2, 0], dtype=np.intp), _objects(["mm", "bad", "in"]))

    def strict(v: object) -> str:
        if v == "bad":
            raise AssertionError("called for a value no row holds")
        return str(v).upper()

    assert col.each(strict).tolist() == ["MM", "IN", "MM"]
    assert col.recode(strict).dense().tolist() == ["MM", "IN", "MM"]
    assert col.in_use().tolist() == [0, 2]


def test_where_put_take_and_constant() -> None:
    a = Coded(np.array([0, 1, 0, 1], dtype=np.intp), _objects(["x", "y"]))
    b = Coded.constant("z", 4)
    mask = np.array([True, False, False, True])
    assert a.where(mask, b).dense().tolist() == ["x", "z", "z", "y"]
    assert a.put(np.array([2]), Coded.constant("q", 1)).dense().tolist() == ["x", "y", "q", "y"]
    assert a.take(np.array([3, 0])).dense().tolist() == ["y", "x"]
    assert a.is_("y").tolist() == [False, True, False, True]
    assert a[1] == "y" and len(a) == 4
    of = Coded.of(_objects(["m", None, "m", math.nan]))
    assert of.dense().tolist() == ["m", None, "m", None]


def test_joint_codes_match_a_dictionary_of_combinations() -> None:
    rng = np.random.default_rng(7)
    a, b, c = (rng.integers(0, k, 500) for k in (4, 3, 5))
    combo, first = joint_codes(a, b, c)
    seen: dict[tuple[int, int, int], int] = {}
    for i, key in enumerate(zip(a.tolist(), b.tolist(), c.tolist(), strict=True)):
        assert combo[i] == seen.setdefault(key, len(seen))
    assert first.tolist() == [list(combo).index(j) for j in range(len(seen))]
    empty, none = joint_codes(np.zeros(0, dtype=np.intp))
    assert len(empty) == 0 and len(none) == 0


def test_text_columns_coded_and_dense_agree_on_both_paths() -> None:
    texts = [" P-1 ", "P-1", "", "  ", "P-2"]
    only_text = _objects(texts)
    mixed = _objects([*texts, 7.0, None, CellMarker("error", "#REF!"), True])
    coded, problems = parse_texts_coded(only_text)
    assert coded.dense().tolist() == ["P-1", "P-1", "", "", "P-2"] and problems == {}
    dense, mixed_problems = parse_texts(mixed)
    assert dense[:5].tolist() == coded.dense().tolist()  # the same texts on the mixed path
    assert dense[5:].tolist() == ["7", "", "", "True"]
    assert list(mixed_problems) == [7]


def test_numbers_on_the_all_text_path_equal_the_mixed_path() -> None:
    texts = ["12.5", "12.5", " 3 mm", "1,250", "n/a", "inf", "x", "12.01; 12.02"]
    alone = parse_numbers(_objects(texts), kind="length", multi=True)
    mixed = parse_numbers(_objects([*texts, 4.0]), kind="length", multi=True)
    k = len(texts)
    np.testing.assert_array_equal(alone.values, mixed.values[:k])
    assert alone.units.tolist() == mixed.units[:k].tolist()
    assert alone.counts.tolist() == mixed.counts[:k].tolist()
    assert alone.problems == {i: p for i, p in mixed.problems.items() if i < k}
    assert mixed.first[k] == 4.0


def test_tolerances_parsed_per_combination_equal_parsing_every_row() -> None:
    texts = _objects(["h7", "H7", "±0.1", "H7", "g6", "nonsense", "+0.2/-0.1", "H7"])
    nominal = np.array([25.0, 25.0, 10.0, 40.0, 25.0, 25.0, np.nan, 25.0])
    features = _objects([None, "hole", None, "hole", "shaft", None, None, "hole"])
    units = _objects(["millimeter"] * 6 + ["inch", "millimeter"])
    lo, hi, nom, desc, problems = parse_tolerances(texts, nominal, features, units, ".")
    for i in range(len(texts)):
        f = 25.4 if units[i] == "inch" else 1.0
        one = parse_tolerance_column(texts[i:i + 1], nominal[i:i + 1] / f,
                                     features=features[i:i + 1],
                                     unit="in" if units[i] == "inch" else "mm")
        r_lo, r_hi, r_nom, r_desc, r_err = one
        np.testing.assert_array_equal([lo[i], hi[i], nom[i]],
                                      [r_lo[0] * f, r_hi[0] * f, r_nom[0] * f])
        assert desc[i] == (r_desc[0] or "")
        assert (i in problems) == bool(r_err)
        if r_err:
            assert problems[i].expected == "a tolerance"
            assert problems[i].hint == str(r_err[0])


def test_general_tolerances_per_pair_equal_the_library_per_row() -> None:
    nominal = np.array([10.0, 10.0, 150.0, np.nan, 10.0, 5000.0, 10.0])
    classes = _objects(["m", "m", "f", "m", "", "v", "z"])
    gt = general_tolerances(nominal, classes)
    for i, (nom, cls) in enumerate(zip(nominal, classes, strict=True)):
        if cls == "" or not math.isfinite(nom):
            assert math.isnan(gt.half[i]) and i not in gt.problems
            continue
        try:
            expected = general_tolerance(float(nom), cls)
        except QcError as exc:
            assert math.isnan(gt.half[i])
            assert gt.problems[i].hint == str(exc) and gt.problems[i].value == cls
        else:
            assert gt.half[i] == expected and i not in gt.problems
    coded = general_tolerances(nominal, Coded.of(classes))
    np.testing.assert_array_equal(coded.half, gt.half)
    assert coded.problems == gt.problems


def test_material_look_up_coded_and_dense_agree() -> None:
    names = _objects(["steel", "", "Unobtainium-9", "steel", "Unobtainium-9"])
    dense = material_cte(names)
    coded = material_cte(Coded.of(names))
    np.testing.assert_array_equal(dense.cte, coded.cte)
    np.testing.assert_array_equal(dense.cte_u, coded.cte_u)
    assert dense.problems == coded.problems
    assert sorted(dense.problems) == [2, 4]


def test_a_blank_mpe_column_reads_as_nothing() -> None:
    # the reader skips parse_mpe for a sheet without an MPE column: this is what it would give
    a, k, problems = parse_mpe(_objects([""] * 3), _objects(["millimeter"] * 3))
    assert np.isnan(a).all() and np.isnan(k).all() and problems == {}


def _doubtful_frame(text_dtype: object) -> pd.DataFrame:
    n = 6
    return pd.DataFrame({
        "kind": pd.Series(["", " Deviation ", "position", None, "", "size"], dtype=text_dtype),
        "unit": pd.Series(["mm", "mm", "mm", "°", None, "mm"], dtype=text_dtype),
        "nominal_mm": [-1.0, -1.0, -2.0, -3.0, 25.0, 25.0],
        "lower_limit_mm": [24.98, 24.98, 24.98, 24.98, 25.01, 24.0],
        "upper_limit_mm": [25.02, 25.02, 25.02, 25.02, 25.05, 24.5],
        "reading_mean_mm": [25.0] * n, "reading_sd_mm": [np.nan] * n,
        "tolerance_description": pd.Series(["", "ISO 286 H7", None, "", "", "ISO 286 g6"],
                                           dtype=text_dtype),
        "source_file": pd.Series(["batch.csv"] * n, dtype=text_dtype),
        "source_sheet": [None] * n, "source_row": list(range(2, n + 2)),
    })


def test_plausibility_on_string_columns_equals_object_columns() -> None:
    fast = check_plausibility(_doubtful_frame("str"))
    slow = check_plausibility(_doubtful_frame(object))
    assert fast == slow
    errors, warnings, _ = fast
    assert sorted(errors) == [0]  # negative nominal; the signed kinds and the angle row pass
    # nominal outside its own limits: rows 0 and 4; rows 1-3 are signed, row 5 an ISO 286 fit
    assert sorted(warnings) == [0, 4]
    assert isinstance(_doubtful_frame("str")["kind"].dtype, pd.StringDtype)
    assert _doubtful_frame(object)["kind"].dtype == object
