"""The example in docs/report.md runs as written."""

from __future__ import annotations

import re
from pathlib import Path

import pytest

from tests.report.synthetic import tiny_batch

DOC = Path(__file__).resolve().parents[2] / "docs" / "report.md"


def test_docs_example_runs(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    blocks = re.findall(r"```python\n(.*?)```", DOC.read_text(encoding="utf-8"), flags=re.S)
    assert len(blocks) == 1
    data = tiny_batch()
    monkeypatch.chdir(tmp_path)
    (tmp_path / "out").mkdir()
    scope = {"results": data.results, "budgets": data.budgets, "actions": data.actions}
    exec(compile(blocks[0], str(DOC), "exec"), scope)
    assert (tmp_path / "out" / "HW-2601.pdf").read_bytes()[:5] == b"%PDF-"
    assert "Batch HW-2601" in (tmp_path / "out" / "HW-2601.html").read_text(encoding="utf-8")
