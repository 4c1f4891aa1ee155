"""The committed JSON Schemas in schemas/ are exactly what the pydantic models export."""

import json
from pathlib import Path

from qc.models import export_schemas

ROOT = Path(__file__).resolve().parents[1]


def test_committed_schemas_match_models(tmp_path: Path) -> None:
    written = export_schemas(tmp_path)
    assert written, "no schema exported"
    for fresh in written:
        committed = ROOT / "schemas" / fresh.name
        assert committed.exists(), f"schemas/{fresh.name} missing: run qc.models.export_schemas"
        assert json.loads(committed.read_text(encoding="utf-8")) == json.loads(
            fresh.read_text(encoding="utf-8")
        ), f"schemas/{fresh.name} drifted from the models: re-export it"


def test_record_schema_carries_bounds() -> None:
    schema = json.loads((ROOT / "schemas" / "inspection_record.schema.json").read_text("utf-8"))
    temp = schema["properties"]["part_temp_c"]["anyOf"][0]
    assert (temp["minimum"], temp["maximum"]) == (-50, 150)
    assert "source_row" in schema["required"]
