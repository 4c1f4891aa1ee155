"""Validation models of the data files, kept apart from the loaders that parse them.

Reference for the value ranges: physical plausibility only (the numbers themselves carry
their own ``source`` in the files).
"""

from __future__ import annotations

from typing import Literal

from pydantic import BaseModel, ConfigDict, Field, field_validator

__all__ = ["InstrumentRecord", "MaterialRecord"]


class _Record(BaseModel):
    model_config = ConfigDict(extra="forbid", frozen=True, str_strip_whitespace=True)

    id: str = Field(min_length=1)
    name: str = Field(min_length=1)
    aliases: list[str] = Field(default_factory=list)
    source: str = Field(min_length=1)

    @field_validator("aliases")
    @classmethod
    def _no_empty_alias(cls, v: list[str]) -> list[str]:
        if any(not a.strip() for a in v):
            raise ValueError("an alias is empty")
        return [a.strip() for a in v]


class MaterialRecord(_Record):
    """One [[material]] entry (SI units; α in 1/K)."""

    cte: float = Field(gt=-1e-4, lt=1e-3)
    cte_u: float = Field(ge=0, lt=1e-3)
    density: float = Field(gt=0, lt=30000)
    specific_heat: float = Field(gt=0, lt=20000)
    conductivity: float = Field(gt=0, lt=5000)


class InstrumentRecord(_Record):
    """One [[instrument]] entry (lengths in mm)."""

    kind: Literal["direct", "comparison"]
    resolution: float = Field(gt=0, lt=10)
    mpe_a: float = Field(ge=0, lt=10)
    mpe_k: float | None = Field(default=None, gt=0)
    scale_material: str = Field(min_length=1)
    note: str = "typical; replace with your calibration certificate"
