"""The compare pipeline: a resolved scenario (and optionally N varied cases) -> every enabled technology ->
accounting -> one frozen result per run. One code path serves a single comparison and a sweep.

Shapes: N cases by M periods (M = 1, or 12 months when the feed temperature is given monthly). Technologies see
arrays that broadcast to (N, M); annual figures are production-weighted sums over the periods.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from . import accounting as acc
from .errors import InputError
from .scenario import FEED_TEMPERATURE, Scenario
from .tech.base import TECHNOLOGIES, Feed, Performance
from .thermo.activity import get_model, is_out_of_range, out_of_range_text, range_flags
from .thermo.constants import J_PER_KWH
from .thermo.floor import evaluate_floor, least_work

RECORD_FIELDS = (
    "technology", "feasible", "recovery", "product_salinity_g_per_kg", "brine_salinity_g_per_kg",
    "electricity_kwh_per_m3", "heat_kwh_per_m3", "heat_temperature_c", "work_equivalent_kwh_per_m3",
    "least_work_kwh_per_m3", "second_law_efficiency", "power_mw", "heat_mw", "annual_electricity_gwh",
    "annual_heat_gwh", "emissions_kg_per_m3", "annual_emissions_t", "levelized_cost_per_m3", "currency", "warnings",
    "details",
)


@dataclass(frozen=True)
class TechResult:
    """Per-case (N,) arrays for one technology, in SI, with warning and infeasibility texts per case."""

    name: str
    arrays: dict            # name -> (N,) array
    details: dict           # name -> (N,) array
    feasible: np.ndarray    # (N,)
    warnings: list          # per case: list of str


@dataclass(frozen=True)
class RunResult:
    """The frozen result of evaluating a scenario on N cases."""

    scenario: Scenario
    n_cases: int
    floor: dict             # name -> (N,) array
    floor_warnings: list    # per case: list of str
    technologies: tuple     # TechResult, in registry order
    varied: dict            # dotted key -> (N,) array of SI values
    model: str              # name of the feed's water activity model

    def records(self, case: int = 0) -> list[dict]:
        """The contract records of one case, one per technology."""
        return [_record(t, case, self.scenario.currency) for t in self.technologies]

    def floor_record(self, case: int = 0) -> dict:
        f = {k: float(v[case]) for k, v in self.floor.items()}
        return {
            "water_activity": f["water_activity"],
            "osmotic_pressure_bar": f["osmotic_pressure"] / 1e5,
            "least_work_kwh_per_m3_zero_recovery": f["least_work_zero_recovery"] / J_PER_KWH,
            "model": self.model,
            "feed_salinity_g_per_kg": f["salinity"] * 1e3,
            "feed_temperature_c": f["temperature"] - 273.15,
        }

    def warnings(self, case: int = 0) -> list[str]:
        out = list(self.floor_warnings[case])
        for t in self.technologies:
            out += [f"{t.name}: {w}" for w in t.warnings[case]]
        return out


def _record(t: TechResult, i: int, currency: str) -> dict:
    a = {k: float(v[i]) for k, v in t.arrays.items()}
    rec = {
        "technology": t.name,
        "feasible": bool(t.feasible[i]),
        "recovery": a["recovery"],
        "product_salinity_g_per_kg": a["product_salinity"] * 1e3,
        "brine_salinity_g_per_kg": a["brine_salinity"] * 1e3,
        "electricity_kwh_per_m3": a["electricity"] / J_PER_KWH,
        "heat_kwh_per_m3": a["heat"] / J_PER_KWH,
        "heat_temperature_c": a["heat_temperature"] - 273.15 if np.isfinite(a["heat_temperature"]) else None,
        "work_equivalent_kwh_per_m3": a["work_equivalent"] / J_PER_KWH,
        "least_work_kwh_per_m3": a["least_work"] / J_PER_KWH,
        "second_law_efficiency": a["second_law_efficiency"],
        "power_mw": a["power"] / 1e6,
        "heat_mw": a["heat_rate"] / 1e6,
        "annual_electricity_gwh": a["annual_electricity"] / 3.6e12,
        "annual_heat_gwh": a["annual_heat"] / 3.6e12,
        "emissions_kg_per_m3": a["emissions"],
        "annual_emissions_t": a["annual_emissions"] / 1e3,
        "levelized_cost_per_m3": a["lcow"],
        "currency": currency,
        "warnings": list(t.warnings[i]),
        "details": {
            "cost_breakdown_per_m3": {k: a[f"lcow_{k}"] for k in ("capital", "fixed_om", "electricity", "heat")},
            "work_equivalent_of_heat_kwh_per_m3": (a["work_equivalent"] - a["electricity"]) / J_PER_KWH,
            "annual_production_m3": a["annual_production"],
            **{k: float(v[i]) for k, v in t.details.items()},
        },
    }
    return rec


# -------------------------------------------------------------------------------------------------- evaluation
def _value(scenario: Scenario, varied: dict, dotted: str, n: int):
    """A (N, 1) array for a varied key, else the scenario's value as is (scalar, or (M,) for temperatures)."""
    if dotted in varied:
        return np.asarray(varied[dotted], dtype=float).reshape(n, 1)
    return scenario.get(dotted)


