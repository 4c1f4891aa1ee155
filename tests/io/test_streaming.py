"""Large files in chunks: the same output as a whole-file run, row numbers from the file's top,
and a whole read for the files that cannot be split the same way.

The reference is the whole-file path (``evaluate_file`` + ``write_results``), itself checked
against hand computations and published examples elsewhere in the suite; every sheet here is
invented.
"""

from __future__ import annotations

import codecs
import threading
from pathlib import Path

import numpy as np
import pandas as pd
import pyarrow as pa
import pyarrow.parquet as pq
import pytest

from qc.errors import OutputError
from qc.export import write_results
from qc.io.csvfile import (
    FIRST_CHUNK_ROWS,
    NotStreamable,
    _PacedFile,
    _text_columns,
    stream_delimited,
)
from qc.io.grid import Grid, KnownCodes
from qc.io.reader import read_inspection_chunks
from qc.pipeline import evaluate_file
from qc.streaming import StreamedRun, evaluate_to_table

DEMO = Path(__file__).resolve().parents[2] / "demo_inspections"

#: Data rows of most sheets here: more than a first chunk (FIRST_CHUNK_ROWS), so that later
#: chunks are exercised too.
N = 2300

HEADER = ["Part", "Characteristic", "Nominal", "Tolerance", "Reading", "Unit",
          "Part temp (°C)", "Gauge temp (°C)", "Material", "Instrument"]


def _rows(n: int, *, comma: bool = False) -> list[list[str]]:
    """``n`` invented data rows with a few bad cells among them."""
    mats = ["steel", "aluminium 6061", "brass", "unobtainium"]
    tols = ["±0.05", "+0.02/-0.01", "H7", "0/-0.02"]
    out = []
    for i in range(n):
        reading = f"{25 + (i % 7) * 0.004:.3f}"
        temp = f"{18 + i % 9}.5"
        if i % 11 == 5:
            reading = "n/a"  # text in a reading: a row error
        if i % 13 == 4:
            temp = "warm"
        if comma:
            reading, temp = reading.replace(".", ","), temp.replace(".", ",")
        out.append([f"P-{i // 3:04d}", f"Bore {i % 3}", "25", tols[i % 4], reading, "mm",
                    temp, "20", mats[i % 4], "bore gauge" if i % 2 else "caliper"])
    return out


def _csv(path: Path, rows: list[list[str]], *, delimiter: str = ",", title: bool = False,
         newline: str = "\n", blank_every: int = 0, bom: bool = False) -> Path:
    def line(cells: list[str]) -> str:
        return delimiter.join(f'"{c}"' if delimiter in c or '"' in c else c for c in cells)

    lines = (["Inspection record, line 4 (invented)", ""] if title else []) + [line(HEADER)]
    for i, r in enumerate(rows):
        lines.append(line(r))
        if blank_every and i % blank_every == blank_every - 1:
            lines.append("")
    text = newline.join(lines) + newline
    path.write_bytes((codecs.BOM_UTF8 if bom else b"") + text.encode("utf-8"))
    return path


def _whole(src: Path, out: Path) -> None:
    write_results(evaluate_file(src), out, force=True)


def _same(src: Path, tmp: Path, suffix: str, chunk_rows: int) -> StreamedRun:
    a, b = tmp / f"chunked{suffix}", tmp / f"whole{suffix}"
    run = evaluate_to_table(src, a, chunk_rows=chunk_rows, force=True)
    _whole(src, b)
    if suffix == ".parquet":
        pd.testing.assert_frame_equal(pd.read_parquet(a), pd.read_parquet(b))
        assert pq.read_schema(a) == pq.read_schema(b)
    else:
        assert a.read_bytes() == b.read_bytes()
    ev = evaluate_file(src)
    assert run.rows == len(ev.results)
    assert run.counts == ev.counts
    return run


@pytest.mark.parametrize("suffix", [".csv", ".parquet", ".jsonl"])
@pytest.mark.parametrize("chunk_rows", [70, 5000])
def test_chunks_give_the_whole_file_output(tmp_path: Path, suffix: str, chunk_rows: int) -> None:
    src = _csv(tmp_path / "sheet.csv", _rows(N), title=True, blank_every=9)
    assert _same(src, tmp_path, suffix, chunk_rows).streamed


