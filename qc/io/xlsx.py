"""Reading .xlsx/.xlsm/.ods sheets: values by python-calamine, plus a scan for what it hides.

calamine returns cached formula values fast but shows an Excel error value (``#N/A``) and a
formula that was never computed (no saved result) both as an empty string, like a blank cell.
Both must become row errors, not blanks, so the sheet's raw XML is searched for cells of
type ``e`` and for ``<f>`` cells without a ``<v>`` (only those cells are looked at).
Measured figures behind this choice are in docs/layouts.md.
"""

from __future__ import annotations

import posixpath
import re
import threading
import zipfile
from collections.abc import Callable
from pathlib import Path
from typing import Generic, TypeVar

import numpy as np
import python_calamine as pc
from defusedxml import ElementTree as SafeET

from qc.errors import FileReadError
from qc.io.grid import Grid
from qc.io.values import CellMarker

__all__ = ["column_index", "read_workbook_sheet", "sheet_names"]

_NS = "{http://schemas.openxmlformats.org/spreadsheetml/2006/main}"
_REL_NS = "{http://schemas.openxmlformats.org/officeDocument/2006/relationships}"
_PKG_REL = "{http://schemas.openxmlformats.org/package/2006/relationships}"
_REF = re.compile(r"^([A-Z]+)(\d+)$")
T = TypeVar("T")


def column_index(letters: str) -> int:
    """0-based index of a column letter (A → 0, AA → 26)."""
    n = 0
    for ch in letters:
        n = n * 26 + ord(ch) - 64
    return n - 1


def _open(path: Path) -> pc.CalamineWorkbook:
    try:
        return pc.CalamineWorkbook.from_path(str(path))
    except Exception as exc:  # calamine raises its own and OS errors; one message for the user
        raise FileReadError(
            f"{path.name}: cannot be read as a spreadsheet ({type(exc).__name__}: {exc})"
        ) from exc


def sheet_names(path: Path) -> list[str]:
    """Names of the sheets of a workbook, in order."""
    wb = _open(path)
    try:
        return list(wb.sheet_names)
    finally:
        wb.close()


def _sheet_xml_path(zf: zipfile.ZipFile, sheet: str) -> str | None:
    """The part name of a sheet's XML inside an .xlsx package."""
    wb = SafeET.fromstring(zf.read("xl/workbook.xml"))
    rid = None
    for s in wb.iter(f"{_NS}sheet"):
        if s.get("name") == sheet:
            rid = s.get(f"{_REL_NS}id")
    if rid is None:
        return None
    rels = SafeET.fromstring(zf.read("xl/_rels/workbook.xml.rels"))
    for r in rels.iter(f"{_PKG_REL}Relationship"):
        if r.get("Id") == rid:
            target = r.get("Target", "")
            return target.lstrip("/") if target.startswith("/") else posixpath.join("xl", target)
    return None


_CELL_START = re.compile(rb"<c\s[^>]*?r=\"([A-Z]+)(\d+)\"[^>]*?(/?)>")
_TYPE = re.compile(rb"\st=\"([a-z]+)\"")
_VALUE = re.compile(rb"<v>([^<]+)</v>")
_FORMULA = re.compile(rb"<f(?:\s[^>]*)?>([^<]*)</f>|<f(?:\s[^>]*)?/>")


def hidden_cells(path: Path, sheet: str) -> dict[tuple[int, int], CellMarker]:
    """Cells calamine shows as blank but are not: Excel errors and formulas with no result.

    Keys are 0-based (row, column) positions. Only the places where the raw XML holds a
    formula (``<f``) or an error type (``t="e"``) are looked at, so a sheet without formulas
    costs one substring search.
    """
    out: dict[tuple[int, int], CellMarker] = {}
    try:
        zf = zipfile.ZipFile(path)
    except (zipfile.BadZipFile, OSError):
        return out  # not a zip package: nothing to add
    with zf:
        part = _sheet_xml_path(zf, sheet)
        if part is None or part not in zf.namelist():
            return out
        data = zf.read(part)
    if b"<c " not in data and b"<c>" not in data:
        return _hidden_cells_namespaced(data)
    hits = sorted(_positions(data, b"<f") | _positions(data, b' t="e"'))
    done = -1
    for pos in hits:
        if pos < done:
            continue
        start = data.rfind(b"<c ", 0, pos)
        if start < 0:
            continue
        head = _CELL_START.match(data, start)
        if head is None:
            continue
        if head[3] == b"/":
            done = head.end()
            continue
        end = data.find(b"</c>", head.end())
        done = end
        body = data[head.end():end]
        pos_key = (int(head[2]) - 1, column_index(head[1].decode()))
        t = _TYPE.search(head[0])
        v = _VALUE.search(body)
        if t is not None and t[1] == b"e" and v is not None:
            out[pos_key] = CellMarker("error", v[1].decode())
        elif v is None and (t is None or t[1] != b"str"):
            f = _FORMULA.search(body)
            if f is not None:
                out[pos_key] = CellMarker("formula", (f[1] or b"").decode())
    return out


