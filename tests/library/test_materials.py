"""The material library: values against their named sources, lookup, layering, messages."""

from pathlib import Path

import pytest

from qc.core.budget import evaluate
from qc.core.model import MeasurementArrays
from qc.errors import DataFileError, UnknownNameError
from qc.library.materials import Material, load_materials

LIB = load_materials()

# (name as a user types it, α in 1e-6/K, source named in the shared reference notes §8)
HANDBOOK = [
    ("1.4301", 17.3, "ASM material data sheet, AISI 304, 0–100 °C"),
    ("316L", 16.0, "ASM data sheet, AISI 316, 0–100 °C"),
    ("6061-T6", 23.6, "Aluminum Association / ASM data, 6061-T6, 20–100 °C"),
    ("C36000", 20.5, "Copper Development Association, C36000"),
    ("Ti-6Al-4V", 8.6, "ASM data sheet, Ti-6Al-4V, 20–100 °C"),
    ("alloy 718", 13.2, "producer data for alloy 718, 21–93 °C"),
    ("gauge block", 11.5, "ISO 3650:1998 6.2.2 (from memory); Swyt, J. Res. NIST 99 (1994)"),
]


@pytest.mark.parametrize(("name", "alpha", "source"), HANDBOOK)
def test_cte_against_named_source(name: str, alpha: float, source: str) -> None:
    assert LIB.get(name).cte == pytest.approx(alpha * 1e-6, rel=1e-9), source


def test_ranges_against_named_sources() -> None:
    # Callister Table B.6: grey cast iron α 10.5–11.4e-6/K, ρ 7150–7200
    gci = LIB.get("EN-GJL-250")
    assert 10.5e-6 <= gci.cte <= 11.4e-6 and 7150 <= gci.density <= 7200
    # Crawford, Plastics Engineering, Table 1.8: POM 80–122e-6/K, PA66 80–90e-6/K, PEEK 45–48
    assert 80e-6 <= LIB.get("acetal").cte <= 122e-6
    assert 80e-6 <= LIB.get("nylon 6/6").cte <= 90e-6
    assert 45e-6 <= LIB.get("PEEK").cte <= 48e-6
    # ASTM F1684 as reproduced: Invar 36 α 1.2–1.6e-6/K
    assert 1.2e-6 <= LIB.get("FeNi36").cte <= 1.6e-6
    # CDA fact sheet Table 5: copper C11000 16.8–17.0e-6/K, k 394
    cu = LIB.get("Cu-ETP")
    assert 16.8e-6 <= cu.cte <= 17.0e-6 and cu.conductivity == 394


def test_coverage_of_material_families() -> None:
    needed = ["carbon steel", "alloy steel", "304", "17-4PH", "grey cast iron", "ductile iron",
              "6061", "cast aluminium", "brass", "bronze", "copper", "titanium", "nickel alloy",
              "invar", "tungsten carbide", "zirconia", "granite", "glass", "POM", "PA66", "PEEK",
              "PTFE", "PE-UHMW", "PC", "ABS"]
    for n in needed:
        assert isinstance(LIB.get(n), Material), n


def test_every_entry_is_complete_and_uncertain_enough() -> None:
    # Handbook α is a mean over a range: carry at least 5 % (standard uncertainty)
    for ident in LIB.names():
        m = LIB.get(ident)
        assert m.source.strip(), ident
        assert m.cte_u >= 0.05 * m.cte * (1 - 1e-9), ident
        assert m.density > 0 and m.specific_heat > 0 and m.conductivity > 0


def test_lookup_ignores_case_and_separators() -> None:
    assert LIB.get("ti6al4v") is LIB.get("Ti-6Al-4V") is LIB.get("TI 6AL 4V")
    assert "brass" in LIB and "unobtainium" not in LIB
    assert load_materials() is LIB  # loaded once


