"""Inputs of JCGM 100:2008 (GUM) Annex H.1, end-gauge calibration, as qc measurement arrays.

Source: JCGM 100:2008 Annex H.1 (H.1.2–H.1.6, Table H.1), values as collected in the shared
reference notes (section 1, from memory, headline figures also in secondary reproductions).
"""

import numpy as np

from qc.core.distributions import ARCSINE, NORMAL, RECTANGULAR
from qc.core.model import MeasurementArrays


def h1_inputs() -> MeasurementArrays:
    """Comparison of a 50 mm test block against a calibrated standard in one room."""
    return MeasurementArrays.from_columns(
        # d: mean of 5 indicated differences; pooled s = 13 nm from 25 observations (ν 24)
        reading=215e-6,
        repeat_s=13e-6,
        repeat_n=5,
        repeat_nu=24,
        comparison=True,
        # l_S: calibration certificate U = 0.075 µm with k = 3, ν_eff = 18
        master_size=50.000623,
        master_U=0.075e-3,
        master_k=3.0,
        master_nu=18,
        shared_room=True,
        # θ: mean −0.1 °C with u 0.2 °C, cyclic variation amplitude 0.5 °C (arcsine)
        t_part=20.0 - 0.1,
        u_t_part=0.2,
        dist_t_part=NORMAL,
        u_grad_part=0.5 / np.sqrt(2.0),
        dist_grad_part=ARCSINE,
        # α_S = 11.5e-6/°C, rectangular ±2e-6/°C; δα rectangular ±1e-6/°C reliable to 10 % (ν 50)
        alpha_part=11.5e-6,
        alpha_gauge=11.5e-6,
        u_alpha_gauge=2e-6 / np.sqrt(3.0),
        dist_alpha_gauge=RECTANGULAR,
        u_dalpha=1e-6 / np.sqrt(3.0),
        nu_dalpha=50,
        # δθ rectangular ±0.05 °C, reliable to 50 % (ν 2)
        dtheta=0.0,
        u_dtheta=0.05 / np.sqrt(3.0),
        nu_dtheta=2,
        extras=(
            ("comparator random effects", 3.9e-6, 5, NORMAL, "comparator random effects, ν 5"),
            ("comparator systematic effects", 6.7e-6, 8, NORMAL, "comparator systematic, ν 8"),
        ),
    )
