"""Monte Carlo samples of every registered technology through the sweep, against looping single cases.

Run by hand: ``python benchmarks/bench_sweep.py [N] [--set K=V ...]`` (default 10^5; ``--set ro.enabled=false``
and the like narrow the technologies, e.g. to check the memory bound at 10^6 samples quickly). Uses the fictional Gull Harbour scenario with
one feed temperature (28 degC) and its [uncertainty] section. Prints time per sample, the peak resident memory of the
process, and the ratio to evaluating the same samples one case at a time (timed on a few and scaled).
"""

import resource
import sys
import time
from pathlib import Path

from compare import sweep as sw
from compare.pipeline import evaluate
from compare.scenario import load

SCENARIO = Path(__file__).resolve().parent.parent / "scenarios" / "gull-harbour.toml"


def main(n: int = 100_000, overrides=(), n_loop: int = 10) -> None:
    s = load(SCENARIO, ["feed.temperature=28 degC", *overrides])
    cases, _ = sw.sample_cases(s, n, seed=1)
    evaluate(s, varied={k: v[:2] for k, v in cases.items()})          # tables, imports
    rss0 = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
    t0 = time.perf_counter()
    res = sw.run(s, cases, mode="samples", seed=1)
    t_vec = time.perf_counter() - t0
    rss1 = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
    sw.payload(res)
    t0 = time.perf_counter()
    for i in range(n_loop):
        evaluate(s, varied={k: v[i:i + 1] for k, v in cases.items()})
    t_loop = (time.perf_counter() - t0) / n_loop * n
    print(f"sweep, {n:,} Monte Carlo samples of {', '.join(res.technologies)} (chunks of {sw.default_chunk(s):,})")
    print(f"  chunked vectorised run : {t_vec:9.1f} s   {t_vec / n * 1e3:8.3f} ms per sample")
    print(f"  per-case loop          : {t_loop:9.1f} s   {t_loop / n * 1e3:8.3f} ms per sample "
          f"(timed on {n_loop}, scaled)")
    print(f"  ratio                  : {t_loop / t_vec:9.0f} x")
    print(f"  peak resident memory   : {rss1:9.0f} MB (after set-up {rss0:.0f} MB)")


if __name__ == "__main__":
    args = sys.argv[1:]
    n = int(args.pop(0)) if args and not args[0].startswith("--") else 100_000
    sets = [args[i + 1] for i in range(len(args) - 1) if args[i] == "--set"]
    main(n, sets)
