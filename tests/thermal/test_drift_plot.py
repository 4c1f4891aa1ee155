"""The drift plot is written as a real image file; bad destinations give a clear message."""

from pathlib import Path

import numpy as np
import pytest

from qc.errors import OutputError
from qc.report.drift_plot import plot_drift

T = np.arange(5) * 1800.0
TEMP = np.array([19.5, 20.0, 20.6, 21.2, 21.9])
Y = np.column_stack([np.arange(5) * 2.0, np.zeros(5)])


def test_png_written(tmp_path: Path) -> None:
    out = plot_drift(tmp_path / "drift.png", T, TEMP, Y, ("X", "Y"), [4.6, 0.0])
    assert out.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"  # PNG signature (ISO/IEC 15948)


def test_svg_has_labels_with_units(tmp_path: Path) -> None:
    out = plot_drift(tmp_path / "drift.svg", T, TEMP, Y, ("X", "Y"))
    text = out.read_text(encoding="utf-8")
    assert "<svg" in text
    assert "reading (µm)" in text and "temperature (°C)" in text and "time from start (h)" in text


def test_unknown_suffix_message(tmp_path: Path) -> None:
    with pytest.raises(OutputError) as info:
        plot_drift(tmp_path / "drift.xyz", T, TEMP, Y, ("X", "Y"))
    assert str(info.value) == "drift.xyz: cannot write a plot of this kind; use .png, .svg or .pdf"


def test_missing_folder_message(tmp_path: Path) -> None:
    with pytest.raises(OutputError) as info:
        plot_drift(tmp_path / "no" / "drift.png", T, TEMP, Y, ("X", "Y"))
    assert str(info.value).startswith("drift.png: the plot cannot be written there")
