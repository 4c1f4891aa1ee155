"""The bundled heat-transfer table: every entry sourced, ranges ordered, validation messages."""

import tomllib
from importlib import resources

import pytest

from qc.cli.thermal import load_heat_transfer
from qc.core.soak import parse_heat_transfer
from qc.errors import DataFileError


def test_bundled_table_loads_and_every_entry_has_a_source() -> None:
    resting, surfaces = load_heat_transfer()
    assert {"still-air", "moving-air", "granite-plate", "iron-plate"} <= set(resting)
    for r in resting.values():
        assert r.source.strip() and r.h_low <= r.h_nominal <= r.h_high
    for s in surfaces.values():
        assert s.source.strip() and 0 < s.eps_low <= s.eps_nominal <= s.eps_high <= 1


def test_still_air_lies_in_the_published_free_convection_range() -> None:
    # Incropera, Fundamentals of Heat and Mass Transfer, Table 1.1: free convection of
    # gases 2–25 W/(m²·K) (published-checks.md §8 [S2]).
    r = load_heat_transfer()[0]["still-air"]
    assert r.h_low >= 2.0 and r.h_high <= 25.0


def _table() -> dict:
    text = resources.files("qc.data").joinpath("heat_transfer.toml").read_text(encoding="utf-8")
    return tomllib.loads(text)


@pytest.mark.parametrize(
    ("change", "message"),
    [
        (
            lambda t: t.update(format_version=2),
            "heat_transfer.toml: expected format_version = 1, got 2",
        ),
        (
            lambda t: t["resting"]["still-air"].update(h_low=9.0),
            "heat_transfer.toml › [resting.still-air]: expected h_low ≤ h_nominal ≤ h_high",
        ),
        (
            lambda t: t["resting"]["still-air"].pop("source"),
            "heat_transfer.toml › [resting.still-air]: 'source' must be non-empty text",
        ),
        (
            lambda t: t["surface"]["painted"].update(eps_nominal="high"),
            "heat_transfer.toml › [surface.painted]: 'eps_nominal' must be a positive number, "
            "got 'high'",
        ),
        (
            lambda t: t["surface"]["painted"].update(eps_high=1.2),
            "heat_transfer.toml › [surface.painted]: emissivity cannot exceed 1",
        ),
        (
            lambda t: t.pop("surface"),
            "heat_transfer.toml: expected a [surface.<name>] section, found none",
        ),
    ],
)
def test_validation_messages(change, message: str) -> None:
    table = _table()
    change(table)
    with pytest.raises(DataFileError) as info:
        parse_heat_transfer(table)
    assert str(info.value) == message
