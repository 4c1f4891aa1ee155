"""Header matching and the synonym list."""

import numpy as np
import pytest

from qc.io.grid import Grid
from qc.io.headers import find_header_row, header_key, load_synonyms, match_one, split_unit
from qc.models import Layout


@pytest.mark.parametrize(("text", "field", "n"), [
    ("Part No.", "part", None), ("S/N", "part", None), ("part_temp", "part_temp", None),
    ("PART TEMP", "part_temp", None), ("Temp (°F)", "part_temp", None),
    ("Size [in]", "nominal", None), ("Reading #2", "reading", 2), ("R3", "reading", 3),
    ("reading_4", "reading", 4), ("Measured value", "reading", None),
    ("-Tol", "lower_deviation", None), ("Tol +", "upper_deviation", None),
    ("Gage Temp °F", "gauge_temp", None), ("Date/Time", "measured_at", None),
    ("Hole/Shaft", "hole_or_shaft", None), ("USL", "upper_limit", None),
    ("master_u", "master_u", None),
    ("Stamp", None, None),
])
def test_match(text: str, field: str | None, n: int | None) -> None:
    assert match_one(text) == (field, n)


def test_every_canonical_name_matches_itself() -> None:
    for name in load_synonyms().fields:
        assert match_one(name)[0] == name


def test_synonyms_are_unambiguous_and_sourced() -> None:
    seen: dict[str, str] = {}
    for name, spec in load_synonyms().fields.items():
        assert spec.source
        for s in spec.synonyms:
            key = header_key(s)
            assert seen.setdefault(key, name) == name, f"{s!r} maps to {seen[key]} and {name}"


def test_split_unit() -> None:
    assert split_unit("Temp (°F)") == ("Temp", "°F")
    assert split_unit("CTE (µm/(m·K))") == ("CTE", "µm/(m·K)")
    assert split_unit("Part") == ("Part", None)


def test_header_row_below_titles_and_layout_override() -> None:
    cells = np.array([["Report", "", ""], ["", "", ""], ["Part", "Nominal", "Reading"],
                      ["A", 1.0, 1.0]], dtype=object)
    g = Grid("g.xlsx", "S", cells)
    assert find_header_row(g).row == 2
    layout = Layout(headers={"part": "Report"}, header_row=1)
    assert find_header_row(g, layout).fields["part"].column == 0


def test_unit_row_below_header() -> None:
    cells = np.array([["Part", "Nominal", "Reading", "Temp"], ["", "in", "in", "°F"],
                      ["A", 1.0, 1.0, 68.0]], dtype=object)
    scan = find_header_row(Grid("g.xlsx", "S", cells))
    assert scan.unit_row == 1
    assert scan.fields["part_temp"].unit == "°F"
