"""The main job end to end: a demo sheet in, the workbook written back, read back and checked."""

from __future__ import annotations

import hashlib
import shutil
from pathlib import Path

import numpy as np
import openpyxl
import pytest
from typer.testing import CliRunner

from qc.cli import app
from qc.export import write_results
from qc.pipeline import evaluate_file

DEMO = Path(__file__).resolve().parent.parent / "demo_inspections"
VERDICTS = {"conforms", "nonconforming", "borderline", "not evaluated"}


@pytest.fixture()
def demo(tmp_path: Path):
    def copy(name: str) -> Path:
        return Path(shutil.copy(DEMO / name, tmp_path / name))
    return copy


def _digest(p: Path) -> str:
    return hashlib.sha256(p.read_bytes()).hexdigest()


def test_inch_row_matches_hand_computation(demo) -> None:
    """spacers_inch.csv row 2, computed by hand from the model of docs/method.md:

    L20 = R·(1 + α_g·(t_g − 20)) / (1 + α_p·(t_p − 20)) with R = 0.5006 in = 12.71524 mm
    (1 in = 25.4 mm exactly, NIST SP 811 B.8), t_p = t_g = 82 °F = (82 − 32)/1.8 = 27.777… °C,
    α_p = 110e-6/K (POM, qc/data/materials.toml), α_g = 11.5e-6/K (steel gauge, ISO 3650).
    """
    ev = evaluate_file(demo("spacers_inch.csv"))
    row = ev.results.iloc[0]
    t = (82 - 32) / 1.8
    r_mm = 0.5006 * 25.4
    l20_mm = r_mm * (1 + 11.5e-6 * (t - 20)) / (1 + 110e-6 * (t - 20))
    assert row["unit"] == "in"
    assert row["size_at_20c"] == pytest.approx(l20_mm / 25.4, rel=1e-12)
    assert row["thermal_correction"] == pytest.approx((l20_mm - r_mm) / 25.4, rel=1e-9)
    # −0.000383 in: a 0.5 in acetal spacer at 82 °F reads 0.4 thou over its 20 °C size
    assert row["thermal_correction"] == pytest.approx(-0.000383, abs=1e-6)
    assert row["verdict"] == "conforms"


def test_workbook_written_back_keeps_the_original_and_adds_results(demo, tmp_path) -> None:
    src = demo("housings_winter.xlsx")
    before = _digest(src)
    out = tmp_path / "out.xlsx"
    ev = evaluate_file(src)
    write_results(ev, out)
    assert _digest(src) == before, "the input file must never be modified"

    wb = openpyxl.load_workbook(out)
    assert wb.sheetnames[:2] == ["Inspection", "Instruments"]
    assert {"Budget", "Summary", "Actions", "Method"} <= set(wb.sheetnames)
    ws = wb["Inspection"]
    orig = openpyxl.load_workbook(src)["Inspection"]
    # original cells and their formatting are untouched
    for row in orig.iter_rows(min_row=1, max_row=orig.max_row):
        for cell in row:
            kept = ws[cell.coordinate]
            assert kept.value == cell.value
            assert kept.font.b == cell.font.b
    header = {c.value: c.column for c in ws[ev.table.header_row] if c.value}
    for col in ("size_at_20c", "thermal_correction", "combined_uncertainty", "coverage_factor",
                "expanded_uncertainty", "effective_dof", "verdict", "conformance_probability",
                "capability_index", "flags", "message"):
        assert col in header, col
    rows = ev.table.data_rows
    assert len(rows) == len(ev.results) == 48
    got = [ws.cell(r, header["verdict"]).value for r in rows]
    assert got == list(ev.results["verdict"])
    assert set(got) <= VERDICTS
    size = [ws.cell(r, header["size_at_20c"]).value for r in rows]
    np.testing.assert_allclose(np.array(size, float), ev.results["size_at_20c"], rtol=1e-12)


