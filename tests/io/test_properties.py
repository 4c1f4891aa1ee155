"""Properties of the whole read: every non-blank data row gives one record, nothing escapes."""

import csv
import io
import tempfile
from pathlib import Path

from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from qc.errors import QcError
from qc.io import read_inspection

HEADER = ["Part", "Nominal", "Tolerance", "Reading 1", "Reading 2", "Temp (°F)", "Instrument",
          "Date", "CTE"]
cell = st.one_of(
    st.just(""), st.sampled_from(["#N/A", "12,5", "1,250", "12.5 mm", "0.5 in", "−0,2", "68F",
                                  "twenty", "±0.1", "H7", "2026-01-05", "13/1/2026", "11.5 ppm/K",
                                  "12.0; 12.1", "n/a"]),
    st.floats(-1e4, 1e4, allow_nan=False).map(lambda x: f"{x:.4g}"),
    st.text(alphabet=st.characters(blacklist_categories=("Cs", "Cc")), max_size=8),
)


@settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.lists(st.lists(cell, min_size=len(HEADER), max_size=len(HEADER)), min_size=1,
                max_size=12))
def test_rows_in_equal_rows_out(rows: list[list[str]]) -> None:
    buf = io.StringIO()
    w = csv.writer(buf, delimiter=";")
    w.writerow(HEADER)
    w.writerows(rows)
    with tempfile.TemporaryDirectory() as d:
        p = Path(d) / "prop.csv"
        p.write_text(buf.getvalue(), encoding="utf-8")
        try:
            t = read_inspection(p)
        except QcError:
            return  # a whole-file problem is reported as one error of the family
        expected = [i + 2 for i, r in enumerate(rows) if any(c.strip() for c in r)]
        assert t.frame["source_row"].tolist() == expected
        assert len(t.frame) == len(expected)
        for e in t.errors:  # every error points at a frame row and its spreadsheet row
            assert t.frame.loc[e.index, "source_row"] == e.row
            assert e.message.startswith(f"prop.csv › row {e.row}")
