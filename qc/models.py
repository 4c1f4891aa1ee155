"""Pydantic models: the single definition of every record, file and register `qc` reads.

* :class:`InspectionRecord` — one measured characteristic after reading, in canonical units;
* :class:`Layout` — a shop's layout file (TOML): headers, layout, defaults;
* :class:`RegisterEntry` — one instrument of an instrument register;
* :class:`RowError` — one cell that could not be used;
* :class:`HeaderFile` — the bundled synonym list (qc/data/headers.toml).

The bulk reader does not build a model per row: it reads the bounds declared here
(:func:`bounds`) and checks whole columns with numpy; only failing cells are passed through
the model's validator, so pydantic writes the message. :func:`export_schemas` writes the
JSON Schemas that ``schemas/`` holds; a test fails when those files drift from these models.
"""

from __future__ import annotations

import datetime as dt
import json
from functools import cache
from pathlib import Path
from typing import Annotated, Literal

import annotated_types as at
from pydantic import BaseModel, ConfigDict, Field, TypeAdapter, ValidationError

from qc.errors import Place

__all__ = [
    "Defaults",
    "HeaderField",
    "HeaderFile",
    "InspectionRecord",
    "Layout",
    "RegisterEntry",
    "RowError",
    "WideLayout",
    "bounds",
    "export_schemas",
    "field_message",
]

FieldKind = Literal[
    "text", "length", "temperature", "temperature_difference", "cte", "number", "date", "flag"
]


class HeaderField(BaseModel):
    """One input field of the synonym list."""

    model_config = ConfigDict(extra="forbid")
    kind: FieldKind
    synonyms: list[str] = Field(default_factory=list)
    repeat: bool = False
    source: str = Field(min_length=1)


class HeaderFile(BaseModel):
    """The synonym list of column headers (qc/data/headers.toml)."""

    model_config = ConfigDict(extra="forbid")
    format_version: Literal[1]
    fields: dict[str, HeaderField]
    instrument_register: dict[str, HeaderField] = Field(default_factory=dict)
    unscaled_kinds: list[str] = Field(default_factory=list)
    unscaled_source: str = ""


class InspectionRecord(BaseModel):
    """One measured characteristic of one part, as read: lengths mm, temperatures °C, CTE 1/K.

    Missing optional values are None (NaN in the table). Bounds are plausibility limits of
    the input, not of conformance: they catch a °F value in a °C column, a CTE typed in ppm
    without its unit, a negative resolution.
    """

    model_config = ConfigDict(extra="forbid")
    part: str = Field(description="part or serial identifier")
    characteristic: str = Field(description="characteristic (balloon) identifier")
    kind: str | None = Field(None, description="kind of characteristic: size, angle, form, ...")
    feature: Literal["hole", "shaft"] | None = Field(None, description="internal or external")
    unit: str = Field("mm", description="the row's own length unit, for output")
    nominal_mm: float | None = None
    lower_limit_mm: float | None = None
    upper_limit_mm: float | None = None
    tolerance_text: str | None = None
    tolerance_description: str | None = None
    reading_mean_mm: float | None = None
    reading_sd_mm: Annotated[float, at.Ge(0)] | None = None
    n_readings: Annotated[int, at.Ge(1)] = Field(description="number of readings averaged")
    resolution_mm: Annotated[float, at.Gt(0)] | None = None
    mpe_a_mm: Annotated[float, at.Ge(0)] | None = Field(
        None, description="MPE constant term A of MPE = A + L/K, mm"
    )
    mpe_k_mm: Annotated[float, at.Gt(0)] | None = Field(
        None, description="K of MPE = A + L/K with MPE, A and L in mm (infinite: no length term)"
    )
    master_size_mm: Annotated[float, at.Gt(0)] | None = None
    master_u_mm: Annotated[float, at.Ge(0)] | None = Field(
        None, description="standard uncertainty of the master (certificate U / k)"
    )
    cal_u_mm: Annotated[float, at.Ge(0)] | None = Field(
        None, description="standard uncertainty from the instrument's certificate (U / k)"
    )
    prior_sd_mm: Annotated[float, at.Ge(0)] | None = None
    part_temp_c: Annotated[float, at.Ge(-50), at.Le(150)] | None = None
    gauge_temp_c: Annotated[float, at.Ge(-50), at.Le(150)] | None = None
    room_temp_c: Annotated[float, at.Ge(-50), at.Le(150)] | None = None
    thermometer_accuracy_c: Annotated[float, at.Ge(0), at.Le(20)] | None = None
    u_part_temp_c: Annotated[float, at.Ge(0), at.Le(20)] | None = None
    u_gauge_temp_c: Annotated[float, at.Ge(0), at.Le(20)] | None = None
    part_cte: Annotated[float, at.Ge(-2e-5), at.Le(5e-4)] | None = Field(
        None, description="part expansion coefficient, 1/K"
    )
    part_cte_u: Annotated[float, at.Ge(0), at.Le(5e-4)] | None = None
    gauge_cte: Annotated[float, at.Ge(-2e-5), at.Le(5e-4)] | None = None
    gauge_cte_u: Annotated[float, at.Ge(0), at.Le(5e-4)] | None = None
    part_material: str | None = None
    gauge_material: str | None = None
    mode: Literal["direct", "comparison"]
    scaled: bool = Field(description="False for angles and form: no thermal scaling")
    shared_room: bool = Field(description="part and gauge temperatures from one reading")
    instrument: str | None = None
    instrument_type: str | None = None
    inspector: str | None = None
    note: str | None = None
    measured_at: dt.datetime | None = None
    flags: str = Field("", description="warning flags, ';'-separated (e.g. calibration-overdue)")
    source_file: str
    source_sheet: str | None = None
    source_row: Annotated[int, at.Ge(1)]
    source_column: str | None = Field(None, description="column letter of the (first) reading")


