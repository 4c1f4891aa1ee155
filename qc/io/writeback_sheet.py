"""Result cells spliced into an existing worksheet part, leaving every other byte as it was.

The worksheet XML (ECMA-376 Part 1, 18.3.1.99) is edited as text: new ``<c>`` elements go into
the existing ``<row>`` elements after the data, missing rows are created in order, the
``<dimension>`` is widened and ``<col>`` widths are set for the new columns. Nothing else in the
part changes, so data validation, conditional formats, drawings, comments' legacy drawings and
extensions stay exactly as they were. No tree of the sheet is built: one streaming well-formedness
pass, then regular expressions over the rows only, which keeps a 100 000-row sheet in seconds.

When writing would overwrite or hide something, :class:`Occupied` is raised with the reason and
the caller writes a separate results sheet instead.
"""

from __future__ import annotations

import bisect
import re
from collections.abc import Callable, Iterator, Sequence

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
    row_cells: dict[int, str],
    last_column: int,
    first_col: int,
    last_col: int,
    widths: Sequence[float],
) -> Callable[[], Iterator[bytes]]:
    """The worksheet ``xml`` with ``row_cells`` (row number → cell XML, in column order) added.

    ``last_column`` is the last column of the original data; cells with a value beyond it on a
    target row, or merged cells / an autofilter over the target area, raise :class:`Occupied`.
    All checks and edits happen now; the result is a generator of the new part's bytes, encoded
    as the package is written, so the sheet never exists as one string and one byte string.
    """
    check_xml_stream(xml, part)
    text = decode_xml(xml)
    root = re.search(r"<(?:(\w+):)?worksheet\b", text)
    if root is None:
        raise Occupied("the sheet is not an ordinary worksheet")
    p = (root.group(1) + ":") if root.group(1) else ""
    rows = sorted(row_cells)
    if p:
        row_cells = {r: _prefixed(c, p) for r, c in row_cells.items()}

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

    new_inner = _edit_rows(inner, p, row_cells, rows, last_column)
    head = _widen_dimension(text[: sd.start()], p, rows[0], rows[-1], first_col, last_col)
    head = _set_widths(head, p, first_col, widths)
    if sd.group(2):
        pieces = [head, open_tag, *new_inner, f"</{p}sheetData>", text[sd.end() :]]
    else:
        pieces = [head, open_tag, *new_inner, tail]
    first = encode_xml(pieces[0])
    rest = pieces[1:]
    del text, inner, tail, new_inner, pieces  # only the pieces of the new sheet stay

    def chunks() -> Iterator[bytes]:
        yield first
        for at in range(0, len(rest), _PIECES_PER_CHUNK):
            yield "".join(rest[at : at + _PIECES_PER_CHUNK]).encode("utf-8")

    return chunks


def _unclose(attrs: str) -> str:
    """Attributes of a self-closing tag without the closing slash."""
    return re.sub(r"/\s*$", "", attrs)


def _prefixed(cells: str, p: str) -> str:
    return re.sub(r"<(/?)(c|v|is|t)\b", rf"<\1{p}\2", cells)


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
