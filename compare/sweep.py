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
(``scipy.stats.qmc.LatinHypercube``) when asked, then mapped to values by :mod:`compare.uncertainty`: each
distribution truncated to its key's valid range (nothing is clipped), rank correlations of ``[correlation]`` through a
Gaussian copula, and shared physical inputs; counts are rounded.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from .errors import InputError
from .schema import Spec, check_bounds, parse_value
from .scenario import Scenario, nearest, sections
from .present.fields import RECORD_FIELDS, convert, share_pct  # pure data, the one field table

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
#: points of one --vary axis at most (the whole sweep is bounded by :func:`size_estimate`)
MAX_AXIS_POINTS = 1_000_000


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


def tidy(v, digits: int = 12):
    """Values rounded to ``digits`` significant figures, each the float nearest its decimal text, so that a grid
    shows as it was given (0.05, not the 0.049999999999999996 that a unit conversion leaves). Vectorised: an
    integer-valued float divided by an exact power of ten is correctly rounded.

    Examples
    --------
    >>> [float(x) for x in tidy([0.049999999999999996, 0.07500000000000001, 0.0, -1.2e-20, 123456789012345.0])]
    [0.05, 0.075, 0.0, -1.2e-20, 123456789012000.0]
    """
    v = np.asarray(v, dtype=float)
    a = np.abs(v)
    ok = np.isfinite(v) & (a > 0)
    e = np.floor(np.log10(np.where(ok, a, 1.0))).astype(int)
    d = digits - 1 - e                        # decimals to keep
    out = v.copy()
    up = ok & (d >= 0) & (d <= 22)            # 10**d exact as a float up to 10**22
    p = 10.0 ** np.where(up, d, 0)
    out[up] = np.round(v[up] * p[up]) / p[up]
    down = ok & (d < 0)
    q = 10.0 ** np.where(down, -d, 0)
    out[down] = np.round(v[down] / q[down]) * q[down]
    return out + 0.0                          # no negative zero


@dataclass(frozen=True)
class Scale:
    """SI -> a display unit: ``v * factor + offset`` (a plain object, so that it travels to worker processes);
    ``exact`` rounds to 12 significant figures (grid values, shown as given)."""

    factor: float = 1.0
    offset: float = 0.0
    exact: bool = False

    def __call__(self, v):
        out = np.asarray(v) * self.factor + self.offset
        return tidy(out) if self.exact else out

    def inverse(self, shown):
        return (np.asarray(shown, dtype=float) - self.offset) / self.factor


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
        if n > MAX_AXIS_POINTS:
            raise InputError(f'{where}: expected at most {MAX_AXIS_POINTS:,} points on one axis, got "{n:,}"')
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
    unit, show = _display(spec, first, scenario.currency)
    if isinstance(show, Scale):
        # the grid as given: its points shown to 12 significant figures, and the SI values taken from them (so that
        # a point equals --set with that value)
        show = Scale(show.factor, show.offset, exact=True)
        shown = show(values)
        values = np.where(np.isfinite(shown), show.inverse(shown), values)
        if spec.kind == "count":
            values = np.round(values)
    # every grid value must pass the key's own bounds (the ends were parsed; check the rest the same way)
    for v in values:
        check_bounds(spec, v, where, body)
    return Axis(key, values, unit, show(values), show)


def grid_cases(axes: list[Axis]) -> dict[str, np.ndarray]:
    """The Cartesian product of the axes, the first varying slowest: key -> (N,) SI values."""
    g = grid(axes)
    return g.draw(0, g.n)


# ---------------------------------------------------------------------------------------------- Monte Carlo
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


@dataclass(frozen=True)
class Samples:
    """Monte Carlo cases as a function of their index: case i takes row i of one seeded stream of uniforms (Latin
    hypercube: its stratum in each dimension plus that row), whatever chunk draws it; the uniforms become values
    through :func:`compare.uncertainty.cases_from_uniforms` (correlation, truncation, shared inputs), row by row."""

    scenario: Scenario
    specs: dict
    keys: tuple
    n: int
    entropy: int
    lhs: bool = False

    def draw(self, start: int, stop: int):
        """Cases ``start:stop``: key -> values."""
        from . import uncertainty as unc
        d = len(self.keys)
        u = _uniforms(self.entropy, start, stop, d)
        if self.lhs:
            u = (_strata(self.entropy, self.n, d)[start:stop] + u) / self.n
        u = np.clip(u, 1e-12, 1 - 1e-12)
        return unc.cases_from_uniforms(self.scenario, u, self.specs)

    def part(self, start: int, stop: int):
        return self


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
        return {k: v[i] for k, v, i in zip(self.keys, self.values, idx)}

    def part(self, start: int, stop: int):
        return self