def test_unknown_material_message() -> None:
    with pytest.raises(UnknownNameError) as e:
        LIB.get("brasss")
    assert str(e.value) == "unknown material 'brasss'; did you mean 'brass'?"
    assert e.value.suggestions == ["brass"]


def test_user_file_layered_on_top(tmp_path: Path) -> None:
    f = tmp_path / "shop_materials.toml"
    f.write_text(
        'format_version = 1\n'
        '[[material]]\nid = "brass"\nname = "our brass bar stock"\naliases = ["bar brass"]\n'
        'cte = 19.0e-6\ncte_u = 1.0e-6\ndensity = 8450\nspecific_heat = 380\n'
        'conductivity = 110\nsource = "supplier certificate 2024"\n'
        '[[material]]\nid = "house-alloy"\nname = "house alloy X"\n'
        'cte = 14.0e-6\ncte_u = 1.0e-6\ndensity = 8000\nspecific_heat = 450\n'
        'conductivity = 20\nsource = "our own dilatometer test"\n',
        encoding="utf-8",
    )
    lib = load_materials(f)
    assert lib.get("brass").cte == 19.0e-6 and lib.get("bar brass").id == "brass"
    assert lib.get("house alloy X").cte == 14.0e-6
    assert "C36000" not in lib  # the replaced entry's old aliases are gone
    assert lib.names()[-1] == "house-alloy"
    assert LIB.get("brass").cte == 20.5e-6  # the bundled library is untouched


def _bad_file(folder: Path, body: str) -> Path:
    folder.mkdir(exist_ok=True)
    f = folder / "mine.toml"
    f.write_text(body, encoding="utf-8")
    return f


def test_malformed_user_files(tmp_path: Path) -> None:
    entry = ('[[material]]\nid = "x"\nname = "x"\ncte = "{cte}"\ncte_u = 1e-6\ndensity = 1\n'
             'specific_heat = 1\nconductivity = 1\nsource = "s"\n')
    with pytest.raises(DataFileError) as e:
        body = "format_version = 1\n" + entry.format(cte="hot")
        load_materials(_bad_file(tmp_path / "hot", body))
    assert str(e.value) == (
        "mine.toml › material 'x' › cte: Input should be a valid number, unable to parse "
        "string as a number (got 'hot')"
    )
    with pytest.raises(DataFileError) as e:
        load_materials(_bad_file(tmp_path / "v2", "format_version = 2\n"))
    assert str(e.value) == "mine.toml: expected format_version = 1, got 2"
    dup = ('format_version = 1\n[[material]]\nid = "a"\nname = "A"\naliases = ["same"]\n'
           'cte = 1e-6\ncte_u = 1e-7\ndensity = 1\nspecific_heat = 1\nconductivity = 1\n'
           'source = "s"\n[[material]]\nid = "b"\nname = "B"\naliases = ["Same"]\n'
           'cte = 1e-6\ncte_u = 1e-7\ndensity = 1\nspecific_heat = 1\nconductivity = 1\n'
           'source = "s"\n')
    with pytest.raises(DataFileError) as e:
        load_materials(_bad_file(tmp_path / "dup", dup))
    assert str(e.value) == "mine.toml: material name 'Same' is used by both 'a' and 'b'"
    with pytest.raises(DataFileError) as e:
        load_materials(tmp_path / "missing.toml")
    assert str(e.value) == "missing.toml: cannot be read (FileNotFoundError)"


def test_aluminium_on_steel_gauge_with_library_values() -> None:
    # Common practice, no source: 500 mm of aluminium checked with a steel gauge, both 10 K
    # above 20 °C, reads about 0.06 mm large.
    al, st = LIB.get("aluminium"), LIB.get("gauge steel")
    m = MeasurementArrays.from_columns(reading=500.0, t_part=30.0, t_gauge=30.0,
                                       alpha_part=al.cte, alpha_gauge=st.cte)
    assert float(-evaluate(m).thermal_correction[0]) == pytest.approx(0.06, abs=0.001)