def _positions(data: bytes, needle: bytes) -> set[int]:
    """Every offset of ``needle`` in ``data`` (bytes.find runs at C speed)."""
    found, i = set(), data.find(needle)
    while i >= 0:
        found.add(i)
        i = data.find(needle, i + 1)
    return found


def _hidden_cells_namespaced(data: bytes) -> dict[tuple[int, int], CellMarker]:
    """Slow path for sheets written with a namespace prefix (``<x:c>``): stream with expat."""
    import io

    out: dict[tuple[int, int], CellMarker] = {}
    for _, el in SafeET.iterparse(io.BytesIO(data), events=("end",)):
        if el.tag == f"{_NS}c":
            f = el.find(f"{_NS}f")
            v = el.find(f"{_NS}v")
            ref = _REF.match(el.get("r", ""))
            if ref is not None:
                pos = (int(ref[2]) - 1, column_index(ref[1]))
                if el.get("t") == "e" and v is not None and v.text:
                    out[pos] = CellMarker("error", v.text)
                elif f is not None and (v is None or not v.text) and el.get("t") != "str":
                    out[pos] = CellMarker("formula", f.text or "")
            el.clear()
        elif el.tag == f"{_NS}row":
            el.clear()
    return out


class _Background(Generic[T]):
    """``fn(*args)`` run on a second thread; :meth:`result` waits and returns or raises."""

    def __init__(self, fn: Callable[..., T], *args: object) -> None:
        self._out: list[T] = []
        self._err: list[BaseException] = []

        def run() -> None:
            try:
                self._out.append(fn(*args))
            except BaseException as exc:  # re-raised by result() on the calling thread
                self._err.append(exc)

        self._thread = threading.Thread(target=run, name="qc-xlsx-scan", daemon=True)
        self._thread.start()

    def wait(self) -> None:
        self._thread.join()

    def result(self) -> T:
        self._thread.join()
        if self._err:
            raise self._err[0]
        return self._out[0]


def read_workbook_sheet(path: Path, sheet: str | None, *, prefer: tuple[str, ...] = (),
                        avoid: tuple[str, ...] = ()) -> Grid:
    """Read one sheet to a Grid: by name, else the first named in ``prefer``, else the first
    whose name is not in ``avoid`` (lower-case names), else the first."""
    wb = _open(path)
    try:
        names = list(wb.sheet_names)
        if not names:
            raise FileReadError(f"{path.name}: the workbook has no sheets")
        if sheet is None:
            lowered = {n.lower(): n for n in names}
            fallback = next((n for n in names if n.lower() not in avoid), names[0])
            sheet = next((lowered[p] for p in prefer if p in lowered), fallback)
        elif sheet not in names:
            from qc.errors import UnknownNameError

            raise FileReadError(f"{path.name}: {UnknownNameError('sheet', sheet, names)}")
        # the scan of the raw XML runs while calamine reads (both mostly outside the
        # interpreter lock); its result, or its error, is taken after calamine's
        scan = _Background(hidden_cells, path, sheet) if path.suffix.lower() in (
            ".xlsx", ".xlsm") else None
        try:
            ws = wb.get_sheet_by_name(sheet)
            rows = ws.to_python(skip_empty_area=False)
            merged = list(ws.merged_cell_ranges or [])
        except Exception as exc:
            if scan is not None:
                scan.wait()
            raise FileReadError(
                f"{path.name} › {sheet}: the sheet cannot be read ({type(exc).__name__}: {exc})"
            ) from exc
    finally:
        wb.close()
    width = max((len(r) for r in rows), default=0)
    cells = np.empty((len(rows), width), dtype=object)
    if all(len(r) == width for r in rows):  # calamine's usual rectangular output: one copy
        cells[:] = rows if rows else cells
    else:
        cells[:] = ""
        for i, r in enumerate(rows):
            cells[i, : len(r)] = r
    if scan is not None:
        hidden = scan.result()
        if hidden:
            nr = max(cells.shape[0], *(r + 1 for r, _ in hidden))
            nc = max(cells.shape[1], *(c + 1 for _, c in hidden))
            if (nr, nc) != cells.shape:
                grown = np.empty((nr, nc), dtype=object)
                grown[:] = ""
                grown[: cells.shape[0], : cells.shape[1]] = cells
                cells = grown
        for (r, c), marker in hidden.items():
            if cells[r, c] == "":
                cells[r, c] = marker
    spans = [((a[0], a[1]), (b[0], b[1])) for a, b in merged]
    return Grid(file=path.name, sheet=sheet, cells=cells, merged=spans, sheets=names)
