"""Cell formats appended to a workbook's styles part, and the verdict marking.

The styles part is edited by splicing new ``<numFmt>``, ``<font>``, ``<fill>``, ``<border>`` and
``<xf>`` elements at the end of their lists (ECMA-376 Part 1, 18.8), so every existing index, and
every cell that uses it, keeps its meaning. Counts are taken from the parsed part, not from the
``count`` attributes, which writers do not always keep right.

Verdict marking reads in grayscale: each verdict differs in fill lightness *and* in font weight or
slant *and* in border line, and its word is written in the cell, so colour is never the only cue.
"""

from __future__ import annotations

import re
from dataclasses import dataclass

from qc.io.xlsx_package import NS_MAIN, escape_attr, parse_xml

#: Number formats built into every spreadsheet application (ECMA-376 Part 1, 18.8.30).
BUILTIN_FORMATS = {
    "General": 0,
    "0": 1,
    "0.00": 2,
    "#,##0": 3,
    "#,##0.00": 4,
    "0%": 9,
    "0.00%": 10,
    "0.00E+00": 11,
    "@": 49,
}
_FIRST_CUSTOM_FORMAT = 164
_SECTIONS = (
    "numFmts",
    "fonts",
    "fills",
    "borders",
    "cellStyleXfs",
    "cellXfs",
    "cellStyles",
    "dxfs",
    "tableStyles",
    "colors",
    "extLst",
)
_CHILD = {
    "numFmts": "numFmt",
    "fonts": "font",
    "fills": "fill",
    "borders": "border",
    "cellXfs": "xf",
}
_ATTRS = r"""(?:[^>"']|"[^"]*"|'[^']*')*?"""

MINIMAL_STYLES = (
    '<?xml version="1.0" encoding="UTF-8" standalone="yes"?>\n'
    f'<styleSheet xmlns="{NS_MAIN}">'
    '<fonts count="1"><font><sz val="11"/><name val="Calibri"/><family val="2"/></font></fonts>'
    '<fills count="2"><fill><patternFill patternType="none"/></fill>'
    '<fill><patternFill patternType="gray125"/></fill></fills>'
    '<borders count="1"><border><left/><right/><top/><bottom/><diagonal/></border></borders>'
    '<cellStyleXfs count="1"><xf numFmtId="0" fontId="0" fillId="0" borderId="0"/></cellStyleXfs>'
    '<cellXfs count="1"><xf numFmtId="0" fontId="0" fillId="0" borderId="0" xfId="0"/></cellXfs>'
    '<cellStyles count="1"><cellStyle name="Normal" xfId="0" builtinId="0"/></cellStyles>'
    "</styleSheet>"
)


@dataclass(frozen=True)
class Mark:
    """How one kind of cell is drawn: fill pattern and colours, font, border line."""

    pattern: str = "none"
    fg: str | None = None
    bg: str | None = None
    bold: bool = False
    italic: bool = False
    color: str | None = None
    border: str | None = None
    bottom_only: bool = False
    size_step: float = 0.0


#: Verdict word (normalised: lower case, ``_``/``-`` read as spaces) → marking.
#: Grayscale lightness (ITU-R BT.601 luma): conforms 0.91, borderline 0.74, not evaluated a grey
#: hatch on white, nonconforming 0.22 with white bold text.
VERDICT_MARKS: dict[str, Mark] = {
    "conforms": Mark("solid", "FFE2EFDA", border="thin"),
    "borderline": Mark("solid", "FFFFC000", bold=True, italic=True, border="dashed"),
    "nonconforming": Mark("solid", "FF7B1C1C", bold=True, color="FFFFFFFF", border="medium"),
    "not evaluated": Mark(
        "lightGray", "FF808080", "FFFFFFFF", italic=True, color="FF404040", border="dotted"
    ),
}
#: Other spellings read as the same verdict.
VERDICT_ALIASES = {"non conforming": "nonconforming", "conforming": "conforms"}
HEADER_MARK = Mark("solid", "FFEDEDED", bold=True, border="medium", bottom_only=True)
TITLE_MARK = Mark(bold=True, size_step=2.0)


