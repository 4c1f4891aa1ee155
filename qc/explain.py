"""Finding one measurement of an evaluation by spreadsheet row or by part and characteristic."""

from __future__ import annotations

import numpy as np

from qc.errors import ConfigError, UnknownNameError
from qc.pipeline import Evaluation

__all__ = ["find_row"]


def find_row(ev: Evaluation, *, row: int | None = None, part: str | None = None,
             characteristic: str | None = None) -> int:
    """Index into ``ev.results`` of the measurement asked for (first match)."""
    f = ev.table.frame
    if row is not None:
        hits = np.flatnonzero(f["source_row"].to_numpy() == row)
        if hits.size == 0:
            rows = f["source_row"].to_numpy()
            raise ConfigError(f"row {row}: no measurement on that spreadsheet row; data rows "
                              f"run from {rows.min()} to {rows.max()}")
        if hits.size > 1 and characteristic is not None:
            hits = hits[f["characteristic"].to_numpy()[hits] == characteristic]
        return int(hits[0])
    if part is None or characteristic is None:
        raise ConfigError("say which measurement: --row N, or --part P --characteristic C")
    parts = f["part"].astype(str).to_numpy()
    chars = f["characteristic"].astype(str).to_numpy()
    if part not in set(parts):
        raise UnknownNameError("part", part, sorted(set(parts)))
    mask = parts == part
    if characteristic not in set(chars[mask]):
        raise UnknownNameError(f"characteristic of part {part}", characteristic,
                               sorted(set(chars[mask])))
    return int(np.flatnonzero(mask & (chars == characteristic))[0])