class WideLayout(BaseModel):
    """Where the header rows of a wide sheet are (1-based rows, column letters)."""

    model_config = ConfigDict(extra="forbid")
    characteristic_row: Annotated[int, at.Ge(1)]
    nominal_row: Annotated[int, at.Ge(1)] | None = None
    tolerance_row: Annotated[int, at.Ge(1)] | None = None
    instrument_row: Annotated[int, at.Ge(1)] | None = None
    unit_row: Annotated[int, at.Ge(1)] | None = None
    lower_limit_row: Annotated[int, at.Ge(1)] | None = None
    upper_limit_row: Annotated[int, at.Ge(1)] | None = None
    lower_deviation_row: Annotated[int, at.Ge(1)] | None = None
    upper_deviation_row: Annotated[int, at.Ge(1)] | None = None
    kind_row: Annotated[int, at.Ge(1)] | None = None
    hole_or_shaft_row: Annotated[int, at.Ge(1)] | None = None
    general_tolerance_row: Annotated[int, at.Ge(1)] | None = None
    resolution_row: Annotated[int, at.Ge(1)] | None = None
    mpe_row: Annotated[int, at.Ge(1)] | None = None
    first_part_row: Annotated[int, at.Ge(1)] | None = None
    label_column: str = Field("A", pattern=r"^[A-Z]{1,3}$")


class Defaults(BaseModel):
    """Values a shop's sheets leave out, used where a row's own cell is blank."""

    model_config = ConfigDict(extra="forbid")
    unit: str = Field("mm", description="length unit of unmarked lengths")
    temp_unit: str = Field("°C", description="unit of unmarked temperatures")
    part_material: str | None = None
    gauge_material: str | None = None
    thermometer_accuracy: str | float | None = Field(
        None, description="half-width of the thermometer's error, e.g. '0.2 °C' or '0.36 °F'"
    )
    decision_rule: str | None = None
    general_tolerance: Literal["f", "m", "c", "v"] | None = Field(
        None, description="ISO 2768-1 class for rows without a tolerance"
    )
    coverage: Annotated[float, at.Gt(0)] = Field(2.0, description="coverage factor k of results")
    certificate_k: Annotated[float, at.Gt(0)] | None = Field(
        None, description="k of certificate uncertainties where the sheet gives none"
    )