def test_budget_sheet_reproduces_each_combined_uncertainty(demo, tmp_path) -> None:
    src = demo("housings_winter.xlsx")
    ev = evaluate_file(src)
    out = tmp_path / "out.xlsx"
    write_results(ev, out)
    ws = openpyxl.load_workbook(out, read_only=True)["Budget"]
    values = list(ws.iter_rows(values_only=True))
    start = next(i for i, r in enumerate(values) if r and r[0] == "row_index")
    head = values[start]
    data = [dict(zip(head, r, strict=False)) for r in values[start + 1:] if r[0] is not None]
    sums: dict[int, float] = {}
    for d in data:
        sums[d["row_index"]] = sums.get(d["row_index"], 0.0) + float(d["contribution"]) ** 2
    evaluated = ev.results["verdict"] != "not evaluated"
    assert evaluated.sum() > 0
    for i in np.flatnonzero(evaluated.to_numpy()):
        assert np.sqrt(sums[i]) == pytest.approx(ev.results["combined_uncertainty"].iloc[i],
                                                 rel=1e-9)


def test_method_sheet_names_the_input_and_rule(demo, tmp_path) -> None:
    src = demo("housings_winter.xlsx")
    ev = evaluate_file(src)
    out = tmp_path / "out.xlsx"
    write_results(ev, out)
    ws = openpyxl.load_workbook(out, read_only=True)["Method"]
    items = {r[0]: r[1] for r in ws.iter_rows(values_only=True) if r and r[0]}
    assert items["input SHA-256"] == _digest(src)
    assert items["reference temperature"] == "20 °C"
    assert items["decision rule"].startswith("iso14253")
    assert any(str(k).startswith("part material") for k in items)


def test_cli_normalise_writes_beside_the_input_and_refuses_to_overwrite(demo) -> None:
    src = demo("spacers_inch.csv")
    runner = CliRunner()
    res = runner.invoke(app, ["normalise", str(src)])
    assert res.exit_code == 0, res.output
    out = src.with_name("spacers_inch.checked.xlsx")
    assert out.exists()
    assert "results:" in res.output
    again = runner.invoke(app, ["normalise", str(src)])
    assert again.exit_code == 2
    assert "--force" in again.output
    fail = runner.invoke(app, ["normalise", str(src), "--force", "--fail-on", "borderline"])
    ev = evaluate_file(src)
    assert fail.exit_code == (1 if ev.counts["borderline"] else 0)


@pytest.mark.parametrize("suffix", [".csv", ".parquet", ".jsonl"])
def test_flat_outputs_carry_the_result_columns(demo, tmp_path, suffix) -> None:
    import pandas as pd

    ev = evaluate_file(demo("spacers_inch.csv"))
    out = tmp_path / f"out{suffix}"
    write_results(ev, out)
    back = {".csv": pd.read_csv, ".parquet": pd.read_parquet,
            ".jsonl": lambda p: pd.read_json(p, lines=True)}[suffix](out)
    assert len(back) == len(ev.results)
    assert list(back["verdict"]) == list(ev.results["verdict"])
    np.testing.assert_allclose(back["size_at_20c"], ev.results["size_at_20c"], rtol=1e-9)


def test_cli_check_exit_status(tmp_path) -> None:
    bad = tmp_path / "bad.csv"
    bad.write_text("part,characteristic,nominal,tolerance,reading,part_temp,part_material\n"
                   "P1,D1,10,±0.05,10.01,20,steel\nP2,D1,10,±0.05,ten,20,steel\n",
                   encoding="utf-8")
    runner = CliRunner()
    res = runner.invoke(app, ["check", str(bad)])
    assert res.exit_code == 1
    assert "bad.csv" in res.output and "row 3" in res.output
    unreadable = tmp_path / "junk.xlsx"
    unreadable.write_bytes(b"not a workbook at all")
    assert runner.invoke(app, ["check", str(unreadable)]).exit_code == 2


def test_cli_limits_and_explain(demo) -> None:
    runner = CliRunner()
    res = runner.invoke(app, ["limits", "Ø25 H7"])
    assert res.exit_code == 0
    # ISO 286-2: Ø25 H7 = +0.021/0 (reference table, section 5)
    assert "25.021" in res.output
    src = demo("spacers_inch.csv")
    res = runner.invoke(app, ["explain", str(src), "--row", "2"])
    assert res.exit_code == 0, res.output
    assert "verdict: conforms" in res.output


