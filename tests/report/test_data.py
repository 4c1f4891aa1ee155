"""The report's input contract: what it refuses, and the exact words it refuses it with."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from qc.errors import InputError, UnknownNameError
from qc.report import RESULT_COLUMNS, ReportData
from qc.report.units import MM_PER_INCH, display_unit, to_display
from tests.report.synthetic import tiny_batch


def test_missing_result_columns_are_named() -> None:
    results = tiny_batch().results.drop(columns=["verdict", "unit"])
    with pytest.raises(InputError) as err:
        ReportData(results)
    assert str(err.value) == (
        "report data › results: missing column(s) unit, verdict; expected the columns "
        + ", ".join(RESULT_COLUMNS)
    )


def test_unknown_verdict_suggests_the_contract_spelling() -> None:
    results = tiny_batch().results
    results.loc[1, "verdict"] = "conform"
    with pytest.raises(UnknownNameError) as err:
        ReportData(results)
    assert str(err.value) == (
        "unknown verdict 'conform'; did you mean 'conforms' or 'nonconforming'?")


def test_unknown_row_unit_is_refused() -> None:
    results = tiny_batch().results
    results.loc[0, "unit"] = "inch"
    with pytest.raises(UnknownNameError) as err:
        ReportData(results)
    assert str(err.value) == "unknown length unit 'inch'; did you mean 'in'?"


def test_budget_and_action_tables_are_checked_too() -> None:
    data = tiny_batch()
    with pytest.raises(InputError) as err:
        ReportData(data.results, data.budgets.drop(columns=["share"]))
    assert str(err.value).startswith("report data › budgets: missing column(s) share;")
    with pytest.raises(InputError) as err:
        ReportData(data.results, data.budgets, pd.DataFrame({"part": []}))
    assert str(err.value).startswith(
        "report data › actions: missing column(s) characteristic, action, reason, source_row;")


def test_inch_is_exactly_25_4_mm() -> None:
    # NIST SP 811 (2008), B.8: 1 in = 2.54 cm exactly (international inch, 1959)
    assert MM_PER_INCH == 25.4
    values = pd.Series([1.0, 25.4, np.nan])
    units = pd.Series(["in", "mm", "mm"])
    got = to_display(values, units, display_unit("mm"))
    assert got[:2].tolist() == [25.4, 25.4]
    assert np.isnan(got[2])
    assert to_display(values, units, display_unit("in"))[:2].tolist() == [1.0, 1.0]


def test_display_unit_names_and_formats() -> None:
    mm, inch = display_unit("mm"), display_unit("in")
    assert mm.size(25.02049) == "25.0205"
    assert inch.size(0.1204) == "0.12040"
    assert mm.size(float("nan")) == "–"
    assert mm.small_value(0.0017) == "1.7"  # µm
    assert inch.small_value(0.00005) == "50.0"  # µin
    assert display_unit("inches") is inch and display_unit(" MM ") is mm
    with pytest.raises(UnknownNameError) as err:
        display_unit("mmm")
    assert str(err.value) == "unknown length unit 'mmm'; did you mean 'mm'?"
