"""docs/columns.md and docs/layouts.md stay true to the code: fields listed, examples valid."""

import re
from pathlib import Path

from qc.io import parse_layout
from qc.io.headers import load_synonyms
from qc.models import InspectionRecord

DOCS = Path(__file__).resolve().parents[2] / "docs"


def test_every_input_field_is_documented() -> None:
    text = (DOCS / "columns.md").read_text(encoding="utf-8")
    for name in load_synonyms().fields:
        assert f"`{name}`" in text, f"{name} missing from docs/columns.md"


def test_every_record_column_is_documented() -> None:
    text = (DOCS / "columns.md").read_text(encoding="utf-8")
    record = text.split("## The record", 1)[1]
    for name in InspectionRecord.model_fields:
        assert f"`{name}`" in record, f"{name} missing from the record section"


def test_layout_file_example_is_valid() -> None:
    text = (DOCS / "layouts.md").read_text(encoding="utf-8")
    block = re.search(r"```toml\n(.*?)```", text, re.S)
    assert block is not None
    layout = parse_layout(block.group(1))
    assert layout.decimal == "," and layout.headers["reading_2"] == "Ist 2"
    assert layout.wide is not None and layout.wide.first_part_row == 8


def test_docs_link_the_tolerance_page() -> None:
    for page in ("columns.md", "layouts.md"):
        assert "(tolerances.md)" in (DOCS / page).read_text(encoding="utf-8")
