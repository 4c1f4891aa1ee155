"""Result cells spliced into an existing worksheet part, leaving every other byte as it was.

The worksheet XML (ECMA-376 Part 1, 18.3.1.99) is edited as text: new ``<c>`` elements go into
the existing ``<row>`` elements after the data, missing rows are created in order, the
``<dimension>`` is widened and ``<col>`` widths are set for the new columns. Nothing else in the
part changes, so data validation, conditional formats, drawings, comments' legacy drawings and
extensions stay exactly as they were. No tree of the sheet is built: one streaming well-formedness
pass, then regular expressions over the rows only, which keeps a 100 000-row sheet in seconds.

When writing would overwrite or hide something, :class:`Occupied` is raised with the reason and
the caller writes a separate results sheet instead.

The rows are spliced column-wise (numpy over the part's bytes, Arrow string kernels over the
target rows) when the cell table has the plain form spreadsheet programs write: every row tag
starts with its ``r`` number, rows in order. A row whose last cell is not plainly within the
data goes through the cell-by-cell merge alone; any other layout takes the general row-by-row
path, which gives the same bytes.
"""

from __future__ import annotations

import bisect
import re
from collections.abc import Callable, Iterator, Sequence

import numpy as np
import pyarrow as pa
import pyarrow.compute as pc

from qc.io.writeback_cells import string_bytes
from qc.io.xlsx_package import (
    check_xml_stream,
    column_index,
    column_letter,
    decode_xml,
    encode_xml,
    parse_range_ref,
)

#: Pieces of an edited sheet encoded at a time (a few MB each).
_PIECES_PER_CHUNK = 4096
_ATTRS = r"""(?:[^>"']|"[^"]*"|'[^']*')*?"""
_R_ATTR = re.compile(r"""(?:^|\s)r\s*=\s*["']([A-Za-z]*)(\d*)["']""")
_SPANS_ATTR = re.compile(r"""\s+spans\s*=\s*("[^"]*"|'[^']*')""")
_REF_ATTR = re.compile(r"""(?:^|\s)ref\s*=\s*["']([^"']*)["']""")


class Occupied(Exception):
    """The target columns are not free; ``reason`` says why, in words for the write report."""

    def __init__(self, reason: str) -> None:
        super().__init__(reason)
        self.reason = reason


def ranges_block(
    ranges: Sequence[tuple[int, int, int, int]], rows: Sequence[int], first_col: int, last_col: int
) -> tuple[int, int, int, int] | None:
    """First range covering a target cell (a row of sorted ``rows``, a column in the span)."""
    for r1, c1, r2, c2 in ranges:
        if c2 < first_col or c1 > last_col:
            continue
        i = bisect.bisect_left(rows, r1)
        if i < len(rows) and rows[i] <= r2:
            return r1, c1, r2, c2
    return None


def range_text(r1: int, c1: int, r2: int, c2: int) -> str:
    return f"{column_letter(c1)}{r1}:{column_letter(c2)}{r2}"


