"""Record assembly: raw cells by field → the typed frame in canonical units, plus row errors.

Every step works on whole columns: units are looked up once per distinct spelling, names once
per distinct name, and conversions are numpy operations. A cell that cannot be used becomes a
:class:`~qc.models.RowError` and NaN in the frame; the row itself always stays.

Unit precedence for a length cell: the unit written in the cell, then the one in its header,
then the row's ``unit`` column, then the layout default. Temperatures likewise with
``temp_unit``. Tolerance precedence: lower/upper limits, then deviations, then the tolerance
notation, then the ISO 2768-1 class (column or layout default).
"""

from __future__ import annotations

import math
from collections.abc import Callable

import numpy as np
import pandas as pd
import pyarrow as pa

from qc.errors import CellError, ConfigError, Place
from qc.io.headers import header_key, load_synonyms
from qc.io.mpe import parse_mpe
from qc.io.raw import RawTable
from qc.io.register import Register
from qc.io.resolve import general_tolerances, material_cte, parse_tolerances
from qc.io.values import (
    Coded,
    Problem,
    is_blank,
    joint_codes,
    parse_dates,
    parse_numbers,
    parse_texts_coded,
)
from qc.models import InspectionRecord, Layout, RowError, bounds, field_message
from qc.units import (
    canonical_unit,
    cte_factor,
    length_factor,
    temperature_difference_to_c,
    temperature_to_c,
)

__all__ = ["FLAG_OVERDUE", "assemble"]

FLAG_OVERDUE = "calibration-overdue"
_ANGLE_UNITS = {"°": "degree", "deg": "degree", "degree": "degree", "degrees": "degree"}
_FEATURES = {"hole": "hole", "internal": "hole", "int": "hole", "bore": "hole", "i": "hole",
             "shaft": "shaft", "external": "shaft", "ext": "shaft", "e": "shaft"}
_YES = {"yes", "y", "true", "1", "x", "ja", "oui", "si", "sí"}
_NO = {"no", "n", "false", "0", ""}
TEXT_FIELDS = ("part", "characteristic", "kind", "hole_or_shaft", "instrument", "inspector", "note",
               "part_material", "gauge_material", "unit", "temp_unit", "tolerance",
               "general_tolerance", "shared_room")
# frame column -> input field whose column a bound violation points at
_BOUND_SOURCES = {
    "reading_sd_mm": "reading_1", "resolution_mm": "resolution", "mpe_a_mm": "mpe",
    "mpe_k_mm": "mpe", "master_size_mm": "master_size", "master_u_mm": "master_u",
    "cal_u_mm": "cal_u", "prior_sd_mm": "prior_sd", "part_temp_c": "part_temp",
    "gauge_temp_c": "gauge_temp", "room_temp_c": "room_temp",
    "thermometer_accuracy_c": "thermometer_accuracy", "u_part_temp_c": "u_part_temp",
    "u_gauge_temp_c": "u_gauge_temp", "part_cte": "part_cte", "part_cte_u": "part_cte_u",
    "gauge_cte": "gauge_cte", "gauge_cte_u": "gauge_cte_u",
}
_BOUND_WORDS = {"part_temp_c": "a part temperature", "gauge_temp_c": "a gauge temperature",
                "room_temp_c": "a room temperature", "part_cte": "a part expansion coefficient",
                "gauge_cte": "a gauge expansion coefficient"}


class _Errors:
    """Collects row errors with places in the spreadsheet's own terms."""

    def __init__(self, raw: RawTable) -> None:
        self.raw = raw
        self.items: list[RowError] = []
        self.rows: set[int] = set()

    def add(self, i: int, name: str, value: object, expected: str, hint: str = "",
            column_of: str | None = None) -> None:
        raw = self.raw
        col = raw.column_label(column_of or name, i)
        place = Place(raw.file, raw.sheet, int(raw.rows[i]), col)
        msg = str(CellError(place, value, expected, hint))
        # built by this module from checked parts: no per-error validation on the bulk path
        self.items.append(RowError.model_construct(
            index=int(i), file=raw.file, sheet=raw.sheet, row=int(raw.rows[i]), column=col,
            field=name, value=value if isinstance(value, str) else repr(value),
            expected=expected, message=msg,
        ))
        self.rows.add(int(i))

    def take(self, problems: dict[int, Problem], name: str, column_of: str | None = None) -> None:
        for i, p in sorted(problems.items()):
            self.add(i, name, p.value, p.expected, p.hint, column_of)


