"""Throughput of the pure core: budget, decisions and conformance probability for 10⁶ rows.

A script, not a test: ``.venv/bin/python bench/bench_core.py [n]``. Inputs are an invented,
seeded mix of direct and comparison readings, shared-room and unscaled rows.
"""

from __future__ import annotations

import sys
import time

import numpy as np

from qc.core.budget import evaluate
from qc.core.decision import ISO14253, decide
from qc.core.model import MeasurementArrays


def batch(n: int, seed: int = 1) -> tuple[MeasurementArrays, np.ndarray, np.ndarray]:
    """n invented measurements and their specification limits (mm)."""
    r = np.random.default_rng(seed)
    nominal = r.uniform(5.0, 500.0, n)
    comparison = r.random(n) < 0.2
    reading = np.where(comparison, r.normal(0, 0.01, n), nominal + r.normal(0, 0.01, n))
    m = MeasurementArrays.from_columns(
        reading=reading,
        comparison=comparison,
        master_size=nominal,
        master_U=0.001,
        repeat_s=r.uniform(0, 0.003, n),
        repeat_n=r.integers(1, 6, n),
        repeat_nu=20.0,
        resolution=0.001,
        mpe_a=0.002,
        mpe_k=25000.0,
        scaled=r.random(n) > 0.05,
        shared_room=r.random(n) < 0.3,
        t_part=r.uniform(17, 27, n),
        t_gauge=r.uniform(18, 24, n),
        u_t_part=0.3,
        u_grad_part=0.5,
        u_t_gauge=0.3,
        alpha_part=r.choice([11.5e-6, 17.3e-6, 23.6e-6, 110e-6], n),
        u_alpha_part=1e-6,
        alpha_gauge=11.5e-6,
        u_alpha_gauge=0.58e-6,
        u_dtheta=0.2,
        extras=(("fixture", 0.0005, np.inf),),
    )
    return m, nominal - 0.02, nominal + 0.02


def run_once(m: MeasurementArrays, lsl: np.ndarray, usl: np.ndarray) -> tuple[float, float]:
    """Seconds for the budget and for the decisions of one pass over the batch."""
    t0 = time.perf_counter()
    b = evaluate(m)
    t1 = time.perf_counter()
    decide(b.size_at_20, b.U, b.u_c, lsl, usl, ISO14253(), uncorrected=b.uncorrected)
    t2 = time.perf_counter()
    return t1 - t0, t2 - t1


def main(n: int = 1_000_000, repeats: int = 3) -> None:
    m, lsl, usl = batch(n)
    print(f"measurements: {n:,} (budget with second-order terms, ISO 14253-1 decisions, p_c)")
    # The first pass also pays for the operating system handing out fresh memory pages;
    # later passes reuse them, which is the steady state of a long-running process.
    for i in range(repeats):
        tb, td = run_once(m, lsl, usl)
        total = tb + td
        label = "first pass" if i == 0 else f"pass {i + 1}"
        print(f"{label:>11}: budget {tb:.3f} s + decisions {td:.3f} s = {total:.3f} s "
              f"({n / total / 1e6:.2f} M measurements/s)")
    b = evaluate(m)
    d = decide(b.size_at_20, b.U, b.u_c, lsl, usl, ISO14253(), uncorrected=b.uncorrected)
    counts = np.bincount(d.verdict, minlength=4).tolist()
    print(f"verdicts (conforms, nonconforming, borderline, not evaluated): {counts}")


if __name__ == "__main__":
    main(int(sys.argv[1]) if len(sys.argv) > 1 else 1_000_000)