def edited_worksheet(
    xml: bytes,
    part: str,
    *,
    rows: Sequence[int] | np.ndarray,
    cells: pa.Array | pa.ChunkedArray,
    last_column: int,
    first_col: int,
    last_col: int,
    widths: Sequence[float],
    column_wise: bool = True,
) -> Callable[[], Iterator[bytes | memoryview]]:
    """The worksheet ``xml`` with ``cells`` (the cell XML of row ``rows[i]``, in column order)
    added; ``rows`` are increasing row numbers.

    ``last_column`` is the last column of the original data; cells with a value beyond it on a
    target row, or merged cells / an autofilter over the target area, raise :class:`Occupied`.
    All checks and edits happen now; the result is a generator of the new part's bytes, encoded
    as the package is written, so the sheet never exists as one string and one byte string.
    ``column_wise=False`` forces the general row-by-row splice (same bytes; for tests).
    """
    check_xml_stream(xml, part)
    text = decode_xml(xml)
    root = re.search(r"<(?:(\w+):)?worksheet\b", text)
    if root is None:
        raise Occupied("the sheet is not an ordinary worksheet")
    p = (root.group(1) + ":") if root.group(1) else ""
    targets = np.asarray(rows, dtype=np.int64)
    if len(targets) != len(cells):
        raise ValueError(f"{len(cells)} rows of cells for {len(targets)} row numbers")
    rows = targets.tolist()

    sd = re.search(rf"<{p}sheetData\b({_ATTRS})(/?)>", text)
    if sd is None:
        raise Occupied("the sheet has no cell table")
    if sd.group(2):
        inner, inner_start, inner_end = "", sd.end(), sd.end()
        open_tag = f"<{p}sheetData{_unclose(sd.group(1))}>"
    else:
        inner_start = sd.end()
        inner_end = text.index(f"</{p}sheetData>", inner_start)
        inner = text[inner_start:inner_end]
        open_tag = text[sd.start() : sd.end()]
    if "<!--" in inner or "<![CDATA[" in inner or "<?" in inner:
        raise Occupied("the sheet's cell table contains comments or character data sections")

    tail = text[inner_end:]
    for tag in ("mergeCell", "autoFilter"):
        found = [
            rng
            for m in re.finditer(rf"<{p}{tag}\b({_ATTRS})/?>", tail)
            if (ref := _REF_ATTR.search(m.group(1))) and (rng := parse_range_ref(ref.group(1)))
        ]
        hit = ranges_block(found, rows, last_column + 1, last_col)
        if hit:
            what = "merged cells" if tag == "mergeCell" else "an autofilter"
            raise Occupied(f"{what} at {range_text(*hit)} cover the columns for the results")

    spliced = _splice_rows(inner, p, targets, cells, last_column) if column_wise else None
    if spliced is None:
        row_cells = dict(zip(rows, cells.to_pylist(), strict=True))
        if p:
            row_cells = {r: _prefixed(c, p) for r, c in row_cells.items()}
        new_inner: list[str | Callable[[], Iterator[memoryview]]] = list(
            _edit_rows(inner, p, row_cells, rows, last_column))
        del row_cells
    else:
        new_inner = [spliced]
    head = _widen_dimension(text[: sd.start()], p, rows[0], rows[-1], first_col, last_col)
    head = _set_widths(head, p, first_col, widths)
    if sd.group(2):
        pieces = [head, open_tag, *new_inner, f"</{p}sheetData>", text[sd.end() :]]
    else:
        pieces = [head, open_tag, *new_inner, tail]
    first = encode_xml(pieces[0])
    rest = pieces[1:]
    del text, inner, tail, new_inner, pieces  # only the pieces of the new sheet stay

    def chunks() -> Iterator[bytes | memoryview]:
        yield first
        text: list[str] = []
        for piece in rest:
            if isinstance(piece, str):
                text.append(piece)
                if len(text) >= _PIECES_PER_CHUNK:
                    yield "".join(text).encode("utf-8")
                    text = []
                continue
            if text:
                yield "".join(text).encode("utf-8")
                text = []
            for made in piece():
                yield from _slices(made)
        if text:
            yield "".join(text).encode("utf-8")

    return chunks


#: Bytes of an already-built piece handed to the zip writer at a time.
_SLICE_BYTES = 8 * 1024 * 1024


def _slices(data: bytes | memoryview) -> Iterator[memoryview]:
    """``data`` in slices of :data:`_SLICE_BYTES` (compressing overlaps the next slice)."""
    view = memoryview(data)
    for at in range(0, len(view), _SLICE_BYTES):
        yield view[at : at + _SLICE_BYTES]


def _unclose(attrs: str) -> str:
    """Attributes of a self-closing tag without the closing slash."""
    return re.sub(r"/\s*$", "", attrs)


def _prefixed(cells: str, p: str) -> str:
    return re.sub(r"<(/?)(c|v|is|t)\b", rf"<\1{p}\2", cells)


#: Bytes that may follow ``<row`` in a row tag, and ``<c`` in a cell tag (the bytes the
#: row-by-row path accepts when it looks for a row's last cell).
_ROW_NEXT = np.array([0x20, 0x09, 0x0A, 0x0D, ord(">"), ord("/")], np.uint8)
_CELL_NEXT = np.array([0x20, 0x09, 0x0A, ord(">"), ord("/")], np.uint8)
#: A row tag of the plain form: ``r`` first, in double quotes, then ordinary attributes.
_PLAIN_ROW_TAG = (
    r"""^<row\s+r="[0-9]{1,9}"(?:\s+[^\s=<>"'/]+\s*=\s*(?:"[^"]*"|'[^']*'))*\s*/?>$"""
)
_ROW_NUMBER = r'^<row\s+r="(?P<r>[0-9]+)"'
_SPANS = r"""\s+spans\s*=\s*("[^"]*"|'[^']*')"""
#: Bytes of a cell tag looked at for its column: ``<c r="``, 3 letters, 7 digits, the quote.
_CELL_HEAD = b' r="'
_WINDOW = 12
#: Target rows of a column-wise splice made into text at a time.
_SPLICE_ROWS = 16384