def test_chunk_count_follows_chunk_rows(tmp_path: Path) -> None:
    # a title line (the rows above the body), then the body: a blank line, the header,
    # N data rows and a blank line after every tenth
    src = _csv(tmp_path / "sheet.csv", _rows(N), title=True, blank_every=10)
    body = 1 + 1 + N + N // 10
    run = evaluate_to_table(src, tmp_path / "out.csv", chunk_rows=200)
    assert run.streamed
    # the first chunk is at least FIRST_CHUNK_ROWS long (header and decimal-mark evidence)
    assert run.chunks == 1 + -(-(body - FIRST_CHUNK_ROWS) // 200)
    assert run.rows == N


@pytest.mark.parametrize("demo", ["housings_winter.csv", "spacers_inch.csv"])
def test_demo_sheets_in_chunks(tmp_path: Path, demo: str) -> None:
    run = _same(DEMO / demo, tmp_path, ".csv", 5)
    assert run.streamed and run.chunks == 1  # shorter than a first chunk


def test_semicolons_decimal_commas_bom_and_crlf(tmp_path: Path) -> None:
    src = _csv(tmp_path / "eu.csv", _rows(N, comma=True), delimiter=";", newline="\r\n",
               bom=True)
    run = _same(src, tmp_path, ".csv", 60)
    assert run.streamed and run.chunks > 1
    assert any("decimal comma" in n for n in run.notes)


def test_quoted_line_breaks_inside_fields(tmp_path: Path) -> None:
    rows = _rows(N)
    for r in rows[::4]:
        r[-1] = "bore gauge\nserial 17"  # a line break inside a quoted field
    src = tmp_path / "breaks.csv"
    lines = [",".join(HEADER)] + [",".join(f'"{c}"' if "\n" in c else c for c in r)
                                  for r in rows]
    src.write_text("\n".join(lines) + "\n", encoding="utf-8")
    run = _same(src, tmp_path, ".csv", 90)
    assert run.streamed and run.chunks > 1


def test_row_numbers_count_from_the_top_of_the_file(tmp_path: Path) -> None:
    rows = _rows(N)
    src = _csv(tmp_path / "sheet.csv", rows, title=True)
    out = tmp_path / "out.csv"
    assert evaluate_to_table(src, out, chunk_rows=80).chunks > 2
    got = pd.read_csv(out, dtype=str, keep_default_na=False)
    # file row = 3 lines above the data (title, blank, header) + position + 1
    assert got["source_row"].astype(int).tolist() == list(range(4, N + 4))
    bad = got[got["source_row"] == "2209"]  # data row 2205 (0-based), in the third chunk
    assert rows[2205][4] == "n/a"
    assert bad["message"].iloc[0].startswith("sheet.csv › row 2209 › E: Reading")


def test_rows_of_other_widths_later_in_the_file_fall_back_to_a_whole_read(
        tmp_path: Path) -> None:
    rows = _rows(N)
    rows[2250] = [*rows[2250], "an extra field"]  # pyarrow refuses it; the csv module pads
    src = _csv(tmp_path / "ragged.csv", rows)
    run = _same(src, tmp_path, ".csv", 50)
    assert not run.streamed
    assert sorted(p.name for p in tmp_path.iterdir()) == ["chunked.csv", "ragged.csv",
                                                          "whole.csv"]


def test_windows_1252_and_bare_carriage_returns_are_read_whole(tmp_path: Path) -> None:
    src = tmp_path / "cp.csv"
    src.write_bytes("\n".join([",".join(HEADER), *(",".join(r) for r in _rows(12))])
                    .encode("cp1252") + b"\n")
    assert not _same(src, tmp_path, ".csv", 4).streamed
    with pytest.raises(NotStreamable):
        stream_delimited(src)
    cr = tmp_path / "cr.csv"
    cr.write_bytes(("\r".join([",".join(HEADER), *(",".join(r) for r in _rows(12))]) + "\r")
                   .encode("utf-8"))
    with pytest.raises(NotStreamable):
        stream_delimited(cr)


def test_parquet_input_in_chunks(tmp_path: Path) -> None:
    rows = _rows(45)
    frame = pd.DataFrame(rows, columns=HEADER)
    frame["Nominal"] = frame["Nominal"].astype(float)  # numbers stay numbers in Parquet
    src = tmp_path / "export.parquet"
    pq.write_table(pa.Table.from_pandas(frame, preserve_index=False), src, row_group_size=10)
    run = _same(src, tmp_path, ".parquet", 8)
    assert run.streamed and run.chunks == 6


def test_workbooks_and_wide_sheets_are_not_chunked(tmp_path: Path) -> None:
    with pytest.raises(NotStreamable):
        read_inspection_chunks(DEMO / "housings_winter.xlsx")
    with pytest.raises(NotStreamable):
        read_inspection_chunks(DEMO / "shafts_warm.csv")  # a wide sheet: one row per part
    run = _same(DEMO / "shafts_warm.csv", tmp_path, ".csv", 3)
    assert not run.streamed


def test_progress_reaches_the_end(tmp_path: Path) -> None:
    src = _csv(tmp_path / "sheet.csv", _rows(N))
    seen: list[tuple[float, int]] = []
    evaluate_to_table(src, tmp_path / "out.csv", chunk_rows=100,
                      progress=lambda f, n: seen.append((f, n)))
    # the header row is the first row of the body: 2099 data rows in the first chunk; the
    # last call says the file is done
    assert [n for _, n in seen] == [2099, 2199, 2299, 2300, 2300]
    fractions = [f for f, _ in seen]
    assert fractions == sorted(fractions) and fractions[-1] == 1.0


def test_existing_output_and_the_input_itself_are_refused(tmp_path: Path) -> None:
    src = _csv(tmp_path / "sheet.csv", _rows(10))
    out = tmp_path / "out.csv"
    out.write_text("keep me", encoding="utf-8")
    with pytest.raises(OutputError, match="already exists"):
        evaluate_to_table(src, out)
    assert out.read_text(encoding="utf-8") == "keep me"
    with pytest.raises(OutputError, match="input"):
        evaluate_to_table(src, src, force=True)
    assert src.read_text(encoding="utf-8").startswith("Part,")


def test_small_reading_blocks_give_the_same_cells(
        tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    # 4 kB blocks: many record batches per chunk, and the reader paced to 16 kB ahead
    monkeypatch.setattr("qc.io.csvfile._BLOCK_BYTES", 4096)
    src = _csv(tmp_path / "sheet.csv", _rows(3 * N), title=True, blank_every=7)
    stream = stream_delimited(src, chunk_rows=300)
    fractions = [stream.fraction() for _grid in stream.chunks]
    assert fractions == sorted(fractions) and 0 < fractions[-1] <= 1
    assert _same(src, tmp_path, ".csv", 300).streamed


def test_the_paced_file_holds_the_reader_back_until_allowed(
        tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.setattr(_PacedFile, "_WAIT_S", 60.0)  # no timeout within the test
    src = tmp_path / "bytes.csv"
    src.write_bytes(b"x" * 10_000)
    paced = _PacedFile(src, 100, block=500, ahead=2)
    got: list[int] = []
    reader = threading.Thread(target=lambda: got.extend(
        len(paced.read(400)) for _ in range(10)))
    reader.start()
    reader.join(0.5)
    # reads start at byte 100 and stop once the position has reached 100 + 2 blocks
    assert reader.is_alive() and paced.tell() == 1300
    paced.allow()  # the consumer took a batch: one block more
    reader.join(0.5)
    assert paced.tell() == 1700 and paced.consumed() == 600
    paced.close()  # closing lets the reader finish (reads past the end are empty)
    reader.join(5)
    assert not reader.is_alive()


def test_blank_cells_are_judged_as_str_strip_judges_them() -> None:
    # Python's str.isspace: ASCII whitespace, the separators \x1c–\x1f, NBSP, U+3000, U+2028 …
    values = ["", " ", "\u00a0", "a", " a", "\x1c", "é", "\u3000x", "12.5", "\t\r", "\u2028",
              "\u3000", "-", "\u200b"]
    (cells, blank, codes, uniques), = _text_columns([pa.array(values * 3)])
    assert cells.tolist() == values * 3
    # the factorisation handed to the parsers is pandas' own (order of first appearance)
    pd_codes, pd_uniques = pd.factorize(np.asarray(values * 3, dtype=object))
    assert codes.tolist() == pd_codes.tolist() and uniques.tolist() == list(pd_uniques)
    assert blank.tolist() == [not v.strip() for v in values] * 3
    grid = Grid(file="x.csv", sheet=None, cells=cells.reshape(-1, 1))
    assert grid.blank()[:, 0].tolist() == blank.tolist()  # the grid's own rule


def test_the_command_runs_a_csv_to_parquet_in_chunks(tmp_path: Path) -> None:
    from typer.testing import CliRunner

    from qc.cli import app

    src = _csv(tmp_path / "records.csv", _rows(N))
    out = tmp_path / "records.checked.parquet"
    res = CliRunner().invoke(app, ["normalise", str(src), "-o", str(out)])
    assert res.exit_code == 0, res.output
    got = pd.read_parquet(out)
    whole = evaluate_file(src)
    assert len(got) == N and got["verdict"].value_counts().to_dict() == {
        k: v for k, v in whole.counts.items() if v}
    text = " ".join(res.output.split())  # the table title wraps in a narrow terminal
    assert f"records.csv: {N} measurements" in text
    assert "more in the flags and message columns of the output" in text
    # --fail-on reads the counts of a run in chunks too
    res = CliRunner().invoke(app, ["normalise", str(src), "-o", str(out), "--force",
                                   "--fail-on", "borderline"])
    assert res.exit_code == (1 if whole.counts["borderline"] + whole.counts["nonconforming"]
                             else 0)


def test_later_chunks_hand_their_codes_to_the_parsers(tmp_path: Path) -> None:
    from qc.io.values import Coded, _Distinct

    src = _csv(tmp_path / "sheet.csv", _rows(N))
    chunked = read_inspection_chunks(src, chunk_rows=100)
    grid = next(chunked.chunks).grid()
    assert grid.codes is not None and grid.first_row > 0
    reading = grid.cells[:, HEADER.index("Reading")]
    known = KnownCodes(reading.copy(), *grid.codes[HEADER.index("Reading")])
    plain, fast = _Distinct.of(reading), _Distinct.of(known)
    assert fast.texts == plain.texts and fast.pos.tolist() == plain.pos.tolist()
    assert fast.all_text and plain.all_text
    assert Coded.of(known).dense().tolist() == reading.tolist()
    assert KnownCodes(reading, *grid.codes[0])[1:].codes is None  # a view forgets them
    with pytest.raises(ValueError):
        known[0] = "changed"  # read-only: the codes cannot go stale