def _per_distinct(values: np.ndarray, fn: Callable[[object], object],
                  dtype: object = object) -> np.ndarray:
    """``fn`` of every cell, called once per distinct value (blanks included) and spread back."""
    codes, distinct = pd.factorize(np.asarray(values, dtype=object), use_na_sentinel=False)
    return np.asarray([fn(v) for v in distinct], dtype=dtype)[codes] if len(codes) else (
        np.empty(0, dtype=dtype))


def _map_units(values: Coded, kind: str) -> tuple[Coded, dict[str, None]]:
    """Canonical unit per cell of a unit column; unknown spellings returned separately."""
    bad: dict[str, None] = {}

    def unit_of(text: object) -> str | None:
        if text == "":
            return None
        u = canonical_unit(text, kind)  # type: ignore[arg-type]
        if u is None and kind == "length":
            u = _ANGLE_UNITS.get(text.strip().lower())  # type: ignore[attr-defined]
        if u is None:
            bad[text] = None  # type: ignore[index]
        return u

    return values.recode(unit_of), bad


def _factor_of(u: object) -> float:
    """mm per length unit (degrees count as 1: angles kept)."""
    return 1.0 if u == "degree" else length_factor(u)  # type: ignore[arg-type]


def _row_units(cell_units: np.ndarray, header: str | None, base: Coded) -> Coded:
    """Unit of each cell: the one written in the cell, else the header's, else ``base``."""
    n = len(cell_units)
    fallback = base if header is None else Coded.constant(header, n)
    given = np.flatnonzero(pd.notna(cell_units))
    if not len(given):
        return fallback
    return fallback.put(given, Coded.of(cell_units[given]))


def _choose(*arrays: np.ndarray) -> np.ndarray:
    """First non-None value per row across arrays of equal length."""
    out = arrays[0].copy()
    for a in arrays[1:]:
        missing = pd.isna(out)
        out[missing] = a[missing]
    return out


