"""Claims: a figure someone asserts (specific electricity, and heat at its temperature, per m^3 of product at a
recovery, for a technology) judged at a scenario's site.

A claim is compared with three figures, all on one footing, the work equivalent (electricity plus the exergy of
heat, Q (1 - T0/T_heat), T0 the feed temperature: the same dead state as the least work):

1. the least work of separation of the claimed streams (the feed at the claimed recovery, the product at the
   scenario's product target), :func:`compare.thermo.floor.least_work` with the feed's activity model;
2. this tool's design of that technology with best-practice parameters (:data:`ADAPTERS`: which keys are set, which
   are searched, and why), at the claimed recovery;
3. its design with the scenario's own parameters, at the claimed recovery.

Verdicts (:data:`VERDICTS`): ``invalid`` (the claim contradicts itself: heat no warmer than the feed cannot drive a
thermal process), ``below_floor`` (impossible), ``no_model_design`` (above the least work, but this tool has no
feasible design of the technology at that recovery to compare with, even with best-practice parameters: the binding
limits are named), ``below_model`` (below the best-practice design: extraordinary, needs evidence), ``within_model``
(from the best-practice design up to the scenario's design times :data:`MARGIN`, or the best-practice design's when
the scenario's is infeasible) and ``above_model`` (above that: wasteful, or a different scope). Designs run through the public pipeline
(:func:`compare.scenario.load` or :func:`compare.scenario.resolve` with overrides, then
:func:`compare.pipeline.evaluate`); nothing here copies model code.
"""

from __future__ import annotations

import json
import math
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from .errors import InputError
from .scenario import FEED_TEMPERATURE, Scenario, load, resolve
from .thermo.constants import J_PER_KWH

#: the upper end of ``within_model``: the scenario's design times this margin
MARGIN = 1.25
MARGIN_SOURCE = ("practice: a plant runs some 10-25 % above its design figure (fouling, part load, ageing); "
                 "no source")
VERDICTS = ("invalid", "below_floor", "no_model_design", "below_model", "within_model", "above_model")
#: a ``within_model`` claim within this share above the band's lower end is "at the best-practice end"
NEAR = 0.05
SCOPES = {"plant": "whole plant: intake, pretreatment, the separation step and post-treatment",
          "process": "the separation step alone (no intake, pretreatment or post-treatment)"}


@dataclass(frozen=True)
class Adapter:
    """How a claim maps onto one technology's scenario keys.

    ``recovery(r, scenario)`` gives the ``--set`` texts that make the design run at mass recovery ``r``;
    ``best`` the best-practice keys (key -> (value text, why)); ``search`` keys tried over a list of values (every
    combination, evaluated as one vectorised run) of which the feasible design with the least work equivalent is
    kept; ``scope`` the keys each scope sets in the best-practice design, and ``scope_scenario`` those it sets in the
    scenario's design (key -> (value text, why)): a whole-plant claim meets the scenario's own plant figures, a
    process claim meets both designs without them.
    """

    recovery: object
    best: dict
    search: dict = field(default_factory=dict)
    scope: dict = field(default_factory=dict)
    scope_scenario: dict = field(default_factory=dict)


def _ro_recovery(r, scenario):
    return [f"ro.recovery={r!r}"]


def _fo_recovery(r, scenario):
    return [f"fo.recovery={r!r}"]


def _med_recovery(r, scenario):
    # MED's recovery is that of its evaporator feed, set by the brine salinity: r = 1 - S_f / S_b (pure distillate)
    S_f = float(scenario.values["feed"]["salinity"])
    return [f"med.brine_salinity={S_f / (1.0 - r) * 1e3!r} g/kg"]


