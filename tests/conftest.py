"""Test-wide settings: property tests are reproducible (fixed seed) and bounded."""

from hypothesis import HealthCheck, settings

# derandomize: the same examples on every run and machine (CI included); no example database,
# so a run never depends on what an earlier run found. Tests set their own max_examples.
settings.register_profile(
    "qc", derandomize=True, database=None, deadline=None,
    suppress_health_check=[HealthCheck.too_slow],
)
settings.load_profile("qc")