def assemble(raw: RawTable, layout: Layout, *, decimal: str = ".",
             register: Register | None = None, notes: list[str] | None = None,
             ) -> tuple[pd.DataFrame, list[RowError]]:
    """Typed frame (one row per raw row, input order) and the row errors."""
    n = raw.n
    notes = notes if notes is not None else []
    err = _Errors(raw)
    d = layout.defaults
    thousands = layout.thousands
    default_len = canonical_unit(d.unit, "length")
    default_temp = canonical_unit(d.temp_unit, "temperature")
    if default_len is None:
        raise ConfigError(f"layout file: defaults.unit {d.unit!r} is not a length unit "
                          "(mm, µm, in, thou)")
    if default_temp is None:
        raise ConfigError(f"layout file: defaults.temp_unit {d.temp_unit!r} is not a "
                          "temperature unit (°C, °F, K)")

    def header_unit(f: str, kind: str) -> tuple[str | None, bool]:
        spelled = raw.header_units.get(f)
        if not spelled:
            return None, True
        u = canonical_unit(spelled, kind)  # type: ignore[arg-type]
        return u, u is not None

    # text columns stay coded (distinct texts + one code per row) up to the frame
    text: dict[str, Coded] = {}
    for f in TEXT_FIELDS:
        if not raw.has(f):
            text[f] = Coded.constant("", n)
            continue
        text[f], pr = parse_texts_coded(raw.get(f))
        err.take(pr, f)

    # the row's length and temperature units
    unit_col, bad_units = _map_units(text["unit"], "length")
    for i in np.flatnonzero(text["unit"].each(lambda v: v in bad_units, bool)):
        err.add(i, "unit", text["unit"][i], "a length unit (mm, µm, in, thou)")
    temp_col, bad_t = _map_units(text["temp_unit"], "temperature")
    for i in np.flatnonzero(text["temp_unit"].each(lambda v: v in bad_t, bool)):
        err.add(i, "temp_unit", text["temp_unit"][i], "a temperature unit (°C, °F, K)")
    # a unit in the reading's (else the nominal's) header applies to the row's other lengths
    hdr_len = [header_unit(f, "length")[0] for f in (*raw.reading_fields(), "nominal",
                                                     "lower_limit", "upper_limit")]
    hdr_len = next((u for u in hdr_len if u), None)
    base_len = unit_col.recode(lambda u: (hdr_len or default_len) if u is None else u)
    base_temp = temp_col.recode(lambda u: default_temp if u is None else u)

    def header_problem(f: str, kind_word: str) -> None:
        for i in np.flatnonzero(~is_blank(raw.get(f))):
            err.add(i, f, raw.get(f)[i], f"{kind_word} in the header",
                    f"the unit {raw.header_units[f]!r} written in the header is not known")

    def lengths(f: str, *, multi: bool = False, allow_pm: bool = False) -> np.ndarray:
        """Values in mm (n × k)."""
        if not raw.has(f):
            return np.full((n, 1), np.nan)
        p = parse_numbers(raw.get(f), kind="length", decimal=decimal, thousands=thousands,
                          multi=multi, allow_pm=allow_pm)
        err.take(p.problems, f)
        hu, ok = header_unit(f, "length")
        if not ok:
            header_problem(f, "a length unit (mm, µm, in, thou)")
            return np.full(p.values.shape, np.nan)
        units = _row_units(p.units, hu, base_len)
        return p.values * units.each(_factor_of, float)[:, None]

    def temps(f: str, difference: bool = False) -> np.ndarray:
        if not raw.has(f):
            return np.full(n, np.nan)
        p = parse_numbers(raw.get(f), kind="temperature", decimal=decimal, thousands=thousands)
        err.take(p.problems, f)
        hu, ok = header_unit(f, "temperature")
        if not ok:
            header_problem(f, "a temperature unit (°C, °F, K)")
            return np.full(n, np.nan)
        units = _row_units(p.units, hu, base_temp)
        value_codes, distinct = pd.factorize(units.values)  # equal units: one conversion
        codes = value_codes[units.codes]
        out = np.full(n, np.nan)
        conv = temperature_difference_to_c if difference else temperature_to_c
        for j, u in enumerate(distinct):
            m = codes == j
            if m.any():
                out[m] = conv(p.first[m], u)
        return out

    def numbers(f: str) -> np.ndarray:
        if not raw.has(f):
            return np.full(n, np.nan)
        p = parse_numbers(raw.get(f), kind=None, decimal=decimal, thousands=thousands)
        err.take(p.problems, f)
        return p.first

    def ctes(f: str) -> np.ndarray:
        if not raw.has(f):
            return np.full(n, np.nan)
        p = parse_numbers(raw.get(f), kind="cte", decimal=decimal, thousands=thousands)
        err.take(p.problems, f)
        hu, ok = header_unit(f, "cte")
        if not ok:
            header_problem(f, "an expansion-coefficient unit (1/K, ppm/K, µm/(m·K), 1/°F)")
            return np.full(n, np.nan)
        units = _choose(p.units, np.full(n, hu, dtype=object))
        unmarked = pd.isna(pd.Series(units, dtype=object)).to_numpy()
        big = unmarked & (np.abs(p.first) >= 1e-3)
        for i in np.flatnonzero(big):
            err.add(i, f, raw.get(f)[i], "an expansion coefficient in 1/K (such as 11.5e-6) "
                    "or with its unit (11.5 ppm/K)")
        units = np.where(unmarked, "1/kelvin", units)
        fac = _per_distinct(units, cte_factor, float)
        out = p.first * fac
        out[big] = np.nan
        return out

    # --- readings
    reading_fields = raw.reading_fields()
    blocks, bad_rows = [], np.zeros(n, dtype=bool)
    for f in reading_fields:
        before = set(err.rows)
        v = lengths(f, multi=True)
        bad_rows[list(err.rows - before)] = True
        blocks.append(v)
    allv = np.hstack(blocks) if blocks else np.full((n, 1), np.nan)
    n_read = np.isfinite(allv).sum(axis=1)
    with np.errstate(invalid="ignore", divide="ignore"):
        mean = np.where(n_read > 0, np.nansum(allv, axis=1) / np.maximum(n_read, 1), np.nan)
        dev = np.where(np.isfinite(allv), allv - mean[:, None], 0.0)
        sd = np.where(n_read >= 2, np.sqrt((dev**2).sum(axis=1) / np.maximum(n_read - 1, 1)),
                      np.nan)
    mean[bad_rows] = np.nan
    sd[bad_rows] = np.nan
    n_read[bad_rows] = 0
    first_field = reading_fields[0] if reading_fields else "reading"
    for i in np.flatnonzero((n_read == 0) & ~bad_rows):
        err.add(i, first_field, "", "a reading", column_of=first_field)

    row_unit = base_len
    angle_rows = row_unit.is_("degree")

    # --- nominal and tolerance
    nominal = lengths("nominal")[:, 0]
    lower = lengths("lower_limit")[:, 0]
    upper = lengths("upper_limit")[:, 0]
    ldev = lengths("lower_deviation")[:, 0]
    udev = lengths("upper_deviation")[:, 0]
    if "minus" in header_key(str(raw.headers.get("lower_deviation", ""))):
        ldev = -np.abs(ldev)  # a '−Tol' column holds the size of the lower deviation
    tol_desc = Coded.constant("", n)
    from_limits = np.isfinite(lower) | np.isfinite(upper)
    devs = ~from_limits & (np.isfinite(ldev) | np.isfinite(udev))
    for i in np.flatnonzero(devs & ~np.isfinite(nominal)):
        err.add(i, "nominal", raw.get("nominal")[i], "a nominal size for the deviations")
    both = devs & np.isfinite(ldev) & np.isfinite(udev) & (ldev > udev)
    for i in np.flatnonzero(both):
        err.add(i, "lower_deviation", raw.get("lower_deviation")[i],
                "a lower deviation not above the upper deviation", "swap the two columns")
    lower = np.where(devs & ~both, nominal + ldev, lower)
    upper = np.where(devs & ~both, nominal + udev, upper)
    inverted = from_limits & np.isfinite(lower) & np.isfinite(upper) & (lower > upper)
    for i in np.flatnonzero(inverted):
        err.add(i, "lower_limit", raw.get("lower_limit")[i],
                "a lower limit not above the upper limit", "swap the two columns")
    lower[inverted] = np.nan
    upper[inverted] = np.nan
    tol_text = text["tolerance"]
    hole_or_shaft = text["hole_or_shaft"]
    feature = hole_or_shaft.recode(lambda t: None if t == "" else _FEATURES.get(t.lower()))
    for j in hole_or_shaft.in_use():
        t = hole_or_shaft.values[j]
        if t != "" and feature.values[j] is None:
            for i in np.flatnonzero(hole_or_shaft.codes == j):
                err.add(i, "hole_or_shaft", t, "hole or shaft")
    tol_blank = tol_text.is_("")
    use_text = ~from_limits & ~devs & ~tol_blank
    if use_text.any():
        idx = np.flatnonzero(use_text)
        tol_hu = header_unit("tolerance", "length")[0]
        tol_units = Coded.constant("millimeter", n).where(
            angle_rows, Coded.constant(tol_hu, n) if tol_hu else row_unit).take(idx)
        try:
            lo, hi, nom, desc, pr = parse_tolerances(
                tol_text.take(idx), nominal[idx], feature.take(idx), tol_units, decimal)
        except ImportError:
            lo = hi = nom = np.full(len(idx), np.nan)
            desc = Coded.constant("", len(idx))
            pr = {j: Problem(tol_text[i], "a tolerance limit pair",
                             "tolerance notations cannot be read in this installation")
                  for j, i in enumerate(idx)}
        lower[idx], upper[idx] = lo, hi
        nominal[idx] = np.where(np.isfinite(nominal[idx]), nominal[idx], nom)
        tol_desc = tol_desc.put(idx, desc)
        err.take({int(idx[j]): p for j, p in pr.items()}, "tolerance")
    classes = text["general_tolerance"].recode(
        lambda c: c if c != "" else d.general_tolerance or "")
    no_class = classes.is_("")
    need_general = ~from_limits & ~devs & tol_blank & ~no_class & ~angle_rows
    if need_general.any():
        idx = np.flatnonzero(need_general)
        gt = general_tolerances(nominal[idx], classes.take(idx))
        lower[idx] = nominal[idx] - gt.half
        upper[idx] = nominal[idx] + gt.half
        tol_desc = tol_desc.put(idx, _general_descriptions(classes.take(idx), gt.half))
        err.take({int(idx[j]): p for j, p in gt.problems.items()}, "general_tolerance",
                 column_of="general_tolerance" if raw.has("general_tolerance") else "nominal")
    # angle rows get no ISO 2768-1 general tolerance here (Table 3 needs the shorter leg)
    no_tol = ~from_limits & ~devs & tol_blank & (no_class | angle_rows)
    has_error = np.zeros(n, dtype=bool)
    has_error[list(err.rows)] = True
    for i in np.flatnonzero(no_tol & ~has_error):
        err.add(i, "tolerance", "", "a tolerance, limits or a general tolerance class",
                "give one in the sheet or set defaults.general_tolerance in the layout file",
                column_of="tolerance" if raw.has("tolerance") else first_field)

    # --- temperatures
    part_t = temps("part_temp")
    gauge_t = temps("gauge_temp")
    room_t = temps("room_temp")
    acc = temps("thermometer_accuracy", difference=True)
    if d.thermometer_accuracy is not None and not np.all(np.isfinite(acc)):
        p = parse_numbers(np.array([d.thermometer_accuracy], dtype=object), kind="temperature")
        if p.problems or not np.isfinite(p.first[0]):
            raise ConfigError(f"layout file: defaults.thermometer_accuracy "
                              f"{d.thermometer_accuracy!r} is not a temperature difference")
        u0 = p.units[0] or default_temp
        acc = np.where(np.isfinite(acc), acc, temperature_difference_to_c(p.first, u0)[0])
    u_part = temps("u_part_temp", difference=True)
    u_gauge = temps("u_gauge_temp", difference=True)
    # rectangular distribution of half-width a: u = a/√3 (JCGM 100:2008, 4.3.7)
    u_part = np.where(np.isfinite(u_part), u_part, acc / math.sqrt(3))
    u_gauge = np.where(np.isfinite(u_gauge), u_gauge, acc / math.sqrt(3))
    shared = (~np.isfinite(gauge_t) & np.isfinite(part_t)) | (gauge_t == part_t)
    if raw.has("shared_room"):
        flag = text["shared_room"]
        yes = flag.each(lambda v: str(v).lower() in _YES, bool)
        no = flag.each(lambda v: str(v).lower() in _NO, bool)
        for i in np.flatnonzero(~yes & ~no):
            err.add(i, "shared_room", flag[i], "yes or no")
        empty = flag.each(lambda v: str(v).lower() == "", bool)
        shared = np.where(yes, True, np.where(empty, shared, False))

    # --- instruments
    inst = text["instrument"]
    resolution = lengths("resolution")[:, 0]
    if raw.has("mpe"):
        mpe_units = np.where(angle_rows, default_len, row_unit.dense())
        hu, _ = header_unit("mpe", "length")
        if hu:
            mpe_units = np.full(n, hu, dtype=object)
        mpe_a, mpe_k, pr = parse_mpe(raw.get("mpe"), mpe_units, decimal)
        err.take(pr, "mpe")
    else:  # an all-blank MPE column reads as NaN without problems
        mpe_a, mpe_k = np.full(n, np.nan), np.full(n, np.nan)
    cal_u = lengths("cal_u")[:, 0]
    cal_k = numbers("cal_k")
    inst_type = Coded.constant(None, n)
    gauge_mat = text["gauge_material"]
    due = np.full(n, np.datetime64("NaT"), dtype="datetime64[D]")
    if not inst.is_("").all():
        inst_type, gauge_mat, due = _instruments(inst, register, err, resolution, mpe_a, mpe_k,
                                                 cal_u, cal_k, gauge_mat)

    # --- certificates and master
    master = lengths("master_size")[:, 0]
    master_u = lengths("master_u")[:, 0]
    master_k = numbers("master_k")
    for arr_u, arr_k, name in ((master_u, master_k, "master_u"), (cal_u, cal_k, "cal_u")):
        missing_k = np.isfinite(arr_u) & ~np.isfinite(arr_k)
        if d.certificate_k is not None:
            arr_k[missing_k] = d.certificate_k
        else:
            for i in np.flatnonzero(missing_k):
                err.add(i, name.replace("_u", "_k"), "", "the coverage factor k of the "
                        "certificate uncertainty", "or set defaults.certificate_k in the layout "
                        "file", column_of=name)
    with np.errstate(invalid="ignore", divide="ignore"):
        master_u_std = master_u / master_k
        cal_u_std = np.where(np.isfinite(cal_u) & np.isfinite(cal_k), cal_u / cal_k, cal_u)
    prior_sd = lengths("prior_sd")[:, 0]

    # --- materials and CTE
    part_mat = text["part_material"].recode(lambda v: v if v != "" else d.part_material or "")
    gauge_mat = gauge_mat.recode(lambda v: v if v != "" else d.gauge_material or "")
    part_cte, part_cte_u = ctes("part_cte"), ctes("part_cte_u")
    gauge_cte, gauge_cte_u = ctes("gauge_cte"), ctes("gauge_cte_u")
    for mats, cte, cte_u, f in ((part_mat, part_cte, part_cte_u, "part_material"),
                                (gauge_mat, gauge_cte, gauge_cte_u, "gauge_material")):
        need = ~np.isfinite(cte) & ~mats.is_("")
        if need.any():
            try:
                m = material_cte(mats.where(need, Coded.constant("", n)))
            except ImportError:
                m = None
                for i in np.flatnonzero(need):
                    err.add(i, f, mats[i], "an expansion coefficient",
                            "the material library is not available; give the CTE")
            if m is not None:
                cte[need] = m.cte[need]
                cte_u[need & ~np.isfinite(cte_u)] = m.cte_u[need & ~np.isfinite(cte_u)]
                col = f if raw.has(f) else None
                for i, p in sorted(m.problems.items()):
                    err.add(i, f, p.value, p.expected, p.hint, column_of=col)

    # --- dates, kind, mode
    measured, pr = parse_dates(raw.get("measured_at"), date_order=layout.date_order)
    err.take(pr, "measured_at")
    unscaled = set(load_synonyms().unscaled_kinds)
    unscaled_kind = text["kind"].each(
        lambda k: isinstance(k, str) and k.lower().strip() in unscaled, bool)
    scaled = ~(unscaled_kind | angle_rows)
    comparison = np.isfinite(master)

    overdue = np.zeros(n, dtype=bool)
    has_due = ~np.isnat(due)
    if has_due.any():
        mday = measured.astype("datetime64[D]")
        overdue = has_due & ~np.isnat(mday) & (mday > due)
        undated = has_due & np.isnat(mday)
        if undated.any():
            notes.append(f"{int(undated.sum())} row(s) without a measurement date: calibration "
                         "due dates not checked for them")

    source_column = raw.letters.get(first_field) if reading_fields else None
    columns = {
        "part": text["part"], "characteristic": text["characteristic"],
        "kind": text["kind"], "feature": feature,
        "unit": row_unit.recode(_unit_label),
        "nominal_mm": nominal, "lower_limit_mm": lower, "upper_limit_mm": upper,
        "tolerance_text": tol_text, "tolerance_description": tol_desc,
        "reading_mean_mm": mean, "reading_sd_mm": sd, "n_readings": n_read,
        "resolution_mm": resolution, "mpe_a_mm": mpe_a, "mpe_k_mm": mpe_k,
        "master_size_mm": master, "master_u_mm": master_u_std, "cal_u_mm": cal_u_std,
        "prior_sd_mm": prior_sd,
        "part_temp_c": part_t, "gauge_temp_c": gauge_t, "room_temp_c": room_t,
        "thermometer_accuracy_c": acc, "u_part_temp_c": u_part, "u_gauge_temp_c": u_gauge,
        "part_cte": part_cte, "part_cte_u": part_cte_u,
        "gauge_cte": gauge_cte, "gauge_cte_u": gauge_cte_u,
        "part_material": part_mat, "gauge_material": gauge_mat,
        "mode": (Coded(comparison.astype(np.intp), _objects(["direct", "comparison"]))
                 if n else np.where(comparison, "comparison", "direct")),
        "scaled": scaled, "shared_room": shared.astype(bool),
        "instrument": inst, "instrument_type": inst_type,
        "inspector": text["inspector"], "note": text["note"],
        "measured_at": measured,
        "flags": Coded(overdue.astype(np.intp), _objects(["", FLAG_OVERDUE])),
        "source_file": _scalar_column(raw.file, n), "source_sheet": _scalar_column(raw.sheet, n),
        "source_row": raw.rows, "source_column": _scalar_column(source_column, n),
    }
    _check_bounds(columns, err)  # on the arrays: no column of a built frame is replaced
    frame = pd.DataFrame({k: _text_column(v) if isinstance(v, Coded) else v
                          for k, v in columns.items()})
    items = sorted(err.items, key=lambda e: (e.index, e.column or ""))
    return frame, items


