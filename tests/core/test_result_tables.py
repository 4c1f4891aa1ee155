"""Result tables built per distinct value give the same frames as row-by-row building.

The action list formats each distinct reason once, tests the flags once per category and
assembles text columns in pyarrow; the characteristic table groups on integer codes.  Each
is held here to a plain row-by-row (or plain pandas groupby) reference on a made-up batch.
"""

import numpy as np
import pandas as pd
import pytest

from qc import results as R
from qc.core.band import allowable_band

VERDICTS = ["conforms", "nonconforming", "borderline", "not evaluated"]
FLAG_TEXTS = ["", "instrument-too-coarse", "instrument-too-coarse;soak-advised",
              "temperature-decides;soak-advised", "calibration-overdue",
              "temperature-decides", "temperature-decides;calibration-overdue;soak-advised"]


def _batch(n: int = 3000, seed: int = 5) -> tuple[pd.DataFrame, pd.DataFrame]:
    """A made-up inspection batch: frame (inputs) and results, with blanks here and there."""
    rng = np.random.default_rng(seed)
    chars = np.array(["Bore A", "Pin", "Width", None], dtype=object)[rng.integers(0, 4, n)]
    parts = np.array(["P-1", "P-2", None, "P-3"], dtype=object)[rng.integers(0, 4, n)]
    inst = np.array(["M-07", "C-2", None], dtype=object)[rng.integers(0, 3, n)]
    nominal = np.array([10.0, 25.0, 40.0])[rng.integers(0, 3, n)]
    frame = pd.DataFrame({
        "source_row": np.arange(2, n + 2),
        "part": parts, "characteristic": chars, "instrument": inst,
        "nominal_mm": nominal, "lower_limit_mm": nominal - 0.01, "upper_limit_mm": nominal + 0.02,
        "part_cte": np.where(rng.random(n) < 0.1, np.nan, 11.5e-6),
        "gauge_cte": 11.5e-6, "part_cte_u": 1e-6, "gauge_cte_u": 1e-6,
    })
    low = np.round(rng.uniform(0, 90, n), 2)
    low[rng.random(n) < 0.05] = np.nan
    low[:8] = [0.5, 1.5, 2.5, 3.4999999, 0.0, -0.0, 12.5, 1e15]  # ties and edges of rounding
    ratio = rng.uniform(0.5, 6.0, n)
    ratio[:6] = [0.25, 0.35, 3.05, 0.05, np.nan, np.inf]
    flags = pd.Categorical(np.array(FLAG_TEXTS)[rng.integers(0, len(FLAG_TEXTS), n)])
    message = np.where(rng.random(n) < 0.05, "Reading: expected a number, got 'x'", "")
    results = pd.DataFrame({
        "unit": np.where(rng.random(n) < 0.3, "in", "mm"),
        "size_at_20c": nominal + rng.normal(0, 0.005, n),
        "lower_limit": nominal - 0.01, "upper_limit": nominal + 0.02,
        "verdict": pd.Categorical.from_codes(rng.integers(0, 4, n), VERDICTS),
        "uncertainty_ratio": ratio, "flags": flags, "message": message,
        "soak_minutes_low": low, "soak_minutes_high": low * 2.5,
    })
    return frame, results