_RO_BEST = {
    "pressure_drop_per_element": ("0 bar", "the lowest pressure drop the tool accepts"),
    "pump_efficiency": ("0.88", "practice: top of the 80-88 % range of high-pressure pumps"),
    "motor_efficiency": ("0.97", "practice: premium-efficiency large motor"),
    "energy_recovery": ("isobaric", "practice: the most efficient energy recovery device in use"),
    "energy_recovery_efficiency": ("0.98", "practice: top of the 94-98 % range of isobaric exchangers"),
    "energy_recovery_mixing": ("0", "the lowest mixing the tool accepts"),
    "mass_transfer_coefficient": ("4e-5 m/s", "from memory: top of the 1-4e-5 m/s range of spiral-wound channels"),
}
_RO_SEARCH = {
    "water_permeability": (["1 L/m^2/h/bar", "1.5 L/m^2/h/bar", "2 L/m^2/h/bar", "3 L/m^2/h/bar", "5 L/m^2/h/bar",
                            "8 L/m^2/h/bar", "12 L/m^2/h/bar", "20 L/m^2/h/bar", "50 L/m^2/h/bar",
                            "1000 L/m^2/h/bar"],
                           "membranes from 1 to 1000 L/m2/h/bar, with the flux: the least-energy design that stays "
                           "within the tool's limits (the lead element's flux caps how permeable a membrane helps)"),
    "flux": (["10 L/m^2/h", "12 L/m^2/h", "14 L/m^2/h"], "with the permeability; practice: seawater design flux "
             "10-14 L/m2/h"),
}
_PLANT_OTHER = ("0.3 kWh/m^3", "practice: the lean end of intake, pretreatment and post-treatment electricity "
                "(no source)")
_PROCESS_OTHER = ("0 kWh/m^3", "the separation step alone")

ADAPTERS: dict[str, Adapter] = {
    "ro": Adapter(_ro_recovery, _RO_BEST, _RO_SEARCH,
                  {"plant": {"other_electricity": _PLANT_OTHER}, "process": {"other_electricity": _PROCESS_OTHER}},
                  {"process": {"other_electricity": _PROCESS_OTHER}}),
    "med": Adapter(
        _med_recovery,
        {"top_brine_temperature": ("70 degC", "practice: the top of the 65-70 degC range that limits scaling"),
         "vapor_compression": ("false", "plain MED: its heat at the lowest temperature has the least exergy"),
         "electricity": ("1.5 kWh/m^3", "practice: the bottom of the 1.5-2.5 kWh/m3 range of MED pumping")},
        {"effects": ([str(n) for n in range(2, 17)], "the most effects (2-16) that still leave each effect a "
                                                     "temperature difference")},
        # MED's electricity is a whole-plant figure in this tool: a process-scope claim is judged on it too
        {"plant": {}, "process": {}}),
    "fo": Adapter(
        _fo_recovery,
        {**{f"regenerator.{k}": v for k, v in _RO_BEST.items() if k != "energy_recovery"},
         "regenerator.energy_recovery": _RO_BEST["energy_recovery"],
         "circulation_electricity": ("0.1 kWh/m^3", "from memory: the low end of low-pressure feed and draw loops")},
        {"draw_concentration": (["1.2 mol/kg", "1.5 mol/kg", "2 mol/kg", "2.5 mol/kg", "3 mol/kg"],
                                "a draw strong enough for the recovery, and no stronger than its regenerator "
                                "needs")},
        {"plant": {"other_electricity": _PLANT_OTHER}, "process": {"other_electricity": _PROCESS_OTHER}},
        {"process": {"other_electricity": _PROCESS_OTHER}}),
}


def kwh(x) -> float | None:
    """J/m^3 -> kWh/m^3 (None stays None)."""
    return None if x is None else float(x) / J_PER_KWH


def _num(v) -> float | None:
    """A record figure as a float, or None where it is missing (null or NaN: an infeasible design)."""
    if v is None:
        return None
    v = float(v)
    return v if math.isfinite(v) else None


# ---------------------------------------------------------------------------------------------------- scenarios
class _Source:
    """The scenario a claim is judged at: a file path or a parsed dict, re-resolved with extra overrides."""

    def __init__(self, source, overrides=()):
        self.source = source
        self.overrides = list(overrides)

    def resolve(self, extra=()) -> Scenario:
        merged: dict[str, str] = {}
        for text in [*self.overrides, *extra]:
            merged[text.split("=", 1)[0].strip()] = text      # later texts win: best practice over the user's --set
        over = list(merged.values())
        if isinstance(self.source, (str, Path)):
            return load(self.source, over)
        return resolve(self.source, label="scenario", overrides=over)


