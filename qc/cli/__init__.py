"""The `qc` command line: a thin layer that parses options, calls the library and renders."""

from __future__ import annotations

import typer

app = typer.Typer(
    name="qc",
    help="Inspection sheets of machined parts: sizes at 20 °C, uncertainty budgets, verdicts.",
    no_args_is_help=True,
    pretty_exceptions_show_locals=False,
    add_completion=False,
)


def main() -> None:
    """Entry point of the `qc` command."""
    app()