def _texts(masks: dict, n: int, M: int) -> list[list[str]]:
    """Per case, the texts whose mask holds in any period."""
    out = [[] for _ in range(n)]
    for text, mask in masks.items():
        m = np.broadcast_to(np.asarray(mask, dtype=bool), (n, M)).any(axis=1)
        for i in np.nonzero(m)[0]:
            out[i].append(text)
    return out


def evaluate(scenario: Scenario, varied: dict | None = None) -> RunResult:
    """Evaluate every enabled technology of ``scenario`` for N cases (``varied``: dotted key -> (N,) SI values)."""
    varied = dict(varied or {})
    n = len(next(iter(varied.values()))) if varied else 1
    get = lambda k: _value(scenario, varied, k, n)  # noqa: E731

    water = scenario.values["feed"]["water"]
    extra = {}
    if water == "ions":
        extra["composition"] = scenario.values["feed"]["ions"]
    model = get_model(scenario.values["feed"]["model"], water, **extra)

    T = np.atleast_1d(np.asarray(get("feed.temperature"), dtype=float))
    M = 1 if "feed.temperature" in varied else T.shape[-1]

    def grid(x):
        return np.broadcast_to(np.asarray(x, dtype=float), (n, M))

    def case(x):
        return np.broadcast_to(np.asarray(x, dtype=float).reshape(-1), (n,))

    T = grid(T)
    S_f = grid(get("feed.salinity"))
    S_p_target = grid(get("product.salinity"))
    T_heat = grid(get("energy.heat_temperature"))
    w = acc.month_weights(M)

    def per_case(x):
        return np.sum(np.broadcast_to(x, (n, M)) * w, axis=1)

    # the floor of the feed
    fl = evaluate_floor(model, S_f, T, 0.0 * S_f)
    floor = {"water_activity": per_case(fl.water_activity), "osmotic_pressure": per_case(fl.osmotic_pressure),
             "least_work_zero_recovery": per_case(fl.least_work_zero_recovery), "salinity": per_case(S_f),
             "temperature": per_case(T)}
    ff = range_flags(model, S_f, T)
    floor_masks = {
        out_of_range_text("feed salinity", model): ff["salinity"],
        out_of_range_text("feed temperature", model): ff["temperature"],
    }
    if model.simplification:
        floor_masks[f"model {model.name} is a simplification for comparison only"] = np.ones((n, M), bool)
    floor_warnings = _texts(floor_masks, n, M)

    feed = Feed(model, water, S_f, T, S_p_target, T_heat, grid(get("site.capacity")))
    en = scenario.values["energy"]
    if "energy.dead_state_temperature" in varied or \
            scenario.texts.get("energy.dead_state_temperature") != FEED_TEMPERATURE:
        T0 = grid(get("energy.dead_state_temperature"))
    else:
        T0 = T                       # default: the feed temperature of each period
    capacity = case(get("site.capacity"))
    annual_production = capacity * case(get("site.availability")) * acc.SECONDS_PER_YEAR
    crf = acc.capital_recovery_factor(case(get("finance.discount_rate")), case(get("finance.lifetime")))

    results = []
    for name in scenario.technologies:
        tech = TECHNOLOGIES[name]
        params = {k: _value(scenario, varied, f"{name}.{k}", n) for k in tech.parameters}
        perf: Performance = tech.evaluate(feed, params)
        e, q, Th = grid(perf.electricity), grid(perf.heat), grid(perf.heat_temperature)
        r, Sp, Sb = grid(perf.recovery), grid(perf.product_salinity), grid(perf.brine_salinity)
        uses_heat = q > 0
        if en["heat_to_work"] == "exergy":
            phi = acc.exergy_factor(np.where(uses_heat, Th, 1000.0), T0)
        else:
            phi = acc.lost_work_factor(np.where(uses_heat, Th, 1000.0), grid(get("energy.condenser_temperature")),
                                       grid(get("energy.turbine_efficiency")))
        work_eq = e + np.where(uses_heat, q * phi, 0.0)
        lw = least_work(model, S_f, T, np.clip(r, 0.0, 0.999), np.minimum(Sp, S_f * 0.999), water)
        infeasible = dict(perf.infeasible)
        too_cold = uses_heat & (Th > T_heat + 1e-9)
        infeasible["needs heat hotter than the site supplies (energy.heat_temperature)"] = too_cold
        flags = dict(perf.flags)
        flags["product salinity above the target (product.salinity)"] = Sp > S_p_target * (1 + 1e-9)
        bf = range_flags(model, Sb, T)
        flags[out_of_range_text("brine salinity", model)] = bf["salinity"] & ~ff["salinity"]
        feasible_nm = np.broadcast_to(perf.feasible, (n, M)) & ~too_cold
        feasible = feasible_nm.all(axis=1)

        e_y, q_y, we_y, lw_y = per_case(e), per_case(q), per_case(work_eq), per_case(lw)
        capital = case(params["capital_cost"]) * capacity * 86400.0
        cost = acc.levelized_cost(capital, case(params["fixed_om"]), annual_production, crf, e_y,
                                  case(get("energy.electricity_price")), q_y, case(get("energy.heat_price")))
        emissions = e_y * case(get("energy.electricity_emissions")) + q_y * case(get("energy.heat_emissions"))
        with np.errstate(invalid="ignore", divide="ignore"):
            arrays = {
                "recovery": per_case(r), "product_salinity": per_case(Sp), "brine_salinity": per_case(Sb),
                "electricity": e_y, "heat": q_y,
                "heat_temperature": np.where(uses_heat.any(axis=1), np.where(uses_heat, Th, -np.inf).max(axis=1),
                                             np.nan),
                "work_equivalent": we_y, "least_work": lw_y, "second_law_efficiency": lw_y / we_y,
                "power": e_y * capacity, "heat_rate": q_y * capacity,
                "annual_electricity": e_y * annual_production, "annual_heat": q_y * annual_production,
                "emissions": emissions, "annual_emissions": emissions * annual_production,
                "lcow": cost["total"], **{f"lcow_{k}": cost[k] for k in ("capital", "fixed_om", "electricity", "heat")},
                "annual_production": annual_production.astype(float),
            }
        details = {k: per_case(np.asarray(val, dtype=float)) for k, val in perf.details.items()}
        warns = _texts({f"infeasible: {k}": m for k, m in infeasible.items()}, n, M)
        for i, extra_w in enumerate(_texts(flags, n, M)):
            warns[i] += extra_w
        results.append(TechResult(name, arrays, details, feasible, warns))
    return RunResult(scenario, n, floor, floor_warnings, tuple(results), varied, model.name)


def check_strict(result: RunResult) -> None:
    """Raise if any out-of-range flag was raised (``--strict``)."""
    for i in range(result.n_cases):
        for w in result.warnings(i):
            if is_out_of_range(w):
                raise InputError(f"--strict: {result.scenario.name}: {w}")