def test_readme_worked_row_is_what_qc_computes(demo) -> None:
    """The worked session in README.md shows this row's results: keep them true."""
    readme = (Path(__file__).resolve().parent.parent / "README.md").read_text(encoding="utf-8")
    row = evaluate_file(demo("spacers_inch.csv")).results.iloc[0]
    shown = (f"| {row['size_at_20c']:.6f} | −{abs(row['thermal_correction']):.6f} | "
             f"{row['combined_uncertainty']:.6f} | {row['coverage_factor']:.2f} | "
             f"{row['expanded_uncertainty']:.6f} | {row['verdict']} |")
    assert shown in readme


def test_result_columns_are_the_documented_public_interface(demo) -> None:
    from qc.results import FLAG_CODES, RESULT_COLUMNS

    ev = evaluate_file(demo("spacers_inch.csv"))
    assert tuple(ev.results.columns) == RESULT_COLUMNS
    doc = (Path(__file__).resolve().parent.parent / "docs" / "columns.md").read_text("utf-8")
    for name in (*RESULT_COLUMNS, *FLAG_CODES):
        assert f"`{name}`" in doc, name


def test_action_list_gives_soak_times_and_temperature_bands(demo) -> None:
    ev = evaluate_file(demo("housings_winter.xlsx"))
    a = ev.actions
    soak = a[a["action"] == "soak and re-measure"]
    assert len(soak) > 0
    assert soak["reason"].str.match(r"let it soak \d+–\d+ min in still air").all()
    flagged = ev.results["flags"].str.contains("soak-advised")
    assert (ev.results.loc[flagged, "soak_minutes_low"]
            <= ev.results.loc[flagged, "soak_minutes_high"]).all()
    bands = a[a["action"] == "measure within the temperature band"]
    assert sorted(bands["characteristic"]) == sorted(ev.table.frame["characteristic"].unique())
    # Bore A, Ø62 H7 (30 µm, ISO 286-1 IT7 50–80 mm) in EN AW-6082 (α 23.4e-6, u 1.2e-6) on
    # a steel bore gauge (register: steel, α 11.7e-6, u 0.6e-6): a tenth of the tolerance,
    # 3 µm, allows |θ|·62 mm·(11.7e-6 + 2·√(1.2² + 0.6²)e-6)/K ≤ 3 µm → |θ| ≤ 3.364 K, less
    # the thermometer's k·u = 2·0.5/√3 = 0.577 K → 2.787 K → 17.21 … 22.79 °C (hand computed)
    row = ev.characteristics[ev.characteristics["characteristic"] == "Bore A"].iloc[0]
    assert row["band_low_c"] == pytest.approx(20 - 2.787, abs=0.002)
    assert row["band_high_c"] == pytest.approx(20 + 2.787, abs=0.002)
    bore = bands[bands["characteristic"] == "Bore A"]["reason"].iloc[0]
    assert bore.startswith("uncorrected 17.2 to 22.8 °C")


def test_folder_run_keeps_results_of_same_named_inputs(tmp_path) -> None:
    for name in ("housings_winter.xlsx", "housings_winter.csv"):
        shutil.copy(DEMO / name, tmp_path / name)
    out = tmp_path / "out"
    out.mkdir()
    res = CliRunner().invoke(app, ["normalise", str(tmp_path), "-o", str(out)])
    assert res.exit_code == 0, res.output
    assert sorted(p.name for p in out.iterdir()) == [
        "housings_winter-xlsx.checked.xlsx", "housings_winter.checked.xlsx"]


def test_readme_commands_run(tmp_path, monkeypatch) -> None:
    """Every `.venv/bin/qc …` line of the README runs as shown (in a copy of the demo folder)."""
    import shlex

    readme = (Path(__file__).resolve().parent.parent / "README.md").read_text(encoding="utf-8")
    lines = [ln.split("#")[0].strip() for ln in readme.splitlines()
             if ln.startswith(".venv/bin/qc ")]
    assert len(lines) >= 5
    shutil.copytree(DEMO, tmp_path / "demo_inspections",  # without outputs of earlier runs
                    ignore=shutil.ignore_patterns("*.checked.*", "*.report.*"))
    monkeypatch.chdir(tmp_path)
    runner = CliRunner()
    for line in lines:
        args = shlex.split(line)[1:]
        res = runner.invoke(app, args)
        assert res.exit_code == 0, (line, res.output)