def _reference_actions(frame: pd.DataFrame, results: pd.DataFrame) -> pd.DataFrame:
    """The action list written row by row with f-strings (the behaviour being kept)."""
    flags = results["flags"].fillna("").astype(str).to_numpy(dtype=object)
    verdict = results["verdict"].astype(object).to_numpy()
    lines = []
    for i in range(len(frame)):
        f = flags[i]
        soak, hot = "soak-advised" in f, "temperature-decides" in f
        todo = []
        if soak:
            lo, hi = results["soak_minutes_low"].iat[i], results["soak_minutes_high"].iat[i]
            todo.append(("soak and re-measure",
                         f"let it soak {lo:.0f}–{hi:.0f} min in still air, then re-measure"
                         if np.isfinite(lo) and np.isfinite(hi)
                         else "let it reach the gauge temperature, then re-measure"))
        if verdict[i] == "borderline" and not soak:
            todo.append(("re-measure or decide with the customer", "borderline: neither "
                         "conformance nor nonconformance is proven under the decision rule"))
        if hot and not soak:
            todo.append(("check the temperatures",
                         "the verdict without the thermal correction would differ"))
        if "instrument-too-coarse" in f:
            x = results["uncertainty_ratio"].iat[i]
            todo.append(("use a finer instrument", f"tolerance / (2U) = {x:.1f} (below 4:1)"))
        if "calibration-overdue" in f:
            inst = frame["instrument"].iat[i]
            inst = "" if pd.isna(inst) else str(inst)
            todo.append(("calibration overdue",
                         f"instrument {inst} was past its calibration due date"))
        if verdict[i] == "not evaluated":
            todo.append(("correct the input", results["message"].iat[i]))
        if verdict[i] == "nonconforming":
            todo.append(("segregate the part (nonconforming)",
                         "outside the specification zone enlarged by U"))
        for action, reason in todo:
            part, char = frame["part"].iat[i], frame["characteristic"].iat[i]
            lines.append((frame["source_row"].iat[i], "" if pd.isna(part) else part,
                          "" if pd.isna(char) else char, action, reason))
    return pd.DataFrame(lines, columns=["source_row", "part", "characteristic", "action",
                                        "reason"])


def test_actions_match_row_by_row_reference() -> None:
    frame, results = _batch()
    got = R.actions_frame(frame, results)
    ref = _reference_actions(frame, results)
    assert len(got) == len(ref) > 0
    for col in ("source_row", "part", "characteristic", "reason"):
        assert got[col].tolist() == ref[col].tolist(), col
    assert got["action"].astype(str).tolist() == ref["action"].tolist()


def test_actions_fast_flags_and_text_flags_give_the_same_frame() -> None:
    # Categorical flags are tested once per category; text flags (after plausibility
    # warnings were appended) row by row.  Both must give the same frame.
    frame, results = _batch(2500, seed=9)
    as_text = results.assign(flags=results["flags"].astype(str).to_numpy(dtype=object))
    pd.testing.assert_frame_equal(R.actions_frame(frame, results),
                                  R.actions_frame(frame, as_text), check_exact=True)


def test_has_flag_by_category_matches_per_row_test() -> None:
    flags = pd.Series(pd.Categorical(["a;soak-advised", "", "soak-advised", "b"] * 10))
    hit = R._has_flag(flags, "soak-advised")
    assert hit.tolist() == flags.astype(str).str.contains("soak-advised").tolist()
    assert R._has_flag(pd.Series(pd.Categorical(["soak-advised", None])), "soak") is None
    assert R._has_flag(pd.Series(["soak-advised"], dtype=object), "soak") is None


@pytest.mark.parametrize("decimals", [0, 1])
def test_format_fixed_matches_python_formatting(decimals: int) -> None:
    rng = np.random.default_rng(1)
    values = np.concatenate([
        [0.5, 1.5, 2.5, -0.5, -1.5, 0.25, 0.35, 0.05, 0.15, -0.05, -0.04, -0.0, 0.0, 1e9,
         123456789.25, 1e16, np.nan, np.inf, -np.inf, 4.45, 4.55, 2.675],
        np.round(rng.uniform(-50, 50, 2000), 2), rng.uniform(0, 5, 2000),
    ])
    texts, codes = R._format_fixed(values, decimals)
    assert [texts[c] for c in codes] == [f"{v:.{decimals}f}" for v in values.tolist()]
    assert len(texts) < values.size  # formatted per distinct rounded value


