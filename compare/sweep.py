"""Sweeps: grids and Monte Carlo samples of a scenario, evaluated in vectorised chunks through the one pipeline,
summarised per technology, ranked, and searched for break-even points.

A sweep is a set of N cases, each a value for every varied key (SI, as the scenario holds them). Cases are handed to
:func:`compare.pipeline.evaluate` in chunks (bounded memory), exactly as a single comparison is (``varied`` of
length 1), so a grid point and a single run with ``--set`` agree to rounding. Per case and technology the sweep
keeps the headline metrics in arrays and hands each chunk's rows to an optional sink (the streaming CSV writer).

Grids: ``key=START:STOP:N`` (linear), ``key=START:STOP:N:log`` (log-spaced), ``key=V1,V2,...`` (a list); values carry
units as in a scenario file. Several grids give the Cartesian product; the first varies slowest.

Monte Carlo: the scenario's ``[uncertainty]`` entries (triangular, uniform, normal, lognormal), sampled by
inverse-transform of uniforms from a seeded ``numpy.random.Generator``, or with Latin hypercube uniforms
(``scipy.stats.qmc.LatinHypercube``) when asked. Samples outside a key's valid range are clipped to it and counted
(reported as warnings); counts are rounded.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from .errors import InputError
from .schema import Spec, check_bounds, parse_value
from .scenario import Scenario, nearest, sections
from .present.fields import RECORD_FIELDS, convert  # pure data, the one field table

#: headline metrics kept per case and technology: name -> the Accounts attribute (record field and unit from the
#: field table)
METRIC_ATTRS = {"electricity": "electricity", "heat": "heat", "work_equivalent": "work_equivalent",
                "least_work": "least_work", "second_law_efficiency": "second_law_efficiency",
                "lcow": "levelized_cost", "emissions": "emissions"}
_FIELDS = {f.attr: f for f in RECORD_FIELDS}
#: name -> (record field, unit label)
METRICS = {m: (_FIELDS[a].name, _FIELDS[a].unit) for m, a in METRIC_ATTRS.items()}
#: ranking criteria: name -> metric (lower is better)
RANK_BY = {"cost": "lcow", "energy": "work_equivalent", "emissions": "emissions"}
NOT_VARIABLE = ("choice", "flag", "table")


# ---------------------------------------------------------------------------------------------- varied keys
@dataclass(frozen=True)
class Axis:
    """One varied key of a grid: its SI values and how to show them."""

    key: str
    values: np.ndarray        # SI
    unit: str                 # display unit
    display: np.ndarray       # values in the display unit
    show: object = None       # SI -> display function


def _spec(key: str, where: str) -> Spec:
    specs = sections()
    if "." not in key:
        raise InputError(f'{where}: expected a "section.key" such as ro.recovery, got "{key}"')
    sec, name = key.split(".", 1)
    if sec not in specs or name not in specs[sec]:
        hint = nearest(key, [f"{s}.{k}" for s in specs for k in specs[s]])
        raise InputError(f'{where}: expected a scenario key such as ro.recovery, got "{key}"{hint}')
    spec = specs[sec][name]
    if spec.kind in NOT_VARIABLE:
        raise InputError(f"{where}: {key} is a {spec.kind} and cannot be varied in a sweep; run one sweep per value "
                         f"with --set {key}=...")
    return spec


def _ctx(scenario: Scenario) -> dict:
    return {"currency": scenario.currency, "water": scenario.values["feed"]["water"],
            "temperature": float(np.mean(scenario.values["feed"]["temperature"]))}


def _parse_one(spec: Spec, text: str, where: str, ctx: dict) -> float:
    v = parse_value(spec, text.strip(), where, **ctx)
    return float(np.mean(v)) if spec.kind == "temperatures" else float(v)


@dataclass(frozen=True)
class Scale:
    """SI -> a display unit: ``v * factor + offset`` (a plain object, so that it travels to worker processes)."""

    factor: float = 1.0
    offset: float = 0.0

    def __call__(self, v):
        return np.asarray(v) * self.factor + self.offset


def _display(spec: Spec, text: str, currency: str):
    """(unit label, SI -> display function) for a key, after the unit the user wrote."""
    from .units import parse_quantity, registry
    if spec.kind in ("temperature", "temperatures"):
        return "degC", Scale(1.0, -273.15)
    if spec.kind in ("salinity", "nacl_concentration"):
        return "g/kg", Scale(1e3)
    if spec.kind in ("fraction", "count"):
        return "-", Scale()
    try:
        q = parse_quantity(text.strip(), where="", expect="")
        si_unit = f"{currency} * {spec.unit}" if spec.kind == "money" else spec.unit
        factor = registry().Quantity(1.0, si_unit).to(q.units).magnitude
        import re
        label = re.sub(r"^\s*[-+]?(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?\s*", "", text.strip()) or f"{q.units:~}"
        return label.replace(" ", ""), Scale(float(factor))
    except Exception:                     # noqa: BLE001 - display only; fall back to SI
        return spec.unit or "-", Scale()


def parse_vary(text: str, scenario: Scenario) -> Axis:
    """One ``--vary`` option into an :class:`Axis` (values checked by the key's own spec)."""
    if "=" not in text:
        raise InputError(f'--vary: expected key=START:STOP:N, key=START:STOP:N:log or key=V1,V2,..., got "{text}"')
    key, body = (x.strip() for x in text.split("=", 1))
    where = f"--vary {key}"
    spec = _spec(key, where)
    ctx = _ctx(scenario)
    parts = body.split(":")
    if len(parts) in (3, 4):
        if len(parts) == 4 and parts[3].strip() != "log":
            raise InputError(f'{where}: expected START:STOP:N or START:STOP:N:log, got "{body}"')
        try:
            n = int(parts[2])
        except ValueError:
            n = 0
        if n < 2 or str(n) != parts[2].strip():
            raise InputError(f'{where}: expected a number of points N of 2 or more, got "{parts[2].strip()}"')
        a, b = (_parse_one(spec, x, where, ctx) for x in parts[:2])
        if len(parts) == 4:
            if a <= 0 or b <= 0:
                raise InputError(f'{where}: a log-spaced grid needs values above zero, got "{body}"')
            values = np.geomspace(a, b, n)
        else:
            values = np.linspace(a, b, n)
        first = parts[0]
    elif len(parts) == 1:
        items = [x for x in body.split(",")]
        if any(not x.strip() for x in items):
            raise InputError(f'{where}: expected a list of values V1,V2,..., got "{body}"')
        values = np.array([_parse_one(spec, x, where, ctx) for x in items])
        first = items[0]
    else:
        raise InputError(f'{where}: expected START:STOP:N, START:STOP:N:log or V1,V2,..., got "{body}"')
    if spec.kind == "count":
        if not np.allclose(values, np.round(values)):
            raise InputError(f'{where}: expected whole numbers for a count, got "{body}"')
        values = np.round(values)
    # every grid value must pass the key's own bounds (the ends were parsed; check the rest the same way)
    for v in values:
        check_bounds(spec, v, where, body)
    unit, show = _display(spec, first, scenario.currency)
    return Axis(key, values, unit, show(values), show)


def grid_cases(axes: list[Axis]) -> dict[str, np.ndarray]:
    """The Cartesian product of the axes, the first varying slowest: key -> (N,) SI values."""
    g = grid(axes)
    return g.draw(0, g.n)[0]


# ---------------------------------------------------------------------------------------------- Monte Carlo
def _ppf(dist: dict, u: np.ndarray) -> np.ndarray:
    from scipy import stats
    kind = dist["distribution"]
    if kind == "uniform":
        return dist["low"] + u * (dist["high"] - dist["low"])
    if kind == "triangular":
        lo, mode, hi = dist["low"], dist["mode"], dist["high"]
        if hi == lo:
            return np.full_like(u, lo)
        return stats.triang.ppf(u, (mode - lo) / (hi - lo), loc=lo, scale=hi - lo)
    if kind == "normal":
        return stats.norm.ppf(u, loc=dist["mean"], scale=dist["sd"])
    if kind == "lognormal":
        return dist["median"] * np.exp(np.log(dist["gsd"]) * stats.norm.ppf(u))
    raise AssertionError(kind)  # pragma: no cover


def _uniforms(entropy: int, start: int, stop: int, d: int) -> np.ndarray:
    """Rows ``start:stop`` of the (n, d) matrix of uniforms that one seeded stream gives in order: the PCG64 stream
    of ``entropy`` advanced to position ``start * d`` (one 64-bit draw per double), so a row depends on its index and
    the seed only, never on how the cases are cut into chunks."""
    bits = np.random.PCG64(entropy)
    bits.advance(start * d)
    return np.random.Generator(bits).random((stop - start, d))


_STRATA: dict = {}


def _strata(entropy: int, n: int, d: int) -> np.ndarray:
    """The Latin hypercube's strata: per dimension a random permutation of 0..n-1 (an (n, d) int array), from a
    second stream of the seed; built once per process (a worker rebuilds it, about 10 ms per 10^6 cases)."""
    key = (entropy, n, d)
    if key not in _STRATA:
        _STRATA.clear()
        rng = np.random.default_rng([entropy, 1])
        dtype = np.int32 if n < 2 ** 31 else np.int64
        _STRATA[key] = np.stack([rng.permutation(n).astype(dtype) for _ in range(d)], axis=1)
    return _STRATA[key]


def _clip_to_spec(spec: Spec, x: np.ndarray):
    """Values clipped into the key's valid range and how many were outside it."""
    lo = -np.inf if spec.lo is None else spec.lo
    hi = np.inf if spec.hi is None else spec.hi
    eps_lo = abs(lo) * 1e-9 + 1e-12 if spec.lo_open else 0.0
    eps_hi = abs(hi) * 1e-9 + 1e-12 if spec.hi_open else 0.0
    bad = (x < lo + eps_lo) | (x > hi - eps_hi)
    count = int(np.count_nonzero(bad))
    if count:
        x = np.clip(x, lo + eps_lo, hi - eps_hi)
    return x, count


def values_from_uniforms(unc: dict, specs: dict, keys, u: np.ndarray):
    """Case values from uniforms (rows: cases, columns: ``keys``) through each distribution's inverse CDF: (key ->
    values, key -> how many were outside the key's range)."""
    u = np.clip(u, 1e-12, 1 - 1e-12)
    out, outside = {}, {}
    for j, k in enumerate(keys):
        x, outside[k] = _clip_to_spec(specs[k], _ppf(unc[k], u[:, j]))
        if specs[k].kind == "count":
            x = np.round(x)
        out[k] = x
    return out, outside


@dataclass(frozen=True)
class Samples:
    """Monte Carlo cases as a function of their index: case i takes row i of one seeded stream of uniforms
    (Latin hypercube: its stratum in each dimension plus that row), whatever chunk draws it."""

    uncertainty: dict
    specs: dict
    keys: tuple
    n: int
    entropy: int
    lhs: bool = False

    def draw(self, start: int, stop: int):
        """Cases ``start:stop``: (key -> values, key -> how many were outside the key's range)."""
        d = len(self.keys)
        u = _uniforms(self.entropy, start, stop, d)
        if self.lhs:
            u = (_strata(self.entropy, self.n, d)[start:stop] + u) / self.n
        return values_from_uniforms(self.uncertainty, self.specs, self.keys, u)

    def warnings(self, outside: dict) -> list[str]:
        return [f"uncertainty.{k}: {c} of {self.n} samples fell outside the key's valid range and were clipped to it"
                for k, c in outside.items() if c]


@dataclass(frozen=True)
class Grid:
    """Grid cases as a function of their index (the Cartesian product of the axes' values, the first slowest)."""

    keys: tuple
    values: tuple            # per key, its (n_k,) SI values

    @property
    def n(self) -> int:
        return int(np.prod([v.size for v in self.values]))

    def draw(self, start: int, stop: int):
        idx = np.unravel_index(np.arange(start, stop), tuple(v.size for v in self.values))
        return {k: v[i] for k, v, i in zip(self.keys, self.values, idx)}, {}

    def warnings(self, outside: dict) -> list[str]:
        return []


@dataclass(frozen=True)
class Given:
    """Cases given as arrays (key -> (N,) SI values)."""

    cases: dict

    @property
    def keys(self) -> tuple:
        return tuple(self.cases)

    @property
    def n(self) -> int:
        return len(next(iter(self.cases.values())))

    def draw(self, start: int, stop: int):
        return {k: np.asarray(v)[start:stop] for k, v in self.cases.items()}, {}

    def warnings(self, outside: dict) -> list[str]:
        return []


def sampler(scenario: Scenario, n: int, seed: int | None, lhs: bool = False) -> Samples:
    """The :class:`Samples` of every ``[uncertainty]`` key (checked); ``seed`` None takes fresh entropy."""
    unc = scenario.uncertainty
    label = scenario.path or scenario.name
    if not unc:
        raise InputError(f"{label}: uncertainty: --samples needs an [uncertainty] section with at least one key")
    if n < 1:
        raise InputError(f"--samples: expected a number of samples of 1 or more, got {n}")
    keys = tuple(sorted(unc))
    specs = {k: _spec(k, f"{label}: uncertainty.{k}") for k in keys}
    entropy = np.random.SeedSequence(seed).entropy
    return Samples(unc, specs, keys, n, entropy, lhs)


def grid(axes: list[Axis]) -> Grid:
    """The :class:`Grid` of the axes (each key once)."""
    if len({a.key for a in axes}) != len(axes):
        raise InputError("--vary: each key may be varied once")
    return Grid(tuple(a.key for a in axes), tuple(np.asarray(a.values, dtype=float) for a in axes))


def sample_cases(scenario: Scenario, n: int, seed: int | None, lhs: bool = False):
    """N samples of every ``[uncertainty]`` key: (key -> (N,) SI values, warnings about clipped samples)."""
    plan = sampler(scenario, n, seed, lhs)
    cases, outside = plan.draw(0, n)
    return cases, plan.warnings(outside)


# ---------------------------------------------------------------------------------------------- evaluation
@dataclass
class SweepResult:
    """Per case and technology metrics of a sweep, in record units (kWh/m3, currency/m3, kg/m3)."""

    scenario: Scenario
    mode: str                                  # "grid" | "samples"
    cases: dict                                # key -> (N,) SI values
    technologies: list                         # names
    metrics: dict                              # tech -> metric -> (N,) (NaN where infeasible)
    feasible: dict                             # tech -> (N,) bool
    floor: np.ndarray                          # (N,) least work at zero recovery [kWh/m3]
    axes: list = field(default_factory=list)   # grid axes
    warnings: list = field(default_factory=list)
    seed: int | None = None
    lhs: bool = False
    flags: list = field(default_factory=list)  # {kind, code, model, message, cases}

    @property
    def n(self) -> int:
        return int(self.floor.size)


def default_chunk(scenario: Scenario) -> int:
    """Cases per chunk: about 20,000 technology evaluations, divided by the number of periods (12 for monthly)."""
    M = np.size(scenario.values["feed"]["temperature"])
    return max(1, 20000 // M)


@dataclass(frozen=True)
class ChunkTask:
    """One chunk of a sweep as plain data, for any executor: the scenario, the technologies it enables (so that a
    fresh worker can register them), where the cases come from and which of them, and whether to build the rows."""

    scenario: Scenario
    technologies: dict          # name -> Technology
    source: object              # Samples | Grid | Given
    start: int
    stop: int
    units: dict | None          # key -> (label, Scale) for the rows; None: no rows


@dataclass
class ChunkResult:
    """What a chunk gives back: its cases, the floor, per technology feasibility and metrics, flag counts, the rows."""

    start: int
    stop: int
    cases: dict
    outside: dict
    floor: np.ndarray
    feasible: dict
    metrics: dict
    counts: dict
    frame: object = None


def evaluate_chunk(task: ChunkTask) -> ChunkResult:
    """Draw a chunk's cases from their positions, evaluate them through the pipeline and keep the headline metrics
    (runs in this process or in a worker)."""
    from .pipeline import evaluate
    from .tech.base import TECHNOLOGIES
    for name, tech in task.technologies.items():
        TECHNOLOGIES.setdefault(name, tech)
    part, outside = task.source.draw(task.start, task.stop)
    res = evaluate(task.scenario, varied=part)
    m = task.stop - task.start
    feasible, metrics = {}, {}
    for t in res.technologies:
        feasible[t.technology] = np.asarray(t.feasible, dtype=bool)
        metrics[t.technology] = {
            k: np.where(t.feasible, convert(getattr(t, attr), _FIELDS[attr].unit), np.nan)
            for k, attr in METRIC_ATTRS.items()}
    counts: dict = {}          # flag -> [cases, first case]
    for f in res.flags():
        key = (f.kind, f.code, f.model, f.message)
        where = np.asarray(f.where((m,)))
        c = int(np.count_nonzero(where))
        if c:
            first = task.start + int(np.argmax(where))
            old = counts.get(key, [0, first])
            counts[key] = [old[0] + c, min(old[1], first)]
    frame = None
    if task.units is not None:
        shown = {f"{k} [{task.units[k][0]}]": task.units[k][1](v) for k, v in part.items()}
        frame = case_frame(res, task.start, shown)
    return ChunkResult(task.start, task.stop, part, outside, convert(res.floor.least_work_zero_recovery, "kWh/m3"),
                       feasible, metrics, counts, frame)


def run(scenario: Scenario, cases, *, mode: str, chunk: int | None = None, progress=None, sink=None,
        axes=None, warnings=None, seed=None, lhs=False, executor=None, in_flight: int | None = None) -> SweepResult:
    """Evaluate every case in chunks. ``cases`` is a dict of (N,) arrays or a case source (:class:`Samples`,
    :class:`Grid`) whose chunks draw their own cases. ``executor`` (:mod:`compare.executor`; default this process)
    runs the chunks, at most ``in_flight`` at a time; results do not depend on it or on ``chunk``.
    ``progress(done, total)`` is called after each chunk; ``sink(frame)`` gets each chunk's rows in case order (a
    pandas DataFrame, one row per case and technology)."""
    from . import executor as ex
    from .tech.base import TECHNOLOGIES
    source = cases if hasattr(cases, "draw") else Given(dict(cases))
    n = source.n
    chunk = chunk or default_chunk(scenario)
    techs = list(scenario.technologies)
    metrics = {t: {m: np.full(n, np.nan) for m in METRICS} for t in techs}
    feasible = {t: np.zeros(n, dtype=bool) for t in techs}
    floor = np.full(n, np.nan)
    values = {k: np.empty(n) for k in source.keys}
    counts: dict = {}
    outside: dict = {}
    units = display_units(scenario, source.keys, axes) if sink is not None else None
    registered = {t: TECHNOLOGIES[t] for t in techs}
    tasks = (ChunkTask(scenario, registered, source, a, min(n, a + chunk), units) for a in range(0, n, chunk))
    for r in ex.imap(executor or ex.Serial(), evaluate_chunk, tasks, in_flight):
        sl = slice(r.start, r.stop)
        floor[sl] = r.floor
        for k, v in r.cases.items():
            values[k][sl] = v
        for t in techs:
            feasible[t][sl] = r.feasible[t]
            for m in METRICS:
                metrics[t][m][sl] = r.metrics[t][m]
        for key, (c, first) in r.counts.items():
            old = counts.get(key, [0, first])
            counts[key] = [old[0] + c, min(old[1], first)]
        for k, c in r.outside.items():
            outside[k] = outside.get(k, 0) + c
        if sink is not None:
            sink(r.frame)
        if progress is not None:
            progress(r.stop, n)
    # in the order of the first case each flag holds in (whatever the chunks), then of the layers
    order = sorted(counts, key=lambda key: counts[key][1])
    notes = list(warnings or []) + source.warnings(outside)
    notes += [f"{key[3]} (in {counts[key][0]} of {n} cases)" for key in order]
    flags = [{"kind": k, "code": code, "model": model, "message": msg, "cases": counts[(k, code, model, msg)][0]}
             for (k, code, model, msg) in order]
    return SweepResult(scenario, mode, values, techs, metrics, feasible, floor, list(axes or []), notes, seed, lhs,
                       flags)


def display_units(scenario: Scenario, keys, axes=None) -> dict:
    """key -> (unit label, SI -> display function): a grid axis's own unit, or for sampled keys the unit of the
    scenario's value of that key."""
    out = {}
    by_key = {a.key: a for a in (axes or [])}
    for key in keys:
        spec = _spec(key, key)
        if key in by_key:
            out[key] = (by_key[key].unit, by_key[key].show)
        else:
            raw = scenario.texts.get(key)
            raw = raw[0] if isinstance(raw, list) else raw
            out[key] = _display(spec, raw if isinstance(raw, str) else "1", scenario.currency)
    return out


def _joined(labels: list[str], masks: list, n: int) -> np.ndarray:
    """Per case, the labels whose mask holds there, joined by "; " (each distinct combination joined once)."""
    if not labels:
        return np.full(n, "", dtype=object)
    if len(labels) > 62:
        return np.array(["; ".join(lab for lab, m in zip(labels, masks) if m[i]) for i in range(n)], dtype=object)
    code = np.zeros(n, dtype=np.int64)
    for b, m in enumerate(masks):
        code |= np.asarray(m, dtype=np.int64) << b
    uniq, inv = np.unique(code, return_inverse=True)
    texts = np.array(["; ".join(lab for b, lab in enumerate(labels) if (int(u) >> b) & 1) for u in uniq],
                     dtype=object)
    return texts[inv.reshape(-1)]


def case_frame(res, offset: int, shown: dict):
    """One chunk's rows: a pandas DataFrame with a row per (case, technology), headline figures through the field
    table, and each row's flags (the feed's included) as ``kind:code`` and its warnings."""
    import pandas as pd
    n = res.n_cases
    frames = []
    base = {"case": np.arange(offset, offset + n), **shown,
            "floor_least_work_kwh_per_m3": convert(res.floor.least_work_zero_recovery, "kWh/m3")}
    for t in res.technologies:
        cols = dict(base)
        cols.update({"technology": t.technology, "feasible": t.feasible})
        for f in RECORD_FIELDS:
            cols[f.name] = convert(getattr(t, f.attr), f.unit)
        cols["currency"] = res.scenario.currency
        flags = [*res.floor.flags, *t.flags]
        masks = [f.where((n,)) for f in flags]
        cols["flags"] = _joined([f"{f.kind}:{f.code}" for f in flags], masks, n)
        cols["warnings"] = _joined([f.message for f in flags], masks, n)
        frames.append(pd.DataFrame(cols))
    return pd.concat(frames, ignore_index=True) if frames else pd.DataFrame(base)


# ---------------------------------------------------------------------------------------------- summaries
def _stats(x: np.ndarray, grid: bool) -> dict:
    ok = x[np.isfinite(x)]
    if ok.size == 0:
        out = {"n": 0, "p10": None, "p50": None, "p90": None, "mean": None}
    else:
        p10, p50, p90 = np.percentile(ok, [10, 50, 90])
        out = {"n": int(ok.size), "p10": float(p10), "p50": float(p50), "p90": float(p90), "mean": float(ok.mean())}
    if grid:
        out["min"] = float(ok.min()) if ok.size else None
        out["max"] = float(ok.max()) if ok.size else None
    return out


def summary(sr: SweepResult) -> list[dict]:
    """Per technology and headline metric: n, p10, p50, p90, mean (grids: min and max too), over feasible cases."""
    out = []
    grid = sr.mode == "grid"
    for t in sr.technologies:
        for m, (name, unit) in METRICS.items():
            out.append({"technology": t, "metric": name, "unit": unit.format(currency=sr.scenario.currency),
                        "feasible_share": float(sr.feasible[t].mean()), **_stats(sr.metrics[t][m], grid)})
    out.append({"technology": "floor", "metric": "least_work_kwh_per_m3_zero_recovery", "unit": "kWh/m3",
                "feasible_share": 1.0, **_stats(sr.floor, grid)})
    return out


def first_place(sr: SweepResult, criterion: str) -> np.ndarray:
    """Per case, the index into ``sr.technologies`` of the best feasible technology on ``criterion`` (-1: none)."""
    m = RANK_BY[criterion]
    if not sr.technologies:
        return np.full(sr.n, -1)
    stack = np.vstack([np.where(np.isfinite(sr.metrics[t][m]), sr.metrics[t][m], np.inf) for t in sr.technologies])
    best = np.argmin(stack, axis=0)
    return np.where(np.isfinite(stack.min(axis=0)), best, -1)


def break_even(sr: SweepResult, criterion: str) -> list[dict]:
    """Along the first grid axis, for each combination of the others, where first place changes on ``criterion``:
    the crossing of the two technologies' metric, interpolated linearly between the grid points (in SI, shown in the
    axis's unit); where a technology becomes feasible or infeasible instead, the bracketing grid values."""
    if sr.mode != "grid" or not sr.axes:
        return []
    shape = tuple(a.values.size for a in sr.axes)
    first = first_place(sr, criterion).reshape(shape)
    m = RANK_BY[criterion]
    vals = {t: sr.metrics[t][m].reshape(shape) for t in sr.technologies}
    ax = sr.axes[0]
    out = []
    for rest in np.ndindex(*shape[1:]):
        at = {a.key: float(a.display[i]) for a, i in zip(sr.axes[1:], rest)}
        for i in range(shape[0] - 1):
            a_, b_ = first[(i,) + rest], first[(i + 1,) + rest]
            if a_ == b_:
                continue
            x0, x1 = ax.values[i], ax.values[i + 1]
            names = [sr.technologies[k] if k >= 0 else None for k in (a_, b_)]
            entry = {"criterion": criterion, "key": ax.key, "unit": ax.unit, "from": names[0], "to": names[1],
                     "at": at}
            if a_ >= 0 and b_ >= 0:
                d0 = vals[names[0]][(i,) + rest] - vals[names[1]][(i,) + rest]
                d1 = vals[names[0]][(i + 1,) + rest] - vals[names[1]][(i + 1,) + rest]
                if np.isfinite(d0) and np.isfinite(d1) and d0 != d1:
                    x = x0 + (x1 - x0) * d0 / (d0 - d1)
                    show = ax.display[i] + (ax.display[i + 1] - ax.display[i]) * (x - x0) / (x1 - x0)
                    out.append({**entry, "kind": "crossing", "value": float(show), "value_si": float(x)})
                    continue
            out.append({**entry, "kind": "feasibility", "between": [float(ax.display[i]), float(ax.display[i + 1])]})
    return out


def ranking(sr: SweepResult) -> list[dict]:
    """Per criterion: the share of cases each technology ranks first (and none), per-case first places for grids of
    up to 10,000 points, and the break-even points along the grid."""
    out = []
    for crit in RANK_BY:
        fp = first_place(sr, crit)
        share = {t: float(np.mean(fp == i)) for i, t in enumerate(sr.technologies)}
        share["none feasible"] = float(np.mean(fp < 0))
        entry = {"criterion": crit, "metric": METRICS[RANK_BY[crit]][0], "first_share": share}
        if sr.mode == "grid":
            if sr.n <= 10000:
                entry["first_by_case"] = [sr.technologies[i] if i >= 0 else None for i in fp]
            entry["changes"] = break_even(sr, crit)
        out.append(entry)
    return out


def payload(sr: SweepResult) -> dict:
    """The JSON summary of DESIGN's contract."""
    from .present import CAUTION
    body = {"scenario": sr.scenario.name, "cases": sr.n, "mode": sr.mode, "varied": list(sr.cases),
            "summary": summary(sr), "ranking": ranking(sr), "warnings": sr.warnings, "flags": sr.flags,
            "notice": CAUTION}
    if sr.mode == "grid":
        body["grid"] = [{"key": a.key, "unit": a.unit, "values": a.display.tolist()} for a in sr.axes]
    else:
        body["sampling"] = {"seed": sr.seed, "latin_hypercube": sr.lhs,
                            "distributions": sr.scenario.uncertainty}
    return body


__all__ = ["Axis", "SweepResult", "parse_vary", "grid_cases", "sample_cases", "sampler", "grid", "Samples", "Grid",
           "Given", "ChunkTask", "evaluate_chunk", "run", "summary", "ranking",
           "break_even", "first_place", "payload", "METRICS", "RANK_BY"]
