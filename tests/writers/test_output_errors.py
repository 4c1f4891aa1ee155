"""Where the output cannot or must not be written, and atomic replacement of the output.

Atomicity relies on POSIX rename(2) semantics, which ``os.replace`` provides (Python docs,
os.replace): the final name shows either the old file or the complete new one.
"""

from __future__ import annotations

import os
import zipfile
from pathlib import Path

import pandas as pd
import pytest

from qc.errors import ConfigError, FileReadError, OutputError, UnknownNameError
from qc.io import writers
from qc.io.writeback import write_back, write_new_workbook
from qc.io.writers import write_table
from qc.io.xlsx_package import Package
from tests.writers.workbooks import DATA_ROWS, HEADER_ROW, LAST_COLUMN, SHEET, inspection_workbook

RESULTS = pd.DataFrame({"verdict": ["conforms"] * 4})


def _write(src: Path, out: Path, **kw):
    args = dict(
        sheet=SHEET,
        header_row=HEADER_ROW,
        data_rows=DATA_ROWS,
        last_column=LAST_COLUMN,
        results=RESULTS,
    )
    args.update(kw)
    return write_back(src, out, **args)


@pytest.fixture
def src(tmp_path: Path) -> Path:
    return inspection_workbook(tmp_path / "batch.xlsx")


def test_existing_output_needs_force(src: Path, tmp_path: Path) -> None:
    out = tmp_path / "out.xlsx"
    out.write_bytes(b"older result")
    with pytest.raises(OutputError) as err:
        _write(src, out)
    assert str(err.value) == f"{out} already exists; use --force to overwrite it"
    assert out.read_bytes() == b"older result"
    _write(src, out, force=True)
    assert zipfile.is_zipfile(out)


def test_output_equal_to_input_is_refused(src: Path) -> None:
    before = src.read_bytes()
    for force in (False, True):
        with pytest.raises(OutputError) as err:
            _write(src, src, force=force)
        assert str(err.value) == (
            f"{src} is the input file; choose another output name (the input is never overwritten)"
        )
    assert src.read_bytes() == before


def test_missing_folder(src: Path, tmp_path: Path) -> None:
    out = tmp_path / "nowhere" / "out.xlsx"
    with pytest.raises(OutputError) as err:
        _write(src, out)
    assert str(err.value) == f"cannot write {out}: the folder {out.parent} does not exist"


def test_output_is_a_folder(src: Path, tmp_path: Path) -> None:
    out = tmp_path / "folder.xlsx"
    out.mkdir()
    with pytest.raises(OutputError) as err:
        _write(src, out, force=True)
    assert str(err.value) == f"cannot write {out}: it is a folder"


