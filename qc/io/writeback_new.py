"""The parts of an empty workbook, for inputs that were not workbooks (CSV).

A new workbook is written by the same code as a write-back: its sheets are added to this
package as new worksheet parts (see :mod:`qc.io.writeback_sheets`), so text is always an inline
string and never a formula, numbers keep every digit, the verdict marking is the same, and long
tables are built chunk by chunk and split at the sheet's row limit. The parts follow ECMA-376:
Part 2 (content types, relationships) and Part 1, 18.2.27 (``workbook``, whose ``sheets`` list
the sheets are appended to); ``docProps/app.xml`` lists the sheet titles (Part 1, 22.2).
"""

from __future__ import annotations

from qc.io.xlsx_package import (
    CT_MAIN_XLSX,
    NS_CT,
    NS_DOC_REL,
    NS_MAIN,
    NS_PKG_REL,
    REL_EXTENDED_PROPERTIES,
    REL_OFFICE_DOCUMENT,
    Package,
)

_DECL = '<?xml version="1.0" encoding="UTF-8" standalone="yes"?>\n'
_CT_APP = "application/vnd.openxmlformats-officedocument.extended-properties+xml"
_NS_APP = "http://schemas.openxmlformats.org/officeDocument/2006/extended-properties"
_NS_VT = "http://schemas.openxmlformats.org/officeDocument/2006/docPropsVTypes"

_CONTENT_TYPES = (
    f'{_DECL}<Types xmlns="{NS_CT}">'
    '<Default Extension="rels" ContentType="application/vnd.openxmlformats-package.relationships'
    '+xml"/><Default Extension="xml" ContentType="application/xml"/>'
    f'<Override PartName="/xl/workbook.xml" ContentType="{CT_MAIN_XLSX}"/>'
    f'<Override PartName="/docProps/app.xml" ContentType="{_CT_APP}"/></Types>'
)
_PACKAGE_RELS = (
    f'{_DECL}<Relationships xmlns="{NS_PKG_REL}">'
    f'<Relationship Id="rId1" Type="{REL_OFFICE_DOCUMENT}" Target="xl/workbook.xml"/>'
    f'<Relationship Id="rId2" Type="{REL_EXTENDED_PROPERTIES}" Target="docProps/app.xml"/>'
    "</Relationships>"
)
_WORKBOOK = (
    f'{_DECL}<workbook xmlns="{NS_MAIN}" xmlns:r="{NS_DOC_REL}">'
    '<workbookPr/><bookViews><workbookView activeTab="0"/></bookViews>'
    "<sheets></sheets></workbook>"
)
_WORKBOOK_RELS = f'{_DECL}<Relationships xmlns="{NS_PKG_REL}"></Relationships>'
_APP = (
    f'{_DECL}<Properties xmlns="{_NS_APP}" xmlns:vt="{_NS_VT}"><Application>qc</Application>'
    '<HeadingPairs><vt:vector size="2" baseType="variant">'
    "<vt:variant><vt:lpstr>Worksheets</vt:lpstr></vt:variant>"
    "<vt:variant><vt:i4>0</vt:i4></vt:variant></vt:vector></HeadingPairs>"
    '<TitlesOfParts><vt:vector size="0" baseType="lpstr"></vt:vector></TitlesOfParts>'
    "</Properties>"
)


def empty_workbook() -> Package:
    """A package of a workbook without sheets (and without styles: the writer adds them)."""
    return Package.new(
        {
            "[Content_Types].xml": _CONTENT_TYPES.encode(),
            "_rels/.rels": _PACKAGE_RELS.encode(),
            "xl/workbook.xml": _WORKBOOK.encode(),
            "xl/_rels/workbook.xml.rels": _WORKBOOK_RELS.encode(),
            "docProps/app.xml": _APP.encode(),
        }
    )
