"""Each thermal command runs on a local Typer app; output states units and assumptions."""

import re
import sys
import types
from dataclasses import dataclass
from pathlib import Path
from typing import ClassVar

import pytest
import typer
from typer.testing import CliRunner

from qc.cli.thermal import CAUTION, format_duration, register
from qc.errors import UnknownNameError

runner = CliRunner()


def _app() -> typer.Typer:
    app = typer.Typer()
    register(app)
    return app


def run(*args: str) -> tuple[int, str]:
    r = runner.invoke(_app(), list(args))
    return r.exit_code, r.output


def flat(text: str) -> str:
    return re.sub(r"\s+", " ", text)


@dataclass(frozen=True)
class FakeMaterial:
    id: str
    name: str
    aliases: tuple[str, ...]
    cte: float
    cte_u: float
    density: float
    specific_heat: float
    conductivity: float
    source: str


class FakeLibrary:
    # Values from published-checks.md §8: aluminium 6061-T6 [S2].
    items: ClassVar[dict[str, FakeMaterial]] = {
        "al-6061": FakeMaterial(
            "al-6061",
            "aluminium 6061-T6",
            ("6061",),
            23.6e-6,
            1.2e-6,
            2700.0,
            896.0,
            167.0,
            "test fixture",
        ),
    }

    def get(self, name: str) -> FakeMaterial:
        if name not in self.items:
            raise UnknownNameError("material", name, list(self.items))
        return self.items[name]


@pytest.fixture
def materials(monkeypatch: pytest.MonkeyPatch) -> None:
    module = types.ModuleType("qc.library.materials")
    module.load_materials = FakeLibrary  # type: ignore[attr-defined]
    monkeypatch.setitem(sys.modules, "qc.library.materials", module)


def test_soak_block_in_still_air() -> None:
    code, out = run(
        "soak",
        "--part-temp",
        "27",
        "--shape",
        "block",
        "--size",
        "100x50x30",
        "--density",
        "7870",
        "--specific-heat",
        "486",
        "--conductivity",
        "51.9",
    )
    assert code == 0, out
    assert "W/(m²·K)" in out and "kg/m³" in out and "±0.5 K of the room" in out
    assert "lumped capacitance" in out and "h source:" in out and "Incropera" in out
    # hand-computed nominal: h = 4 + 5.714·0.1 = 4.571; τ = 7870·486·(V/A)/h,
    # V/A = 1/(2·(1/0.1 + 1/0.05 + 1/0.03)) = 7.895 mm; t = τ·ln(7/0.5) = 17 432 s = 4 h 51 min
    assert "Let it rest about 4 h 51 min (range" in out
    assert CAUTION in flat(out)


def test_soak_plastic_cylinder_states_core_lag(materials: None) -> None:
    code, out = run(
        "soak",
        "--part-temp",
        "26",
        "--shape",
        "cylinder",
        "--size",
        "80x150",
        "--density",
        "1410",
        "--specific-heat",
        "1470",
        "--conductivity",
        "0.3",
        "--rest",
        "granite-plate",
        "--surface",
        "painted",
    )
    assert code == 0, out
    assert "one-term series solution; the core lags the surface" in flat(out)
    assert "granite" in out


def test_soak_with_library_material_and_mass(materials: None) -> None:
    code, out = run(
        "soak",
        "--part-temp",
        "24",
        "--material",
        "al-6061",
        "--mass",
        "2.5",
        "--area",
        "60000",
        "--gauge-temp",
        "20.2",
    )
    assert code == 0, out
    assert "aluminium 6061-T6" in out and "shape unknown" in out
    assert "±0.5 K of the gauge at 20.2 °C" in out


def test_soak_unknown_rest_and_material(materials: None) -> None:
    code, out = run(
        "soak",
        "--part-temp",
        "24",
        "--material",
        "al-6061",
        "--shape",
        "sphere",
        "--size",
        "50",
        "--rest",
        "still air",
    )
    assert code == 2
    assert "error: unknown resting condition 'still air'; did you mean 'still-air'?" in out
    code, out = run(
        "soak", "--part-temp", "24", "--material", "al-6016", "--shape", "sphere", "--size", "50"
    )
    assert code == 2 and "error: unknown material 'al-6016'; did you mean 'al-6061'?" in out


def test_soak_needs_geometry() -> None:
    code, out = run(
        "soak", "--part-temp", "24", "--density", "1", "--specific-heat", "1", "--conductivity", "1"
    )
    assert code == 2
    assert (
        "error: give the part's shape and size (--shape block --size 100x50x30) or its "
        "mass and surface area (--mass kg --area mm²)"
    ) in flat(out)


