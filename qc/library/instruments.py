"""The instrument-type library: typical resolution, MPE (A + L/K) and scale material.

Bundled data: ``qc/data/instruments.toml``. Every value is typical, to be replaced by the
instrument's own calibration certificate.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import lru_cache
from pathlib import Path
from typing import Literal

from qc.errors import DataFileError
from qc.library._tables import NameIndex, read_table
from qc.library.materials import load_materials
from qc.library.schema import InstrumentRecord

__all__ = ["InstrumentType", "InstrumentTypeLibrary", "load_instrument_types"]


@dataclass(frozen=True)
class InstrumentType:
    """An instrument type. Lengths in mm; MPE = mpe_a + L/mpe_k (L in mm; mpe_k None: constant)."""

    id: str
    name: str
    aliases: tuple[str, ...]
    kind: Literal["direct", "comparison"]
    resolution: float
    mpe_a: float
    mpe_k: float | None
    scale_material: str
    note: str
    source: str

    def mpe(self, length: float) -> float:
        """Maximum permissible error in mm at measured length ``length`` (mm)."""
        return self.mpe_a + (abs(length) / self.mpe_k if self.mpe_k else 0.0)


class InstrumentTypeLibrary:
    """Instrument types by id, name or alias."""

    def __init__(self, index: NameIndex) -> None:
        self._index = index

    def get(self, name: str) -> InstrumentType:
        """The instrument type; :class:`qc.errors.UnknownNameError` with close matches."""
        item: InstrumentType = self._index.get(name)
        return item

    def names(self) -> list[str]:
        """Instrument-type ids, bundled first."""
        return self._index.ids()

    def __len__(self) -> int:
        return len(self._index.ids())


_Row = tuple[str, str, list[str], InstrumentType]


def _layer(label: str, records: list[InstrumentRecord]) -> list[_Row]:
    materials = load_materials()
    rows = []
    for r in records:
        if r.scale_material not in materials:
            raise DataFileError(
                f"{label} › instrument {r.id!r} › scale_material: unknown material "
                f"{r.scale_material!r}"
            )
        item = InstrumentType(r.id, r.name, tuple(r.aliases), r.kind, r.resolution, r.mpe_a,
                              r.mpe_k, r.scale_material, r.note, r.source)
        rows.append((r.id, r.name, r.aliases, item))
    return rows


@lru_cache(maxsize=8)
def load_instrument_types(extra: Path | None = None) -> InstrumentTypeLibrary:
    """The bundled instrument types, with the user's file ``extra`` layered on top (cached)."""
    index = NameIndex("instrument type")
    records = read_table("instrument", InstrumentRecord, bundled="instruments.toml")
    index.add_layer("instruments.toml", _layer("instruments.toml", records))
    if extra is not None:
        path = Path(extra)
        index.add_layer(path.name, _layer(path.name, read_table("instrument", InstrumentRecord,
                                                                path=path)))
    return InstrumentTypeLibrary(index)
