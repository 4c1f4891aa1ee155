"""The pure computational core of `qc`: numpy arrays in, numpy arrays out.

Nothing here opens a file or imports pandas, openpyxl, pydantic, pint or typer
(``tests/test_layering.py`` checks this). Lengths are in millimetres,
temperatures in degrees Celsius, expansion coefficients in 1/K.

Modules of the measurement core (see docs/method.md for every equation and reference):
``model`` (MeasurementArrays, the measurement model), ``distributions`` (divisors, degrees
of freedom, coverage factors), ``sensitivity`` (analytic coefficients), ``budget`` (GUM
budget of a whole batch), ``montecarlo`` (JCGM 101 for one measurement), ``decision``
(decision rules, verdict codes, JCGM 106 figures), ``labels`` (plain-language sources).
"""
