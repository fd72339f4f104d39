"""Speed figures of sweeps and single runs, printed as ratios to their targets in one run.

Run by hand: ``python benchmarks/bench_speed.py [--quick]`` (``--quick``: sizes to 20,000 and no 10^6 run; the full
run takes a few minutes). Uses the fictional Gull Harbour scenario at one feed temperature (28 degC) and its
[uncertainty] section. Times are CPU seconds of the process doing the work
(``time.process_time``; for commands, the child's user + system time), best of several runs, so that a busy machine
changes them little (the load average is printed at the start and the end);
the 10^6-sample run with two workers is also given in wall time, with the peak resident memory of the whole process
tree (sampled every 0.2 s). A ratio below 1 meets its target.

- CPU per sample of the full three-technology sweep (target 0.25 ms);
- per-case cost from 2,000 to 200,000 cases (``--quick``: to 20,000), the smallest against the largest (target 1.5);
- a single RO case after the first run (target 5 ms);
- ``desal compare`` on the demo (warm cache) against ``python -c "import numpy, pandas, scipy"`` (target 3);
- 10^6 samples with ``--workers 2`` (targets 60 s wall, 1 GB peak), unless ``--quick``.
"""

import os
import resource
import subprocess
import sys
import threading
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
SCENARIO = ROOT / "scenarios" / "gull-harbour.toml"
ONE_T = ["feed.temperature=28 degC"]


def _cpu_of(cmd: list[str], env=None, repeats: int = 5) -> float:
    """User + system CPU seconds of a child command (best of ``repeats`` after one warm-up)."""
    best = float("inf")
    for i in range(repeats + 1):
        before = resource.getrusage(resource.RUSAGE_CHILDREN)
        subprocess.run(cmd, cwd=ROOT, env=env, check=True, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
        after = resource.getrusage(resource.RUSAGE_CHILDREN)
        if i:
            best = min(best, after.ru_utime - before.ru_utime + after.ru_stime - before.ru_stime)
    return best


def _per_sample(n: int, chunk=None, repeats: int = 1) -> float:
    """CPU seconds per sample of a sweep of ``n`` samples (best of ``repeats``)."""
    from compare import sweep as sw
    from compare.scenario import load
    s = load(SCENARIO, ONE_T)
    best = float("inf")
    for _ in range(repeats):
        plan = sw.sampler(s, n, seed=1)
        t0 = time.process_time()
        sw.run(s, plan, mode="samples", chunk=chunk)
        best = min(best, time.process_time() - t0)
    return best / n


def _tree_rss(pid: int) -> float:
    import psutil
    try:
        p = psutil.Process(pid)
        procs = [p, *p.children(recursive=True)]
    except psutil.Error:
        return 0.0
    total = 0
    for q in procs:
        try:
            total += q.memory_info().rss
        except psutil.Error:
            pass
    return total / 2 ** 20


def million(n: int = 1_000_000, workers: int = 2) -> None:
    cmd = [sys.executable, "-m", "compare", "sweep", str(SCENARIO), "--set", ONE_T[0], "--samples", str(n),
           "--workers", str(workers), "--no-save", "--quiet", "--format", "json"]
    t0 = time.perf_counter()
    before = resource.getrusage(resource.RUSAGE_CHILDREN)
    proc = subprocess.Popen(cmd, cwd=ROOT, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE)
    peak = [0.0]

    def watch():
        while proc.poll() is None:
            peak[0] = max(peak[0], _tree_rss(proc.pid))
            time.sleep(0.2)
    th = threading.Thread(target=watch, daemon=True)
    th.start()
    err = proc.communicate()[1]
    th.join()
    wall = time.perf_counter() - t0
    after = resource.getrusage(resource.RUSAGE_CHILDREN)
    cpu = after.ru_utime - before.ru_utime + after.ru_stime - before.ru_stime
    if proc.returncode:
        print(err.decode()[-2000:])
        return
    print(f"{n:,} samples, --workers {workers}: {wall:7.1f} s wall (target 60 s, ratio {wall / 60:5.2f}); "
          f"{cpu:7.1f} s CPU ({cpu / n * 1e3:.3f} ms per sample); peak resident {peak[0]:6.0f} MB for the "
          f"process tree (target 1024 MB, ratio {peak[0] / 1024:4.2f}); load average {os.getloadavg()[0]:.1f}")


def _load() -> str:
    one, five, fifteen = os.getloadavg()
    return f"load average {one:.1f} / {five:.1f} / {fifteen:.1f} (1 / 5 / 15 min) on {os.cpu_count()} cores"


def main(quick: bool = False, with_million: bool = True) -> None:
    from compare.pipeline import evaluate
    from compare.scenario import load
    from compare.thermo import floor

    print(f"at start: {_load()}; CPU times, best of several runs, so other jobs change them little")
    _per_sample(5_000)                       # imports, tables, numba (compiled or loaded from its cache)
    from compare.tech import ro
    print(f"compiled table lookup: {'numba' if floor._KERNEL and floor._KERNEL[0] is not None else 'none (numpy)'}; "
          f"RO's march: {'compiled (numba)' if ro._KERNEL and ro._KERNEL[0] is not None else 'numpy'}")
    per = _per_sample(20_000, repeats=3)
    print(f"full RO + MED + FO sample at one temperature: {per * 1e3:6.3f} ms CPU "
          f"(target 0.25 ms, ratio {per * 1e3 / 0.25:5.2f}; 1.3 ms at the issue, 0.52 ms before the solver work)")

    sizes = [2_000, 20_000] if quick else [2_000, 20_000, 200_000]
    costs = {n: _per_sample(n, repeats=5 if n <= 2_000 else 3 if n <= 20_000 else 1) for n in sizes}
    base, largest = costs[sizes[0]], costs[sizes[-1]]
    print("per-case cost (target: within 1.5 from 2,000 to 200,000): "
          + ", ".join(f"{n:,}: {c * 1e3:.3f} ms" for n, c in costs.items())
          + f"; 2,000 against {sizes[-1]:,}: {base / largest:4.2f} (2.4 before)")

    s = load(SCENARIO, ONE_T + ["med.enabled=false", "fo.enabled=false"])
    evaluate(s)
    times = []
    for _ in range(20):
        t0 = time.process_time()
        evaluate(s)
        times.append(time.process_time() - t0)
    t_ro = min(times)
    print(f"one RO case through the pipeline, after the first: {t_ro * 1e3:6.1f} ms CPU (target 5 ms, ratio "
          f"{t_ro * 1e3 / 5:5.2f}; 42-97 ms before)")

    base_cmd = _cpu_of([sys.executable, "-c", "import numpy, pandas, scipy"])
    desal = _cpu_of([sys.executable, "-m", "compare", "compare", str(SCENARIO), "--no-save"])
    print(f"desal compare on the demo (warm cache): {desal:5.2f} s CPU; import numpy, pandas, scipy: "
          f"{base_cmd:5.2f} s; ratio {desal / base_cmd:4.2f} (target 3, ratio to it {desal / base_cmd / 3:4.2f}; "
          f"3.6 before)")
    if with_million:
        million()
    print(f"at end: {_load()}")


if __name__ == "__main__":
    main(quick="--quick" in sys.argv, with_million="--quick" not in sys.argv)
