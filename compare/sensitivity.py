"""Sensitivity of the headline metrics to the uncertain keys: Sobol indices (variance-based, global) and a tornado
(one key at a time), both evaluated through the same chunked sweep pipeline as every other case.

Sobol indices
    Saltelli's design (Saltelli et al. 2010, "Variance based sensitivity analysis of model output. Design and
    estimator for the total sensitivity index", Computer Physics Communications 181, 259-270): two matrices A and B
    of ``n`` rows (``n`` a power of two; a scrambled Sobol sequence of dimension 2d from the seed), and for each of
    the ``d`` keys a matrix AB_i, A with column i taken from B; ``n (d + 2)`` evaluations in all, in the order A, B,
    AB_1 ... AB_d. Rows are uniforms mapped to values exactly as Monte Carlo samples are (truncated distributions,
    shared inputs). First-order and total indices come from :func:`scipy.stats.sobol_indices` (Saltelli 2010 first
    order, Jansen total, on the evaluations given as precomputed arrays); their 95 % intervals from a BCa bootstrap
    over the rows (:func:`scipy.stats.bootstrap`, 999 resamples, seeded, so one seed gives the same indices and
    intervals). Indices are variance shares: each lies in [0, 1] up to sampling error, which the intervals show.

Infeasible samples
    A technology can be infeasible in some samples; its metric is then undefined. The indices of a metric are taken
    over the rows whose A, B and every AB_i evaluation are feasible (the metric's sensitivity *given* a working
    design), on the first ``2^k`` such rows so that the design stays balanced; ``samples`` in each row says how many.
    Separately, the metric ``feasible`` (1 for a feasible design, 0 otherwise) gets its own indices over all rows:
    which keys decide whether the technology works at all. A metric that does not vary (no variance) has no indices
    (null), and a technology with fewer than 16 usable rows has none either.

Correlated inputs
    Sobol indices as computed here assume independent inputs; a scenario with a ``[correlation]`` section is refused
    for ``sobol`` (the tornado, one key at a time, ignores correlations by definition and says so).

Tornado
    Every key at the median of its (truncated) distribution, then each key in turn at its 10th and 90th percentile
    with the others at their medians: ``1 + 2 d`` evaluations.
"""

from __future__ import annotations

import numpy as np

from .errors import InputError
from .uncertainty import cases_from_uniforms

#: the metrics whose sensitivity is reported: record name -> sweep metric
SENSITIVITY_METRICS = {"levelized_cost_per_m3": "lcow", "work_equivalent_kwh_per_m3": "work_equivalent",
                       "emissions_kg_per_m3": "emissions"}
METHODS = ("sobol", "tornado")
MIN_ROWS = 16


# ------------------------------------------------------------------------------------------------ Sobol
def sobol_cases(scenario, n: int, seed: int | None) -> tuple[dict, list, list]:
    """Saltelli's design for ``n`` base rows: (key -> (n (d + 2),) SI values, the uncertain keys, notes)."""
    from scipy.stats import qmc

    from . import sweep as sw
    from .uncertainty import notes
    keys, specs = sw.uncertain_specs(scenario)
    label = scenario.path or scenario.name
    if scenario.correlation:
        raise InputError(f"{label}: correlation: --sensitivity sobol expects independent inputs (its indices are not "
                         f"defined this way for correlated ones), got a [correlation] section; use --sensitivity "
                         f"tornado or drop the section")
    if n < MIN_ROWS or n & (n - 1):
        raise InputError(f"--samples: expected a power of two of {MIN_ROWS} or more for --sensitivity sobol (its "
                         f"design needs balanced Sobol points), got {n}")
    d = len(keys)
    base = qmc.Sobol(d=2 * d, scramble=True, seed=np.random.default_rng(seed)).random_base2(int(np.log2(n)))
    A, B = base[:, :d], base[:, d:]
    blocks = [A, B]
    for i in range(d):
        ab = A.copy()
        ab[:, i] = B[:, i]
        blocks.append(ab)
    u = np.clip(np.vstack(blocks), 1e-12, 1 - 1e-12)
    return cases_from_uniforms(scenario, u, specs), keys, notes(scenario, specs)


