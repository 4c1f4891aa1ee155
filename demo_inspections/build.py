"""Build the demo inspection sheets from a seeded, invented scenario.

Each scenario is written twice: as a readable CSV text source (committed, reviewed in diffs) and,
for the spreadsheet scenarios, as the workbook a shop would keep (title rows, an instrument
register sheet, formatting). Run ``python demo_inspections/build.py`` to rebuild them; the output
is the same on every run.

The readings are made from the model of docs/method.md run backwards: a true size at 20 °C,
expanded to the part temperature and read on a gauge at its own temperature, plus a little noise,
rounded to the instrument's resolution. Every name and number here is invented for the demo.
"""

from __future__ import annotations

import csv
import datetime as dt
import io
from pathlib import Path

import numpy as np

HERE = Path(__file__).resolve().parent
SEED = 2611

STEEL = 11.5e-6  # gauge scale / setting master, 1/K (ISO 3650 steel gauge blocks)
ALUMINIUM = 23.4e-6  # EN AW-6082, 1/K
STAINLESS_17_4 = 10.8e-6  # 17-4PH (H1150), 1/K
POM = 110e-6  # acetal copolymer, 1/K


def indicated(true_20: np.ndarray, part_cte: float, part_t: np.ndarray, gauge_cte: float,
              gauge_t: np.ndarray) -> np.ndarray:
    """What a gauge at ``gauge_t`` shows for a part of true size ``true_20`` (mm, °C, 1/K)."""
    return true_20 * (1 + part_cte * (part_t - 20)) / (1 + gauge_cte * (gauge_t - 20))


def housings_winter(rng: np.random.Generator) -> tuple[list[str], list[list[object]]]:
    """Aluminium pump housings checked with steel gauges in an unheated hall in January."""
    header = ["Part No.", "Feature", "Type", "Nominal", "Tolerance", "Reading 1", "Reading 2",
              "Reading 3", "Unit", "Part temp (°C)", "Gauge temp (°C)", "Material",
              "Instrument", "Date", "Inspector", "Remarks"]
    features = [
        # name, kind, nominal, tolerance, instrument, resolution, repeats, process spread
        ("Bore A", "diameter", 62.0, "H7", "BG-03", 0.001, 3, 0.004, 0.0150),
        ("Overall length", "length", 180.0, "±0.05", "OM-180", 0.001, 1, 0.012, 0.0),
        ("Flange thickness", "thickness", 12.0, "0/-0.05", "OM-25", 0.001, 1, 0.008, -0.025),
        ("Bolt circle", "distance", 95.0, "±0.1", "CAL-150", 0.01, 1, 0.02, 0.0),
    ]
    rows: list[list[object]] = []
    for p in range(1, 13):
        part = f"HB-2611-{p:02d}"
        part_t = round(float(rng.uniform(10.5, 14.0)), 1)
        gauge_t = round(float(rng.uniform(15.0, 16.5)), 1)
        day = f"2026-01-{13 + p // 5:02d}"
        for name, kind, nominal, tol, instr, res, repeats, spread, offset in features:
            true = nominal + offset + rng.normal(0, spread)
            if name == "Bore A" and p in (4, 9):  # two bores near the lower limit
                true = nominal + 0.0035
            r = indicated(np.full(repeats, true), ALUMINIUM, np.full(repeats, part_t), STEEL,
                          np.full(repeats, gauge_t))
            r = r + rng.normal(0, res * 0.8, repeats)
            readings = [round(round(v / res) * res, 4) for v in r]
            readings += [None] * (3 - len(readings))
            remark = "stored by the gate overnight" if part_t < 11 else None
            rows.append([part, name, kind, nominal, tol, *readings, "mm", part_t, gauge_t,
                         "EN AW-6082", instr, day, "M. Keller", remark])
    return header, rows


def shafts_warm(rng: np.random.Generator) -> tuple[list[list[object]], list[list[object]]]:
    """17-4PH stainless shafts measured warm straight off the lathe (wide layout)."""
    chars = [
        # id, nominal, tolerance, instrument, resolution, scaled, spread, offset
        ("D1 bearing seat", 25.0, "g6", "OM-25", 0.001, True, 0.0025, -0.0135),
        ("D2 shoulder", 30.0, "±0.02", "OM-50", 0.001, True, 0.005, 0.0),
        ("L1 length", 120.0, "±0.1", "CAL-150", 0.01, True, 0.02, 0.0),
        ("Runout D1", 0.0, "0.02 max", "DI-01", 0.001, False, 0.004, 0.008),
    ]
    head = [
        ["Characteristic", *[c[0] for c in chars], "Part temp (°C)", "Room (°C)", "Material",
         "Note"],
        ["Kind", "diameter", "diameter", "length", "runout", None, None, None, None],
        ["Nominal", *[c[1] for c in chars], None, None, None, None],
        ["Tolerance", *[c[2] for c in chars], None, None, None, None],
        ["Instrument", *[c[3] for c in chars], None, None, None, None],
    ]
    rows: list[list[object]] = []
    for p in range(1, 16):
        part_t = round(float(rng.uniform(26.0, 36.0)), 1)
        room = round(float(rng.uniform(21.0, 22.0)), 1)
        values: list[object] = []
        for _, nominal, _, _, res, scaled, spread, offset in chars:
            true = nominal + offset + rng.normal(0, spread)
            if scaled:
                true = float(indicated(np.array([true]), STAINLESS_17_4, np.array([part_t]),
                                       STEEL, np.array([room]))[0])
            values.append(round(round(abs(true) / res) * res, 4))
        note = "measured at the machine" if part_t > 34 else None
        rows.append([f"S-{p:03d}", *values, part_t, room, "17-4PH", note])
    return head, rows