class Layout(BaseModel):
    """A shop's layout file: how its sheets are laid out and what they leave unsaid."""

    model_config = ConfigDict(extra="forbid")
    format_version: Literal[1] = 1
    name: str | None = None
    layout: Literal["auto", "long", "wide"] = "auto"
    sheet: str | None = None
    register_sheet: str | None = Field(None, description="sheet holding the instrument register")
    header_row: Annotated[int, at.Ge(1)] | None = None
    decimal: Literal["auto", ".", ","] = "auto"
    thousands: Literal[",", ".", " ", "'"] | None = None
    delimiter: Literal[";", ",", "\t", "|"] | None = None
    date_order: Literal["dmy", "mdy"] | None = None
    headers: dict[str, str | list[str]] = Field(
        default_factory=dict, description="canonical field -> the shop's own header text(s)"
    )
    defaults: Defaults = Field(default_factory=Defaults)
    wide: WideLayout | None = None


class RegisterEntry(BaseModel):
    """One instrument of the register: its type, resolution, MPE or certificate, due date."""

    model_config = ConfigDict(extra="forbid")
    id: str = Field(min_length=1)
    type: str | None = None
    resolution_mm: Annotated[float, at.Gt(0)] | None = None
    mpe_a_mm: Annotated[float, at.Ge(0)] | None = None
    mpe_k_mm: Annotated[float, at.Gt(0)] | None = None
    cal_u_mm: Annotated[float, at.Ge(0)] | None = Field(None, description="certificate U / k")
    material: str | None = Field(None, description="scale or master material")
    cal_due: dt.date | None = None
    source_row: Annotated[int, at.Ge(1)]


class RowError(BaseModel):
    """One input cell that could not be used; ``index`` is the row of the output frame."""

    model_config = ConfigDict(extra="forbid")
    index: Annotated[int, at.Ge(0)]
    file: str
    sheet: str | None = None
    row: Annotated[int, at.Ge(1)] | None = None
    column: str | None = Field(None, description="column letter and header, e.g. 'D (Temp °F)'")
    field: str
    value: str
    expected: str
    message: str

    @property
    def place(self) -> Place:
        """Where the cell is, for messages."""
        return Place(self.file, self.sheet, self.row, self.column)


_MODELS: dict[str, type[BaseModel]] = {
    "inspection_record": InspectionRecord,
    "layout": Layout,
    "register_entry": RegisterEntry,
    "row_error": RowError,
    "header_file": HeaderFile,
}


@cache
def bounds(model: type[BaseModel], name: str) -> dict[str, float]:
    """Numeric bounds declared on a field: keys among 'ge', 'gt', 'le', 'lt'."""
    info = model.model_fields[name]
    found: dict[str, float] = {}
    stack = list(info.metadata)
    ann = info.annotation
    for arg in getattr(ann, "__args__", ()):
        stack.extend(getattr(arg, "__metadata__", ()))
    for m in stack:
        for key in ("ge", "gt", "le", "lt"):
            if hasattr(m, key):
                found[key] = float(getattr(m, key))
    return found


@cache
def _adapter(model: type[BaseModel], name: str) -> TypeAdapter:
    return TypeAdapter(model.model_fields[name].annotation)


def field_message(model: type[BaseModel], name: str, value: object) -> str | None:
    """pydantic's message for one value of one field, or None when the value is valid."""
    try:
        _adapter(model, name).validate_python(value)
    except ValidationError as exc:
        return str(exc.errors()[0]["msg"])
    return None


def export_schemas(folder: Path | str) -> list[Path]:
    """Write one JSON Schema per model into ``folder``; returns the files written."""
    out = Path(folder)
    out.mkdir(parents=True, exist_ok=True)
    written = []
    for stem, model in _MODELS.items():
        p = out / f"{stem}.schema.json"
        p.write_text(json.dumps(model.model_json_schema(), indent=2, ensure_ascii=False) + "\n",
                     encoding="utf-8")
        written.append(p)
    return written