def _objects(items: list[object]) -> np.ndarray:
    out = np.empty(len(items), dtype=object)
    out[:] = items
    return out


def _general_descriptions(classes: Coded, half: np.ndarray) -> Coded:
    """'ISO 2768-m: ±0.2 mm' per row, written once per distinct class and half-width."""
    half_codes, _ = pd.factorize(half)  # NaN: code -1, shifted to a code of its own
    combo, rep = joint_codes(classes.codes, half_codes + 1)
    texts = [f"ISO 2768-{classes[r]}: ±{half[r]:g} mm" if math.isfinite(half[r]) else ""
             for r in rep]
    return Coded(combo, _objects(texts))


def _scalar_column(value: object, n: int) -> object:
    """A value for every row: as a coded column when it is text (the frame then builds it from
    the codes), else as given for pandas to broadcast."""
    if n and type(value) is str:
        return Coded.constant(value, n)
    return value


#: the dtype pandas gives a column of Python strings (and None)
_STR_DTYPE = pd.Series(np.array(["a", None], dtype=object)).dtype


def _text_column(col: Coded) -> pd.Series | np.ndarray:
    """A frame column from a coded one, of the dtype pandas infers from the dense column.

    When every value in use is a string (or None) pandas makes a string column; that column is
    built here from the distinct texts and the codes (one look-up per row in C) instead of
    from a million Python strings. Anything else is left to pandas' inference as before.
    """
    n = len(col)
    if not n or getattr(_STR_DTYPE, "storage", None) != "pyarrow":
        return col.dense()
    used = np.bincount(col.codes, minlength=len(col.values)) > 0
    in_use = col.values[used]
    strings = np.fromiter((type(v) is str for v in in_use), dtype=bool, count=len(in_use))
    nulls = np.fromiter((v is None for v in in_use), dtype=bool, count=len(in_use))
    if not strings.any() or not (strings | nulls).all():
        return col.dense()
    if len(in_use) == 1:  # one text on every row (a blank column, the file name)
        constant = _repeated(in_use[0], n)
        if constant is not None:
            return pd.Series(pd.array(constant, dtype=_STR_DTYPE), copy=False)
    none = np.fromiter((v is None for v in col.values), dtype=bool, count=len(col.values))
    dictionary = pa.array([v if type(v) is str else "" for v in col.values],
                          type=pa.large_string())
    indices = pa.array(col.codes.astype(np.int32), mask=none[col.codes] if none.any() else None)
    return pd.Series(pd.array(dictionary.take(indices), dtype=_STR_DTYPE), copy=False)


