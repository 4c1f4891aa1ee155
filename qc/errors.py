"""The errors `qc` raises, as one small family.

Every error a user can meet derives from :class:`QcError`, so the command line
catches exactly one type and prints its message; no traceback reaches a user.
Each also subclasses the built-in exception it resembles::

    QcError
    ├── InputError (ValueError)          a file, sheet or cell cannot be used as given
    │   ├── FileReadError                the whole file is unreadable, empty or has no header
    │   ├── CellError                    one cell of one row; carries its place and value
    │   ├── ToleranceError               a tolerance notation that cannot be read
    │   └── LimitExceededError           a file larger than the configured safety limits
    ├── UnknownNameError (KeyError)      a material, instrument or header nobody knows
    ├── ConfigError (ValueError)         a layout file, option or decision rule that does not fit
    ├── DataFileError (ValueError)       a bundled or user data table is malformed
    └── OutputError (OSError)            the output cannot be written where asked

Messages say where (file › sheet › row › column), what was found, and what was expected.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from difflib import get_close_matches

__all__ = [
    "CellError",
    "ConfigError",
    "DataFileError",
    "FileReadError",
    "InputError",
    "LimitExceededError",
    "OutputError",
    "Place",
    "QcError",
    "ToleranceError",
    "UnknownNameError",
    "suggest",
]


class QcError(Exception):
    """Root of every error `qc` raises on purpose."""


class InputError(QcError, ValueError):
    """Input that cannot be used as given."""


class FileReadError(InputError):
    """A whole file is unreadable: wrong kind, damaged, empty, or no header row found."""


@dataclass(frozen=True)
class Place:
    """Where a value came from, in the spreadsheet's own terms (1-based Excel row numbers)."""

    file: str
    sheet: str | None = None
    row: int | None = None
    column: str | None = None

    def __str__(self) -> str:
        parts = [self.file]
        if self.sheet:
            parts.append(self.sheet)
        if self.row is not None:
            parts.append(f"row {self.row}")
        if self.column:
            parts.append(self.column)
        return " › ".join(parts)


class CellError(InputError):
    """One cell that cannot be used; the message names its place, the value and what is expected."""

    def __init__(self, place: Place, value: object, expected: str, hint: str = "") -> None:
        self.place = place
        self.value = value
        self.expected = expected
        self.hint = hint
        msg = f"{place}: expected {expected}, got {value!r}"
        if hint:
            msg += f" ({hint})"
        super().__init__(msg)


class ToleranceError(InputError):
    """A tolerance notation that cannot be read, or a fit code outside the tables."""


class LimitExceededError(InputError):
    """A file beyond the configured safety limits (size, rows, columns, compression ratio)."""


class UnknownNameError(QcError, KeyError):
    """A name (material, instrument, header, rule) that is not known; suggests close matches."""

    def __init__(self, kind: str, name: str, known: Sequence[str]) -> None:
        self.kind = kind
        self.name = name
        self.suggestions = suggest(name, known)
        msg = f"unknown {kind} {name!r}"
        if self.suggestions:
            msg += "; did you mean " + " or ".join(repr(s) for s in self.suggestions) + "?"
        super().__init__(msg)

    def __str__(self) -> str:  # KeyError would quote the whole message
        return str(self.args[0])


class ConfigError(QcError, ValueError):
    """A layout file, command option or decision rule that does not fit."""


class DataFileError(QcError, ValueError):
    """A data table (bundled or the user's own) that does not follow its format."""


class OutputError(QcError, OSError):
    """The output cannot be written where asked."""


def suggest(name: str, known: Sequence[str], n: int = 3) -> list[str]:
    """Close matches of ``name`` among ``known``, case-insensitive, best first."""
    lowered = {k.lower(): k for k in known}
    hits = get_close_matches(name.lower().strip(), list(lowered), n=n, cutoff=0.6)
    return [lowered[h] for h in hits]