class _Rows:
    """Where the rows of a plain cell table are (byte offsets), and what they hold."""

    def __init__(self, data: bytes) -> None:
        self.data = data
        self.n = n = len(data)
        self.b = np.frombuffer(data, np.uint8)
        self.whole = whole = _segments(data, np.array([0, n]))
        starts = _find_all(whole, "<row")
        self.opens = starts[np.isin(self.at(starts + 4), _ROW_NEXT)]
        self.other_row_names = len(self.opens) != len(starts)
        self.closes = _find_all(whole, "</row")
        cells = _find_all(whole, "<c")
        self.cell_opens = cells[np.isin(self.at(cells + 2), _CELL_NEXT)]
        if len(self.opens):
            to_next = _segments(data, np.append(self.opens, n))
            gt = pc.find_substring(to_next, ">").to_numpy().astype(np.int64)
            self.tag_end = self.opens + gt + 1
        else:
            self.tag_end = self.opens

    def at(self, where: np.ndarray) -> np.ndarray:
        """The bytes at offsets ``where``; past the end, the last byte (never looked at: the
        offsets asked for past a tag's end only matter up to the tag's closing ``>``)."""
        if not len(self.b):
            return np.zeros(where.shape, np.uint8)
        return np.take(self.b, where, mode="clip")

    def plain(self) -> tuple[np.ndarray, np.ndarray, np.ndarray] | None:
        """Row numbers, content ends and self-closing flags; None unless every row is plain."""
        opens, tag_end, closes = self.opens, self.tag_end, self.closes
        if self.other_row_names or np.any(self.at(closes + 5) != ord(">")):
            return None  # an element whose name only begins with "row", or "</row >"
        if not len(opens):
            return np.zeros(0, np.int64), opens, np.zeros(0, bool)
        if np.any(tag_end <= opens) or np.any(self.at(tag_end - 1) != ord(">")):
            return None
        tags = _segments(self.data, np.column_stack([opens, tag_end]).ravel())
        tags = tags.take(pa.array(np.arange(0, 2 * len(opens) - 1, 2)))
        if not (pc.all(pc.string_is_ascii(tags)).as_py()
                and pc.all(pc.match_substring_regex(tags, _PLAIN_ROW_TAG)).as_py()):
            return None
        found = pc.struct_field(pc.extract_regex(tags, _ROW_NUMBER), [0])
        numbers = pc.cast(found, pa.int64()).to_numpy()
        if numbers[0] <= 0 or np.any(np.diff(numbers) <= 0):
            return None  # the row-by-row path says which row is out of order
        closing = pc.ends_with(tags, "/>").to_numpy(zero_copy_only=False)
        ends = tag_end.copy()
        open_rows = np.flatnonzero(~closing)
        if len(open_rows) != len(closes):
            return None
        following = np.append(opens[1:], self.n)[open_rows]
        if np.any(closes < tag_end[open_rows]) or np.any(closes > following):
            return None
        ends[open_rows] = closes
        return numbers, ends, closing

    def last_cell_within(self, start: np.ndarray, stop: np.ndarray, last: int) -> np.ndarray:
        """Rows whose content ``start:stop`` ends with a cell of column ``last`` or before,
        named plainly (``<c r="B7"``), with no ``extLst`` in it: the new cells simply follow."""
        cell_opens = self.cell_opens
        if not len(cell_opens) or not len(start):
            return np.zeros(len(start), bool)
        k = np.searchsorted(cell_opens, stop) - 1
        at = cell_opens[np.maximum(k, 0)]
        ok = (k >= 0) & (at >= start)
        head = self.at(at[:, None] + 2 + np.arange(len(_CELL_HEAD)))
        ok &= np.all(head == np.frombuffer(_CELL_HEAD, np.uint8), axis=1)
        w = self.at(at[:, None] + 2 + len(_CELL_HEAD) + np.arange(_WINDOW))
        upper = w & 0xDF
        alpha = (upper >= ord("A")) & (upper <= ord("Z"))
        letters = np.argmin(alpha, axis=1)
        ok &= (letters >= 1) & (letters <= 3)
        after = ~((w >= ord("0")) & (w <= ord("9"))) & (np.arange(_WINDOW) >= letters[:, None])
        first = np.argmax(after, axis=1)
        ok &= w[np.arange(len(w)), first] == ord('"')
        col = np.zeros(len(w), np.int64)
        for j in range(3):
            col = np.where(j < letters, col * 26 + (upper[:, j].astype(np.int64) - 64), col)
        ok &= col <= last
        if pc.sum(pc.count_substring(self.whole, "extLst")).as_py():
            occ = _find_all(self.whole, "extLst")
            inside = np.searchsorted(occ, stop - 6, "right") - np.searchsorted(occ, start)
            ok &= inside <= 0
        return ok


