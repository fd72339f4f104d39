"""Records: the contract's plain dicts, built from a run's SI results through the one field table
(:mod:`compare.present.fields`). JSON, CSV, Markdown, the terminal table and the sweep frames read these."""

from __future__ import annotations

import numpy as np

from . import CAUTION
from .fields import COST_LINES, FLOOR_FIELDS, RECORD_FIELDS, SCALING_FIELDS, SITE_DETAILS, record_name, value


def _flags_at(flags, i) -> list:
    out = []
    for f in flags:
        m = np.asarray(f.mask, dtype=bool)
        if (m.reshape(-1)[i] if m.ndim else bool(m)):
            out.append(f)
    return out


def detail_table(tech_name: str) -> dict:
    """The technology's detail descriptions (name -> Detail) from its registration (empty if unknown)."""
    from ..tech.base import TECHNOLOGIES
    t = TECHNOLOGIES.get(tech_name)
    return t.details if t is not None else {}


def details_record(tech_name: str, details: dict, i: int) -> dict:
    """A technology's design figures of case ``i`` in their display units, named with the unit's suffix; a figure
    the technology did not describe keeps its SI value and name."""
    desc = detail_table(tech_name)
    out = {}
    for key, arr in details.items():
        d = desc.get(key)
        x = np.asarray(arr, dtype=float).reshape(-1)[i]
        if d is None:
            out[key] = float(x) if np.isfinite(x) else None
        else:
            out[record_name(key, d.unit)] = value(x, d.unit)
    return out


def record(result, t, i: int) -> dict:
    """The contract record of technology accounts ``t`` in case ``i`` of ``result``."""
    currency = result.scenario.currency
    flags = [*_flags_at(result.floor.flags, i), *_flags_at(t.flags, i)]
    rec = {"technology": t.technology, "feasible": bool(t.feasible[i])}
    for f in RECORD_FIELDS:
        rec[f.name] = value(getattr(t, f.attr)[i], f.unit)
    rec["currency"] = currency
    rec["warnings"] = [f.message for f in flags]
    rec["flags"] = [f.record() for f in flags]
    rec["details"] = {
        "cost_breakdown_per_m3": {f.name: value(getattr(t, f.attr)[i], f.unit) for f in COST_LINES},
        "capital_breakdown": {k: value(v[i], "{currency}") for k, v in t.capital_items.items()},
        "om_breakdown_per_m3": {k: value(v[i] / t.annual_production[i], "{currency}/m3")
                                for k, v in t.om_items.items()},
        **{f.name: value(getattr(t, f.attr)[i], f.unit) for f in SITE_DETAILS},
        **details_record(t.technology, t.details, i),
    }
    if t.scaling is not None:
        rec["details"]["scaling"] = scaling_record(t.scaling, i)
    return rec


def scaling_record(sc, i: int) -> dict:
    """``details.scaling`` of case ``i``: the limiting mineral, the highest recovery, where the concentrate was
    judged, the limits used (SI; silica in mg/L), and the saturation index of every mineral PHREEQC knows for the
    water, in that concentrate; ``not_given`` lists the minerals with a limit that the feed cannot form (silica not
    given, or a mineral whose ions are not in it), whose figures are null rather than 0."""
    from ..thermo.scaling import SILICA

    out = {"limiting_mineral": sc.limiting_mineral(i)}
    out.update({f.name: value(np.asarray(getattr(sc, f.attr)).reshape(-1)[i], f.unit) for f in SCALING_FIELDS})
    out["above_limit"] = bool(np.asarray(sc.above).reshape(-1)[i])
    out["limits"] = {m: value(np.asarray(v, dtype=float).reshape(-1)[i] if np.ndim(v) else v,
                              "mg/L" if m == SILICA else "-") for m, v in sc.limits.items()}
    out["saturation_index"] = {m: value(np.asarray(v).reshape(-1)[i], "-")
                               for m, v in sorted(sc.saturation_index.items())}
    out["not_given"] = list(sc.not_given)
    return out


def records(result, i: int = 0) -> list[dict]:
    """Every technology's record of case ``i``."""
    return [record(result, t, i) for t in result.technologies]


def floor_of(result, i: int = 0) -> dict:
    """The ``floor`` object of a compare payload for case ``i``."""
    fl = result.floor
    out = {f.name: value(getattr(fl, f.attr)[i], f.unit) for f in FLOOR_FIELDS}
    out["model"] = fl.model
    flags = _flags_at(fl.flags, i)
    out["warnings"] = [f.message for f in flags]
    out["flags"] = [f.record() for f in flags]
    return out


def payload(result, i: int = 0) -> dict:
    """``desal compare --format json`` for case ``i``: scenario, floor, results, warnings, periods (12 with monthly
    feed temperatures: figures are production-weighted over them, design sizes taken at the largest month), notice."""
    recs = records(result, i)
    fl = floor_of(result, i)
    warnings = list(fl["warnings"])
    for r in recs:
        warnings += [w for w in r["warnings"] if w not in warnings]
    return {"scenario": result.scenario.name, "floor": fl, "results": recs, "warnings": warnings,
            "periods": int(getattr(result, "periods", 1)), "notice": CAUTION}


def floor_record(model, S_f, T, r, S_p=0.0) -> dict:
    """The ``desal floor`` record: feed figures, and per recovery the brine and least work (lists for a vector of
    recoveries). SI inputs: S_f, S_p [kg/kg], T [K], r [-]."""
    from ..thermo.floor import evaluate_floor

    f = evaluate_floor(model, S_f, T, r, S_p)
    r_arr = np.asarray(r, dtype=float)

    def one(x, unit):
        return value(np.asarray(x, dtype=float).reshape(-1)[0], unit)

    def per_r(x, unit):
        if r_arr.ndim == 0:
            return one(x, unit)
        return [value(v, unit) for v in np.broadcast_to(np.asarray(x, dtype=float), r_arr.shape)]

    return {
        "water": model.water,
        "model": model.name,
        "salinity_g_per_kg": one(S_f, "g/kg"),
        "temperature_c": round(one(T, "degC"), 9),
        "product_salinity_g_per_kg": one(S_p, "g/kg"),
        "recovery": per_r(r_arr, "-"),
        "water_activity": one(f.water_activity, "-"),
        "osmotic_coefficient": one(model.osmotic_coefficient(S_f, T), "-"),
        "osmotic_pressure_bar": one(f.osmotic_pressure, "bar"),
        "brine_salinity_g_per_kg": per_r(f.brine_salinity, "g/kg"),
        "brine_osmotic_pressure_bar": per_r(f.brine_osmotic_pressure, "bar"),
        "least_work_kwh_per_m3": per_r(f.least_work, "kWh/m3"),
        "least_work_kwh_per_m3_zero_recovery": one(f.least_work_zero_recovery, "kWh/m3"),
        "warnings": [fl.message for fl in f.flags],
        "flags": [fl.record() for fl in f.flags],
    }
