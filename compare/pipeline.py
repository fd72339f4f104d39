"""The compare pipeline: a resolved scenario (and optionally N varied cases) -> the floor -> every enabled
technology -> its accounts -> one frozen result. One code path serves a single comparison and a sweep; it visits
each layer once and converts no units (presenters do, through :mod:`compare.present.fields`).

Shapes: N cases by M periods (M = 1, or 12 months when the feed temperature is given monthly). Technologies see
arrays that broadcast to (N, M); accounts are per case (production-weighted over the periods).
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass

import numpy as np

from . import accounting as acc
from . import costing
from .errors import InputError
from .flags import Flag, reduce_cases, strict_text
from .scenario import FEED_TEMPERATURE, Scenario
from .concentrate import Chemistry, assess, scaling
from .schema import AT_LIMIT
from .spec import build, specs_of
from .tech.base import TECHNOLOGIES, Feed
from .thermo.activity import get_model
from .thermo.floor import evaluate_floor


@dataclass(frozen=True)
class FloorResult:
    """The feed's floor per case (N,), SI: water activity [-], osmotic pressure [Pa], least work at zero recovery
    [J/m^3], feed salinity [kg/kg] and temperature [K] (production-weighted over the periods); flags (N,)."""

    water_activity: np.ndarray
    osmotic_pressure: np.ndarray
    least_work_zero_recovery: np.ndarray
    salinity: np.ndarray
    temperature: np.ndarray
    model: str
    flags: tuple


@dataclass(frozen=True)
class RunResult:
    """The frozen result of evaluating a scenario on N cases: the floor and one :class:`~compare.accounting.Accounts`
    per enabled technology, in registry order. Presenters read it (:mod:`compare.present.records`)."""

    scenario: Scenario
    n_cases: int
    floor: FloorResult
    technologies: tuple
    varied: dict            # dotted key -> (N,) array of SI values
    periods: int = 1        # periods per case (12 with monthly feed temperatures); details span them by their rule

    @property
    def model(self) -> str:
        return self.floor.model

    def flags(self) -> list[Flag]:
        """Every flag of the run: the floor's, then each technology's."""
        return [*self.floor.flags, *(f for t in self.technologies for f in t.flags)]


def _value(scenario: Scenario, varied: dict, dotted: str, n: int):
    """A (N, 1) array for a varied key, else the scenario's value as is (scalar, or (M,) for temperatures)."""
    if dotted in varied:
        return np.asarray(varied[dotted], dtype=float).reshape(n, 1)
    return scenario.get(dotted)


def evaluate(scenario: Scenario, varied: dict | None = None) -> RunResult:
    """Evaluate every enabled technology of ``scenario`` for N cases (``varied``: dotted key -> (N,) SI values)."""
    varied = dict(varied or {})
    n = len(next(iter(varied.values()))) if varied else 1
    get = lambda k: _value(scenario, varied, k, n)  # noqa: E731

    feed_values = scenario.values["feed"]
    water = feed_values["water"]
    extra = {"composition": feed_values["ions"]} if water == "ions" else {}
    try:
        model = get_model(feed_values["model"], water, **extra)
    except ValueError as exc:
        raise InputError(f"{scenario.path or scenario.name}: feed.model: {exc}") from None

    T = np.atleast_1d(np.asarray(get("feed.temperature"), dtype=float))
    M = 1 if "feed.temperature" in varied else T.shape[-1]

    def grid(x):
        return np.broadcast_to(np.asarray(x, dtype=float), (n, M))

    def case(x):
        return np.broadcast_to(np.asarray(x, dtype=float).reshape(-1), (n,))

    T, S_f = grid(T), grid(get("feed.salinity"))
    weights = acc.month_weights(M)
    capacity = case(get("site.capacity"))
    custom_t0 = ("energy.dead_state_temperature" in varied
                 or scenario.texts.get("energy.dead_state_temperature") != FEED_TEMPERATURE)
    # One dead state for the least work and the value of heat. It is never warmer than the feed: the plants reject
    # their heat to the feed water, so a warmer dead state would count that cold sink's own exergy as free and let
    # an efficiency pass 1.
    T0_given = grid(get("energy.dead_state_temperature")) if custom_t0 else T
    T0 = np.minimum(T0_given, T)
    site = acc.Site(
        weights=weights, heat_temperature=grid(get("energy.heat_temperature")),
        dead_state=T0,
        heat_to_work=scenario.values["energy"]["heat_to_work"],
        condenser_temperature=grid(get("energy.condenser_temperature")),
        turbine_efficiency=grid(get("energy.turbine_efficiency")), product_target=grid(get("product.salinity")),
        capacity=capacity,
        annual_production=capacity * case(get("site.availability")) * acc.SECONDS_PER_YEAR,
        crf=acc.capital_recovery_factor(case(get("finance.discount_rate")), case(get("finance.lifetime"))),
        electricity_price=case(get("energy.electricity_price")), heat_price=case(get("energy.heat_price")),
        electricity_emissions=case(get("energy.electricity_emissions")),
        heat_emissions=case(get("energy.heat_emissions")))

    fl = evaluate_floor(model, S_f, T, 0.0 * S_f, dead_state=T0 if custom_t0 else None)
    warm = T0_given > T + 1e-9
    floor_flags = list(fl.flags)
    if warm.any():
        floor_flags.append(Flag("note", "dead_state", "dead_state_temperature", model.name,
                                "dead state warmer than the feed: the feed temperature is used (the plants reject heat "
                                "to the feed water)", warm))

    def per_case(x):
        return np.sum(grid(x) * weights, axis=1)

    floor = FloorResult(per_case(fl.water_activity), per_case(fl.osmotic_pressure),
                        per_case(fl.least_work_zero_recovery), per_case(S_f), per_case(T), model.name,
                        tuple(reduce_cases(floor_flags, (n, M), axis=1)))

    site_costs = costing.site_costs(get, case)
    feed = Feed(model, water, S_f, T, site.product_target, site.heat_temperature, grid(capacity[:, None]))
    chem = _chemistry(scenario, get)
    results = []
    for name in scenario.technologies:
        tech = TECHNOLOGIES[name]
        params = build(tech.parameters, lambda key: _value(scenario, varied, f"{name}.{key}", n))
        at_limit = {key: spec.role for key, spec in specs_of(tech.parameters).items()
                    if spec.role and isinstance(getattr(params, key, None), str) and getattr(params, key) == AT_LIMIT}
        if at_limit:
            perf, params = _design_at_limit(tech, feed, params, at_limit, chem, (n, M))
        else:
            perf = tech.evaluate(feed, params)
        sc = None
        if chem is not None:
            sc, more = assess(name, tech.concentrate, perf, feed, chem, (n, M))
            perf = dataclasses.replace(perf, flags=tuple(perf.flags) + tuple(more))
        flows = acc.plant_flows(perf, feed, site, tech.concentrate, (n, M), model.water)
        costs = costing.build(name, perf, params, site_costs, capacity, weights, site.annual_production, flows)
        results.append(acc.account(name, perf, model, feed, site, None, None, costs=costs, roles=tech.concentrate,
                                   scaling=sc, flows=flows, described=tech.details))
    return RunResult(scenario, n, floor, tuple(results), varied, M)