@dataclass(frozen=True)
class Given:
    """Cases given as arrays (key -> (N,) SI values); ``offset`` is the index of the first (a task's slice)."""

    cases: dict
    offset: int = 0

    @property
    def keys(self) -> tuple:
        return tuple(self.cases)

    @property
    def n(self) -> int:
        return len(next(iter(self.cases.values())))

    def draw(self, start: int, stop: int):
        a, b = start - self.offset, stop - self.offset
        return {k: np.asarray(v)[a:b] for k, v in self.cases.items()}

    def part(self, start: int, stop: int):
        """Only the cases of one chunk, so that a task carries its own slice and not every case."""
        return Given({k: np.asarray(v)[start - self.offset:stop - self.offset] for k, v in self.cases.items()},
                     start)


def sampler(scenario: Scenario, n: int, seed: int | None, lhs: bool = False) -> Samples:
    """The :class:`Samples` of every ``[uncertainty]`` key (checked); ``seed`` None takes fresh entropy."""
    keys, specs = uncertain_specs(scenario)
    if n < 1:
        raise InputError(f"--samples: expected a number of samples of 1 or more, got {n}")
    entropy = np.random.SeedSequence(seed).entropy
    return Samples(scenario, specs, tuple(keys), n, entropy, lhs)


def sampling_notes(scenario: Scenario) -> list[str]:
    """Which distributions were truncated and which inputs are shared (:func:`compare.uncertainty.notes`)."""
    from . import uncertainty as unc
    return unc.notes(scenario, uncertain_specs(scenario)[1])


def grid(axes: list[Axis]) -> Grid:
    """The :class:`Grid` of the axes (each key once)."""
    if len({a.key for a in axes}) != len(axes):
        raise InputError("--vary: each key may be varied once")
    return Grid(tuple(a.key for a in axes), tuple(np.asarray(a.values, dtype=float) for a in axes))


def sample_cases(scenario: Scenario, n: int, seed: int | None, lhs: bool = False):
    """N samples of every ``[uncertainty]`` key: (key -> (N,) SI values, notes). Values come from each key's
    distribution truncated to its valid range, with the ``[correlation]`` rank correlations, and shared inputs added
    (:mod:`compare.uncertainty`); the notes say which distributions were truncated and which inputs are shared.
    Sample i is the same whatever ``n`` and however the sweep cuts the samples into chunks (:class:`Samples`)."""
    plan = sampler(scenario, n, seed, lhs)
    return plan.draw(0, n), sampling_notes(scenario)


