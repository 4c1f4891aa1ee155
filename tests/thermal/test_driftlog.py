"""Reading drift-study CSV logs: units, clock times, comments, and exact error messages."""

from pathlib import Path

import numpy as np
import pytest

from qc.errors import CellError, FileReadError
from qc.io.driftlog import read_drift_log

# An invented study of our own: a small mill, three axes, an indicator on each.
LOG = """# mill 2, indicator on the spindle nose, doors closed
time (min), temperature (°C), X (µm), Y (um), Z (mm)
0, 19.6, 0, 0, 0.000
30, 20.1, 1.5, 0, 0.001

60, 20.7, 3, , 0.002
"""


def _write(tmp_path: Path, text: str, name: str = "log.csv") -> Path:
    p = tmp_path / name
    p.write_text(text, encoding="utf-8")
    return p


def test_reads_units_comments_and_missing(tmp_path: Path) -> None:
    log = read_drift_log(_write(tmp_path, LOG))
    assert log.axes == ("X", "Y", "Z")
    assert log.time_s.tolist() == [0.0, 1800.0, 3600.0]
    assert log.temperature_c.tolist() == [19.6, 20.1, 20.7]
    assert log.readings_um[:, 2].tolist() == pytest.approx([0.0, 1.0, 2.0])  # mm → µm
    assert np.isnan(log.readings_um[2, 1])
    assert log.started is None


def test_clock_times_and_semicolon_decimal_comma(tmp_path: Path) -> None:
    text = "time;temp (°C);A\n2026-03-02 07:30;19,5;1,5\n2026-03-02 08:00;20,0;2,5\n"
    log = read_drift_log(_write(tmp_path, text))
    assert log.time_s.tolist() == [0.0, 1800.0]
    assert log.temperature_c.tolist() == [19.5, 20.0]
    assert log.readings_um[:, 0].tolist() == [1.5, 2.5]
    assert log.started is not None and log.started.hour == 7


def test_bad_cell_names_file_line_and_column(tmp_path: Path) -> None:
    text = LOG.replace("3, , 0.002", "abc, , 0.002")
    with pytest.raises(CellError) as info:
        read_drift_log(_write(tmp_path, text))
    assert str(info.value) == "log.csv › row 6 › X (µm): expected a reading (number), got 'abc'"


def test_bad_clock_time_message(tmp_path: Path) -> None:
    text = "time,T (°C),X\n07:30,20,1\nlater,21,2\n"
    with pytest.raises(CellError) as info:
        read_drift_log(_write(tmp_path, text))
    assert str(info.value) == (
        "log.csv › row 3 › time: expected a date and time such as 2026-03-02 07:30, got 'later' "
        "(or give elapsed time with a unit in the header, e.g. 'time (min)')"
    )


@pytest.mark.parametrize(
    ("text", "message"),
    [
        (
            "time (min),temperature (°C),X (in)\n0,20,1\n",
            "log.csv › row 1 › X (in): expected a length unit: µm (or um), nm or mm, got 'in'",
        ),
        (
            "time (days),temperature (°C),X\n0,20,1\n",
            "log.csv › row 1 › time (days): expected a time unit: s, min or h, got 'days'",
        ),
        (
            "# header follows\ntime (min),temperature (°F),X\n0,68,1\n",
            "log.csv › row 2 › temperature (°F): expected a temperature unit: °C (or degC, C), "
            "got '°F'",
        ),
    ],
)
def test_unknown_units(tmp_path: Path, text: str, message: str) -> None:
    with pytest.raises(CellError) as info:
        read_drift_log(_write(tmp_path, text))
    assert str(info.value) == message


@pytest.mark.parametrize(
    ("text", "message"),
    [
        ("# only a comment\n", "log.csv: expected a header row and at least one row of readings"),
        (
            "temperature (°C),X\n20,1\n",
            "log.csv: no time column found (expected a header such as 'time (min)')",
        ),
        (
            "time (min),X\n0,1\n",
            "log.csv: no temperature column found (expected a header such as 'temperature (°C)')",
        ),
        (
            "time (min),temperature (°C)\n0,20\n",
            "log.csv: no axis columns found (expected a header such as 'X (µm)')",
        ),
    ],
)
def test_file_level_messages(tmp_path: Path, text: str, message: str) -> None:
    with pytest.raises(FileReadError) as info:
        read_drift_log(_write(tmp_path, text))
    assert str(info.value) == message


def test_missing_file_message(tmp_path: Path) -> None:
    with pytest.raises(FileReadError) as info:
        read_drift_log(tmp_path / "nowhere.csv")
    assert str(info.value) == "nowhere.csv: file not found"