def _chemistry(scenario: Scenario, get) -> Chemistry | None:
    """The scaling check of an ion composition (None for other feeds or with scaling.enabled = false)."""
    from .scenario import SCALING_KEYS
    from .thermo.scaling import Limit, scaling_table

    feed, sc = scenario.values["feed"], scenario.values.get("scaling", {})
    if feed["water"] != "ions" or not sc.get("enabled", True):
        return None
    limits = {mineral: Limit("concentration" if mineral == "silica" else "si", get(f"scaling.{key}"))
              for key, mineral in SCALING_KEYS.items()}
    try:
        table = scaling_table(feed["ions"])
    except ValueError as exc:
        raise InputError(f"{scenario.path or scenario.name}: feed.ions: {exc}") from None
    return Chemistry(table, limits, sc["above_limit"], sc["antiscalant"])


def _design_at_limit(tech, feed: Feed, params, keys: dict, chem: Chemistry, shape):
    """The technology designed at its scaling limit: its recovery (or brine salinity) set to the highest that keeps
    every mineral under its limit, found by repeating the design (secant steps) until the limit it gives stops moving
    (the wall's polarisation depends on the design), to 1e-6. One recovery per case: the worst period's."""
    from .thermo.scaling import Limit

    S_f = np.broadcast_to(np.asarray(feed.salinity, dtype=float), shape)
    S_t = np.broadcast_to(np.asarray(feed.product_salinity, dtype=float), shape)
    limits = {m: Limit(lim.kind, np.broadcast_to(np.asarray(lim.value, dtype=float), shape))
              for m, lim in chem.limits.items()}
    first = scaling(chem.table, limits, S_f, 2 * S_f, S_t, 0.5, [np.broadcast_to(feed.temperature, shape)])
    r = np.min(np.clip(np.nan_to_num(first.max_recovery, nan=0.5), 0.01, 0.99), axis=1, keepdims=True)
    S_p = np.zeros(shape)
    r_prev = g_prev = None
    for _ in range(12):
        with np.errstate(invalid="ignore", divide="ignore"):
            brine = (S_f - r * S_p) / (1 - r)
        p = dataclasses.replace(params, **{k: (r if role == "recovery" else brine) for k, role in keys.items()})
        perf = tech.evaluate(feed, p)
        sc, _ = assess(tech.name, tech.concentrate, perf, feed, chem, shape)
        r_new = np.min(np.clip(np.where(np.isfinite(sc.max_recovery), sc.max_recovery, r), 0.01, 0.99), axis=1,
                       keepdims=True)
        S_p = np.nan_to_num(np.broadcast_to(np.asarray(perf.product_salinity, dtype=float), shape))
        g = r_new - r
        if np.max(np.abs(g)) < 1e-6:
            break
        # secant on g(r) = limit(r) - r once two designs are known (a plain repeat converges slowly where the
        # polarisation moves with the recovery, as in FO); the repeat where the secant is undefined
        step = r_new
        if g_prev is not None:
            d = g - g_prev
            with np.errstate(invalid="ignore", divide="ignore"):
                sec = r - g * (r - r_prev) / d
            step = np.where(np.isfinite(sec) & (np.abs(d) > 1e-12), sec, r_new)
        r_prev, g_prev = r, g
        r = np.clip(step, 0.01, 0.99)
    return perf, p


def strict_flag(result: RunResult) -> Flag | None:
    """The first ``out_of_range`` flag of a run (``--strict`` refuses it), or None."""
    for f in result.flags():
        if f.kind == "out_of_range" and f.any():
            return f
    return None


def check_strict(result: RunResult) -> None:
    """Raise a one-line input error naming the first ``out_of_range`` flag (``--strict``)."""
    f = strict_flag(result)
    if f is not None:
        raise InputError(f"--strict: {result.scenario.name}: {f.kind} {f.code} ({f.model}): {strict_text(f.message)}")

