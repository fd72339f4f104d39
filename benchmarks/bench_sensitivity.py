"""What the uncertainty machinery adds to a sweep, apart from evaluating the technologies (bench_sweep.py times that).

Run by hand: ``python benchmarks/bench_sensitivity.py [N]`` (default 10^5). Uses the fictional Gull Harbour
scenario's [uncertainty] section (six keys). Prints, as times per sample and as ratios: drawing N samples
independently and with a rank correlation between the two prices (the Gaussian copula), and the Sobol indices with
bootstrap intervals of one metric from a 1024-row design of six keys (1024 x 8 evaluations, a synthetic metric).
"""

import sys
import time
from dataclasses import replace
from pathlib import Path

import numpy as np

from compare import sensitivity as se
from compare import sweep as sw
from compare.scenario import load

SCENARIO = Path(__file__).resolve().parent.parent / "scenarios" / "gull-harbour.toml"


def main(n: int = 100_000) -> None:
    s = load(SCENARIO)
    sw.sample_cases(s, 16, seed=1)                                    # imports
    t0 = time.perf_counter()
    sw.sample_cases(s, n, seed=1)
    t_ind = time.perf_counter() - t0
    c = replace(s, correlation={("energy.electricity_price", "energy.heat_price"): 0.7})
    t0 = time.perf_counter()
    sw.sample_cases(c, n, seed=1)
    t_cor = time.perf_counter() - t0
    print(f"sampling {n:,} x {len(s.uncertainty)} keys: independent {t_ind:.3f} s ({t_ind / n * 1e6:.2f} us per "
          f"sample), correlated {t_cor:.3f} s (ratio {t_cor / t_ind:.2f})")
    m, d = 1024, len(s.uncertainty)
    cases, keys, _ = se.sobol_cases(s, m, seed=1)
    x = np.column_stack([cases[k] / np.mean(cases[k]) for k in keys])
    y = x[:, 0] + 2 * x[:, 1] * x[:, 2] + 0.5 * x[:, 3]                # a synthetic metric with an interaction
    t0 = time.perf_counter()
    se.sobol_indices(y, m, d, seed=1)
    t_sob = time.perf_counter() - t0
    print(f"Sobol indices of one metric, {m} base rows x {d} keys ({m * (d + 2):,} evaluations), with 999 BCa "
          f"bootstrap resamples: {t_sob:.2f} s; a full sweep computes 4 metrics per technology")


if __name__ == "__main__":
    main(int(sys.argv[1]) if len(sys.argv) > 1 else 100_000)