def spacers_inch(rng: np.random.Generator) -> tuple[list[str], list[list[object]]]:
    """Acetal spacers in inch and °F, measured in a summer shop without air conditioning."""
    header = ["Part", "Characteristic", "Nominal (in)", "Tol (in)", "Reading (in)",
              "Part Temp (°F)", "Gauge Temp (°F)", "Material", "Gauge", "Inspector"]
    chars = [
        ("Thickness", 0.5000, "+/-0.0020", "outside micrometer", 0.0001, 0.0006, 0.0),
        ("OD", 1.2500, "+0.000/-0.003", "outside micrometer", 0.0001, 0.0005, -0.0016),
        ("ID", 0.5005, "+0.002/-0.000", "caliper", 0.0005, 0.0004, 0.0012),
    ]
    rows: list[list[object]] = []
    for p in range(1, 11):
        part_f = round(float(rng.uniform(76.0, 84.0)), 0)
        gauge_f = round(part_f - float(rng.uniform(0.0, 2.0)), 0)
        for name, nominal, tol, instr, res, spread, offset in chars:
            true_mm = (nominal + offset + rng.normal(0, spread)) * 25.4
            r_mm = indicated(np.array([true_mm]), POM, np.array([(part_f - 32) / 1.8]), STEEL,
                             np.array([(gauge_f - 32) / 1.8]))[0]
            reading = round(round(r_mm / 25.4 / res) * res, 4)
            rows.append([f"SP-{p:02d}", name, nominal, tol, reading, part_f, gauge_f,
                         "POM-C", instr, "J. Ortega"])
    return header, rows


REGISTER = [
    ["Instrument", "Type", "Resolution", "MPE", "Material", "Calibration due"],
    ["BG-03", "bore gauge", "0.001 mm", "0.003 mm", "steel", "2026-06-30"],
    ["OM-25", "outside micrometer", "0.001 mm", "0.002 mm", "steel", "2026-09-30"],
    ["OM-50", "outside micrometer", "0.001 mm", "0.002 mm", "steel", "2026-09-30"],
    ["OM-180", "outside micrometer", "0.001 mm", "0.004 mm", "steel", "2026-01-10"],
    ["CAL-150", "caliper", "0.01 mm", "0.02 mm", "steel", "2026-12-31"],
    ["DI-01", "indicator", "0.001 mm", "0.003 mm", "steel", "2026-12-31"],
]


def write_csv(path: Path, rows: list[list[object]]) -> None:
    buf = io.StringIO()
    csv.writer(buf, lineterminator="\n").writerows(
        [["" if v is None else v for v in row] for row in rows])
    path.write_text(buf.getvalue(), encoding="utf-8")


def _as_cell(value: object) -> object:
    """ISO dates become real spreadsheet dates, as a shop's sheet would hold them."""
    if isinstance(value, str) and len(value) == 10 and value[4] == "-" and value[7] == "-":
        return dt.date.fromisoformat(value)
    return value


def write_workbook(path: Path, title: list[str], table: list[list[object]], header_rows: int,
                   register: list[list[object]] | None) -> None:
    """A workbook as a shop keeps it: title rows above the table, bold header, a register sheet."""
    from openpyxl import Workbook
    from openpyxl.styles import Alignment, Border, Font, PatternFill, Side

    wb = Workbook()
    wb.properties.creator = "qc demo"
    wb.properties.created = wb.properties.modified = dt.datetime(2026, 1, 20, 7, 30)
    ws = wb.active
    ws.title = "Inspection"
    for line in title:
        ws.append([line])
    ws["A1"].font = Font(bold=True, size=14)
    ws.append([])
    thin = Side(style="thin")
    for i, row in enumerate(table):
        ws.append([_as_cell(v) for v in row])
        if i < header_rows:
            for cell in ws[ws.max_row]:
                cell.font = Font(bold=True)
                cell.fill = PatternFill("solid", fgColor="DDDDDD")
                cell.border = Border(bottom=thin)
                cell.alignment = Alignment(wrap_text=True)
    for col in ws.columns:
        ws.column_dimensions[col[0].column_letter].width = 14
    ws.freeze_panes = ws.cell(row=len(title) + 2 + header_rows, column=2)
    if register:
        reg = wb.create_sheet("Instruments")
        for row in register:
            reg.append(row)
        for cell in reg[1]:
            cell.font = Font(bold=True)
        for col in reg.columns:
            reg.column_dimensions[col[0].column_letter].width = 18
    wb.save(path)


def main() -> None:
    rng = np.random.default_rng(SEED)
    header, rows = housings_winter(rng)
    write_csv(HERE / "housings_winter.csv", [header, *rows])
    write_workbook(
        HERE / "housings_winter.xlsx",
        ["Pump housing HB-2611: incoming inspection", "Hall 2 (unheated), January 2026"],
        [header, *rows], 1, REGISTER)
    head, srows = shafts_warm(rng)
    write_csv(HERE / "shafts_warm.csv", [*head, *srows])
    write_workbook(
        HERE / "shafts_warm.xlsx",
        ["Drive shafts 17-4PH, lot 0412: in-process check", "Measured at the lathe"],
        [[*h] for h in head] + srows, 5, REGISTER)
    header, rows = spacers_inch(rng)
    write_csv(HERE / "spacers_inch.csv", [header, *rows])


if __name__ == "__main__":
    main()