def uncertain_specs(scenario: Scenario) -> tuple[list, dict]:
    """The sorted ``[uncertainty]`` keys and their specs (an input error when there are none)."""
    label = scenario.path or scenario.name
    if not scenario.uncertainty:
        raise InputError(f"{label}: uncertainty: --samples needs an [uncertainty] section with at least one key")
    keys = sorted(scenario.uncertainty)
    return keys, {k: _spec(k, f"{label}: uncertainty.{k}") for k in keys}


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

    def to_frame(self):
        """The cases as a pandas DataFrame: a row per (case, technology), the varied keys (SI, named as the keys),
        ``feasible``, the headline metrics under their record names (record units; NaN where infeasible) and the
        floor."""
        import pandas as pd
        frames = []
        for t in self.technologies:
            cols = {"case": np.arange(self.n), **{k: np.asarray(v) for k, v in self.cases.items()},
                    "technology": t, "feasible": self.feasible[t]}
            cols.update({METRICS[m][0]: v for m, v in self.metrics[t].items()})
            cols["floor_least_work_kwh_per_m3"] = self.floor
            frames.append(pd.DataFrame(cols))
        return pd.concat(frames, ignore_index=True) if frames else pd.DataFrame()

    def to_dataset(self):
        """A grid as an xarray Dataset: dimensions the varied keys (coordinates in their display units, as the grid
        was given) and ``technology``; one variable per headline metric (record names and units) and ``feasible``,
        and the floor over the grid. Needs the optional extra ``xarray``."""
        if self.mode != "grid":
            raise ValueError("to_dataset: expected a grid sweep (use to_frame for samples)")
        try:
            import xarray as xr
        except ImportError:
            raise ImportError("to_dataset needs xarray: pip install 'desal-compare[xarray]'") from None
        shape = tuple(a.values.size for a in self.axes)
        dims = [a.key for a in self.axes] + ["technology"]
        coords = {a.key: (a.key, a.display, {"units": a.unit}) for a in self.axes}
        coords["technology"] = list(self.technologies)
        data = {}
        for m, (name, unit) in METRICS.items():
            arr = np.stack([self.metrics[t][m].reshape(shape) for t in self.technologies], axis=-1)
            data[name] = (dims, arr, {"units": unit.format(currency=self.scenario.currency)})
        data["feasible"] = (dims, np.stack([self.feasible[t].reshape(shape) for t in self.technologies], axis=-1))
        data["floor_least_work_kwh_per_m3"] = (dims[:-1], self.floor.reshape(shape), {"units": "kWh/m3"})
        return xr.Dataset(data, coords=coords, attrs={"scenario": self.scenario.name,
                                                      "currency": self.scenario.currency})


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
    part = task.source.draw(task.start, task.stop)
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
    return ChunkResult(task.start, task.stop, part, convert(res.floor.least_work_zero_recovery, "kWh/m3"),
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
    keys = list(source.draw(0, min(n, 1)))           # shared inputs may add keys to the sampled ones
    values = {k: np.empty(n) for k in keys}
    counts: dict = {}
    units = display_units(scenario, keys, axes) if sink is not None else None
    registered = {t: TECHNOLOGIES[t] for t in techs}
    tasks = (ChunkTask(scenario, registered, source.part(a, min(n, a + chunk)), a, min(n, a + chunk), units)
             for a in range(0, n, chunk))
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
        if sink is not None:
            sink(r.frame)
        if progress is not None:
            progress(r.stop, n)
    # in the order of the first case each flag holds in (whatever the chunks), then of the layers
    order = sorted(counts, key=lambda key: counts[key][1])
    notes = list(warnings or [])
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
        if t.scaling is not None:
            cols.update(scaling_columns(t.scaling))
        flags = [*res.floor.flags, *t.flags]
        masks = [f.where((n,)) for f in flags]
        cols["flags"] = _joined([f"{f.kind}:{f.code}" for f in flags], masks, n)
        cols["warnings"] = _joined([f.message for f in flags], masks, n)
        frames.append(pd.DataFrame(cols))
    return pd.concat(frames, ignore_index=True) if frames else pd.DataFrame(base)


def scaling_columns(sc) -> dict:
    """Sweep columns of a technology's scaling: the limiting mineral, the highest recovery and the figures of every
    limited mineral (SI; silica in mg/L), each prefixed ``scaling_``."""
    from .present.fields import SCALING_FIELDS
    from .thermo.scaling import SILICA

    n = np.size(sc.max_recovery)
    cols = {"scaling_limiting_mineral": [sc.limiting_mineral(i) for i in range(n)]}
    cols.update({f"scaling_{f.name}": convert(getattr(sc, f.attr), f.unit) for f in SCALING_FIELDS})
    cols["scaling_above_limit"] = np.asarray(sc.above, dtype=bool)
    for m in sc.names:
        if m != SILICA:
            cols[f"scaling_si_{m.lower()}"] = np.asarray(sc.saturation_index[m], dtype=float)
    return cols


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
    elif ok.size:
        xs = np.sort(ok)
        out["ci"] = {f"p{int(q * 100)}": percentile_interval(xs, q, presorted=True) for q in (0.1, 0.5, 0.9)}
    return out


def percentile_interval(x: np.ndarray, q: float, level: float = 0.95, presorted: bool = False) -> list:
    """A distribution-free confidence interval of the ``q`` quantile from order statistics: the sorted samples
    ``x_(l)`` and ``x_(u)`` with ``l``, ``u`` the binomial(n, q) quantiles at (1 - level)/2 and (1 + level)/2
    (Conover 1999, Practical Nonparametric Statistics, 3rd ed., section 3.2). An end beyond the sample is None:
    too few samples to bound the quantile on that side."""
    from scipy.stats import binom
    xs = np.asarray(x, dtype=float) if presorted else np.sort(np.asarray(x, dtype=float))
    n = xs.size
    lo = int(binom.ppf((1 - level) / 2, n, q))          # 1-based rank of the lower bound
    hi = int(binom.ppf((1 + level) / 2, n, q)) + 1      # 1-based rank of the upper bound
    return [float(xs[lo - 1]) if lo >= 1 else None, float(xs[hi - 1]) if hi <= n else None]


def wilson(k: int, n: int, z: float = 1.959964) -> list:
    """The Wilson score interval (95 %) of a binomial share k/n (Wilson 1927, "Probable inference, the law of
    succession, and statistical inference", J. Am. Stat. Assoc. 22, 209-212), within [0, 1] and holding k/n.

    Examples
    --------
    >>> wilson(0, 50)[0], wilson(50, 50)[1]
    (0.0, 1.0)
    """
    if n == 0:
        return [0.0, 1.0]
    p = k / n
    centre = (p + z * z / (2 * n)) / (1 + z * z / n)
    half = z * np.sqrt(p * (1 - p) / n + z * z / (4 * n * n)) / (1 + z * z / n)
    # the interval holds its own estimate exactly (at k = 0 and k = n rounding would leave 1e-19 or 1 - 1e-16)
    return [float(max(0.0, min(p, centre - half))), float(min(1.0, max(p, centre + half)))]


def separation(shares: dict, intervals: dict, n: int, criterion: str) -> dict:
    """Whether the samples separate the two technologies most often first on ``criterion``, in plain words, with
    the number of samples that would separate shares this far apart (non-overlapping Wilson intervals, normal
    approximation)."""
    ranked = sorted((t for t in shares if t != "none feasible"), key=lambda t: -shares[t])
    pct = lambda t: f"{share_pct(shares[t])} ({share_pct(intervals[t][0])} to {share_pct(intervals[t][1])})"  # noqa: E731
    if not ranked or shares[ranked[0]] == 0:
        return {"separated": False, "statement": f"no technology is feasible in any sample on {criterion}"}
    a = ranked[0]
    if len(ranked) == 1 or shares[ranked[1]] == 0:
        return {"first": a, "separated": True,
                "statement": f"{a.upper()} ranks first on {criterion} in {pct(a)} of samples; no other technology "
                             "ranks first in any sample"}
    b = ranked[1]
    if intervals[a][0] > intervals[b][1]:
        return {"first": a, "second": b, "separated": True,
                "statement": f"{a.upper()} ranks first on {criterion} in {pct(a)} of samples, ahead of {b.upper()} "
                             f"in {pct(b)} (95 % intervals)"}
    pa, pb = shares[a], shares[b]
    need = None
    if pa > pb:
        need = int(np.ceil((1.959964 * (np.sqrt(pa * (1 - pa)) + np.sqrt(pb * (1 - pb))) / (pa - pb)) ** 2))
    more = (f"; about {need:,} samples would separate shares this far apart" if need else
            "; more samples will not separate equal shares")
    return {"first": a, "second": b, "separated": False, "samples_needed": need,
            "statement": f"{n:,} samples cannot separate {a.upper()} and {b.upper()} on {criterion}: first in "
                         f"{pct(a)} and {pct(b)} of samples, and the 95 % intervals overlap{more}"}


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
    """Per criterion: the share of cases each technology ranks first (and none); for samples, the 95 % Wilson
    interval of each share and whether the two leading technologies are told apart; for grids, per-case first
    places (up to 10,000 points) and the break-even points along the grid."""
    out = []
    for crit in RANK_BY:
        fp = first_place(sr, crit)
        counts = {t: int(np.sum(fp == i)) for i, t in enumerate(sr.technologies)}
        counts["none feasible"] = int(np.sum(fp < 0))
        share = {t: c / max(1, sr.n) for t, c in counts.items()}
        entry = {"criterion": crit, "metric": METRICS[RANK_BY[crit]][0], "first_share": share}
        if sr.mode == "grid":
            if sr.n <= 10000:
                entry["first_by_case"] = [sr.technologies[i] if i >= 0 else None for i in fp]
            entry["changes"] = break_even(sr, crit)
        else:
            entry["first_share_ci"] = {t: wilson(c, sr.n) for t, c in counts.items()}
            entry["separation"] = separation(share, entry["first_share_ci"], sr.n, crit)
        out.append(entry)
    return out


def grid_points(sr: SweepResult) -> list[dict]:
    """One row per grid point: the varied keys in their units, each technology's levelized cost and work
    equivalent (None where infeasible), and the first place on cost, energy and emissions."""
    firsts = {c: first_place(sr, c) for c in RANK_BY}
    rows = []
    for i in range(sr.n):
        row = {a.key: float(a.show(sr.cases[a.key][i])) for a in sr.axes}
        for t in sr.technologies:
            for m in ("lcow", "work_equivalent"):
                v = sr.metrics[t][m][i]
                row[f"{t}.{METRICS[m][0]}"] = float(v) if np.isfinite(v) else None
        for c, fp in firsts.items():
            row[f"first_on_{c}"] = sr.technologies[fp[i]] if fp[i] >= 0 else None
        rows.append(row)
    return rows


def grid_frame(sr: SweepResult):
    """``grid.csv``: :func:`grid_points` as a pandas DataFrame whose columns carry their units as the cases file's
    do (``energy.electricity_price [USD/kWh]``, ``ro.levelized_cost_per_m3 [EUR/m3]``); first places have none."""
    import pandas as pd
    units = {a.key: a.unit for a in sr.axes}
    for t in sr.technologies:
        for m in ("lcow", "work_equivalent"):
            units[f"{t}.{METRICS[m][0]}"] = METRICS[m][1].format(currency=sr.scenario.currency)
    frame = pd.DataFrame(grid_points(sr))
    return frame.rename(columns={c: f"{c} [{units[c]}]" for c in frame.columns if c in units})


def distributions_shown(scenario: Scenario) -> dict:
    """The ``[uncertainty]`` distributions in each key's display unit (the unit of the cases file's column and of
    the scenario's value; SI inside), with ``unit`` named: key -> {distribution, unit, its parameters}. A standard
    deviation is a difference (scaled, never offset); a geometric standard deviation has no unit."""
    keys = sorted(scenario.uncertainty)
    units = display_units(scenario, keys)
    out = {}
    for key in keys:
        unit, show = units[key]
        dist = scenario.uncertainty[key]
        entry = {"distribution": dist["distribution"], "unit": unit}
        for name, v in dist.items():
            if name == "distribution":
                continue
            if name == "gsd":
                entry[name] = float(v)
            elif name == "sd":
                entry[name] = float(tidy(float(v) * getattr(show, "factor", 1.0)))
            else:
                entry[name] = float(tidy(show(float(v))))
        out[key] = entry
    return out


def overrides(scenario: Scenario) -> dict:
    """The keys set on the command line (``--set``) as written: dotted key -> value text. Every figure of the sweep
    holds at these values, so its files say so beside the break-even points."""
    from .scenario import parse_override
    out = {}
    for text in scenario.overrides:
        sec, key, value = parse_override(text)
        out[f"{sec}.{key}"] = value
    return out


def payload(sr: SweepResult, sensitivity: dict | None = None) -> dict:
    """The JSON summary of the contract (with a ``sensitivity`` section when one was computed)."""
    from .present import CAUTION
    body = {"scenario": sr.scenario.name, "cases": sr.n, "mode": sr.mode, "varied": list(sr.cases),
            "overrides": overrides(sr.scenario),
            "summary": summary(sr), "ranking": ranking(sr), "warnings": sr.warnings, "flags": sr.flags,
            "notice": CAUTION}
    if sr.mode == "grid":
        body["grid"] = [{"key": a.key, "unit": a.unit, "values": a.display.tolist()} for a in sr.axes]
        if sr.n <= 10000:
            body["grid_points"] = grid_points(sr)
    else:
        body["sampling"] = {"seed": sr.seed, "latin_hypercube": sr.lhs,
                            "distributions": distributions_shown(sr.scenario),
                            "rank_correlations": [{"keys": list(p), "rho": r}
                                                  for p, r in sorted(sr.scenario.correlation.items())]}
    if sensitivity is not None:
        body["sensitivity"] = sensitivity
    return body


__all__ = ["Axis", "SweepResult", "parse_vary", "grid_cases", "sample_cases", "sampler", "grid", "Samples", "Grid",
           "Given", "ChunkTask", "evaluate_chunk", "run", "summary", "ranking",
           "break_even", "first_place", "payload", "METRICS", "RANK_BY"]


# ---------------------------------------------------------------------------------------------- size
#: technology evaluations (cases x technologies x periods) a sweep runs without being told to go on
MAX_EVALUATIONS = 10_000_000
#: measured on the development machine (benchmarks/bench_sweep.py): kept metrics per case and technology, a row of
#: cases.csv, the working set of one chunk, the CPU time of one technology evaluation (benchmarks/bench_speed.py,
#: 2026-12-02: 0.15 ms per RO + MED + FO sample, rounded up)
BYTES_KEPT_PER_ROW = 64
BYTES_CSV_PER_ROW = 450
BYTES_CHUNK = 400e6
SECONDS_PER_EVALUATION = 6e-5


def size_estimate(scenario: Scenario, n_cases: int) -> dict:
    """What a sweep of ``n_cases`` cases of ``scenario`` will take, estimated before it starts: technology
    evaluations (cases x enabled technologies x periods), memory [bytes], the cases file [bytes] and time [s]."""
    techs = max(len(scenario.technologies), 1)
    periods = int(np.size(scenario.values["feed"]["temperature"]))
    rows = n_cases * techs
    evaluations = rows * periods
    return {"cases": n_cases, "technologies": techs, "periods": periods, "evaluations": evaluations,
            "memory": rows * BYTES_KEPT_PER_ROW + BYTES_CHUNK, "disk": rows * BYTES_CSV_PER_ROW,
            "seconds": evaluations * SECONDS_PER_EVALUATION}
