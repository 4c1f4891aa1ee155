"""qc: inspection sheets of machined parts, corrected to 20 °C, with uncertainty and verdicts."""

__version__ = "0.1.0"