def _find_all(text: pa.Array, pattern: str) -> np.ndarray:
    """Byte offsets of every occurrence of ``pattern`` in the one-element array ``text``."""
    pieces = pc.split_pattern(text, pattern).flatten()
    lengths = pc.binary_length(pieces).to_numpy().astype(np.int64)
    return np.cumsum(lengths[:-1]) + np.arange(len(lengths) - 1) * len(pattern.encode())


def _segments(data: bytes, cuts: np.ndarray) -> pa.Array:
    """``data[cuts[i]:cuts[i + 1]]`` for each i as an Arrow string array, without a copy.

    The cuts lie on ``<`` and ``>`` bytes or the ends, so every piece is whole UTF-8 text.
    """
    offsets = pa.py_buffer(np.ascontiguousarray(cuts, dtype=np.int64))
    return pa.LargeStringArray.from_buffers(len(cuts) - 1, offsets, pa.py_buffer(data))


def _large(*parts: pa.Array | str) -> pa.Array:
    """Element-wise concatenation of large-string arrays and texts."""
    args = [pa.scalar(p, pa.large_string()) if isinstance(p, str) else p for p in parts]
    return pc.binary_join_element_wise(*args, pa.scalar("", pa.large_string()))


def _splice_rows(
    inner: str, p: str, targets: np.ndarray, cells: pa.Array | pa.ChunkedArray, last: int
) -> Callable[[], Iterator[memoryview]] | None:
    """The new cell table, spliced column-wise; None when it is not of the plain form.

    Every check (and so every :class:`Occupied`) happens now; the returned function makes the
    new text block by block, as the package is written.

    Gives the bytes :func:`_edit_rows` gives. Every ``<`` of the cell table starts a tag (the
    caller refused comments, character data and processing instructions; XML allows no ``<``
    in text or attribute values), so row and cell tags are found from the bytes after each
    ``<``. Rows whose last cell is not plainly within the data are merged one by one by
    :func:`_merge_cells`, which also raises :class:`Occupied` when a value is in the way.
    """
    if p:
        return None
    data = inner.encode("utf-8")
    sheet = _Rows(data)
    layout = sheet.plain()
    if layout is None:
        return None
    numbers, ends, closing = layout
    n = sheet.n
    at = np.searchsorted(numbers, targets)  # the row a target is, or goes before
    found = np.append(numbers, -1)[at] == targets
    pos = np.append(sheet.opens, n)[at]
    start = np.where(found, np.append(sheet.tag_end, n)[at], pos)
    stop = np.where(found, np.append(ends, n)[at], pos)
    shut = ~found | np.append(closing, False)[at]  # new and self-closing rows get </row>
    cuts = np.concatenate([[0], np.column_stack([pos, start, stop]).ravel(), [n]])
    if np.any(np.diff(cuts) < 0):
        return None
    cells = pc.cast(cells, pa.large_string())
    slow = found & ~sheet.last_cell_within(start, stop, last)
    merged = _merged(data, cells, targets, slow, start, stop, last) if slow.any() else None
    seg = _segments(data, cuts)

    def block(a: int, z: int) -> memoryview:
        """The new text from before target ``a`` up to the end of target ``z - 1``."""
        keep, tag, content = (seg.take(pa.array(np.arange(3 * a + k, 3 * z, 3)))
                              for k in range(3))
        own = pc.replace_substring_regex(pc.replace_substring_regex(tag, _SPANS, ""), "/>$", ">")
        made = _large('<row r="', pc.cast(pa.array(targets[a:z]), pa.large_string()), '">')
        body = _large(content, cells[a:z])
        if merged is not None:
            body = pc.if_else(pa.array(slow[a:z]), merged[a:z], body)
        shut_text = pc.if_else(pa.array(shut[a:z]), pa.scalar("</row>", pa.large_string()),
                               pa.scalar("", pa.large_string()))
        return string_bytes(_large(keep, pc.if_else(pa.array(found[a:z]), own, made), body,
                                   shut_text))

    def pieces() -> Iterator[memoryview]:
        for a in range(0, len(targets), _SPLICE_ROWS):
            yield block(a, min(a + _SPLICE_ROWS, len(targets)))
        yield memoryview(data)[int(cuts[-2]) :]

    return pieces


