"""Reading shop inspection sheets into validated, typed measurement records.

The public entry points are :func:`read_inspection` (and :func:`check`, the same read used
for validation only) and :func:`propose_layout`; see docs/columns.md and docs/layouts.md.
Writers and write-back modules in this package belong to the output side.
"""

from qc.io.layout import LayoutProposal, load_layout, parse_layout, propose_layout
from qc.io.reader import (
    ColumnRef,
    InspectionTable,
    check,
    read_grid,
    read_inspection,
    record_of,
)
from qc.io.register import Register, read_register

__all__ = [
    "ColumnRef",
    "InspectionTable",
    "LayoutProposal",
    "Register",
    "check",
    "load_layout",
    "parse_layout",
    "propose_layout",
    "read_grid",
    "read_inspection",
    "read_register",
    "record_of",
]