class StyleBook:
    """The styles part of one workbook, with formats appended on request."""

    def __init__(self, xml: bytes, part: str) -> None:
        self.part = part
        self._text = xml.decode("utf-8-sig")
        root = parse_xml(xml, part)
        m = re.search(r"<(?:(\w+):)?styleSheet\b", self._text)
        self._prefix = (m.group(1) + ":") if m and m.group(1) else ""
        counts: dict[str, int] = {}
        fmts: dict[str, int] = {}
        base_font: dict[str, str] = {}
        for section in root:
            name = section.tag.rsplit("}", 1)[-1]
            counts[name] = len(section)
            if name == "numFmts":
                for el in section:
                    fmts[el.get("formatCode", "")] = int(el.get("numFmtId", "0"))
            if name == "fonts" and len(section):
                for el in section[0]:
                    tag = el.tag.rsplit("}", 1)[-1]
                    if tag in ("sz", "name", "family", "scheme", "charset") and el.get("val"):
                        base_font[tag] = el.get("val", "")
        self._counts = counts
        self._formats = fmts
        self._next_format = max([_FIRST_CUSTOM_FORMAT - 1, *fmts.values()]) + 1
        self._base_font = base_font
        self._new: dict[str, list[str]] = {k: [] for k in _CHILD}
        self._memo: dict[tuple[object, ...], int] = {}

    def _append(self, section: str, xml: str) -> int:
        key = (section, xml)
        if key in self._memo:
            return self._memo[key]
        index = self._counts.get(section, 0) + len(self._new[section])
        self._new[section].append(xml)
        self._memo[key] = index
        return index

    def number_format(self, code: str | None) -> int:
        """Id of the number format ``code`` (built-in, existing, or appended)."""
        if not code or code == "General":
            return 0
        if code in BUILTIN_FORMATS:
            return BUILTIN_FORMATS[code]
        if code not in self._formats:
            self._formats[code] = self._next_format
            self._next_format += 1
            p = self._prefix
            self._new["numFmts"].append(
                f'<{p}numFmt numFmtId="{self._formats[code]}" formatCode="{escape_attr(code)}"/>'
            )
        return self._formats[code]

    def _font(self, mark: Mark) -> int:
        p = self._prefix
        size = float(self._base_font.get("sz", "11")) + mark.size_step
        parts = ["<b/>" if mark.bold else "", "<i/>" if mark.italic else ""]
        parts.append(f'<sz val="{size:g}"/>')
        if mark.color:
            parts.append(f'<color rgb="{mark.color}"/>')
        parts.append(f'<name val="{escape_attr(self._base_font.get("name", "Calibri"))}"/>')
        for tag in ("family", "charset", "scheme"):
            if tag in self._base_font:
                parts.append(f'<{tag} val="{escape_attr(self._base_font[tag])}"/>')
        body = "".join(s.replace("<", f"<{p}") for s in parts if s)
        return self._append("fonts", f"<{p}font>{body}</{p}font>")

    def _fill(self, mark: Mark) -> int:
        if mark.pattern == "none":
            return 0
        p = self._prefix
        inner = ""
        if mark.fg:
            inner += f'<{p}fgColor rgb="{mark.fg}"/>'
        if mark.bg:
            inner += f'<{p}bgColor rgb="{mark.bg}"/>'
        pattern = f'<{p}patternFill patternType="{mark.pattern}">{inner}</{p}patternFill>'
        xml = f"<{p}fill>{pattern}</{p}fill>"
        return self._append("fills", xml)

    def _border(self, mark: Mark) -> int:
        if not mark.border:
            return 0
        p = self._prefix
        line = f' style="{mark.border}"><{p}color rgb="FF000000"/>'
        sides = []
        for side in ("left", "right", "top", "bottom"):
            if mark.bottom_only and side != "bottom":
                sides.append(f"<{p}{side}/>")
            else:
                sides.append(f"<{p}{side}{line}</{p}{side}>")
        sides.append(f"<{p}diagonal/>")
        return self._append("borders", f"<{p}border>{''.join(sides)}</{p}border>")

    def style(self, number_format: str | None = None, mark: Mark | None = None) -> int:
        """Index of a cell format (``s`` attribute) with this number format and marking."""
        key = ("xf", number_format, mark)
        if key in self._memo:
            return self._memo[key]
        fmt = self.number_format(number_format)
        font = self._font(mark) if mark else 0
        fill = self._fill(mark) if mark else 0
        border = self._border(mark) if mark else 0
        if not (fmt or font or fill or border):
            self._memo[key] = 0
            return 0
        p = self._prefix
        flags = "".join(
            f' {name}="1"'
            for name, used in (
                ("applyNumberFormat", fmt),
                ("applyFont", font),
                ("applyFill", fill),
                ("applyBorder", border),
            )
            if used
        )
        xml = (
            f'<{p}xf numFmtId="{fmt}" fontId="{font}" fillId="{fill}" borderId="{border}" '
            f'xfId="0"{flags}/>'
        )
        index = self._append("cellXfs", xml)
        self._memo[key] = index
        return index

    def verdict_styles(self) -> dict[str, int]:
        """Normalised verdict word → style index, aliases included."""
        styles = {word: self.style(None, mark) for word, mark in VERDICT_MARKS.items()}
        styles.update({alias: styles[word] for alias, word in VERDICT_ALIASES.items()})
        return styles

    @property
    def changed(self) -> bool:
        return any(self._new.values())

    def render(self) -> bytes:
        """The styles part with the appended elements and corrected counts."""
        text = self._text
        for section, child in _CHILD.items():
            added = self._new[section]
            if not added:
                continue
            text = self._splice(text, section, "".join(added), child)
        return text.encode("utf-8")

    def _splice(self, text: str, section: str, added: str, child: str) -> str:
        p = self._prefix
        count = self._counts.get(section, 0) + len(self._new[section])
        start = re.search(rf"<{p}{section}\b({_ATTRS})(/?)>", text)
        if start is None:
            new = f'<{p}{section} count="{count}">{added}</{p}{section}>'
            later = _SECTIONS[_SECTIONS.index(section) + 1 :]
            pos = None
            for name in later:
                m = re.search(rf"<{p}{name}\b", text)
                if m:
                    pos = m.start()
                    break
            if pos is None:
                pos = text.rindex(f"</{p}styleSheet>")
            return text[:pos] + new + text[pos:]
        attrs = re.sub(r"\s*/\s*$", "", start.group(1))
        attrs = re.sub(r"""\s+count\s*=\s*("[^"]*"|'[^']*')""", "", attrs)
        open_tag = f'<{p}{section}{attrs} count="{count}">'
        if start.group(2):  # self-closing: no children yet
            return (
                text[: start.start()] + open_tag + added + f"</{p}{section}>" + text[start.end() :]
            )
        end = text.index(f"</{p}{section}>", start.end())
        return text[: start.start()] + open_tag + text[start.end() : end] + added + text[end:]
