"""ReportData from a pipeline run: units, left-out rows, budget columns, the rule's name."""

from __future__ import annotations

from pathlib import Path
from types import SimpleNamespace

import numpy as np
import pandas as pd
import pytest

from qc.report.evaluation import report_data
from tests.report.synthetic import tiny_batch

INPUT_COLUMNS = ["source_row", "part", "characteristic", "kind", "instrument", "inspector",
                 "measured_at", "part_temp_c", "gauge_temp_c"]


def _run(units: list[str]) -> SimpleNamespace:
    """A stand-in for qc.pipeline.Evaluation, shaped like it (results without the input
    columns, budgets with estimate_unit and the row's unit)."""
    d = tiny_batch()
    r = d.results.copy()
    r["unit"] = units
    inputs = r[INPUT_COLUMNS]
    results = r.drop(columns=[*INPUT_COLUMNS, "nominal"])
    frame = inputs.assign(nominal_mm=d.results["nominal"].to_numpy())
    budgets = d.budgets.rename(columns={"unit": "estimate_unit"}).assign(
        unit=np.asarray(units, dtype=object)[d.budgets["row_index"].to_numpy()])
    rule = SimpleNamespace(name="iso14253", description="ISO 14253-1: guard bands of U")
    return SimpleNamespace(
        table=SimpleNamespace(frame=frame, sheet="Readings", file="x.xlsx", register=None),
        results=results, budgets=budgets, actions=d.actions, rule=rule,
        settings=SimpleNamespace(coverage=0.9545, t_ref=20.0), notes=["a note"],
        input_sha256="ab" * 32, source=Path("shafts.xlsx"),
        flat=lambda: pd.concat([inputs, results], axis=1),
    )


def test_lengths_in_other_units_become_mm_and_angles_are_left_out() -> None:
    ev = _run(["mm", "µm", "mm", "°", "mm", "mm"])
    raw = tiny_batch().results
    data = report_data(ev)
    assert len(data.results) == 5
    assert set(data.results["unit"]) == {"mm"}
    # the µm row: 1 µm = 0.001 mm (SI prefix micro, 10⁻⁶ m)
    assert data.results.loc[1, "size_at_20c"] == pytest.approx(raw.loc[1, "size_at_20c"] * 1e-3)
    assert data.results.loc[0, "size_at_20c"] == raw.loc[0, "size_at_20c"]
    assert data.meta.notes[-1] == (
        "1 row(s) in units that are not lengths (°) are left out of this report")
    assert data.meta.notes[0] == "a note"
    # budget lines follow their rows: the angle row's lines are gone, the rest renumbered
    assert sorted(set(data.budgets["row_index"])) == [0, 1, 2, 3, 4]
    assert set(data.budgets["unit"]) == {"mm", "°C", "1/K"}  # the estimates' own units
    one = data.budgets[data.budgets["row_index"] == 1]["contribution"].to_numpy()
    orig = tiny_batch().budgets
    assert one == pytest.approx(orig[orig["row_index"] == 1]["contribution"].to_numpy() * 1e-3)


def test_meta_from_the_run() -> None:
    meta = report_data(_run(["mm"] * 6)).meta
    assert (meta.decision_rule, meta.decision_rule_description) == (
        "ISO 14253-1", "guard bands of U")
    assert (meta.batch, meta.input_file, meta.sheet) == ("shafts", "shafts.xlsx", "Readings")
    assert meta.coverage_probability == 0.9545 and meta.input_sha256 == "ab" * 32


def test_demo_sheet_through_the_pipeline(tmp_path: Path) -> None:
    """Integration with the pipeline on the bundled inch demo, when both are present."""
    pipeline = pytest.importorskip("qc.pipeline")
    demo = Path(__file__).resolve().parents[2] / "demo_inspections" / "spacers_inch.csv"
    if not demo.exists():
        pytest.skip("demo sheet spacers_inch.csv not present")
    from qc.report.build import report_from_evaluation

    ev = pipeline.evaluate_file(demo)
    materials = report_data(ev).meta.materials
    assert materials and all(m.source and m.expansion_coefficient for m in materials)
    html, pdf = report_from_evaluation(ev, tmp_path / "spacers")
    text = html.read_text(encoding="utf-8")
    assert "lengths in inches" in text
    n_chars = ev.table.frame["characteristic"].nunique()
    assert text.count('<figure class="size-chart"') == n_chars
    assert pdf.read_bytes()[:5] == b"%PDF-"
