"""Each registered technology over 10^5 cases in one call, against a per-case loop.

Run by hand: ``python benchmarks/bench_tech.py [N] [technology ...]``. The cases spread salinity, temperature and
the technology's recovery-like parameters over a practical range. Prints cases per second for the one vectorised
call and for a loop of single-case calls (timed on a subset and scaled), their ratio, and the share of cases that
came out feasible.
"""

import dataclasses
import sys
import time

import numpy as np

from compare.schema import parse_defaults, parse_value
from compare.spec import specs_of, values
from compare.tech import TECHNOLOGIES, Feed, load_builtin
from compare.thermo.activity import get_model

#: per technology: the parameter spread of the benchmark cases (raw values as in a scenario file, low and high)
SPREAD = {
    "ro": {"recovery": (0.3, 0.5), "flux": ("10 L/m^2/h", "16 L/m^2/h")},
    "med": {"effects": (4, 12), "top_brine_temperature": ("55 degC", "68 degC")},
    "fo": {"recovery": (0.3, 0.5)},
}


def cases(tech, n, rng):
    model = get_model("teos10", "seawater")
    S = rng.uniform(0.025, 0.045, n)
    T = rng.uniform(288.15, 303.15, n)
    feed = Feed(model, "seawater", S, T, np.full(n, 0.0005), np.full(n, 393.15), np.full(n, 1.0))
    specs = specs_of(tech.parameters)
    over = {}
    for key, (lo, hi) in SPREAD.get(tech.name, {}).items():
        spec = specs[key]
        a, b = parse_value(spec, lo, key), parse_value(spec, hi, key)
        over[key] = np.round(rng.uniform(a, b, n)) if spec.kind == "count" else rng.uniform(a, b, n)
    return feed, parse_defaults(tech.parameters, **over)


def one(feed, p, i):
    f = Feed(feed.model, feed.water, *(np.asarray(x)[i:i + 1] for x in feed[2:]))
    return dataclasses.replace(p, **{k: v[i:i + 1] for k, v in values(p).items() if isinstance(v, np.ndarray)}), f


def main(n: int = 100_000, names=(), n_loop: int = 200) -> None:
    load_builtin()
    rng = np.random.default_rng(7)
    for name in names or list(TECHNOLOGIES):
        tech = TECHNOLOGIES[name]
        feed, p = cases(tech, n, rng)
        tech.evaluate(*one(feed, p, 0)[::-1])                 # tables, imports
        t0 = time.perf_counter()
        perf = tech.evaluate(feed, p)
        t_vec = time.perf_counter() - t0
        t0 = time.perf_counter()
        for i in range(n_loop):
            pi, fi = one(feed, p, i)
            tech.evaluate(fi, pi)
        t_loop = (time.perf_counter() - t0) / n_loop * n
        print(f"{name}: {n:,} cases, {perf.feasible.mean():.0%} feasible")
        print(f"  one vectorised call : {t_vec:8.2f} s  {n / t_vec:10,.0f} cases/s")
        print(f"  per-case loop       : {t_loop:8.2f} s  {n / t_loop:10,.0f} cases/s  (timed on {n_loop}, scaled)")
        print(f"  ratio               : {t_loop / t_vec:8.0f} x")


if __name__ == "__main__":
    main(int(sys.argv[1]) if len(sys.argv) > 1 else 100_000, tuple(sys.argv[2:]))
