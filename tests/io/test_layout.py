"""Layout files: validation messages, pinned headers and defaults, the proposal from a sample."""

from pathlib import Path

import pytest

from qc.errors import ConfigError
from qc.io import load_layout, parse_layout, propose_layout, read_inspection
from tests.corpus import builders

SHOP_LAYOUT = '''
format_version = 1
name = "invented shop"
decimal = ","
header_row = 2

[headers]
part = "Teil"
characteristic = "Merkmal"
nominal = "Soll"
reading_1 = "Ist 1"
reading_2 = "Ist 2"
part_temp = "Temp. Werkstück"

[defaults]
temp_unit = "°F"
general_tolerance = "m"
gauge_material = "steel"
'''


def test_layout_pins_headers_decimal_and_defaults(tmp_path: Path) -> None:
    p = tmp_path / "werk.csv"
    p.write_text("Prüfprotokoll (invented)\nTeil;Merkmal;Soll;Ist 1;Ist 2;Temp. Werkstück\n"
                 "W-1;L1;40;40,02;40,04;68\n", encoding="utf-8")
    t = read_inspection(p, layout=parse_layout(SHOP_LAYOUT))
    f = t.frame
    assert t.header_row == 2
    assert f.loc[0, "reading_mean_mm"] == pytest.approx(40.03)
    assert f.loc[0, "n_readings"] == 2
    assert f.loc[0, "part_temp_c"] == pytest.approx(20.0)  # 68 °F by the layout's temp_unit
    # ISO 2768-1 class m, over 30 up to 120 mm: ±0.3 mm
    assert (f.loc[0, "lower_limit_mm"], f.loc[0, "upper_limit_mm"]) == pytest.approx((39.7, 40.3))
    assert f.loc[0, "gauge_material"] == "steel"


@pytest.mark.parametrize(("text", "message"), [
    ('layout = "diagonal"\n',
     "layout file: layout: Input should be 'auto', 'long' or 'wide'"),
    ('[defaults]\ncoverage = -2\n',
     "layout file: defaults.coverage: Input should be greater than 0"),
    ('colour = "red"\n', "layout file: colour: Extra inputs are not permitted"),
    ('[headers]\nnominl = "Soll"\n',
     "layout file: headers: unknown field 'nominl'; did you mean 'nominal'?"),
    ('decimal = \n', None),
])
def test_layout_errors(text: str, message: str | None) -> None:
    with pytest.raises(ConfigError) as e:
        parse_layout(text)
    if message is None:
        assert str(e.value).startswith("layout file: not valid TOML (")
    else:
        assert str(e.value) == message


def test_load_layout_file(tmp_path: Path) -> None:
    p = tmp_path / "shop.toml"
    p.write_text(SHOP_LAYOUT, encoding="utf-8")
    assert load_layout(p).headers["part"] == "Teil"
    with pytest.raises(ConfigError) as e:
        load_layout(tmp_path / "none.toml")
    assert str(e.value) == "none.toml: cannot be read (No such file or directory)"


def test_proposal_reports_matches_and_reads_back(tmp_path: Path) -> None:
    src = builders.long_messy_xlsx(tmp_path)
    prop = propose_layout(src)
    assert prop.matched["part_temp"] == "J: Temp (°F)"
    assert prop.matched["reading_1"] == "G: Reading 1"
    assert prop.unmatched == []
    layout = parse_layout(prop.toml)
    assert layout.header_row == 5 and layout.sheet == "Readings"
    assert layout.headers["instrument"] == "Gauge"
    again = read_inspection(src, layout=layout)
    assert len(again.frame) == 10
    assert [e.message for e in again.errors] == [
        e.message for e in read_inspection(src).errors]
    assert "Matched headers:" in prop.report() and "J: Temp (°F)" in prop.report()


def test_proposal_lists_unmatched_headers(tmp_path: Path) -> None:
    p = tmp_path / "x.csv"
    p.write_text("Part;Nominal;Tolerance;Reading;Stamp\nA;10;±0,1;10,01;ok\n", encoding="utf-8")
    prop = propose_layout(p)
    assert prop.unmatched == ["E: header 'Stamp' not recognised, column ignored; did you mean "
                              "'part' or 'measured_at' or 'part_temp'?"]
    assert 'decimal = ","' in prop.toml


def test_proposal_for_a_wide_sheet_pins_its_rows(tmp_path: Path) -> None:
    src = builders.wide_xlsx(tmp_path)
    layout = parse_layout(propose_layout(src).toml)
    assert layout.layout == "wide" and layout.wide is not None
    assert (layout.wide.characteristic_row, layout.wide.nominal_row,
            layout.wide.first_part_row) == (3, 4, 8)
    assert (layout.wide.lower_limit_row, layout.wide.upper_limit_row) == (5, 6)
    again = read_inspection(src, layout=layout)
    auto = read_inspection(src)
    assert again.frame.equals(auto.frame)
    assert [e.message for e in again.errors] == [e.message for e in auto.errors]


def test_proposal_for_csv_pins_the_delimiter(tmp_path: Path) -> None:
    prop = propose_layout(builders.csv_semicolon(tmp_path))
    assert parse_layout(prop.toml).delimiter == ";"