def _reference_characteristics(frame: pd.DataFrame, results: pd.DataFrame,
                               share: float) -> pd.DataFrame:
    """The plain pandas groupby on the texts (the behaviour being kept), bands aside."""
    data = pd.DataFrame({
        "characteristic": frame["characteristic"].fillna("").to_numpy(),
        "unit": results["unit"].to_numpy(),
        "size": results["size_at_20c"].to_numpy(),
        "lower": results["lower_limit"].to_numpy(),
        "upper": results["upper_limit"].to_numpy(),
        "verdict": results["verdict"].to_numpy(),
    })
    g = data.groupby(["characteristic", "unit"], sort=False, dropna=False)
    out = g["size"].agg(["count", "mean", "std", "min", "max"]).reset_index()
    out = out.rename(columns={"count": "n", "std": "s"})
    out["lower_limit"] = g["lower"].first().to_numpy()
    out["upper_limit"] = g["upper"].first().to_numpy()
    for v in VERDICTS:
        out[v] = g["verdict"].apply(lambda s, v=v: int((s == v).sum())).to_numpy()
    return out


def test_characteristic_table_matches_text_groupby() -> None:
    frame, results = _batch(4000, seed=2)
    results.loc[results.index[:50], "size_at_20c"] = np.nan  # not evaluated rows
    results.loc[results.index[:3], "lower_limit"] = np.nan  # first non-blank limit is kept
    got = R.characteristic_frame(frame, results, 0.1)
    ref = _reference_characteristics(frame, results, 0.1)
    pd.testing.assert_frame_equal(got[ref.columns], ref, check_exact=True)
    assert len(got) == 8  # 4 characteristic texts (one blank) × 2 units


def test_characteristic_bands_use_each_groups_first_value() -> None:
    frame, results = _batch(3000, seed=4)
    frame.loc[frame.index[:5], "part_cte"] = np.nan  # the first non-blank CTE counts
    no_cte = (frame["characteristic"] == "Pin").to_numpy() & (results["unit"] == "in").to_numpy()
    frame.loc[no_cte, "part_cte"] = np.nan  # a group without any CTE has no band
    got = R.characteristic_frame(frame, results, 0.1)
    key = [frame["characteristic"].fillna(""), results["unit"]]
    cols = ["nominal_mm", "lower_limit_mm", "upper_limit_mm", "part_cte", "gauge_cte",
            "part_cte_u", "gauge_cte_u"]
    first = frame[cols].groupby(key, sort=False, dropna=False).first()
    ok = np.isfinite(first["part_cte"].to_numpy())
    f = first[ok]
    band = allowable_band(f["nominal_mm"].to_numpy(),
                          (f["upper_limit_mm"] - f["lower_limit_mm"]).to_numpy() * 1000.0, 0.1,
                          f["part_cte"].to_numpy(), f["gauge_cte"].to_numpy(),
                          f["part_cte_u"].to_numpy(), f["gauge_cte_u"].to_numpy(),
                          0.5 / np.sqrt(3))
    assert np.isnan(got["band_low_c"].to_numpy()[~ok]).all()
    assert got["band_low_c"].to_numpy()[ok].tolist() == band.uncorrected_c[0].tolist()
    assert got["band_corrected_high_c"].to_numpy()[ok].tolist() == band.corrected_c[1].tolist()
    assert 0 < ok.sum() < len(ok)


def test_text_columns_fast_and_object_paths_agree() -> None:
    texts = ["a", "", "let it soak 3–8 min"]
    codes = np.array([2, 0, 1, 2, 2])
    col = pd.Series(R._texts_at(texts, codes))
    assert col.tolist() == [texts[c] for c in codes]
    source = pd.Series(["x", None, "y", ""], dtype="str")
    rows = np.array([3, 1, 0, 0, 2])
    assert pd.Series(R._labels_at(source, rows)).tolist() == R._labels(source)[rows].tolist()
    pd.testing.assert_series_equal(pd.Series(R._labels_at(source, rows)),
                                   pd.Series(R._labels(source)[rows]), check_exact=True)
