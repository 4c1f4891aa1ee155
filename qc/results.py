"""Tables derived from a batch's results: the long budget, per-characteristic statistics,
the action list and soak advice. Column-wise pandas; no file I/O."""

from __future__ import annotations

import numpy as np
import pandas as pd

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
    temperature band that keeps the thermal error within ``share`` of the tolerance."""
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
    for v in ("conforms", "nonconforming", "borderline", "not evaluated"):
        out[v] = g["verdict"].apply(lambda s, v=v: int((s == v).sum())).to_numpy()
    out["band_low_c"], out["band_high_c"], out["band_corrected_low_c"], \
        out["band_corrected_high_c"] = _bands(frame, data, g, share)
    return out


def _bands(frame: pd.DataFrame, data: pd.DataFrame, g, share: float):
    """Allowable temperature band per characteristic (qc.core.band), NaN where not defined."""
    def first(col: str) -> np.ndarray:
        if col not in frame:
            return np.full(g.ngroups, np.nan)
        return pd.Series(frame[col].to_numpy(dtype=float), index=data.index).groupby(
            [data["characteristic"], data["unit"]], sort=False, dropna=False).first().to_numpy()

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
    rows = np.flatnonzero(results["flags"].str.contains("soak-advised", regex=False).to_numpy())
    if rows.size == 0:
        return low, high
    from qc.library.heat_transfer import load_heat_transfer
    from qc.library.materials import load_materials

    library = load_materials()
    resting, surfaces = load_heat_transfer()
    still, dull = resting["still-air"], surfaces["dull-metal"]
    names = frame["part_material"].fillna("").to_numpy(dtype=object)[rows]
    props = np.full((rows.size, 3), np.nan)
    for name in set(names.tolist()):
        try:
            mat = library.get(name)
        except QcError:
            continue
        props[names == name] = (mat.density, mat.specific_heat, mat.conductivity)
    ok = np.isfinite(props).all(axis=1)
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
    p = props[ok][good]
    # radiation of a dull, shop-worn surface added to still-air convection, each end of the
    # range with its own emissivity (qc/data/heat_transfer.toml)
    h = [float(c + radiation_coefficient(e)) for c, e in (
        (still.h_low, dull.eps_low), (still.h_nominal, dull.eps_nominal),
        (still.h_high, dull.eps_high))]
    soak = soak_time_for_rows(part, target, band_k, p[:, 0], p[:, 1], p[:, 2], *h, size)
    low[r] = soak.fast_s / 60.0
    high[r] = soak.slow_s / 60.0
    return low, high


def actions_frame(frame: pd.DataFrame, results: pd.DataFrame) -> pd.DataFrame:
    """What to do next, one line per row and action (borderline, soak, instrument, calibration).

    Reasons are written only for the rows that need them.
    """
    flags = results["flags"].fillna("").astype(str)
    verdict = results["verdict"]
    soak = flags.str.contains("soak-advised", regex=False).to_numpy()
    hot = flags.str.contains("temperature-decides", regex=False).to_numpy()
    entries = []
    source_row = frame["source_row"].to_numpy()
    part = _labels(frame["part"])
    characteristic = _labels(frame["characteristic"])

    def add(mask: np.ndarray, action: str, reason) -> None:
        """``reason``: a text, or a function of the selected rows giving one text per row."""
        rows = np.flatnonzero(mask)
        if rows.size == 0:
            return
        text = (np.full(rows.size, reason, dtype=object) if isinstance(reason, str)
                else np.asarray(reason(rows), dtype=object))
        entries.append((rows, action, text))

    def soak_reason(rows: np.ndarray) -> np.ndarray:
        low = results["soak_minutes_low"].to_numpy(dtype=float)[rows]
        high = results["soak_minutes_high"].to_numpy(dtype=float)[rows]
        known = np.isfinite(low) & np.isfinite(high)
        text = np.full(rows.size, "let it reach the gauge temperature, then re-measure",
                       dtype=object)
        text[known] = [f"let it soak {lo:.0f}–{hi:.0f} min in still air, then re-measure"
                       for lo, hi in zip(low[known], high[known], strict=True)]
        return text

    def ratio_reason(rows: np.ndarray) -> np.ndarray:
        r = results["uncertainty_ratio"].to_numpy(dtype=float)[rows]
        return np.array([f"tolerance / (2U) = {x:.1f} (below 4:1)" for x in r], dtype=object)

    def overdue_reason(rows: np.ndarray) -> np.ndarray:
        inst = frame["instrument"].fillna("").astype(str).to_numpy(dtype=object)[rows]
        return "instrument " + inst + " was past its calibration due date"

    add(soak, "soak and re-measure", soak_reason)
    add((verdict == "borderline").to_numpy() & ~soak, "re-measure or decide with the customer",
        "borderline: neither conformance nor nonconformance is proven under the decision rule")
    add(hot & ~soak, "check the temperatures",
        "the verdict without the thermal correction would differ")
    add(flags.str.contains("instrument-too-coarse", regex=False).to_numpy(),
        "use a finer instrument", ratio_reason)
    add(flags.str.contains("calibration-overdue", regex=False).to_numpy(), "calibration overdue",
        overdue_reason)
    add((verdict == "not evaluated").to_numpy(), "correct the input",
        lambda rows: results["message"].fillna("").to_numpy(dtype=object)[rows])
    add((verdict == "nonconforming").to_numpy(), "segregate the part (nonconforming)",
        "outside the specification zone enlarged by U")
    columns = ["source_row", "part", "characteristic", "action", "reason"]
    if not entries:
        return pd.DataFrame(columns=columns)
    rows = np.concatenate([e[0] for e in entries])
    order = np.argsort(source_row[rows], kind="stable")  # by spreadsheet row, actions in turn
    rows = rows[order]
    return pd.DataFrame({
        "source_row": source_row[rows],
        "part": part[rows],
        "characteristic": characteristic[rows],
        "action": pd.Categorical.from_codes(
            np.repeat(np.arange(len(entries)), [e[0].size for e in entries])[order],
            [e[1] for e in entries]),
        "reason": np.concatenate([e[2] for e in entries])[order],
    })


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


