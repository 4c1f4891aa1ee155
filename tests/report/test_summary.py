"""Summary, budget choice and action list, checked against the tables they come from."""

from __future__ import annotations

import math
from collections import Counter
from datetime import date

import pandas as pd

from qc.report import VERDICTS, InstrumentUsed, ReportMeta
from qc.report.actions import SoakLine, action_list
from qc.report.summary import (
    MAX_BUDGETS,
    budget_positions,
    budget_rows,
    parts_needing_action,
    verdict_counts,
    worst_margins,
)
from tests.report.synthetic import big_batch, winter_batch


def test_verdict_counts_cover_every_verdict_and_add_up() -> None:
    data = winter_batch()
    counts = dict(verdict_counts(data.results))
    assert list(counts) == list(VERDICTS)
    tally = Counter(data.results["verdict"])
    assert counts == {v: tally.get(v, 0) for v in VERDICTS}
    assert sum(counts.values()) == len(data.results)
    assert counts["nonconforming"] == 1 and counts["borderline"] > 0


def test_parts_needing_action_put_nonconforming_first() -> None:
    data = winter_batch()
    needs = parts_needing_action(data.results, data.actions)
    bad = set(data.results.loc[data.results["verdict"] == "nonconforming", "part"])
    assert {n.part for n in needs[: len(bad)]} == bad
    expected = set(data.results.loc[data.results["verdict"] != "conforms", "part"])
    expected |= set(data.actions.loc[data.actions["action"] == "soak and re-measure", "part"])
    assert {n.part for n in needs} == expected  # instrument actions alone do not list a part
    first = needs[0]
    assert first.reason.startswith("1 nonconforming")
    soaked = next(n for n in needs if "soak and re-measure" in n.actions)
    # the flag codes of its rows read as words
    assert "; flagged: temperature decides, soak advised" in soaked.reason


def test_worst_margins_are_the_smallest() -> None:
    data = winter_batch()
    worst = worst_margins(data.results, 5)
    smallest = sorted(data.results["margin_in_U"])[:5]
    assert worst["margin_in_U"].tolist() == smallest


def test_budget_rows_take_borderline_rows_first_and_cap() -> None:
    data = winter_batch()
    chosen, qualified = budget_rows(data.results, data.budgets)
    border = set(data.results.index[data.results["verdict"] == "borderline"])
    lowest3 = set(data.results["margin_in_U"].nsmallest(3).index)
    assert qualified == len(border | lowest3)
    assert len(chosen) == min(MAX_BUDGETS, qualified)
    margins = data.results["margin_in_U"].to_numpy()[chosen]
    assert list(margins) == sorted(margins)  # smallest margin first
    positions = budget_positions(data.results, data.budgets)
    assert (positions >= 0).all()


def test_budget_rows_index_by_label() -> None:
    data = winter_batch()
    shifted = data.results.set_axis(data.results.index + 1000)
    budgets = data.budgets.assign(row_index=data.budgets["row_index"] + 1000)
    assert budget_rows(shifted, budgets) == budget_rows(data.results, data.budgets)


def test_action_list_groups_soak_finer_and_calibration() -> None:
    data = winter_batch()
    acts = action_list(data.results, data.actions, data.meta)
    soak_parts = data.actions.loc[data.actions["action"] == "soak and re-measure", "part"]
    assert [s.part for s in acts.soak] == list(dict.fromkeys(soak_parts))
    assert all(s.minutes == "35–80 min" for s in acts.soak)
    assert [f.characteristic for f in acts.finer] == ["Flange 12 −0.1"]
    worst_cm = data.results.loc[data.results["characteristic"] == "Flange 12 −0.1",
                                "capability_index"].min()
    assert math.isclose(acts.finer[0].worst_capability, worst_cm)
    assert [c.instrument for c in acts.calibration] == ["micrometer M-07"]
    assert acts.calibration[0].due == date(2025, 12, 31)
    assert acts.calibration[0].rows == 30
    assert len(acts.other) == 0 and not acts.empty


def test_overdue_found_from_due_dates_without_an_action() -> None:
    data = big_batch(n_chars=1, n_parts=3)
    meta = ReportMeta(instruments=(InstrumentUsed("caliper C-11", "instrument table",
                                                  calibration_due=date(2026, 1, 1)),))
    acts = action_list(data.results, data.actions, meta)
    assert [(c.instrument, c.rows) for c in acts.calibration] == [("caliper C-11", 3)]


def test_soak_time_wording() -> None:
    nan = float("nan")
    assert SoakLine("P", "c", 30, 90).minutes == "30–90 min"
    assert SoakLine("P", "c", 45, 45).minutes == "45 min"
    assert SoakLine("P", "c", nan, 60).minutes == "up to 60 min"
    assert SoakLine("P", "c", nan, nan).minutes == "–"


def test_unknown_actions_are_listed_as_given() -> None:
    data = winter_batch()
    extra = pd.DataFrame([{"part": "H-004", "characteristic": "Bore Ø25 H7",
                           "action": "check the thermometer", "reason": "reads 3 °C low",
                           "source_row": 5}])
    acts = action_list(data.results, pd.concat([data.actions, extra]), data.meta)
    assert acts.other["action"].tolist() == ["check the thermometer"]
