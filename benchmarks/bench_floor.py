"""Least work for 10^6 (salinity, temperature, recovery) points in one call, against a per-point loop.

Run by hand: ``python benchmarks/bench_floor.py [N]``. Prints points per second for the vectorised call and for a
loop over the same function one point at a time (timed on a subset and scaled), and their ratio.
"""

import sys
import time

import numpy as np

from compare.thermo.activity import get_model
from compare.thermo.floor import least_work


def main(n: int = 1_000_000, n_loop: int = 2_000) -> None:
    rng = np.random.default_rng(1)
    S = rng.uniform(0.002, 0.07, n)
    T = rng.uniform(278.15, 323.15, n)
    r = rng.uniform(0.05, 0.7, n)
    model = get_model("teos10", "seawater")
    least_work(model, S[:10], T[:10], r[:10])          # build tables, import libraries
    t0 = time.perf_counter()
    w = least_work(model, S, T, r)
    t_vec = time.perf_counter() - t0
    t0 = time.perf_counter()
    for i in range(n_loop):
        least_work(model, S[i], T[i], r[i])
    t_loop = (time.perf_counter() - t0) / n_loop * n
    assert np.all(np.isfinite(w))
    print(f"least work, teos10, {n:,} points")
    print(f"  one vectorised call : {t_vec:8.3f} s  {n / t_vec:12,.0f} points/s")
    print(f"  per-point loop      : {t_loop:8.3f} s  {n / t_loop:12,.0f} points/s  (timed on {n_loop:,}, scaled)")
    print(f"  ratio               : {t_loop / t_vec:8.0f} x")


if __name__ == "__main__":
    main(int(sys.argv[1]) if len(sys.argv) > 1 else 1_000_000)