def _design_overrides(tech: str, scenario: Scenario) -> list[str]:
    """Only ``tech`` enabled; heat valued by exergy against the feed temperature (the least work's dead state)."""
    others = [f"{t}.enabled=false" for t in scenario.technologies if t != tech]
    return [*others, f"{tech}.enabled=true", "energy.heat_to_work=exergy",
            f"energy.dead_state_temperature={FEED_TEMPERATURE}"]


#: the scenario key that binds an infeasible flag of a design, and the limit in words: (model, code) -> (key, text)
LIMITS = {
    ("ro", "max_pressure"): ("max_pressure", "the feed pressure needed is above {key} {value}"),
    ("ro", "driving_force"): ("max_pressure", "the concentrate's osmotic pressure leaves no net driving pressure at "
                                              "the end of the vessel even at {key} {value} (thermodynamic "
                                              "restriction)"),
    ("ro", "lead_flux"): ("max_lead_flux", "the lead element's flux is above {key} {value}{lowered}"),
}
#: the two designs by their short names (band labels)
SHORT = {"best_practice": "best-practice design", "scenario_design": "scenario's design"}
_PREFIX = {"ro": ("ro.", "RO: "), "fo/ro": ("fo.regenerator.", "FO regenerator: ")}


def binding_limits(scenario: Scenario, flags) -> list[str]:
    """The reasons of a design's ``infeasible`` flags (records' flag dicts), each naming the scenario key that binds
    and its value as resolved (``ro.max_pressure 82.7 bar``) where :data:`LIMITS` knows it, else the flag's own
    message; once each, in order."""
    from .tech.ro import LOWEST_FLUX_SHARE
    out = []
    for f in flags:
        if f.get("kind") != "infeasible":
            continue
        model = f.get("model", "")
        known = LIMITS.get((model.split("/")[-1], f.get("code")))
        if known and model in _PREFIX:
            key, text = known
            prefix, label = _PREFIX[model]
            lowered = (f" even at {LOWEST_FLUX_SHARE:.0%} of the design flux"
                       if scenario.texts.get(f"{prefix}lead_flux_limit") == "lower_flux" else "")
            value = str(scenario.texts.get(prefix + key, "")).replace("^", "")
            line = label + text.format(key=prefix + key, value=value, lowered=lowered)
        else:
            line = f.get("message", "")
        if line and line not in out:
            out.append(line)
    return out


def _design_figures(rec: dict, scenario: Scenario) -> dict:
    return {
        "feasible": bool(rec["feasible"]),
        "recovery": _num(rec.get("recovery")),
        "electricity_kwh_per_m3": _num(rec.get("electricity_kwh_per_m3")),
        "heat_kwh_per_m3": _num(rec.get("heat_kwh_per_m3")),
        "heat_temperature_c": _num(rec.get("heat_temperature_c")),
        "work_equivalent_kwh_per_m3": _num(rec.get("work_equivalent_kwh_per_m3")) if rec["feasible"] else None,
        "warnings": list(rec.get("warnings", [])),
        "flags": list(rec.get("flags", [])),
        "limits": [] if rec["feasible"] else binding_limits(scenario, rec.get("flags", [])),
    }


