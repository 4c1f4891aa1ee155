"""Hypothesis strategies shared by the core tests: plausible shop-floor measurement inputs."""

from hypothesis import strategies as st

lengths = st.floats(min_value=0.5, max_value=2000.0, allow_nan=False)
temperatures = st.floats(min_value=10.0, max_value=35.0, allow_nan=False)
ctes = st.floats(min_value=0.5e-6, max_value=200e-6, allow_nan=False)
rel = st.floats(min_value=0.0, max_value=0.2, allow_nan=False)
small_u = st.floats(min_value=0.0, max_value=0.05, allow_nan=False)
t_u = st.floats(min_value=0.0, max_value=2.0, allow_nan=False)


@st.composite
def measurement_columns(draw: st.DrawFn) -> dict[str, float | bool]:
    """Keyword columns for MeasurementArrays.from_columns describing one measurement."""
    shared = draw(st.booleans())
    cols: dict[str, float | bool] = {
        "reading": draw(lengths),
        "repeat_s": draw(small_u),
        "repeat_n": draw(st.integers(min_value=2, max_value=10)),
        "resolution": draw(st.sampled_from([0.0, 0.001, 0.01])),
        "mpe_a": draw(small_u),
        "t_part": draw(temperatures),
        "t_gauge": draw(temperatures),
        "u_t_part": draw(t_u),
        "u_grad_part": draw(t_u),
        "u_t_gauge": draw(t_u),
        "alpha_part": draw(ctes),
        "alpha_gauge": draw(ctes),
        "shared_room": shared,
        "u_dtheta": draw(t_u),
    }
    cols["u_alpha_part"] = cols["alpha_part"] * draw(rel)
    cols["u_alpha_gauge"] = cols["alpha_gauge"] * draw(rel)
    return cols