def _saltelli(fA, fB, fAB):
    """First-order (Saltelli 2010) and total (Jansen) indices over the last axis; fAB has the keys first.
    Centred by the mean of A and B, as :func:`scipy.stats.sobol_indices` does."""
    mean = 0.5 * (fA.mean(axis=-1, keepdims=True) + fB.mean(axis=-1, keepdims=True))
    fA, fB, fAB = fA - mean, fB - mean, fAB - mean
    var = np.var(np.concatenate([fA, fB], axis=-1), axis=-1)
    with np.errstate(divide="ignore", invalid="ignore"):
        first = np.mean(fB * (fAB - fA), axis=-1) / var
        total = 0.5 * np.mean((fA - fAB) ** 2, axis=-1) / var
    return first, total


def sobol_indices(y: np.ndarray, n: int, d: int, seed: int | None) -> dict | None:
    """Indices of one metric ``y`` (n (d + 2) evaluations, NaN where infeasible): first, total (d,), their 95 %
    intervals, and the rows used; None when fewer than 16 rows are usable or the metric does not vary."""
    from scipy import stats

    fA, fB, fAB = y[:n], y[n:2 * n], y[2 * n:].reshape(d, n)
    ok = np.isfinite(fA) & np.isfinite(fB) & np.all(np.isfinite(fAB), axis=0)
    k = int(ok.sum())
    if k < MIN_ROWS:
        return None
    m = 1 << (k.bit_length() - 1)
    idx = np.flatnonzero(ok)[:m]
    fA, fB, fAB = fA[idx], fB[idx], fAB[:, idx]
    if np.ptp(np.concatenate([fA, fB])) <= 1e-12 * max(1.0, float(np.max(np.abs(fA)))):
        nan = np.full(d, np.nan)                    # no variance: no share of it to attribute
        return {"first": nan, "total": nan, "first_low": nan, "first_high": nan, "total_low": nan,
                "total_high": nan, "samples": m}
    res = stats.sobol_indices(func={"f_A": fA[None], "f_B": fB[None], "f_AB": fAB[:, None, :]}, n=m)

    def statistic(i, axis=-1):
        first, total = _saltelli(fA[i], fB[i], fAB[:, i])      # (d, ...) each
        return np.concatenate([first, total], axis=0)

    import warnings
    with np.errstate(divide="ignore", invalid="ignore"), warnings.catch_warnings():
        warnings.simplefilter("ignore")
        boot = stats.bootstrap((np.arange(m),), statistic, vectorized=True, n_resamples=999, batch=100,
                               confidence_level=0.95, method="BCa", rng=np.random.default_rng(seed))
        lo, hi = boot.confidence_interval.low, boot.confidence_interval.high
        if not (np.all(np.isfinite(lo)) and np.all(np.isfinite(hi))):
            # BCa is undefined where the resampled indices do not vary (a key with no effect at all): percentile
            # intervals from the same resamples
            dist = boot.bootstrap_distribution
            lo = np.where(np.isfinite(lo), lo, np.nanpercentile(dist, 2.5, axis=-1))
            hi = np.where(np.isfinite(hi), hi, np.nanpercentile(dist, 97.5, axis=-1))
    return {"first": np.atleast_1d(res.first_order).ravel(), "total": np.atleast_1d(res.total_order).ravel(),
            "first_low": lo[:d], "first_high": hi[:d], "total_low": lo[d:], "total_high": hi[d:], "samples": m}


def _num(x) -> float | None:
    x = float(x)
    return x if np.isfinite(x) else None


INDEX_FIELDS = ("first", "first_low", "first_high", "total", "total_low", "total_high")
#: how the shown indices and their intervals relate to the estimator's own figures
CLIPPED = ("indices and their 95 % intervals are shown within [0, 1]: a variance share cannot pass those bounds, "
           "but the estimator and its bootstrap interval can by sampling error; the unclipped figures are each "
           "row's raw")


#: what a tornado says of a scenario's [correlation] section
NOT_CORRELATED = ("the scenario's rank correlations ([correlation]) are not applied here: each key moves alone")


def _share(x: float | None) -> float | None:
    """An index shown as a share: within [0, 1], never -0.0."""
    return None if x is None else min(1.0, max(0.0, x)) + 0.0