def _evaluate(source: _Source, tech: str, extra: list[str], search: dict):
    """The design of ``tech`` with ``extra`` overrides; with ``search``, every combination of the searched values in
    one vectorised run, keeping the feasible case with the least work equivalent (else the first case)."""
    from .pipeline import evaluate
    from .schema import parse_value

    scenario = source.resolve(extra)
    if not search:
        return _design_figures(scenario_record(scenario, tech), scenario), {}
    from .scenario import sections
    specs = sections()[tech]
    keys = list(search)
    grids = [values for values, _ in search.values()]
    combos = np.array(np.meshgrid(*[np.arange(len(g)) for g in grids], indexing="ij")).reshape(len(keys), -1)
    ctx = {"currency": scenario.currency, "water": scenario.values["feed"]["water"],
           "temperature": _weighted_temperature(scenario)}
    varied = {f"{tech}.{k}": np.array([float(parse_value(specs[k], grids[j][i], k, **ctx)) for i in combos[j]])
              for j, k in enumerate(keys)}
    result = evaluate(scenario, varied)
    from .present.records import records as _records
    records = [next(r for r in _records(result, i) if r["technology"] == tech) for i in range(result.n_cases)]
    work = [(_num(r.get("work_equivalent_kwh_per_m3")) if r["feasible"] else None) for r in records]
    feasible = [i for i, w in enumerate(work) if w is not None]
    best = min(feasible, key=lambda i: work[i]) if feasible else 0
    chosen = {k: grids[j][combos[j][best]] for j, k in enumerate(keys)}
    return _design_figures(records[best], scenario), chosen


def _weighted_temperature(scenario: Scenario) -> float:
    """The feed temperature [K], production-weighted over the periods (as ``compare`` shows it)."""
    from .accounting import month_weights
    T = np.atleast_1d(np.asarray(scenario.values["feed"]["temperature"], dtype=float))
    return float(np.sum(month_weights(T.size) * T))


def scenario_record(scenario: Scenario, tech: str) -> dict:
    """The contract record of ``tech`` for ``scenario`` (one case)."""
    from .pipeline import evaluate
    from .present.records import records
    return next(r for r in records(evaluate(scenario)) if r["technology"] == tech)


# ---------------------------------------------------------------------------------------------------- judging
#: the two designs of a site, technology, recovery and scope, computed once per process: claims at the same site
#: (a report's, a test's) share them; keyed by the scenario file's hash, so an edited file is evaluated again
_DESIGNS: dict = {}

def _least_work(scenario: Scenario, r: float) -> tuple[float, float, list[str]]:
    """Least work [kWh/m^3] of the claimed streams (feed at recovery ``r``, product at the scenario's target), the
    production-weighted dead state [K] (the feed temperature) and the messages of its ``out_of_range`` flags (a
    brine beyond the model's validated range).

    A recovery whose brine lies beyond the activity model's reach is bad input, as for ``desal floor``."""
    from .accounting import month_weights
    from .thermo.activity import get_model
    from .thermo.floor import brine_salinity, evaluate_floor

    feed = scenario.values["feed"]
    extra = {"composition": feed["ions"]} if feed["water"] == "ions" else {}
    model = get_model(feed["model"], feed["water"], **extra)
    T = np.atleast_1d(np.asarray(feed["temperature"], dtype=float))
    S_p = scenario.values["product"]["salinity"]
    S_b = float(brine_salinity(feed["salinity"], r, S_p))
    reach = model.validity.max_salinity
    if S_b > reach:
        raise InputError(f"--recovery: expected a recovery that leaves a liquid brine within the reach of model "
                         f"{model.name} (brine up to {reach * 1e3:.4g} g/kg), got {r:g} (the brine would be "
                         f"{S_b * 1e3:.0f} g/kg)")
    fl = evaluate_floor(model, feed["salinity"], T, r, S_p)
    w = month_weights(T.size)
    warnings = [f.message for f in fl.flags if f.kind == "out_of_range" and f.quantity.startswith("brine")]
    return float(np.sum(w * fl.least_work)) / J_PER_KWH, _weighted_temperature(scenario), warnings


