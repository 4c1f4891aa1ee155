"""The public names of the core modules exist, and the verdict caution says what it must."""

import importlib

import pytest

from qc.core.decision import SAFETY_NOTE

MODULES = ["qc.core.distributions", "qc.core.model", "qc.core.sensitivity", "qc.core.budget",
           "qc.core.decision", "qc.core.montecarlo", "qc.core.labels"]


@pytest.mark.parametrize("name", MODULES)
def test_all_names_exist(name: str) -> None:
    mod = importlib.import_module(name)
    missing = [n for n in mod.__all__ if not hasattr(mod, n)]
    assert missing == []


def test_safety_note() -> None:
    # Project rule: verdicts support, not replace, acceptance requirements and ISO/IEC 17025
    assert SAFETY_NOTE == (
        "These verdicts support, but do not replace, the customer's acceptance requirements, "
        "accredited procedures (ISO/IEC 17025) and qualified judgement; for safety-critical "
        "parts follow the agreed decision rule and sign-off."
    )
