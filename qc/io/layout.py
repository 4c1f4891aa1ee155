"""Layout files: reading and validating one, and proposing one from a sample sheet.

A layout file is TOML validated by :class:`qc.models.Layout`; see docs/layouts.md.
"""

from __future__ import annotations

import json
import tomllib
from dataclasses import dataclass, field
from pathlib import Path

from pydantic import ValidationError

from qc.errors import ConfigError
from qc.models import Layout

__all__ = ["LayoutProposal", "load_layout", "parse_layout", "propose_layout"]


def parse_layout(text: str, name: str = "layout file") -> Layout:
    """Validate layout TOML text; a ConfigError names the key and what is expected."""
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise ConfigError(f"{name}: not valid TOML ({exc})") from exc
    try:
        layout = Layout.model_validate(data)
    except ValidationError as exc:
        e = exc.errors()[0]
        key = ".".join(str(p) for p in e["loc"]) or "(top level)"
        raise ConfigError(f"{name}: {key}: {e['msg']}") from exc
    from qc.errors import UnknownNameError
    from qc.io.headers import load_synonyms

    fields = load_synonyms().fields
    for key in layout.headers:
        base, _, num = key.rpartition("_")
        if key in fields or (num.isdigit() and base in fields and fields[base].repeat):
            continue
        raise ConfigError(f"{name}: headers: {UnknownNameError('field', key, list(fields))}")
    return layout


def load_layout(path: Path) -> Layout:
    """Read and validate a layout file."""
    try:
        text = Path(path).read_text(encoding="utf-8")
    except OSError as exc:
        raise ConfigError(f"{Path(path).name}: cannot be read ({exc.strerror})") from exc
    return parse_layout(text, Path(path).name)


def _toml_value(v: object) -> str:
    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, int | float):
        return repr(v)
    if isinstance(v, list):
        return "[" + ", ".join(_toml_value(x) for x in v) + "]"
    return json.dumps(str(v), ensure_ascii=False)  # a JSON string is a valid TOML basic string


@dataclass
class LayoutProposal:
    """A proposed layout file and how the sample's headers were understood."""

    toml: str
    matched: dict[str, str] = field(default_factory=dict)  # field -> "D: Temp (°F)"
    unmatched: list[str] = field(default_factory=list)  # "F: Remarks 2"
    notes: list[str] = field(default_factory=list)

    def report(self) -> str:
        """Plain-text report: which header matched which field, what stayed unmatched."""
        lines = ["Matched headers:"]
        lines += [f"  {where:<28} -> {name}" for name, where in self.matched.items()]
        lines.append("Not matched (ignored unless named under [headers]):")
        lines += [f"  {u}" for u in self.unmatched] or ["  (none)"]
        lines += [f"Note: {n}" for n in self.notes]
        return "\n".join(lines)


def propose_layout(path: Path | str, *, sheet: str | None = None) -> LayoutProposal:
    """Read a sample sheet and propose a layout file pinning its headers and conventions."""
    from qc.io.reader import read_inspection

    table = read_inspection(Path(path), sheet=sheet)
    lay = table.layout
    lines = [
        "# Layout file proposed by qc from a sample sheet; check every line before use.",
        "format_version = 1",
        f"name = {_toml_value(Path(path).stem)}",
        f"layout = {_toml_value(table.kind)}",
    ]
    if table.sheet:
        lines.append(f"sheet = {_toml_value(table.sheet)}")
    lines.append(f"header_row = {table.header_row}")
    decimal = "auto"
    for w in table.warnings:
        if "decimal comma" in w:
            decimal = ","
        elif "decimal point" in w and "(detected)" in w:
            decimal = "."
    lines.append(f"decimal = {_toml_value(decimal)}")
    if table.delimiter is not None:
        lines.append(f"delimiter = {_toml_value(table.delimiter)}")
    proposal = LayoutProposal(toml="")
    lines += ["", "[headers]"]
    for name, ref in table.columns.items():
        where = f"{ref.letter}: {ref.header}" if ref.letter else ref.header
        proposal.matched[name] = where
        if ref.letter and table.kind == "long":
            lines.append(f"{name} = {_toml_value(ref.header)}")
    for w in table.warnings:
        if "not recognised" in w:
            proposal.unmatched.append(w.split(" › ")[-1])
    if table.wide is not None:
        from qc.io.grid import column_letter

        w = table.wide
        lines += ["", "[wide]", f"characteristic_row = {w.char_row + 1}"]
        for name, row in w.field_rows.items():
            lines.append(f"{name}_row = {row + 1}")
        lines += [f"first_part_row = {w.first_data_row + 1}",
                  f"label_column = {_toml_value(column_letter(w.label_col))}"]
    d = lay.defaults
    lines += ["", "[defaults]", f"unit = {_toml_value(d.unit)}",
              f"temp_unit = {_toml_value(d.temp_unit)}",
              "# gauge_material = \"steel\"", "# thermometer_accuracy = \"0.2 °C\"",
              "# general_tolerance = \"m\"", "# decision_rule = \"...\"",
              f"coverage = {_toml_value(d.coverage)}"]
    proposal.toml = "\n".join(lines) + "\n"
    parse_layout(proposal.toml, "proposed layout")  # the proposal must itself be valid
    proposal.notes = [w for w in table.warnings if "not recognised" not in w]
    return proposal
