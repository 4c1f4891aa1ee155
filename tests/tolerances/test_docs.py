"""Every example in docs/tolerances.md parses to the limits the page shows."""

from __future__ import annotations

import math
from pathlib import Path

import pytest

from qc.tolerances import parse_tolerance

DOC = Path(__file__).resolve().parents[2] / "docs" / "tolerances.md"


def _rows() -> list[tuple[str, float | None, float, float]]:
    rows = []
    for line in DOC.read_text(encoding="utf-8").splitlines():
        cells = [c.strip() for c in line.strip().strip("|").split("|")]
        if len(cells) == 5 and cells[1].startswith("`"):
            nominal = None if cells[2] == "–" else float(cells[2])
            lo, hi = (math.nan if c == "open" else float(c) for c in cells[3:])
            rows.append((cells[1].strip("`"), nominal, lo, hi))
    return rows


ROWS = _rows()


def test_page_has_the_examples() -> None:
    assert len(ROWS) >= 30


@pytest.mark.parametrize(("text", "nominal", "lower", "upper"), ROWS)
def test_documented_example(text: str, nominal: float | None, lower: float, upper: float) -> None:
    tol = parse_tolerance(text, nominal=nominal)
    for got, want in ((tol.lower_limit, lower), (tol.upper_limit, upper)):
        assert (math.isnan(got) and math.isnan(want)) or got == pytest.approx(want, abs=1e-12)
