"""The public names of qc.tolerances are exactly those listed in __all__."""

from __future__ import annotations

import dataclasses

import qc.tolerances as tol


def test_public_names() -> None:
    public = {n for n in dir(tol) if not n.startswith("_")} - {"annotations", "column", "model",
                                                                "notation", "tables"}
    assert public == set(tol.__all__)


def test_tolerance_is_a_frozen_dataclass_with_the_agreed_fields() -> None:
    fields = [f.name for f in dataclasses.fields(tol.Tolerance)]
    assert fields == ["nominal", "lower_limit", "upper_limit", "lower_deviation",
                      "upper_deviation", "kind", "code", "description"]
    assert tol.Tolerance.__dataclass_params__.frozen
