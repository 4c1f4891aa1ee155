"""The material library: expansion coefficient and thermal properties by name or alias.

Bundled data: ``qc/data/materials.toml`` (every entry names its source); a user's own TOML
file with the same grammar may be layered on top.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import lru_cache
from pathlib import Path

from qc.library._tables import NameIndex, read_table
from qc.library.schema import MaterialRecord

__all__ = ["Material", "MaterialLibrary", "load_materials"]


@dataclass(frozen=True)
class Material:
    """A material near 20 °C: cte and cte_u in 1/K (cte_u a standard uncertainty),
    density kg/m³, specific_heat J/(kg·K), conductivity W/(m·K)."""

    id: str
    name: str
    aliases: tuple[str, ...]
    cte: float
    cte_u: float
    density: float
    specific_heat: float
    conductivity: float
    source: str


class MaterialLibrary:
    """Materials by id, name or alias (case, spaces, hyphens, underscores, dots ignored)."""

    def __init__(self, index: NameIndex) -> None:
        self._index = index

    def get(self, name_or_alias: str) -> Material:
        """The material; :class:`qc.errors.UnknownNameError` with close matches if unknown."""
        material: Material = self._index.get(name_or_alias)
        return material

    def names(self) -> list[str]:
        """Material ids, bundled first, then the user's additions."""
        return self._index.ids()

    def __contains__(self, name: object) -> bool:
        try:
            self._index.get(str(name))
        except KeyError:
            return False
        return True

    def __len__(self) -> int:
        return len(self._index.ids())


def _layer(records: list[MaterialRecord]) -> list[tuple[str, str, list[str], Material]]:
    return [
        (
            r.id,
            r.name,
            r.aliases,
            Material(r.id, r.name, tuple(r.aliases), r.cte, r.cte_u, r.density,
                     r.specific_heat, r.conductivity, r.source),
        )
        for r in records
    ]


@lru_cache(maxsize=8)
def load_materials(extra: Path | None = None) -> MaterialLibrary:
    """The bundled materials, with the user's file ``extra`` layered on top (cached).

    Raises :class:`qc.errors.DataFileError` naming the file, entry and field at fault.
    """
    index = NameIndex("material")
    index.add_layer("materials.toml", _layer(read_table("material", MaterialRecord,
                                                        bundled="materials.toml")))
    if extra is not None:
        path = Path(extra)
        index.add_layer(path.name, _layer(read_table("material", MaterialRecord, path=path)))
    return MaterialLibrary(index)
