"""Invented, seeded inspection sheets for the benchmarks: CSV and XLSX, 16 columns.

Every value is made up: parts ``BX-0000001`` …, one of twelve characteristics per part,
nominal sizes 4–400 mm, tolerances as shops write them (``±0.05``, ``+0.02/-0.01``,
``0/-0.02``, ISO 286 codes such as ``H7`` and ``g6``), one to three readings, part
temperatures 12–35 °C with the gauge near room temperature, mixed part materials and
instrument types from the library, and about 0.5 % bad rows (text in a number cell, a
temperature written as a word, an unknown material, no reading) so the error paths are timed
too.

Parquet input is not generated: ``qc.io.reader`` reads .xlsx/.xlsm/.ods and .csv/.tsv only.

``python bench/generate.py ROWS [ROWS ...]`` writes ``bench/out/inputs/sheet_<rows>.csv`` and,
up to 100 000 rows, ``.xlsx``; existing files of the same seed are reused.
"""

from __future__ import annotations

import argparse
from pathlib import Path

import numpy as np
import pyarrow as pa
import pyarrow.csv as pa_csv

__all__ = ["HEADERS", "XLSX_MAX_ROWS", "columns", "ensure_inputs", "write_csv", "write_parquet",
           "write_xlsx"]

OUT = Path(__file__).resolve().parent / "out" / "inputs"
#: Largest XLSX input generated (a 1 M-row sheet would sit at Excel's row limit).
XLSX_MAX_ROWS = 100_000
SEED = 20260

#: Headers as a shop might write them; each one is matched through qc/data/headers.toml.
HEADERS = ("Part No.", "Characteristic", "Nominal", "Tolerance", "Reading 1", "Reading 2",
           "Reading 3", "Unit", "Part temp (°C)", "Gauge temp (°C)", "Material",
           "Gauge material", "Instrument", "Date", "Inspector", "Note")

#: (characteristic, nominal mm, tolerance text, lower deviation mm, upper deviation mm,
#:  instrument type). Fit-code deviations are ISO 286-2 values (from memory; the reader
#:  computes its own from qc/data, these only place the invented readings near the band).
_FEATURES = (
    ("Bore A", 62.0, "H7", 0.0, 0.030, "bore gauge"),
    ("Shaft seat", 25.0, "g6", -0.020, -0.007, "outside micrometer"),
    ("Pin", 10.0, "h6", -0.009, 0.0, "outside micrometer"),
    ("Overall length", 180.0, "±0.05", -0.05, 0.05, "caliper"),
    ("Flange thickness", 12.0, "0/-0.02", -0.02, 0.0, "outside micrometer"),
    ("Bolt circle", 95.0, "±0.1", -0.1, 0.1, "coordinate measuring machine"),
    ("Step height", 8.5, "+0.02/-0.01", -0.01, 0.02, "height gauge"),
    ("Width", 40.0, "±0.05", -0.05, 0.05, "caliper"),
    ("Bore B", 20.0, "H7", 0.0, 0.021, "bore gauge"),
    ("Groove", 4.2, "+0.05/0", 0.0, 0.05, "caliper"),
    ("Length L2", 400.0, "±0.2", -0.2, 0.2, "coordinate measuring machine"),
    ("Shoulder", 30.0, "±0.02", -0.02, 0.02, "outside micrometer"),
)
#: Part materials (aliases in qc/data/materials.toml) and their rough share of rows.
_MATERIALS = (("C45", 0.3), ("EN AW-6082", 0.25), ("1.4301", 0.15), ("42CrMo4", 0.1),
              ("CuZn39Pb3", 0.08), ("GJL-250", 0.07), ("Ti-6Al-4V", 0.05))
#: Approximate expansion coefficients, 1/K (from memory), only to shift invented readings.
_ALPHA = {"C45": 11.5e-6, "EN AW-6082": 23.4e-6, "1.4301": 16.0e-6, "42CrMo4": 12.0e-6,
          "CuZn39Pb3": 20.5e-6, "GJL-250": 10.5e-6, "Ti-6Al-4V": 8.6e-6}