def test_read_only_folder(src: Path, tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    out = tmp_path / "out.xlsx"
    monkeypatch.setattr(writers.os, "access", lambda *_: False)
    with pytest.raises(OutputError) as err:
        _write(src, out)
    assert str(err.value) == f"cannot write {out}: no permission to write in {tmp_path}"


@pytest.mark.skipif(os.geteuid() == 0, reason="root may write in a read-only folder")
def test_read_only_folder_for_real(src: Path, tmp_path: Path) -> None:
    ro = tmp_path / "ro"
    ro.mkdir()
    ro.chmod(0o555)
    try:
        with pytest.raises(OutputError, match="no permission to write in"):
            _write(src, ro / "out.xlsx")
    finally:
        ro.chmod(0o755)


def test_wrong_extension(src: Path, tmp_path: Path) -> None:
    with pytest.raises(OutputError) as err:
        _write(src, tmp_path / "out.ods")
    assert str(err.value) == (
        f"cannot write {tmp_path / 'out.ods'}: a workbook written back must end in .xlsx or .xlsm"
    )
    with pytest.raises(OutputError) as err:
        write_table(RESULTS, tmp_path / "out.txt")
    assert str(err.value) == (
        f"cannot write {tmp_path / 'out.txt'}: unknown table type '.txt'; "
        "use .csv, .parquet or .jsonl"
    )
    with pytest.raises(OutputError) as err:
        write_new_workbook(tmp_path / "o.xlsm", data=RESULTS, sheet_name="Data")
    assert str(err.value) == f"cannot write {tmp_path / 'o.xlsm'}: a new workbook must end in .xlsx"


def test_interrupted_run_leaves_nothing(
    src: Path, tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    out = tmp_path / "out.xlsx"
    out.write_bytes(b"older result")
    real_write = Package.write

    def interrupted(self, fileobj):
        fileobj.write(b"PK partial")
        raise KeyboardInterrupt

    monkeypatch.setattr(Package, "write", interrupted)
    with pytest.raises(KeyboardInterrupt):
        _write(src, out, force=True)
    monkeypatch.setattr(Package, "write", real_write)
    assert out.read_bytes() == b"older result"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["batch.xlsx", "out.xlsx"]


def test_disk_error_becomes_output_error(
    src: Path, tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    def full(self, fileobj):
        raise OSError(28, "No space left on device")

    monkeypatch.setattr(Package, "write", full)
    out = tmp_path / "out.xlsx"
    with pytest.raises(OutputError) as err:
        _write(src, out)
    assert str(err.value) == f"cannot write {out}: No space left on device"
    assert not out.exists() and len(list(tmp_path.iterdir())) == 1


def test_unknown_sheet_suggests(src: Path, tmp_path: Path) -> None:
    with pytest.raises(UnknownNameError) as err:
        _write(src, tmp_path / "o.xlsx", sheet="Reading")
    assert str(err.value) == "unknown sheet 'Reading'; did you mean 'Readings'?"


def test_rows_must_match_results(src: Path, tmp_path: Path) -> None:
    with pytest.raises(ConfigError) as err:
        _write(src, tmp_path / "o.xlsx", data_rows=[4, 5, 6])
    assert str(err.value) == (
        "4 result rows but 3 spreadsheet rows to put them on; "
        "there must be one row number per result"
    )
    with pytest.raises(ConfigError) as err:
        _write(src, tmp_path / "o.xlsx", data_rows=[4, 6, 5, 7])
    assert str(err.value) == (
        "the data rows must be increasing spreadsheet row numbers below the header row"
    )


def test_not_a_workbook(tmp_path: Path) -> None:
    bad = tmp_path / "bad.xlsx"
    bad.write_bytes(b"not a zip at all")
    with pytest.raises(FileReadError) as err:
        _write(bad, tmp_path / "o.xlsx")
    assert (
        str(err.value) == "bad.xlsx is not a readable xlsx/xlsm workbook (File is not a zip file)"
    )


def _with_sheet_xml(src: Path, out: Path, change) -> Path:
    with zipfile.ZipFile(src) as a, zipfile.ZipFile(out, "w") as b:
        for info in a.infolist():
            data = a.read(info)
            if info.filename == "xl/worksheets/sheet1.xml":
                data = change(data)
            b.writestr(info, data)
    return out


def test_entity_declarations_are_refused(src: Path, tmp_path: Path) -> None:
    # untrusted XML: a DTD could define entities (the "billion laughs" expansion)
    bomb = _with_sheet_xml(
        src,
        tmp_path / "bomb.xlsx",
        lambda d: b'<!DOCTYPE worksheet [<!ENTITY a "aaaaaaaa">]>' + d,
    )
    with pytest.raises(FileReadError) as err:
        _write(bomb, tmp_path / "o.xlsx")
    assert str(err.value) == (
        "the workbook part xl/worksheets/sheet1.xml declares a DTD or entities; refused"
    )
    assert not (tmp_path / "o.xlsx").exists()


def test_malformed_sheet_is_refused(src: Path, tmp_path: Path) -> None:
    broken = _with_sheet_xml(src, tmp_path / "broken.xlsx", lambda d: d.replace(b"</row>", b"", 1))
    with pytest.raises(
        FileReadError,
        match=r"^the workbook part xl/worksheets/sheet1.xml is not "
        r"well-formed XML \(mismatched tag",
    ):
        _write(broken, tmp_path / "o.xlsx")


def test_missing_input(tmp_path: Path) -> None:
    with pytest.raises(FileReadError) as err:
        _write(tmp_path / "gone.xlsx", tmp_path / "o.xlsx")
    assert str(err.value) == f"{tmp_path / 'gone.xlsx'} does not exist or is not a file"
