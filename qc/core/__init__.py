"""The pure computational core of `qc`: numpy arrays in, numpy arrays out.

Nothing here opens a file or imports pandas, openpyxl, pydantic, pint or typer
(``tests/test_layering.py`` checks this). Lengths are in millimetres,
temperatures in degrees Celsius, expansion coefficients in 1/K.
"""
