"""The raw-XML scan for hidden cells runs beside calamine: its result and its errors still count.

The workbook is the invented inspection workbook of the writer tests.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

from qc.errors import FileReadError
from qc.io import xlsx
from qc.io.values import CellMarker
from tests.writers.workbooks import SHEET, inspection_workbook


def test_marker_found_by_the_scan_reaches_the_grid(tmp_path: Path, monkeypatch) -> None:
    src = inspection_workbook(tmp_path / "in.xlsx")
    plain = xlsx.read_workbook_sheet(src, SHEET)
    r, c = np.argwhere(plain.cells == "")[0]
    blank = (int(r), int(c))
    marker = CellMarker("error", "#N/A")
    monkeypatch.setattr(xlsx, "hidden_cells", lambda _p, _s: {blank: marker})
    grid = xlsx.read_workbook_sheet(src, SHEET)
    assert grid.cells[blank] is marker
    assert (grid.cells != plain.cells).sum() == 1


def test_an_error_of_the_scan_is_raised_to_the_caller(tmp_path: Path, monkeypatch) -> None:
    src = inspection_workbook(tmp_path / "in.xlsx")

    def broken(_p: Path, _s: str) -> dict:
        raise FileReadError("the sheet part is damaged (invented)")

    monkeypatch.setattr(xlsx, "hidden_cells", broken)
    with pytest.raises(FileReadError, match="damaged"):
        xlsx.read_workbook_sheet(src, SHEET)


def test_calamine_error_wins_over_the_scan(tmp_path: Path, monkeypatch) -> None:
    """As before the scan ran beside it: a sheet calamine cannot read gives calamine's error."""
    src = inspection_workbook(tmp_path / "in.xlsx")
    monkeypatch.setattr(xlsx, "hidden_cells", lambda _p, _s: (_ for _ in ()).throw(
        FileReadError("scan error (invented)")))
    real_open = xlsx._open

    class Sheetless:
        def __init__(self, wb: object) -> None:
            self._wb = wb
            self.sheet_names = wb.sheet_names  # type: ignore[attr-defined]

        def get_sheet_by_name(self, _name: str) -> object:
            raise ValueError("corrupt cell table (invented)")

        def close(self) -> None:
            self._wb.close()  # type: ignore[attr-defined]

    monkeypatch.setattr(xlsx, "_open", lambda p: Sheetless(real_open(p)))
    with pytest.raises(FileReadError, match="the sheet cannot be read"):
        xlsx.read_workbook_sheet(src, SHEET)
