"""The public names of qc.io exist and are what the package exports (httpx-style check)."""

import inspect

import qc.io


def test_all_names_exist() -> None:
    for name in qc.io.__all__:
        assert hasattr(qc.io, name), name


def test_read_inspection_signature() -> None:
    params = inspect.signature(qc.io.read_inspection).parameters
    assert list(params) == ["path", "layout", "sheet", "register", "limits"]
    assert all(params[p].kind is inspect.Parameter.KEYWORD_ONLY
               for p in ("layout", "sheet", "register"))


def test_table_fields() -> None:
    fields = set(qc.io.InspectionTable.__dataclass_fields__)
    assert {"frame", "columns", "errors", "warnings", "layout", "header_row", "data_rows",
            "sheet", "last_column"} <= fields