def block_labels(keys: list, n: int, cases) -> np.ndarray:
    """The block of Saltelli's design each case index belongs to: ``A`` and ``B`` (the plain samples), then
    ``AB:<key>`` (A with that key's column from B), in the order :func:`sobol_cases` builds them."""
    names = np.array(["A", "B"] + [f"AB:{k}" for k in keys], dtype=object)
    return names[np.asarray(cases) // n]


def sobol_rows(sr, keys: list, n: int, seed: int | None) -> list[dict]:
    """``summary.sensitivity`` rows of a Sobol sweep: per technology, metric (and ``feasible``) and key. Indices and
    interval ends are clipped to [0, 1] (:data:`CLIPPED`); ``raw`` keeps the estimator's own figures."""
    d = len(keys)
    out = []
    for t in sr.technologies:
        ys = {name: sr.metrics[t][m] for name, m in SENSITIVITY_METRICS.items()}
        ys["feasible"] = sr.feasible[t].astype(float)
        for name, y in ys.items():
            r = sobol_indices(y, n, d, seed)
            for j, key in enumerate(keys):
                row = {"technology": t, "metric": name, "key": key}
                if r is None:
                    row.update({f: None for f in INDEX_FIELDS})
                    row["samples"] = 0
                    row["raw"] = {f: None for f in INDEX_FIELDS}
                else:
                    raw = {f: _num(r[f][j]) for f in INDEX_FIELDS}
                    row.update({f: _share(v) for f, v in raw.items()})
                    row["samples"] = r["samples"]
                    row["raw"] = {f: None if v is None else v + 0.0 for f, v in raw.items()}
                out.append(row)
    return out


# ------------------------------------------------------------------------------------------------ tornado
def tornado_cases(scenario) -> tuple[dict, list]:
    """All keys at their medians, then each key at its p10 and p90: (key -> (1 + 2 d,) SI values, keys)."""
    from . import sweep as sw
    keys, specs = sw.uncertain_specs(scenario)
    d = len(keys)
    u = np.full((1 + 2 * d, d), 0.5)
    for j in range(d):
        u[1 + 2 * j, j] = 0.1
        u[2 + 2 * j, j] = 0.9
    return cases_from_uniforms(scenario, u, specs, correlated=False), keys


def tornado_rows(sr, keys: list, units: dict) -> list[dict]:
    """``summary.sensitivity`` rows of a tornado: per technology, metric and key, the metric with the key at its p10
    (``at_low``) and p90 (``at_high``), the others at their medians (``base``); the key's values in ``unit``."""
    out = []
    for t in sr.technologies:
        for name, m in SENSITIVITY_METRICS.items():
            y = sr.metrics[t][m]
            for j, key in enumerate(keys):
                unit, show = units[key]
                out.append({"technology": t, "metric": name, "key": key, "at_low": _num(y[1 + 2 * j]),
                            "at_high": _num(y[2 + 2 * j]), "base": _num(y[0]),
                            "low": float(show(sr.cases[key][1 + 2 * j])),
                            "high": float(show(sr.cases[key][2 + 2 * j])), "unit": unit})
    return out


def subset(sr, rows: slice):
    """The sweep result restricted to some cases (the A and B blocks of a Sobol design are plain samples)."""
    from dataclasses import replace
    return replace(sr, cases={k: v[rows] for k, v in sr.cases.items()},
                   metrics={t: {m: v[rows] for m, v in ms.items()} for t, ms in sr.metrics.items()},
                   feasible={t: v[rows] for t, v in sr.feasible.items()}, floor=sr.floor[rows])


__all__ = ["METHODS", "SENSITIVITY_METRICS", "CLIPPED", "block_labels", "sobol_cases", "sobol_indices", "sobol_rows", "tornado_cases",
           "tornado_rows", "subset"]


def analyse(method: str, scenario, result, n: int, seed: int | None, chunk: int | None = None):
    """The ``sensitivity`` section of a sweep payload and the result its summary should cover: for ``sobol`` the
    sweep ran Saltelli's design and its A and B blocks (2 n independent samples) are the Monte Carlo summary; for
    ``tornado`` the ``1 + 2 d`` one-at-a-time cases are run here and the sweep's own samples stay as they are."""
    from . import sweep as sw
    keys = sorted(scenario.uncertainty)
    if method == "sobol":
        rows = sobol_rows(result, keys, n, seed)
        body = {"method": "sobol", "base_samples": n, "evaluations": result.n, "keys": keys,
                "design": "Saltelli: A, B (the 2n samples summarised), then one block per key", "confidence": 0.95,
                "note": CLIPPED, "rows": rows}
        return body, subset(result, slice(0, 2 * n))
    cases, keys = tornado_cases(scenario)
    tr = sw.run(scenario, cases, mode="samples", chunk=chunk)
    units = sw.display_units(scenario, keys)
    body = {"method": "tornado", "keys": keys, "evaluations": tr.n,
            "design": "every key at its median; each key in turn at its p10 and p90 (correlations not applied)",
            "rows": tornado_rows(tr, keys, units)}
    if scenario.correlation:
        body["note"] = NOT_CORRELATED
    return body, result
