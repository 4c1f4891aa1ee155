"""The bundled tables load, carry a source on every row and obey the standard's own relations."""

from __future__ import annotations

import numpy as np
import pytest

from qc.tolerances import tables


@pytest.mark.parametrize("load", [tables.grades, tables.shafts, tables.holes])
def test_every_row_has_a_source(load) -> None:
    t = load()
    assert len(t.sources) == len(t.over_mm)
    assert all(s.startswith("ISO 286-1:2010") for s in t.sources)


def test_delta_is_the_difference_of_neighbouring_grades() -> None:
    # ISO 286-1:2010, 5.3.2: Δ = ITn − IT(n−1); spot check 400–500 mm, IT7: 63 − 40 = 23 µm
    assert tables.holes().value("delta7", 450) == 23
    g = tables.grades()
    assert g.value("IT7", 450) - g.value("IT6", 450) == 23


def test_grades_cover_up_to_3150_mm() -> None:
    g = tables.grades()
    assert g.upto_mm[-1] == 3150 and g.step(3150) == len(g.upto_mm) - 1 and g.step(3150.5) is None


def test_loaded_once() -> None:
    assert tables.grades() is tables.grades()
    assert np.isnan(tables.shafts().value("t", 20))  # t starts above 24 mm (ISO 286-1 Table 3)


def test_damaged_file_is_refused(monkeypatch: pytest.MonkeyPatch, tmp_path) -> None:
    from qc.errors import DataFileError

    good = tables.resources.files("qc").joinpath("data", "iso286_grades.csv").read_text("utf-8")
    (tmp_path / "data").mkdir()
    bad = tmp_path / "data" / "iso286_grades.csv"
    bad.write_text(good.replace(",1400,", ",,", 1), "utf-8")
    monkeypatch.setattr(tables.resources, "files", lambda _pkg: tmp_path)
    t = tables._read("iso286_grades.csv")
    with pytest.raises(DataFileError) as info:
        tables._check_grades(t)
    assert str(info.value) == "iso286_grades.csv: IT1 to IT18 must be given for every step"
    bad.write_text(good.replace("0,3,", "0,4,", 1), "utf-8")
    with pytest.raises(DataFileError) as info:
        tables._read("iso286_grades.csv")
    assert str(info.value) == (
        "iso286_grades.csv: size steps must start at 0 and follow on without gaps"
    )