def claim_work_equivalent(electricity, heat, heat_temperature, T0) -> tuple[float, float]:
    """Work equivalent [same unit as electricity] of a claim and the exergy factor of its heat [-].

    Heat is valued by its exergy Q (1 - T0/T_heat) (Bejan 2016, Advanced Engineering Thermodynamics), zero at or
    below the dead state; ``T0`` may be the twelve monthly feed temperatures (weighted by days).

    Examples
    --------
    >>> we, phi = claim_work_equivalent(1.0, 10.0, 343.15, 298.15)   # 70 degC heat, 25 degC dead state
    >>> round(phi, 4), round(we, 3)
    (0.1311, 2.311)
    """
    from .accounting import exergy_factor, month_weights

    if not heat:
        return float(electricity), 0.0
    T0 = np.atleast_1d(np.asarray(T0, dtype=float))
    phi = float(np.sum(month_weights(T0.size) * exergy_factor(heat_temperature, T0)))
    return float(electricity) + float(heat) * phi, phi


def judge(source, claim: dict, overrides=()) -> dict:
    """The verdict on ``claim`` at the site of ``source`` (a scenario path or a parsed scenario dict, with the
    ``--set`` texts ``overrides``).

    ``claim`` holds SI values as :func:`compare.scenario.parse_claims` gives them: ``technology``, ``electricity``
    and ``heat`` [J/m^3], ``heat_temperature`` [K] or None, ``recovery`` or None (then the scenario design's),
    ``scope`` (``plant`` or ``process``) and ``source`` (free text). Returns a plain dict (JSON-ready).
    """
    src = _Source(source, overrides)
    tech = claim["technology"]
    if tech not in ADAPTERS:
        raise InputError(f"--technology: expected one of {', '.join(ADAPTERS)} (technologies with a best-practice "
                         f"parameter set), got {tech!r}")
    adapter = ADAPTERS[tech]
    scope = claim.get("scope") or "plant"
    base = src.resolve()
    common = _design_overrides(tech, base)
    scope_set = [f"{tech}.{k}={v}" for k, (v, _) in adapter.scope.get(scope, {}).items()]
    scope_scen = [f"{tech}.{k}={v}" for k, (v, _) in adapter.scope_scenario.get(scope, {}).items()]
    r = claim.get("recovery")
    if r is None:
        r = _num(scenario_record(src.resolve(common + scope_scen), tech)["recovery"])
        if r is None:
            raise InputError(f"--recovery: expected a recovery (the scenario's design of {tech} gives none), got none")
    at_r = adapter.recovery(float(r), base)
    lw, T0, lw_warnings = _least_work(base, float(r))
    T_feed = np.atleast_1d(np.asarray(base.values["feed"]["temperature"], dtype=float))

    e, q = kwh(claim["electricity"]), kwh(claim.get("heat") or 0.0)
    Th = claim.get("heat_temperature")
    w_claim, phi = claim_work_equivalent(e, q, Th if Th is not None else np.nan, T_feed)

    key = (base.sha256 or json.dumps(src.source, sort_keys=True, default=str), tuple(src.overrides), tech,
           float(r), scope)
    if key not in _DESIGNS:
        if len(_DESIGNS) > 64:
            _DESIGNS.clear()
        best_set = [f"{tech}.{k}={v}" for k, (v, _) in adapter.best.items()]
        _DESIGNS[key] = (_evaluate(src, tech, common + at_r + scope_scen, {})[0],
                         *_evaluate(src, tech, common + at_r + best_set + scope_set, adapter.search))
    scen, best, chosen = _DESIGNS[key]

    w_best, w_scen = best["work_equivalent_kwh_per_m3"], scen["work_equivalent_kwh_per_m3"]
    name = tech.upper()
    labels = {"best_practice": f"best-practice {name} design", "scenario_design": f"scenario's {name} design"}
    known = {k: w for k, w in (("best_practice", w_best), ("scenario_design", w_scen)) if w is not None}
    lower_from = min(known, key=known.get) if known else None
    upper_from = "scenario_design" if w_scen is not None else ("best_practice" if w_best is not None else None)
    lower = known.get(lower_from)
    upper = None if upper_from is None else MARGIN * known[upper_from]
    top_label = (f"{labels[upper_from]} x {MARGIN:g}" if upper_from else "")
    limits = []
    for k in ("best_practice", "scenario_design"):
        for line in (best if k == "best_practice" else scen)["limits"]:
            hit = next((x for x in limits if x["limit"] == line), None)
            if hit is None:
                limits.append({"limit": line, "designs": [k]})
            else:
                hit["designs"].append(k)
    fmt = lambda x: f"{x:.2f} kWh/m3"  # noqa: E731
    T_hot = float(np.max(T_feed))
    position = None
    # a process that takes heat in its designs (MED, FO with a thermal regenerator) is driven by it; for any other
    # the claimed heat only adds its exergy, which heat no warmer than the feed lacks
    thermal = any((d.get("heat_kwh_per_m3") or 0.0) > 0 for d in (scen, best))
    if q > 0 and Th is not None and float(Th) <= T_hot and not thermal:
        verdict = "invalid"
        feed = (f"the feed is at {T0 - 273.15:.1f} degC" if T_feed.size == 1 else
                f"the feed reaches {T_hot - 273.15:.1f} degC")
        why = (f"heat at {float(Th) - 273.15:.3g} degC has no work value at this site ({feed}), so the claim as "
               "stated cannot be judged")
    elif q > 0 and Th is not None and float(Th) <= T_hot:
        verdict = "invalid"
        if T_feed.size == 1 or float(Th) <= T0:
            why = (f"heat at {float(Th) - 273.15:.3g} degC is no warmer than the feed ({T0 - 273.15:.1f} degC): it "
                   f"cannot drive {name}; its exergy here is zero, so the claim as stated cannot be judged")
        else:
            why = (f"heat at {float(Th) - 273.15:.3g} degC is no warmer than the feed in its warmest months (up to "
                   f"{T_hot - 273.15:.1f} degC): it cannot drive {name} then, so the claim as stated cannot be "
                   "judged year-round")
    elif w_claim < lw:
        verdict = "below_floor"
        why = (f"the claim's work equivalent {fmt(w_claim)} is below the least work of its own streams, {fmt(lw)}, "
               "which no process can beat")
    elif lower is None:
        verdict = "no_model_design"
        why = (f"the claim's work equivalent {fmt(w_claim)} is above the least work ({fmt(lw)}), but this tool has no "
               f"feasible {name} design at recovery {r:.3g} at this site to compare it with, even with best-practice "
               "parameters (the binding limits are listed)")
    elif w_claim < lower:
        verdict = "below_model"
        why = (f"the claim's work equivalent {fmt(w_claim)} is below this tool's {labels[lower_from]}, "
               f"{fmt(lower)}, though above the least work, {fmt(lw)}")
    elif w_claim <= upper:
        verdict = "within_model"
        if w_claim <= lower * (1 + NEAR):
            position = f"at its best-practice end, within {NEAR:.0%} of the {labels[lower_from]}"
        why = (f"the claim's work equivalent {fmt(w_claim)} lies between the {labels[lower_from]}, {fmt(lower)}, "
               f"and the {top_label}, {fmt(upper)}")
    else:
        verdict = "above_model"
        why = (f"the claim's work equivalent {fmt(w_claim)} is above the {top_label}, {fmt(upper)}, unless the "
               "claim covers more than its stated scope")
    texts = claim.get("texts", {})
    return {
        "verdict": verdict,
        "position": position,
        "explanation": why,
        "claim": {
            "technology": tech, "scope": scope, "scope_means": SCOPES[scope], "source": claim.get("source", ""),
            "recovery": float(r), "recovery_from": "claim" if claim.get("recovery") is not None else
            f"the scenario's {name} design",
            "electricity_kwh_per_m3": e, "heat_kwh_per_m3": q,
            "heat_temperature_c": None if Th is None else float(Th) - 273.15,
            "exergy_factor": phi, "work_equivalent_kwh_per_m3": w_claim,
            "thermal": thermal,
            "as_written": {k: v for k, v in texts.items() if v not in ("(none)", "")},
        },
        "site": {
            "scenario": base.name, "feed_salinity_g_per_kg": float(base.values["feed"]["salinity"]) * 1e3,
            "feed_temperature_c": _weighted_temperature(base) - 273.15,     # production-weighted, as in compare
            "product_salinity_g_per_kg": float(base.values["product"]["salinity"]) * 1e3,
            "dead_state_c": T0 - 273.15,
            "dead_state": "the feed temperature (the least work's own), whatever the scenario's heat_to_work",
        },
        "least_work_kwh_per_m3": lw,
        "warnings": lw_warnings,
        "best_practice": {**best, "parameters": {**{k: {"value": v, "why": why_} for k, (v, why_) in
                                                    adapter.best.items()},
                                                 **{k: {"value": chosen.get(k), "why": f"searched: {why_}"}
                                                    for k, (_, why_) in adapter.search.items()},
                                                 **{k: {"value": v, "why": f"scope: {why_}"} for k, (v, why_) in
                                                    adapter.scope.get(scope, {}).items()}},
                          "note": "the scenario's design of this technology with these keys changed"},
        "scenario_design": {**scen, "parameters": {k: {"value": v, "why": f"scope: {why_}"} for k, (v, why_) in
                                                   adapter.scope_scenario.get(scope, {}).items()},
                            "note": "the scenario's own parameters at the claimed recovery"},
        "margin": MARGIN, "margin_source": MARGIN_SOURCE,
        "within_model_kwh_per_m3": [lower, upper],
        "within_model_from": [lower_from, upper_from],
        "binding_limits": limits,
        "compared": [
            {"figure": "claim, work equivalent", "kwh_per_m3": w_claim},
            {"figure": "least work of the claimed streams", "kwh_per_m3": lw},
            {"figure": labels["best_practice"], "kwh_per_m3": w_best},
            {"figure": labels["scenario_design"], "kwh_per_m3": w_scen},
            {"figure": (f"{SHORT[upper_from]} x {MARGIN:g} (top of within_model)" if upper_from else
                        "top of within_model (no feasible design)"), "kwh_per_m3": upper},
        ],
    }


