"""The bundled heat-transfer coefficients by resting condition and surface finish."""

from __future__ import annotations

import tomllib
from functools import cache
from importlib import resources

from qc.core import soak as soak_core
from qc.errors import DataFileError

__all__ = ["load_heat_transfer"]


@cache
def load_heat_transfer() -> tuple[
    dict[str, soak_core.RestingCondition], dict[str, soak_core.SurfaceFinish]
]:
    """Resting conditions and surface finishes of qc/data/heat_transfer.toml, loaded once."""
    name = "heat_transfer.toml"
    try:
        text = resources.files("qc").joinpath("data", name).read_text(encoding="utf-8")
        table = tomllib.loads(text)
    except (OSError, tomllib.TOMLDecodeError) as exc:
        raise DataFileError(f"{name}: the bundled table cannot be read ({exc})") from exc
    return soak_core.parse_heat_transfer(table, name)
