"""Tables derived from a batch's results: the long budget, per-characteristic statistics,
the action list and soak advice. Column-wise pandas; no file I/O."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pyarrow as pa
import pyarrow.compute as pc

from qc.core.band import allowable_band
from qc.core.budget import BatchBudget
from qc.core.labels import distribution_name
from qc.core.soak import radiation_coefficient, soak_time_for_rows
from qc.errors import QcError

__all__ = [
    "FLAG_CODES",
    "RESULT_COLUMNS",
    "actions_frame",
    "band_actions",
    "budget_frame",
    "characteristic_frame",
    "soak_advice",
]

#: The result columns, in order (a public interface: docs/columns.md).
RESULT_COLUMNS: tuple[str, ...] = (
    "unit", "lower_limit", "upper_limit", "reading", "size_at_20c", "thermal_correction",
    "combined_uncertainty", "coverage_factor", "expanded_uncertainty", "effective_dof",
    "verdict", "conformance_probability", "capability_index", "uncertainty_ratio",
    "margin_in_U", "accept_low", "accept_high", "flags", "message", "soak_minutes_low",
    "soak_minutes_high",
)

#: Flag codes and what they tell the inspector (docs/columns.md).
FLAG_CODES: dict[str, str] = {
    "temperature-decides": "the verdict without the thermal correction would differ",
    "calibration-overdue": "the instrument's calibration was due before the measurement date",
    "instrument-too-coarse": "tolerance / (2U) below 4: use a finer instrument",
    "soak-advised": "borderline or temperature-decided with the part off the gauge "
                    "temperature: let it soak and re-measure",
    "reference-not-20c": "sizes referred to a temperature other than 20 °C (ISO 1)",
    "check-input": "a value looks implausible (see message): a likely unit mix-up or typing "
                   "error",
}


def budget_frame(budget: BatchBudget, results: pd.DataFrame, f: np.ndarray,
                 source_rows: np.ndarray) -> pd.DataFrame:
    """The budget in long form: one row per contribution per measurement, with origin.

    Contributions are in each row's own unit (``f`` mm per unit); their squares sum to the
    row's combined_uncertainty² (second-order terms included as their own rows).
    """
    lf = budget.long_form()
    i = lf.measurement
    shared = budget.shared_room[i]
    # names, units and distributions come from short lists: categorical columns, built from
    # codes, so a million budget rows cost no string conversion
    m = len(budget.quantity_names)
    names = list(dict.fromkeys([*budget.quantity_names, *budget.quantity_names_shared]))
    code_plain = np.array([names.index(q) for q in budget.quantity_names])
    code_shared = np.array([names.index(q) for q in budget.quantity_names_shared])
    quantity = np.where(shared, code_shared[lf.quantity], code_plain[lf.quantity])
    dist_codes = np.unique(lf.distribution) if lf.distribution.size else np.array([], np.int8)
    dist_names = [distribution_name(int(c)) for c in dist_codes]
    unit_codes, unit_names = pd.factorize(pd.Series(results["unit"].to_numpy(dtype=object)))
    return pd.DataFrame({
        "row_index": i,
        "source_row": np.asarray(source_rows)[i],
        "quantity": pd.Categorical.from_codes(quantity, names),
        "estimate": lf.estimate,
        "estimate_unit": _categorical(lf.quantity, list(budget.units[:m])),
        "standard_uncertainty": lf.u,
        "distribution": pd.Categorical.from_codes(
            np.searchsorted(dist_codes, lf.distribution), dist_names),
        "dof": lf.dof,
        "sensitivity": lf.sensitivity,
        "contribution": lf.contribution / f[i],
        "unit": pd.Categorical.from_codes(unit_codes[i], list(unit_names)),
        "share": lf.share,
    })


def _categorical(codes: np.ndarray, labels: list[str]) -> pd.Categorical:
    """A categorical from codes into ``labels``, which may repeat."""
    uniq = list(dict.fromkeys(labels))
    remap = np.array([uniq.index(x) for x in labels], dtype=np.int64)
    return pd.Categorical.from_codes(remap[codes] if codes.size else codes, uniq)


def characteristic_frame(frame: pd.DataFrame, results: pd.DataFrame,
                         share: float) -> pd.DataFrame:
    """Per characteristic: n, mean, s, min, max of the corrected sizes (row unit), and the
    temperature band that keeps the thermal error within ``share`` of the tolerance.

    Groups are (characteristic, unit) in order of first appearance; the texts are turned into
    one integer group code first, so the statistics are a numeric groupby.
    """
    group, characteristic, unit = _group_codes(frame["characteristic"].fillna(""),
                                                 results["unit"])
    size = pd.Series(results["size_at_20c"].to_numpy(dtype=float))
    stats = size.groupby(group, sort=False).agg(["count", "mean", "std", "min", "max"])
    out = pd.DataFrame({"characteristic": characteristic, "unit": unit})
    out["n"] = stats["count"].to_numpy()
    out["mean"] = stats["mean"].to_numpy()
    out["s"] = stats["std"].to_numpy()
    out["min"] = stats["min"].to_numpy()
    out["max"] = stats["max"].to_numpy()
    out["lower_limit"] = _first_valid(results["lower_limit"].to_numpy(dtype=float), group,
                                      len(out))
    out["upper_limit"] = _first_valid(results["upper_limit"].to_numpy(dtype=float), group,
                                      len(out))
    verdict = results["verdict"]
    for v in ("conforms", "nonconforming", "borderline", "not evaluated"):
        hit = (verdict == v).to_numpy(dtype=bool)
        count = np.bincount(group[hit], minlength=len(out)).astype(np.int64)
        out[v] = count if len(out) else count.astype(object)  # empty: as groupby apply gives
    out["band_low_c"], out["band_high_c"], out["band_corrected_low_c"], \
        out["band_corrected_high_c"] = _bands(frame, group, len(out), share)
    return out


def _group_codes(characteristic: pd.Series, unit: pd.Series
                 ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """One code per row for its (characteristic, unit), numbered in order of first
    appearance, and the two labels of each group (object arrays; a blank unit stays NaN)."""
    c_codes, c_uniques = pd.factorize(characteristic, use_na_sentinel=False)
    u_codes, u_uniques = pd.factorize(unit, use_na_sentinel=False)
    pair = c_codes.astype(np.int64) * max(len(u_uniques), 1) + u_codes
    group, pairs = pd.factorize(pair)
    width = max(len(u_uniques), 1)
    labels_c = np.asarray(c_uniques, dtype=object)[pairs // width]
    labels_u = np.asarray(u_uniques, dtype=object)[pairs % width]
    return group.astype(np.intp), labels_c, labels_u


def _first_valid(values: np.ndarray, group: np.ndarray, ngroups: int) -> np.ndarray:
    """Each group's first non-NaN value, NaN where it has none (groupby ``first``).

    Groups usually show a value within their first rows, so the rows are scanned in growing
    blocks from the top and the scan stops once every group has its value.
    """
    out = np.full(ngroups, np.nan)
    missing = np.ones(ngroups, dtype=bool)
    start, block = 0, 4096
    while start < len(values) and missing.any():
        stop = min(len(values), start + block)
        v, g = values[start:stop], group[start:stop]
        take = ~np.isnan(v) & missing[g]
        found, first = np.unique(g[take], return_index=True)  # first occurrence in the block
        out[found] = v[take][first]
        missing[found] = False
        start, block = stop, block * 2
    return out


def _bands(frame: pd.DataFrame, group: np.ndarray, ngroups: int, share: float):
    """Allowable temperature band per characteristic (qc.core.band), NaN where not defined.

    Each input is the group's first non-blank value, as pandas' groupby ``first`` gives it.
    """
    def first(col: str) -> np.ndarray:
        if col not in frame:
            return np.full(ngroups, np.nan)
        return _first_valid(frame[col].to_numpy(dtype=float), group, ngroups)

    nominal = first("nominal_mm")
    width = first("upper_limit_mm") - first("lower_limit_mm")
    ap, ag = first("part_cte"), first("gauge_cte")
    up, ug = first("part_cte_u"), first("gauge_cte_u")
    ok = (nominal > 0) & (width > 0) & np.isfinite(ap)
    res = [np.full(len(nominal), np.nan) for _ in range(4)]
    if ok.any():
        ag_ok = np.where(np.isfinite(ag[ok]), ag[ok], 11.5e-6)
        b = allowable_band(nominal[ok], width[ok] * 1000.0, share, ap[ok], ag_ok,
                           np.nan_to_num(up[ok]), np.nan_to_num(ug[ok]), 0.5 / np.sqrt(3))
        res[0][ok], res[1][ok] = b.uncorrected_c
        res[2][ok], res[3][ok] = b.corrected_c
    return res


def soak_advice(frame: pd.DataFrame, results: pd.DataFrame,
                band_k: float) -> tuple[np.ndarray, np.ndarray]:
    """Soak time range (minutes) for rows flagged soak-advised; NaN elsewhere.

    Still air on a rack with a dull surface (qc/data/heat_transfer.toml), the part as a solid
    cube of its nominal size when no geometry is known (the note in docs/thermal.md says so).
    """
    n = len(frame)
    low, high = np.full(n, np.nan), np.full(n, np.nan)
    soak = _has_flag(results["flags"], "soak-advised")
    if soak is None:
        soak = results["flags"].str.contains("soak-advised", regex=False).to_numpy()
    rows = np.flatnonzero(soak)
    if rows.size == 0:
        return low, high
    from qc.library.heat_transfer import load_heat_transfer
    from qc.library.materials import load_materials

    library = load_materials()
    resting, surfaces = load_heat_transfer()
    still, dull = resting["still-air"], surfaces["dull-metal"]
    # materials repeat: look each distinct name up once and spread its properties by code
    codes, names = pd.factorize(frame["part_material"].iloc[rows].fillna(""),
                                use_na_sentinel=False)
    table = np.full((len(names), 3), np.nan)
    for j, name in enumerate(np.asarray(names, dtype=object).tolist()):
        try:
            mat = library.get(name)
        except QcError:
            continue
        table[j] = (mat.density, mat.specific_heat, mat.conductivity)
    ok = np.isfinite(table).all(axis=1)[codes]
    if not ok.any():
        return low, high
    r = rows[ok]
    part = frame["part_temp_c"].to_numpy(dtype=float)[r]
    gauge = frame["gauge_temp_c"].to_numpy(dtype=float)[r]
    room = frame["room_temp_c"].to_numpy(dtype=float)[r] if "room_temp_c" in frame else gauge
    target = np.where(np.isfinite(gauge), gauge, room)
    size = np.abs(frame["nominal_mm"].to_numpy(dtype=float)[r])
    good = np.isfinite(part) & np.isfinite(target) & (size > 0)
    if not good.any():
        return low, high
    r, part, target, size = r[good], part[good], target[good], size[good]
    material = codes[ok][good]
    density, heat, conductivity = (np.ascontiguousarray(table[:, j])[material] for j in range(3))
    # radiation of a dull, shop-worn surface added to still-air convection, each end of the
    # range with its own emissivity (qc/data/heat_transfer.toml)
    h = [float(c + radiation_coefficient(e)) for c, e in (
        (still.h_low, dull.eps_low), (still.h_nominal, dull.eps_nominal),
        (still.h_high, dull.eps_high))]
    soak_rows = soak_time_for_rows(part, target, band_k, density, heat, conductivity, *h, size)
    low[r] = soak_rows.fast_s / 60.0
    high[r] = soak_rows.slow_s / 60.0
    return low, high


def _has_flag(flags: pd.Series, code: str) -> np.ndarray | None:
    """Rows whose ';'-separated flags contain ``code``, for a categorical flags column
    without blanks: the few categories are tested once and each row takes its category's
    answer.  None for any other column; the callers then test the texts row by row."""
    if not isinstance(flags.dtype, pd.CategoricalDtype):
        return None
    codes = flags.cat.codes.to_numpy()
    if codes.size and codes.min() < 0:
        return None
    hit = flags.cat.categories.astype(str).str.contains(code, regex=False)
    return np.asarray(hit, dtype=bool)[codes]


def actions_frame(frame: pd.DataFrame, results: pd.DataFrame) -> pd.DataFrame:
    """What to do next, one line per row and action (borderline, soak, instrument, calibration).

    Reasons are written only for the rows that need them, each distinct text once: a reason
    is a table of texts and one code per row into it, and the texts are spread at the end.
    """
    verdict = results["verdict"]

    def flagged(code: str) -> np.ndarray:
        hit = _has_flag(results["flags"], code)
        if hit is None:
            flags = results["flags"].fillna("").astype(str)
            hit = flags.str.contains(code, regex=False).to_numpy()
        return hit

    soak = flagged("soak-advised")
    hot = flagged("temperature-decides")
    entries: list[tuple[np.ndarray, str, list, np.ndarray]] = []
    source_row = frame["source_row"].to_numpy()

    def add(mask: np.ndarray, action: str, reason) -> None:
        """``reason``: a text, or a function of the selected rows giving (texts, code per
        row)."""
        rows = np.flatnonzero(mask)
        if rows.size == 0:
            return
        if isinstance(reason, str):
            texts, codes = [reason], np.zeros(rows.size, dtype=np.intp)
        else:
            texts, codes = reason(rows)
        entries.append((rows, action, list(texts), codes))

    def soak_reason(rows: np.ndarray) -> tuple[list, np.ndarray]:
        low = results["soak_minutes_low"].to_numpy(dtype=float)[rows]
        high = results["soak_minutes_high"].to_numpy(dtype=float)[rows]
        known = np.isfinite(low) & np.isfinite(high)
        codes = np.zeros(rows.size, dtype=np.intp)
        lo_text, lo_codes = _format_fixed(low[known], 0)
        hi_text, hi_codes = _format_fixed(high[known], 0)
        pair, pairs = pd.factorize(lo_codes.astype(np.int64) * max(len(hi_text), 1) + hi_codes)
        width = max(len(hi_text), 1)
        texts = ["let it reach the gauge temperature, then re-measure"] + [
            f"let it soak {lo_text[a // width]}–{hi_text[a % width]} min in still air, "
            "then re-measure" for a in pairs.tolist()]
        codes[known] = pair + 1
        return texts, codes

    def ratio_reason(rows: np.ndarray) -> tuple[list, np.ndarray]:
        text, codes = _format_fixed(results["uncertainty_ratio"].to_numpy(dtype=float)[rows], 1)
        return [f"tolerance / (2U) = {x} (below 4:1)" for x in text], codes

    def overdue_reason(rows: np.ndarray) -> tuple[list, np.ndarray]:
        inst = frame["instrument"].iloc[rows].fillna("").astype(str)
        codes, names = pd.factorize(inst, use_na_sentinel=False)
        return ["instrument " + x + " was past its calibration due date"
                for x in np.asarray(names, dtype=object).tolist()], codes

    def input_reason(rows: np.ndarray) -> tuple[list, np.ndarray]:
        codes, texts = pd.factorize(results["message"].iloc[rows].fillna(""),
                                    use_na_sentinel=False)
        return np.asarray(texts, dtype=object).tolist(), codes

    add(soak, "soak and re-measure", soak_reason)
    add((verdict == "borderline").to_numpy() & ~soak, "re-measure or decide with the customer",
        "borderline: neither conformance nor nonconformance is proven under the decision rule")
    add(hot & ~soak, "check the temperatures",
        "the verdict without the thermal correction would differ")
    add(flagged("instrument-too-coarse"), "use a finer instrument", ratio_reason)
    add(flagged("calibration-overdue"), "calibration overdue", overdue_reason)
    add((verdict == "not evaluated").to_numpy(), "correct the input", input_reason)
    add((verdict == "nonconforming").to_numpy(), "segregate the part (nonconforming)",
        "outside the specification zone enlarged by U")
    columns = ["source_row", "part", "characteristic", "action", "reason"]
    if not entries:
        return pd.DataFrame(columns=columns)
    rows = np.concatenate([e[0] for e in entries])
    order = np.argsort(source_row[rows], kind="stable")  # by spreadsheet row, actions in turn
    rows = rows[order]
    offsets = np.cumsum([0] + [len(e[2]) for e in entries])[:-1]
    reason_codes = np.concatenate([e[3] + o for e, o in zip(entries, offsets, strict=True)])
    return pd.DataFrame({
        "source_row": source_row[rows],
        "part": _labels_at(frame["part"], rows),
        "characteristic": _labels_at(frame["characteristic"], rows),
        "action": pd.Categorical.from_codes(
            np.repeat(np.arange(len(entries)), [e[0].size for e in entries])[order],
            [e[1] for e in entries]),
        "reason": _texts_at([t for e in entries for t in e[2]], reason_codes[order]),
    })


def _format_fixed(values: np.ndarray, decimals: int) -> tuple[list[str], np.ndarray]:
    """``f"{v:.{decimals}f}"`` for each value as (distinct texts, code per value).

    Away from a rounding tie, the text depends only on the value rounded to ``decimals``
    (round half to even, as Python's formatting does), which has few distinct values, so each
    rounded value is formatted once.  Values within reach of a tie, huge or not finite, are
    formatted one by one, exactly as before.
    """
    scaled = values * 10.0**decimals
    rounded = np.rint(scaled)
    with np.errstate(invalid="ignore"):
        clear = (np.abs(scaled) < 1e9) & (np.abs(np.abs(scaled - rounded) - 0.5) > 1e-6)
    key = np.where(clear, rounded, 0.0).view(np.int64)  # bit pattern: -0 stays apart from 0
    codes, uniques = pd.factorize(key)
    texts = [f"{x / 10.0**decimals:.{decimals}f}" for x in uniques.view(np.float64).tolist()]
    codes = codes.astype(np.intp)
    odd = np.flatnonzero(~clear)
    if odd.size:
        codes[odd] = len(texts) + np.arange(odd.size)
        texts += [f"{x:.{decimals}f}" for x in values[odd].tolist()]
    return texts, codes


def _text_dtype():
    """How pandas stores a column built from Python texts (pyarrow 'str' from pandas 3 on),
    or None where it does not keep texts in pyarrow (then columns are built as before)."""
    dtype = pd.Series(np.array([""], dtype=object)).dtype
    if isinstance(dtype, pd.StringDtype) and dtype.storage == "pyarrow":
        return dtype
    return None


def _texts_at(texts: list, codes: np.ndarray):
    """The column ``texts[codes]``, made in pyarrow (no Python string per row) where pandas
    stores texts there; an object array, as pandas would infer it, otherwise."""
    dtype = _text_dtype()
    if dtype is not None and all(isinstance(t, str) for t in texts):
        table = pa.array(texts, type=pa.large_string())
        return pd.array(table.take(pa.array(codes, type=pa.int64())), dtype=dtype)
    table = np.empty(len(texts), dtype=object)
    table[:] = texts
    return table[codes]


def _labels_at(column: pd.Series, rows: np.ndarray):
    """The text column's values at ``rows``, '' for blanks (see :func:`_labels`)."""
    dtype = _text_dtype()
    if dtype is not None and isinstance(column.dtype, pd.StringDtype) \
            and column.dtype.storage == "pyarrow":
        taken = pc.fill_null(column.array.__arrow_array__().take(pa.array(rows)), "")
        return pd.array(taken, dtype=dtype)
    return _labels(column)[rows]


def _labels(column: pd.Series) -> np.ndarray:
    """A text column as an object array, converted once per distinct value ('' for blanks)."""
    codes, uniques = pd.factorize(column, use_na_sentinel=True)
    table = np.append(np.asarray(uniques, dtype=object), "")
    return table[codes]  # code -1 (blank) picks the trailing ''


def band_actions(frame: pd.DataFrame, characteristics: pd.DataFrame,
                 share: float) -> pd.DataFrame:
    """One line per characteristic: the temperature band it may be measured in (qc.core.band)."""
    c = characteristics[np.isfinite(characteristics["band_low_c"].to_numpy(dtype=float))]
    if c.empty:
        return pd.DataFrame(columns=["source_row", "part", "characteristic", "action", "reason"])
    first = frame.groupby(frame["characteristic"].fillna(""), sort=False)["source_row"].first()
    rows = first.reindex(c["characteristic"]).to_numpy()
    reason = ("uncorrected " + _band_text(c["band_low_c"], c["band_high_c"])
              + f" keeps the thermal error within {share:.0%} of the tolerance; corrected to "
              "20 °C (±0.5 °C thermometer) "
              + _band_text(c["band_corrected_low_c"], c["band_corrected_high_c"]))
    return pd.DataFrame({"source_row": rows, "part": "(all)",
                         "characteristic": c["characteristic"].to_numpy(),
                         "action": "measure within the temperature band",
                         "reason": reason.to_numpy()})


#: The range of shop temperatures a band is stated within (common practice, no source).
SHOP_RANGE_C = (0.0, 40.0)


def _band_text(low: pd.Series, high: pd.Series) -> pd.Series:
    """'17.2 to 22.8 °C', or 'anywhere from 0 to 40 °C' when the band covers any shop."""
    lo, hi = SHOP_RANGE_C
    a = low.clip(lower=lo).round(1).astype(str)
    b = high.clip(upper=hi).round(1).astype(str)
    text = a + " to " + b + " °C"
    return text.where(~((low <= lo) & (high >= hi)), f"anywhere from {lo:g} to {hi:g} °C")


