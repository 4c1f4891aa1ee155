"""Domain data of `qc`: materials and instrument types, loaded once and validated."""