def _unit_label(u: str) -> str:
    return {"millimeter": "mm", "micrometer": "µm", "inch": "in", "thou": "thou",
            "centimeter": "cm", "meter": "m", "degree": "°"}.get(u, u)


def _check_bounds(columns: dict[str, np.ndarray], err: _Errors) -> None:
    """Plausibility bounds declared on InspectionRecord, checked on the frame's column arrays;
    pydantic writes the message for the few cells that fail."""
    for col, src in _BOUND_SOURCES.items():
        b = bounds(InspectionRecord, col)
        if not b:
            continue
        v = np.asarray(columns[col], dtype=float)
        fin = np.isfinite(v)
        bad = np.zeros(len(v), dtype=bool)
        if "ge" in b:
            bad |= fin & (v < b["ge"])
        if "gt" in b:
            bad |= fin & (v <= b["gt"])
        if "le" in b:
            bad |= fin & (v > b["le"])
        if "lt" in b:
            bad |= fin & (v >= b["lt"])
        if not bad.any():  # the usual case: the column goes to the frame as it is
            columns[col] = v
            continue
        v = v.copy()  # NaN goes into a copy: the array may be shared with another column
        for i in np.flatnonzero(bad):
            msg = field_message(InspectionRecord, col, float(v[i])) or "a plausible value"
            words = _BOUND_WORDS.get(col, col.replace("_", " "))
            unit = " °C" if col.endswith("_c") else " mm" if col.endswith("_mm") else " 1/K"
            expected = f"{words} {msg.removeprefix('Input should be ')}{unit}"
            source = src if src in err.raw.cells else None
            value = err.raw.get(src)[i] if source else float(v[i])
            err.add(int(i), src, value, expected, column_of=source)
            v[i] = np.nan
        columns[col] = v