def _merged(
    data: bytes,
    cells: pa.Array | pa.ChunkedArray,
    targets: np.ndarray,
    slow: np.ndarray,
    start: np.ndarray,
    stop: np.ndarray,
    last: int,
) -> pa.Array:
    """The merged content of the ``slow`` rows (null elsewhere), each by :func:`_merge_cells`."""
    cell_re = re.compile(rf"<c\b({_ATTRS})(/?)>")
    picked = np.flatnonzero(slow)
    merged = [
        _merge_cells(data[a:z].decode("utf-8"), "", cell_re, new, r, last)
        for a, z, new, r in zip(
            start[picked].tolist(), stop[picked].tolist(),
            cells.take(pa.array(picked)).to_pylist(), targets[picked].tolist(), strict=True)
    ]
    where = np.zeros(len(slow), np.int64)
    where[picked] = np.arange(len(picked))
    return pa.array(merged, pa.large_string()).take(pa.array(where, mask=~slow))


def _edit_rows(
    inner: str, p: str, row_cells: dict[int, str], rows: list[int], last: int
) -> list[str]:
    """Pieces of the new cell table: the old text cut at the target rows, new rows between."""
    row_re = re.compile(rf"<{p}row\b({_ATTRS})(/?)>")
    cell_re = re.compile(rf"<{p}c\b({_ATTRS})(/?)>")
    close = f"</{p}row>"
    out: list[str] = []
    pos = 0
    prev = 0
    ti = 0
    n = len(rows)
    for m in row_re.finditer(inner):
        attrs = m.group(1)
        rm = _R_ATTR.search(attrs)
        r = int(rm.group(2)) if rm and rm.group(2) else prev + 1
        if r <= prev:
            raise Occupied("the sheet's rows are not in order")
        if ti < n and rows[ti] < r:
            out.append(inner[pos : m.start()])
            pos = m.start()
            while ti < n and rows[ti] < r:
                out.append(f'<{p}row r="{rows[ti]}">{row_cells[rows[ti]]}</{p}row>')
                ti += 1
        if ti < n and rows[ti] == r:
            out.append(inner[pos : m.start()])
            if m.group(2):
                content, end = "", m.end()
                attrs = _unclose(attrs)
            else:
                stop = inner.index(close, m.end())
                content, end = inner[m.end() : stop], stop + len(close)
            attrs = _SPANS_ATTR.sub("", attrs)
            body = _merge_cells(content, p, cell_re, row_cells[r], r, last)
            out.append(f"<{p}row{attrs}>{body}{close}")
            pos = end
            ti += 1
        prev = r
    out.append(inner[pos:])
    out.extend(f'<{p}row r="{r}">{row_cells[r]}</{p}row>' for r in rows[ti:])
    return out


