"""The core stays pure: importing it brings in no I/O, schema or command-line library."""

import subprocess
import sys

HEAVY = ("pandas", "openpyxl", "pydantic", "typer", "rich", "pint", "python_calamine", "matplotlib")


def test_core_imports_no_io_or_schema_library() -> None:
    code = (
        "import sys, qc.core, pkgutil, importlib\n"
        "for m in pkgutil.walk_packages(qc.core.__path__, 'qc.core.'):\n"
        "    importlib.import_module(m.name)\n"
        f"print(','.join(sorted(m for m in {HEAVY!r} if m in sys.modules)))\n"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == ""