def test_temperature_band_aluminium_on_steel_gauge(materials: None) -> None:
    code, out = run(
        "temperature-band", "--size", "100", "--tolerance", "35", "--material", "al-6061"
    )
    assert code == 0, out
    # hand-computed: budget 3.5 µm; uncorrected 3.5/(1e5·(12.1e-6 + 2·√(1.2² + 0.577²)e-6))
    # = 2.3707 K true, minus k·u_t = 0.4 K → reading within 20 ± 1.97 K
    assert "(3.50 µm)" in out
    assert "Without correction: measure only between 18.0 and 22.0 °C (20 ± 1.97 K)" in out
    assert "With correction to 20 °C (thermometer u = 0.2 K, k = 2)" in flat(out)
    assert "µm/(m·K)" in out and "steel gauge (assumed)" in out
    assert "JCGM 100:2008" in out and "common practice, no source" in out
    assert CAUTION in flat(out)


def test_temperature_band_needs_cte() -> None:
    code, out = run("temperature-band", "--size", "100", "--tolerance", "35")
    assert code == 2
    assert "error: the part's expansion coefficient is needed: give --material NAME or --cte" in out


def test_expansion_strip_on_base_with_bow() -> None:
    code, out = run(
        "expansion",
        "--length",
        "600",
        "--cte",
        "23.6",
        "--to",
        "32",
        "--base-cte",
        "10.8",
        "--modulus",
        "69",
        "--base-modulus",
        "110",
        "--thickness",
        "10",
        "--base-thickness",
        "40",
    )
    assert code == 0, out
    assert "Free growth: +169.9 µm" in out  # 600 000 · 23.6e-6 · 12
    assert "Mismatch over the length: +92.2 µm (strain +154 µm/m)" in out
    assert "Stress if fully restrained: -10.6 MPa" in out
    assert "Bow estimate" in out and "estimate: Timoshenko" in flat(out)
    assert "Assumptions:" in out


def test_expansion_bow_needs_both_thicknesses() -> None:
    code, out = run(
        "expansion",
        "--length",
        "600",
        "--cte",
        "23.6",
        "--to",
        "32",
        "--base-cte",
        "10.8",
        "--thickness",
        "10",
    )
    assert code == 2
    assert "error: a bow estimate needs both --thickness and --base-thickness (mm)" in out


def test_drift_command_with_plot(tmp_path: Path) -> None:
    log = tmp_path / "mill.csv"
    log.write_text(
        "time (min), temperature (°C), X (µm), Y (µm)\n"
        "0, 19.5, 0, 0\n30, 20.0, 2, 0\n60, 20.6, 5, 1\n"
        "90, 21.2, 8, 0\n120, 21.9, 11, 1\n150, 22.3, 13, 0\n",
        encoding="utf-8",
    )
    code, out = run("drift", str(log), "--resolution", "1", "--plot", str(tmp_path / "d.png"))
    assert code == 0, out
    assert "µm/K" in out and "span K" in out and "drift µm" in out
    assert re.search(r"X\s+\+4\.68\s+0\.07\s+6\s+2\.80\s+13\.1\s+\S+\s+moves with the room", out)
    assert "no movement the indicator can show" in out
    assert "Assumptions: readings follow the temperature without lag" in flat(out)
    assert (tmp_path / "d.png").exists()


def test_drift_bad_file_message(tmp_path: Path) -> None:
    code, out = run("drift", str(tmp_path / "none.csv"))
    assert code == 2 and "error: none.csv: file not found" in out


@pytest.mark.parametrize(
    ("seconds", "text"),
    [
        (0.0, "0 s"),
        (45.0, "45 s"),
        (720.0, "12 min"),
        (7500.0, "2 h 05 min"),
        (float("inf"), "never"),
    ],
)
def test_format_duration(seconds: float, text: str) -> None:
    assert format_duration(seconds) == text


def test_soak_already_inside_and_never_inside() -> None:
    props = (
        "--shape",
        "sphere",
        "--size",
        "40",
        "--density",
        "7870",
        "--specific-heat",
        "486",
        "--conductivity",
        "51.9",
    )
    code, out = run("soak", "--part-temp", "20.3", *props)
    assert code == 0 and "The part is already within the band: it can be measured now." in out
    code, out = run("soak", "--part-temp", "25", "--gauge-temp", "21", *props)
    assert code == 0
    assert (
        "The part cannot stay within the band: gauge and room differ by the band or more."
    ) in out


def test_temperature_band_share_is_a_percentage() -> None:
    code, out = run(
        "temperature-band", "--size", "100", "--tolerance", "35", "--cte", "23.6", "--share", "150"
    )
    assert code == 2
    assert "error: --share: expected a percentage above 0 and at most 100, got 150" in out
