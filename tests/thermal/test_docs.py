"""Every command example in docs/thermal.md runs and prints exactly what the page shows."""

import re
import shlex
from pathlib import Path

import pytest
import typer
from typer.testing import CliRunner

from qc.cli.thermal import register

DOC = Path(__file__).resolve().parents[2] / "docs" / "thermal.md"
TEXT = DOC.read_text(encoding="utf-8")
EXAMPLES = re.findall(r"```console\n\$ (qc [^\n]*)\n(.*?)```", TEXT, flags=re.S)
CSV = re.search(r"`mill2\.csv`:\n\n```csv\n(.*?)```", TEXT, flags=re.S)


def test_page_has_an_example_of_each_command() -> None:
    commands = {shlex.split(cmd)[1] for cmd, _ in EXAMPLES}
    assert commands == {"soak", "temperature-band", "expansion", "drift"}
    assert CSV is not None


@pytest.mark.parametrize(("command", "shown"), EXAMPLES, ids=[c for c, _ in EXAMPLES])
def test_example_output_matches_page(
    command: str, shown: str, tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    assert CSV is not None
    (tmp_path / "mill2.csv").write_text(CSV.group(1), encoding="utf-8")
    monkeypatch.chdir(tmp_path)
    app = typer.Typer()
    register(app)
    result = CliRunner().invoke(app, shlex.split(command)[1:])
    assert result.exit_code == 0, result.output
    assert result.output == shown
