"""The command line on broken files: exit status 2 and one line naming the file, no traceback.

Written against qc.cli as it stands (docstring of qc/cli/__init__.py: "2 when the input cannot be
read"): these cases fail in the reader itself, with or without the file guard in front of it.
"""

from __future__ import annotations

from pathlib import Path

import pytest
from typer.testing import CliRunner

from qc.cli import app
from tests.hostile import builders as b

runner = CliRunner()


def _broken(tmp_path: Path, name: str) -> Path:
    p = tmp_path / name
    if name == "half.xlsx":
        data = b.good_xlsx(tmp_path / "good.xlsx").read_bytes()
        p.write_bytes(data[: len(data) // 2])
    elif name == "empty.csv":
        p.write_bytes(b"")
    elif name == "photo.csv":
        p.write_bytes(b"\x89PNG\r\n\x1a\n" + bytes(64))
    elif name == "notes.xlsx":
        p.write_text("Part;Reading\nPX-1;25.0\n", encoding="utf-8")
    return p


@pytest.mark.parametrize("name", ["half.xlsx", "empty.csv", "photo.csv", "notes.xlsx"])
def test_check_exits_2_on_unreadable_files(tmp_path: Path, name: str) -> None:
    p = _broken(tmp_path, name)
    result = runner.invoke(app, ["check", str(p)])
    assert result.exit_code == 2, result.output
    out = result.output
    assert "error:" in out and name in out
    assert "Traceback" not in out


def test_check_exits_0_on_a_good_file(tmp_path: Path) -> None:
    p = b.good_xlsx(tmp_path / "good.xlsx")
    result = runner.invoke(app, ["check", str(p)])
    assert result.exit_code == 0, result.output
    assert "3 rows read, 0 with errors" in result.output


@pytest.mark.parametrize("name", ["half.xlsx", "photo.csv", "notes.xlsx"])
def test_normalise_exits_2_and_writes_nothing(tmp_path: Path, name: str) -> None:
    p = _broken(tmp_path, name)
    before = p.read_bytes()
    result = runner.invoke(app, ["normalise", str(p)])
    assert result.exit_code == 2, result.output
    assert "error:" in result.output and name in result.output
    assert p.read_bytes() == before  # the evidence is untouched
    assert sorted(x.name for x in tmp_path.iterdir() if "checked" in x.name) == []


def test_normalise_folder_skips_the_broken_file(tmp_path: Path) -> None:
    b.good_xlsx(tmp_path / "good.xlsx")
    _broken(tmp_path, "half.xlsx")
    result = runner.invoke(app, ["normalise", str(tmp_path)])
    assert result.exit_code == 0, result.output
    assert "skipped: half.xlsx:" in result.output
    written = sorted(x.name for x in tmp_path.iterdir() if "checked" in x.name)
    assert written == ["good.checked.xlsx"]


def test_zip_bomb_refused_with_the_option_to_raise_the_limit(tmp_path: Path) -> None:
    import time

    p = b.zip_bomb_xlsx(tmp_path / "bomb.xlsx")
    for command in ("check", "normalise"):
        t0 = time.perf_counter()
        result = runner.invoke(app, [command, str(p)])
        assert result.exit_code == 2, result.output
        assert "3,584 MB" in result.output and "--max-uncompressed-mb" in result.output
        assert time.perf_counter() - t0 < 3
    assert not list(tmp_path.glob("bomb.checked*"))


def test_entity_declaration_refused(tmp_path: Path) -> None:
    p = b.billion_laughs_xlsx(tmp_path / "laughs.xlsx")
    result = runner.invoke(app, ["check", str(p)])
    assert result.exit_code == 2
    assert "declares a document type" in result.output


def test_row_limit_can_be_raised(tmp_path: Path) -> None:
    p = b.far_cell_xlsx(tmp_path / "far.xlsx", ref="C5001")
    low = runner.invoke(app, ["check", str(p), "--max-rows", "5000"])
    assert low.exit_code == 2 and "--max-rows" in low.output
    assert runner.invoke(app, ["check", str(p)]).exit_code in (0, 1)


def test_hostile_register_is_refused_too(tmp_path: Path) -> None:
    good = b.good_xlsx(tmp_path / "good.xlsx")
    laughs = b.billion_laughs_xlsx(tmp_path / "laughs.xlsx")
    result = runner.invoke(app, ["normalise", str(good), "--instruments", str(laughs)])
    assert result.exit_code == 2
    assert "laughs.xlsx" in result.output