def _merge_cells(
    content: str, p: str, cell_re: re.Pattern[str], new: str, row: int, last: int
) -> str:
    """Row content with ``new`` placed after the data; empty cells beyond ``last`` give way."""
    # fast path: the row's last cell names its column and lies within the data
    at = content.rfind(f"<{p}c")
    while at >= 0 and content[at + len(p) + 2 : at + len(p) + 3] not in (" ", ">", "/", "\t", "\n"):
        at = content.rfind(f"<{p}c", 0, at)
    if at >= 0 and "extLst" not in content:
        m = cell_re.match(content, at)
        rm = _R_ATTR.search(m.group(1)) if m else None
        if rm and rm.group(1) and column_index(rm.group(1)) <= last:
            return content + new
    close = f"</{p}c>"
    beyond: list[tuple[int, int, int, bool]] = []
    last_end = 0
    prev = 0
    pos = 0
    while (m := cell_re.search(content, pos)) is not None:
        rm = _R_ATTR.search(m.group(1))
        col = column_index(rm.group(1)) if rm and rm.group(1) else prev + 1
        if m.group(2):
            end, filled = m.end(), False
        else:
            stop = content.index(close, m.end())
            end, filled = stop + len(close), "<" in content[m.end() : stop]
        if col > last:
            if filled:
                ref = f"{column_letter(col)}{row}"
                raise Occupied(f"cell {ref} already holds a value where results would go")
            beyond.append((col, m.start(), end, filled))
        last_end = end
        prev = col
        pos = end
    if beyond:
        # only empty (formatting-only) cells lie beyond the data: keep those outside the new
        # columns, in column order around the new cells
        first_new = _first_col(new)
        last_new = _last_col(new)
        before = "".join(content[s:e] for c, s, e, _ in beyond if c < first_new)
        after = "".join(content[s:e] for c, s, e, _ in beyond if c > last_new)
        start, stop = beyond[0][1], beyond[-1][2]
        return content[:start] + before + new + after + content[stop:]
    ext = content.find(f"<{p}extLst")
    at = ext if ext >= 0 and ext >= last_end else last_end
    if last_end == 0 and ext < 0:
        at = len(content)
    return content[:at] + new + content[at:]


_CELL_COL = re.compile(r'<(?:\w+:)?c r="([A-Z]+)\d+"')


def _first_col(cells: str) -> int:
    m = _CELL_COL.search(cells)
    return column_index(m.group(1)) if m else 1 << 20


def _last_col(cells: str) -> int:
    found = _CELL_COL.findall(cells)
    return column_index(found[-1]) if found else 0


def _widen_dimension(head: str, p: str, r1: int, r2: int, c1: int, c2: int) -> str:
    m = re.search(rf"<{p}dimension\b({_ATTRS})/?>", head)
    if m is None:
        return head
    ref = _REF_ATTR.search(m.group(1))
    old = parse_range_ref(ref.group(1)) if ref else None
    if old is not None:
        r1, c1 = min(r1, old[0]), min(c1, old[1])
        r2, c2 = max(r2, old[2]), max(c2, old[3])
    new = f'<{p}dimension ref="{range_text(r1, c1, r2, c2)}"/>'
    return head[: m.start()] + new + head[m.end() :]


_COL_RE_ATTRS = re.compile(r"""([\w:]+)\s*=\s*("[^"]*"|'[^']*')""")


def _set_widths(head: str, p: str, first: int, widths: Sequence[float]) -> str:
    """Set widths of columns ``first…`` by splitting any ``<col>`` span that covers them."""
    if not widths:
        return head
    last = first + len(widths) - 1
    blocks = list(re.finditer(rf"<{p}cols\b{_ATTRS}>(.*?)</{p}cols>", head, re.S))
    if len(blocks) > 1:
        return head  # unusual layout: leave widths alone rather than guess
    spans: list[tuple[int, int, str]] = []
    if blocks:
        for m in re.finditer(rf"<{p}col\b({_ATTRS})/?>", blocks[0].group(1)):
            attrs = dict((k, v[1:-1]) for k, v in _COL_RE_ATTRS.findall(m.group(1)))
            lo, hi = int(attrs.get("min", "0")), int(attrs.get("max", "0"))
            if hi < first or lo > last:
                spans.append((lo, hi, m.group(0)))
                continue
            if lo < first:
                spans.append((lo, first - 1, _col_xml(p, {**attrs, "min": lo, "max": first - 1})))
            if hi > last:
                spans.append((last + 1, hi, _col_xml(p, {**attrs, "min": last + 1, "max": hi})))
    for i, w in enumerate(widths):
        c = first + i
        spans.append((c, c, f'<{p}col min="{c}" max="{c}" width="{w:.2f}" customWidth="1"/>'))
    spans.sort()
    cols = f"<{p}cols>{''.join(s for _, _, s in spans)}</{p}cols>"
    if blocks:
        b = blocks[0]
        return head[: b.start()] + cols + head[b.end() :]
    return head + cols  # head ends just before <sheetData>, where <cols> belongs


def _col_xml(p: str, attrs: dict[str, object]) -> str:
    body = " ".join(f'{k}="{v}"' for k, v in attrs.items())
    return f"<{p}col {body}/>"
