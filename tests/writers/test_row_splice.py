"""The column-wise splice of result cells into a sheet gives the bytes of the row-by-row path.

The cell tables below are invented. Each is edited twice, once column-wise and once with the
general row-by-row splice forced; the parts must be byte-identical, and the outcome
(:class:`Occupied` and its reason) the same. Whether a layout is plain enough for the
column-wise path is checked too, so both paths are really exercised.
"""

from __future__ import annotations

import numpy as np
import pyarrow as pa
import pytest

from qc.io.writeback_sheet import Occupied, _splice_rows, edited_worksheet

HEAD = (
    '<?xml version="1.0" encoding="UTF-8" standalone="yes"?>\n'
    '<worksheet xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main">'
    '<dimension ref="A1:B4"/>'
)


def _sheet(rows: str, tail: str = "") -> bytes:
    return (HEAD + f"<sheetData>{rows}</sheetData>{tail}</worksheet>").encode("utf-8")


def _cells(rows: list[int]) -> pa.Array:
    return pa.array(
        [f'<c r="D{r}" t="inlineStr"><is><t>r{r} é</t></is></c><c r="E{r}"><v>{r}.5</v></c>'
         for r in rows],
        pa.string(),
    )


def _edit(xml: bytes, rows: list[int], column_wise: bool) -> bytes | str:
    """The edited part's bytes, or the reason it could not be edited."""
    try:
        chunks = edited_worksheet(
            xml, "xl/worksheets/sheet1.xml", rows=rows, cells=_cells(rows), last_column=2,
            first_col=4, last_col=5, widths=[10.0, 12.0], column_wise=column_wise)
    except Occupied as why:
        return why.reason
    except ValueError as exc:  # the row-by-row path does not read "</row >" (both paths agree)
        return type(exc).__name__
    return b"".join(bytes(c) for c in chunks())


PLAIN = {
    "rows with spans": '<row r="1" spans="1:2"><c r="A1"><v>1</v></c><c r="B1" t="s"><v>0</v>'
    '</c></row><row r="2" spans="1:2" ht="20" customHeight="1"><c r="A2"><v>2</v></c></row>',
    "self-closing and empty rows": '<row r="1" spans="1:2"/><row r="2"></row>'
    '<row r="3" ht="15" /><row r="4"><c r="B4"><v>4</v></c></row>',
    "target rows missing before, between and after": '<row r="2"><c r="A2"><v>2</v></c></row>'
    '<row r="5"><c r="A5"><v>5</v></c></row>',
    "no rows at all": "",
    "formatting-only cells beyond the data": '<row r="1"><c r="A1"><v>1</v></c><c r="C1" s="3"/>'
    '<c r="D1" s="2"/><c r="G1" s="4"></c></row><row r="2"><c r="A2"><v>2</v></c></row>',
    "a value beyond the data": '<row r="1"><c r="A1"><v>1</v></c></row>'
    '<row r="2"><c r="A2"><v>2</v></c><c r="F2"><v>9</v></c></row>',
    "a cell without a reference last": '<row r="1"><c r="A1"><v>1</v></c><c s="1"/></row>',
    "lower-case references and an attribute before r": '<row r="1"><c r="b1"><v>1</v></c></row>'
    '<row r="2"><c s="1" r="A2"><v>2</v></c></row>',
    "an extension list in a row": '<row r="1"><c r="A1"><v>1</v></c><extLst><ext uri="x"/>'
    "</extLst></row>",
    "text that looks like markup": '<row r="1"><c r="A1" t="inlineStr"><is><t>a &lt;c r="Z1"&gt; '
    "&amp; > b</t></is></c></row>",
    "whitespace between rows and cells": '\n  <row r="1">\n    <c r="A1"><v>1</v></c>\n  </row>\n'
    '  <row r="3">\t<c r="B3"><v>3</v></c></row>\n',
}

UNUSUAL = {
    "a row without a number": '<row><c r="A1"><v>1</v></c></row><row r="2"/>',
    "rows out of order": '<row r="3"><c r="A3"><v>3</v></c></row><row r="2"/>',
    "r not the first attribute": '<row spans="1:2" r="1"><c r="A1"><v>1</v></c></row>',
    "r in single quotes": "<row r='1'><c r=\"A1\"><v>1</v></c></row>",
    "a > inside an attribute value": '<row r="1" x="a>b"><c r="A1"><v>1</v></c></row>',
    "a space before the closing >": '<row r="1"><c r="A1"><v>1</v></c></row ><row r="2"/>',
}


@pytest.mark.parametrize("rows", [[1, 2], [1, 2, 3, 4], [1, 3, 4, 6]])
@pytest.mark.parametrize("layout", sorted(PLAIN))
def test_plain_layouts_spliced_column_wise_as_row_by_row(layout: str, rows: list[int]) -> None:
    xml = _sheet(PLAIN[layout], '<mergeCells count="1"><mergeCell ref="A9:B9"/></mergeCells>')
    try:
        spliced = _splice_rows(PLAIN[layout], "", np.array(rows), _cells(rows), 2)
    except Occupied:
        spliced = "in the way"  # decided by the column-wise path too
    assert spliced is not None
    assert _edit(xml, rows, column_wise=True) == _edit(xml, rows, column_wise=False)


def test_a_value_in_the_way_gives_the_same_reason() -> None:
    xml = _sheet(PLAIN["a value beyond the data"])
    reason = _edit(xml, [1, 2], column_wise=True)
    assert reason == "cell F2 already holds a value where results would go"
    assert _edit(xml, [1, 2], column_wise=False) == reason


@pytest.mark.parametrize("layout", sorted(UNUSUAL))
def test_unusual_layouts_take_the_row_by_row_path(layout: str) -> None:
    inner = UNUSUAL[layout]
    assert _splice_rows(inner, "", np.array([1, 2]), _cells([1, 2]), 2) is None
    xml = _sheet(inner)
    assert _edit(xml, [1, 2], column_wise=True) == _edit(xml, [1, 2], column_wise=False)


def test_splice_written_out() -> None:
    """One small case checked against bytes written by hand (spans dropped, rows made)."""
    inner = '<row r="2" spans="1:2"><c r="A2"><v>2</v></c></row>'
    cells = pa.array(['<c r="D1"/>', '<c r="D2"/>', '<c r="D3"/>'])
    pieces = _splice_rows(inner, "", np.array([1, 2, 3]), cells, 2)
    assert pieces is not None
    assert b"".join(bytes(p) for p in pieces()) == (
        b'<row r="1"><c r="D1"/></row><row r="2"><c r="A2"><v>2</v></c><c r="D2"/></row>'
        b'<row r="3"><c r="D3"/></row>'
    )
