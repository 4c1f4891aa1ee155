"""Reading a TOML data table (bundled or the user's) into validated records, with clear errors."""

from __future__ import annotations

import re
import tomllib
from importlib import resources
from pathlib import Path
from typing import Any, TypeVar

from pydantic import BaseModel, ValidationError

from qc.errors import DataFileError, UnknownNameError

__all__ = ["NameIndex", "normalise", "read_table"]

FORMAT_VERSION = 1
R = TypeVar("R", bound=BaseModel)
_SEPARATORS = re.compile(r"[\s\-_.]+")


def normalise(name: str) -> str:
    """Key for matching names: case, spaces, hyphens, underscores and dots ignored."""
    return _SEPARATORS.sub("", str(name).strip().lower())


def _load_text(bundled: str | None, path: Path | None) -> tuple[str, str]:
    """(label, text) of a bundled data file or a user's file."""
    if path is None:
        assert bundled is not None
        return bundled, resources.files("qc").joinpath("data", bundled).read_text("utf-8")
    try:
        return path.name, Path(path).read_text("utf-8")
    except (OSError, UnicodeDecodeError) as exc:
        raise DataFileError(f"{path.name}: cannot be read ({exc.__class__.__name__})") from exc


def read_table(
    key: str, model: type[R], *, bundled: str | None = None, path: Path | None = None
) -> list[R]:
    """Records of the array of tables ``[[key]]``, validated by ``model``.

    Messages name the file, the entry and the field, e.g.
    ``materials.toml › material 'brass' › cte: …``.
    """
    label, text = _load_text(bundled, path)
    try:
        doc: dict[str, Any] = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise DataFileError(f"{label}: not valid TOML ({exc})") from exc
    version = doc.get("format_version")
    if version != FORMAT_VERSION:
        raise DataFileError(
            f"{label}: expected format_version = {FORMAT_VERSION}, got {version!r}"
        )
    entries = doc.get(key, [])
    if not isinstance(entries, list) or not all(isinstance(e, dict) for e in entries):
        raise DataFileError(f"{label}: expected [[{key}]] tables")
    records: list[R] = []
    for pos, entry in enumerate(entries, start=1):
        ident = entry.get("id", f"#{pos}")
        try:
            records.append(model.model_validate(entry))
        except ValidationError as exc:
            err = exc.errors()[0]
            where = ".".join(str(p) for p in err["loc"]) or "entry"
            raise DataFileError(
                f"{label} › {key} {ident!r} › {where}: {err['msg']} (got {err.get('input')!r})"
            ) from exc
    return records


class NameIndex:
    """Lookup of records by id, name or alias; later layers replace earlier ones by id."""

    def __init__(self, kind: str) -> None:
        self.kind = kind
        self._by_id: dict[str, Any] = {}
        self._keys: dict[str, str] = {}  # normalised spelling -> id
        self._spelling: dict[str, str] = {}  # normalised spelling -> spelling as written

    def add_layer(self, label: str, items: list[tuple[str, str, list[str], Any]]) -> None:
        """Add (id, name, aliases, item) rows of one file; duplicates within a file are errors."""
        seen: dict[str, tuple[str, str]] = {}
        for ident, name, aliases, _ in items:
            for spelled in (ident, name, *aliases):
                k = normalise(spelled)
                if k in seen and seen[k][0] != ident:
                    raise DataFileError(
                        f"{label}: {self.kind} name {spelled!r} is used by both "
                        f"{seen[k][0]!r} and {ident!r}"
                    )
                seen.setdefault(k, (ident, spelled))
        for ident, _, _, item in items:
            if ident in self._by_id:  # replaced by a later layer: forget its old spellings
                for k in [k for k, v in self._keys.items() if v == ident]:
                    del self._keys[k], self._spelling[k]
            self._by_id[ident] = item
        for k, (ident, spelled) in seen.items():
            self._keys[k] = ident
            self._spelling[k] = spelled

    def get(self, name: str) -> Any:
        """The record for ``name`` (id, name or alias); UnknownNameError with suggestions."""
        ident = self._keys.get(normalise(name))
        if ident is None:
            raise UnknownNameError(self.kind, str(name), list(self._spelling.values()))
        return self._by_id[ident]

    def ids(self) -> list[str]:
        """Ids in file order (user additions last)."""
        return list(self._by_id)