def load_claims(path) -> list[dict]:
    """The ``[claim]`` or ``[[claim]]`` tables of a TOML file (``--claim-file``), parsed as a scenario's are."""
    from .errors import InputErrors
    from .scenario import SITE_SECTIONS, parse_claims, parse_toml, read_input_file, sections, text_errors

    label = str(path)
    data = parse_toml(read_input_file(path, "claim file"), label)
    errors = text_errors(data, label)
    if errors:
        raise InputErrors(errors)
    errors = [f"{label}: {k}: unknown key (a claim file holds [claim] or [[claim]] tables)" for k in data
              if k != "claim"]
    if "claim" not in data:
        errors.append(f"{label}: claim: expected a table [claim] or tables [[claim]], got none")
    claims = parse_claims(data.get("claim", []), label, errors, [t for t in sections() if t not in SITE_SECTIONS])
    if errors:
        raise InputErrors(errors)
    return list(claims)


def parse_cli_claim(args, technologies) -> dict:
    """A claim from ``desal claim``'s options (one-line errors naming the option)."""
    from .scenario import CLAIM_KEYS, parse_claim_value

    raw = {"technology": args.technology, "electricity": args.electricity, "heat": args.heat or "0 kWh/m^3",
           "heat_temperature": args.heat_temperature or "(none)", "recovery": args.recovery or "(none)",
           "scope": args.scope, "source": "command line"}
    out = {}
    for key, text in raw.items():
        opt = "--" + key.replace("_", "-")
        if key == "scope" and text not in CLAIM_KEYS["scope"].choices:
            raise InputError(f"--scope: expected one of plant, process, got {text!r}")
        out[key] = parse_claim_value(key, text, opt, technologies)
    if out["heat"] > 0 and out["heat_temperature"] is None:
        raise InputError("--heat-temperature: required with --heat, expected a temperature such as \"70 degC\"")
    out["texts"] = {k: v for k, v in raw.items() if k != "source"}
    return out


__all__ = ["judge", "claim_work_equivalent", "parse_cli_claim", "load_claims", "ADAPTERS", "MARGIN", "VERDICTS", "SCOPES"]