_INSPECTORS = ("A. Brandt", "K. Osei", "L. Moreau", "T. Varga", "S. Lindqvist", "R. Iyer")
_BAD_SHARE = 0.005


def columns(rows: int, seed: int = SEED) -> dict[str, np.ndarray]:
    """The sheet's columns as arrays, keyed by header (numbers float, text object)."""
    r = np.random.default_rng(seed + rows)
    n_feat = len(_FEATURES)
    feat = np.arange(rows) % n_feat
    part_no = np.arange(rows) // n_feat + 1
    name = np.array([f[0] for f in _FEATURES], dtype=object)[feat]
    nominal = np.array([f[1] for f in _FEATURES])[feat]
    tol = np.array([f[2] for f in _FEATURES], dtype=object)[feat]
    lo = np.array([f[3] for f in _FEATURES])[feat]
    hi = np.array([f[4] for f in _FEATURES])[feat]
    instrument = np.array([f[5] for f in _FEATURES], dtype=object)[feat]

    # one material and one temperature per part, as on a real sheet
    parts = int(part_no.max()) if rows else 0
    mat_names = np.array([m for m, _ in _MATERIALS], dtype=object)
    share = np.array([s for _, s in _MATERIALS])
    part_mat = r.choice(len(mat_names), parts, p=share / share.sum())
    part_t = np.round(r.uniform(12.0, 35.0, parts), 1)
    gauge_t = np.round(r.uniform(18.5, 23.5, parts), 1)
    material = mat_names[part_mat][part_no - 1]
    t_part = part_t[part_no - 1]
    t_gauge = gauge_t[part_no - 1]
    alpha = np.vectorize(_ALPHA.get, otypes=[float])(material) if rows else np.zeros(0)

    # true size at 20 °C mostly inside the band, some just outside; reading at t_part
    centre, half = (lo + hi) / 2, (hi - lo) / 2
    true = nominal + centre + half * r.normal(0.0, 0.4, rows)
    seen = true * (1 + alpha * (t_part - 20.0)) / (1 + 11.5e-6 * (t_gauge - 20.0))
    n_read = np.where(instrument == "bore gauge", 3, np.where(r.random(rows) < 0.2, 2, 1))
    readings = [np.round(seen + r.normal(0.0, 0.001, rows), 4) for _ in range(3)]
    readings[1] = np.where(n_read >= 2, readings[1], np.nan)
    readings[2] = np.where(n_read >= 3, readings[2], np.nan)

    day = np.datetime64("2026-03-02") + (part_no // 40).astype("timedelta64[D]")
    note = np.where(r.random(rows) < 0.02, "re-measured after soak", "").astype(object)
    cols: dict[str, np.ndarray] = {
        "Part No.": np.char.add("BX-", np.char.zfill(part_no.astype(str), 7)).astype(object),
        "Characteristic": name,
        "Nominal": nominal,
        "Tolerance": tol,
        "Reading 1": readings[0].astype(object),
        "Reading 2": readings[1],
        "Reading 3": readings[2],
        "Unit": np.full(rows, "mm", dtype=object),
        "Part temp (°C)": t_part.astype(object),
        "Gauge temp (°C)": t_gauge,
        "Material": material,
        "Gauge material": np.full(rows, "gauge steel", dtype=object),
        "Instrument": instrument,
        "Date": day.astype(str).astype(object),
        "Inspector": np.array(_INSPECTORS, dtype=object)[(part_no // 97) % len(_INSPECTORS)],
        "Note": note,
    }
    _spoil(cols, r, rows)
    return cols


def _spoil(cols: dict[str, np.ndarray], r: np.random.Generator, rows: int) -> None:
    """Make about 0.5 % of rows bad in one of four ways a real sheet goes wrong."""
    bad = np.flatnonzero(r.random(rows) < _BAD_SHARE)
    how = r.integers(0, 4, len(bad))
    cols["Reading 1"][bad[how == 0]] = "n.m."  # text where a number belongs
    cols["Part temp (°C)"][bad[how == 1]] = "warm"  # a word where a temperature belongs
    cols["Material"][bad[how == 2]] = "Alu-X"  # not in the material library
    cols["Reading 1"][bad[how == 3]] = None  # no reading at all


def _arrow(cols: dict[str, np.ndarray]) -> pa.Table:
    """An Arrow table with every cell as the text a CSV file holds ('' for empty)."""
    arrays = []
    for values in cols.values():
        if values.dtype.kind == "f":
            text = np.where(np.isnan(values), "", values.astype(str))
        else:
            text = np.array(["" if v is None or v != v else str(v) for v in values], dtype=object)
        arrays.append(pa.array(text, type=pa.string()))
    return pa.Table.from_arrays(arrays, names=list(cols))


def write_csv(rows: int, path: Path, seed: int = SEED) -> Path:
    """A comma-separated sheet of ``rows`` rows (UTF-8, header line first)."""
    table = _arrow(columns(rows, seed))
    pa_csv.write_csv(table, path, write_options=pa_csv.WriteOptions(quoting_style="needed"))
    return path


def write_parquet(rows: int, path: Path, seed: int = SEED) -> Path:
    """The same sheet as a Parquet table, as a gauge's export might hold it: number columns
    as numbers (nulls where empty), text columns (including readings with bad text) as text."""
    import pyarrow.parquet as pq

    arrays = []
    cols = columns(rows, seed)
    for values in cols.values():
        if values.dtype.kind == "f":
            arrays.append(pa.array(values, type=pa.float64(), from_pandas=True))
        else:
            arrays.append(pa.array([None if v is None or v != v else str(v) for v in values],
                                   type=pa.string()))
    pq.write_table(pa.Table.from_arrays(arrays, names=list(cols)), path)
    return path


def write_xlsx(rows: int, path: Path, seed: int = SEED) -> Path:
    """A one-sheet workbook ``Inspection`` of ``rows`` rows; numbers as number cells."""
    import xlsxwriter

    cols = columns(rows, seed)
    wb = xlsxwriter.Workbook(str(path), {"constant_memory": True, "nan_inf_to_errors": False})
    ws = wb.add_worksheet("Inspection")
    ws.write_row(0, 0, HEADERS)
    data = list(cols.values())
    kinds = [c.dtype.kind for c in data]
    for i in range(rows):
        for j, c in enumerate(data):
            v = c[i]
            if v is None or v == "" or (kinds[j] == "f" and v != v):
                continue
            if isinstance(v, float) and v != v:
                continue
            ws.write(i + 1, j, v)
    wb.close()
    return path


def ensure_inputs(sizes: list[int], out: Path = OUT, *, xlsx: bool = True) -> dict[str, Path]:
    """Generate the inputs for ``sizes`` that are not there yet; keys like ``csv-10000``."""
    out.mkdir(parents=True, exist_ok=True)
    made: dict[str, Path] = {}
    for rows in sizes:
        csv_path = out / f"sheet_{rows}.csv"
        if not csv_path.exists():
            write_csv(rows, csv_path)
        made[f"csv-{rows}"] = csv_path
        parquet_path = out / f"sheet_{rows}.parquet"
        if not parquet_path.exists():
            write_parquet(rows, parquet_path)
        made[f"parquet-{rows}"] = parquet_path
        if xlsx and rows <= XLSX_MAX_ROWS:
            xlsx_path = out / f"sheet_{rows}.xlsx"
            if not xlsx_path.exists():
                write_xlsx(rows, xlsx_path)
            made[f"xlsx-{rows}"] = xlsx_path
    return made


def main() -> None:
    """Command line: generate the given sizes (default 10 k, 100 k, 1 M)."""
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("rows", nargs="*", type=int, default=[10_000, 100_000, 1_000_000])
    args = ap.parse_args()
    for key, path in ensure_inputs(args.rows).items():
        print(f"{key}: {path.name} ({path.stat().st_size / 1e6:.1f} MB)")


if __name__ == "__main__":
    main()
