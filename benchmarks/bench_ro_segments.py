"""RO march convergence: random designs with pressure drop at 20 segments against 320, one call each.

Run by hand: ``python benchmarks/bench_ro_segments.py [N] [SEED]``. The designs are those of the test
``tests/tech/test_ro.py::test_march_converged_at_20_segments_with_pressure_drop`` (one-stage seawater-strength and
two- or three-stage brackish NaCl feeds, many at the thermodynamic restriction). Prints the largest relative
differences in feed pressure, specific energy of the RO step and permeate salinity, by stage count, the number of
designs at the restriction, and the time of each call.
"""

import sys
import time

import numpy as np

from compare.tech import ro
from tests.tech.helpers import params
from tests.tech.test_ro import _random_designs


def main(n=300, seed=11):
    f, over = _random_designs(n, seed)
    out = {}
    for seg in (20, 320):
        t = time.perf_counter()
        out[seg] = ro.evaluate(f, params(ro, segments=seg, **over))
        print(f"{seg:4d} segments: {n} designs in {time.perf_counter() - t:6.1f} s, "
              f"{int(out[seg].feasible.sum())} feasible")
    a, b = out[20], out[320]
    ok = a.feasible & b.feasible
    at_limit = b.details["area_used_fraction"] < 1 - 1e-6
    print(f"at the restriction (area_used_fraction < 1): {int(at_limit.sum())}")
    for ns in (1, 2, 3):
        m = ok & (over["stages"] == ns)
        rows = {"feed pressure": (a.details["feed_pressure"], b.details["feed_pressure"]),
                "RO step energy": (a.details["ro_step"], b.details["ro_step"]),
                "permeate salinity": (a.product_salinity, b.product_salinity)}
        text = ", ".join(f"{k} {np.max(np.abs(x[m] / y[m] - 1)) * 100:.3f} %" for k, (x, y) in rows.items())
        print(f"{ns} stage(s), {int(m.sum())} designs: largest difference {text}")


if __name__ == "__main__":
    main(*(int(x) for x in sys.argv[1:3]))