def _instruments(inst: Coded, register: Register | None, err: _Errors,
                 resolution: np.ndarray, mpe_a: np.ndarray, mpe_k: np.ndarray,
                 cal_u: np.ndarray, cal_k: np.ndarray, gauge_mat: Coded,
                 ) -> tuple[Coded, Coded, np.ndarray]:
    """Fill instrument data from the register (by id) or the instrument-type library.

    Each distinct instrument name is looked up once; what it supplies goes into one table
    entry per name, and the tables fill the rows' blanks in one step per quantity. Returns
    the instrument type and gauge material per row and the calibration due dates.
    """
    types = _type_library()
    known = list(register.entries) + list(register.invalid) if register else []
    if types is not None:
        known += list(types.names())
    lowered = {k.lower(): k for k in (register.entries if register else {})}
    k = len(inst.values)
    res_t, cal_t = np.full(k, np.nan), np.full(k, np.nan)
    mpe_a_t, mpe_k_t = np.full(k, np.nan), np.full(k, np.nan)
    has_res, has_mpe, has_cal = np.zeros(k, bool), np.zeros(k, bool), np.zeros(k, bool)
    type_t = np.full(k, None, dtype=object)
    mat_t = np.full(k, None, dtype=object)  # None: the name brings no gauge material
    due_t = np.full(k, np.datetime64("NaT"), dtype="datetime64[D]")
    for j in inst.in_use():
        name = inst.values[j]
        if name == "":
            continue
        if register is not None and name in register.invalid:
            for i in np.flatnonzero(inst.codes == j):
                err.add(i, "instrument", name, "an instrument with a usable register entry",
                        register.invalid[name])
            continue
        entry = register.entries.get(name) or register.entries.get(
            lowered.get(name.lower(), "")) if register else None
        if entry is not None:
            has_res[j], res_t[j] = entry.resolution_mm is not None, entry.resolution_mm
            if entry.mpe_a_mm is not None:
                has_mpe[j] = True
                mpe_a_t[j] = entry.mpe_a_mm
                mpe_k_t[j] = entry.mpe_k_mm or np.inf  # None in the register: constant MPE
            if entry.cal_u_mm is not None:
                has_cal[j], cal_t[j] = True, entry.cal_u_mm
            type_t[j] = entry.type
            mat_t[j] = entry.material or ""
            if entry.cal_due is not None:
                due_t[j] = np.datetime64(entry.cal_due, "D")
            continue
        spec = _lookup_type(types, name)
        if spec is not None:  # qc.library.instruments.InstrumentType, lengths in mm
            type_t[j] = spec.id
            has_res[j], res_t[j] = spec.resolution is not None, spec.resolution
            has_mpe[j] = True
            mpe_a_t[j] = spec.mpe_a
            mpe_k_t[j] = spec.mpe_k if spec.mpe_k else np.inf
            mat_t[j] = spec.scale_material
            continue
        from qc.errors import UnknownNameError

        e = UnknownNameError("instrument", name, known)
        hint = ("did you mean " + " or ".join(repr(s) for s in e.suggestions) + "?"
                if e.suggestions else "list it in the instrument register")
        for i in np.flatnonzero(inst.codes == j):
            err.add(i, "instrument", name, "an instrument id from the register or an "
                    "instrument type", hint)
    rows = inst.codes
    _fill(resolution, has_res[rows], res_t[rows])
    m = has_mpe[rows] & ~np.isfinite(mpe_a)
    mpe_a[m] = mpe_a_t[rows][m]
    mpe_k[m] = mpe_k_t[rows][m]
    fill = has_cal[rows] & ~np.isfinite(cal_u)
    cal_u[fill] = cal_t[rows][fill]
    cal_k[fill] = 1.0  # the register keeps the standard uncertainty U/k
    gives_mat = np.fromiter((v is not None for v in mat_t), dtype=bool, count=k)
    gauge_mat = Coded(rows, mat_t).where(gives_mat[rows] & gauge_mat.is_(""), gauge_mat)
    return Coded(rows, type_t), gauge_mat, due_t[rows]


def _fill(target: np.ndarray, rows: np.ndarray, values: np.ndarray) -> None:
    """``values`` into the non-finite cells of ``target`` on the rows ``rows`` (a mask)."""
    m = rows & ~np.isfinite(target)
    target[m] = values[m]


def _type_library():
    try:
        from qc.library.instruments import load_instrument_types
    except ImportError:
        return None
    return load_instrument_types()


def _lookup_type(types, name: str):
    if types is None:
        return None
    from qc.errors import UnknownNameError

    try:
        return types.get(name)
    except UnknownNameError:
        return None


def _repeated(text: str, n: int) -> pa.Array | None:
    """``text`` n times as an Arrow string array, written straight into its two buffers;
    None for a text Arrow cannot hold (the caller then builds the column the general way)."""
    try:
        data = text.encode("utf-8")
    except UnicodeEncodeError:
        return None
    offsets = np.arange(n + 1, dtype=np.int64) * len(data)
    return pa.LargeStringArray.from_buffers(n, pa.py_buffer(offsets), pa.py_buffer(data * n))
