"""Invariants over many random valid cases, evaluated vectorised through the whole pipeline: whatever the inputs,
a feasible record obeys the second law and the salt balance and carries no NaN; an infeasible one says why; an
input outside a model's validated range is flagged.

The cases are drawn across four families (seawater, NaCl up to 250 g/kg, thermal FO priced by the turbine's lost
work, dead states warmer and colder than the feed), 2,560 each, over 10^4 in all. Sources of the physics: the
second law (least work at most the exergy spent, Mistry et al. 2011, Entropy 13, 1829) and the salt balance.
"""

import json

import numpy as np
import pytest

from compare.accounting import DESIGN_DEPENDENT
from compare.flags import infeasible_mask
from compare.pipeline import evaluate
from compare.scenario import resolve
from compare.thermo.activity import model_validity
from compare.thermo.brine import density

N = 2560
C = 273.15

BASE = {
    "name": "Invariant Cove (fictional)",
    "site": {"capacity": "30000 m^3/day"},
    "feed": {"salinity": "35 g/kg", "temperature": "25 degC"},
    "energy": {"heat_temperature": "120 degC"},
}


def _scenario(**sections):
    data = json.loads(json.dumps(BASE))
    for sec, body in sections.items():
        data.setdefault(sec, {}).update(body)
    return resolve(data, label="invariants")


def _recovery_up_to(rng, S_f, reach, top):
    """Recoveries whose brine stays within 97 % of the model's reach (beyond it the input is refused)."""
    r_max = np.minimum(top, 1.0 - S_f / (0.97 * reach))
    return rng.uniform(0.02, 1.0, S_f.size) * r_max


def family(name, rng):
    """(scenario, varied) of one family of N random valid cases."""
    if name == "nacl":
        sc = _scenario(feed={"water": "nacl", "model": "pitzer-nacl"})
        reach = model_validity("pitzer-nacl", "nacl").max_salinity
        S = rng.uniform(0.001, 0.25, N)
        T = rng.uniform(10, 45, N) + C
    else:
        over = {}
        if name == "thermal_fo_lost_work":
            over = {"fo": {"regeneration": "thermal"},
                    "energy": {"heat_to_work": "lost_work", "heat_temperature": "120 degC"}}
        sc = _scenario(**over)
        reach = model_validity("teos10", "seawater").max_salinity
        S = rng.uniform(0.001, 0.12, N)
        T = rng.uniform(2, 40, N) + C
    varied = {"feed.salinity": S, "feed.temperature": T,
              "ro.recovery": _recovery_up_to(rng, S, reach, 0.75),
              "fo.recovery": _recovery_up_to(rng, S, reach, 0.6),
              "med.brine_salinity": np.minimum(S * rng.uniform(1.05, 2.2, N), 0.97 * reach),
              "med.top_brine_temperature": rng.uniform(45, 75, N) + C}
    if name == "thermal_fo_lost_work":
        varied["energy.condenser_temperature"] = rng.uniform(25, 70, N) + C
        varied["energy.turbine_efficiency"] = rng.uniform(0.6, 0.95, N)
    if name == "dead_states":
        varied["energy.dead_state_temperature"] = T + rng.uniform(-25, 45, N)   # warmer and colder than the feed
    return sc, varied


FAMILIES = ("seawater", "nacl", "thermal_fo_lost_work", "dead_states")


@pytest.fixture(scope="module")
def runs():
    rng = np.random.default_rng(20261202)
    out = {}
    for name in FAMILIES:
        sc, varied = family(name, rng)
        with np.errstate(all="ignore"):
            out[name] = (evaluate(sc, varied), varied)
    return out


def test_there_are_ten_thousand_cases_and_most_are_feasible(runs):
    assert sum(res.n_cases for res, _ in runs.values()) >= 10_000
    for name, (res, _) in runs.items():
        for t in res.technologies:
            # the draw is meant to exercise working designs, not only refusals (a loose floor, practice)
            assert t.feasible.mean() > 0.1, (name, t.technology, t.feasible.mean())


@pytest.mark.parametrize("name", FAMILIES)
def test_second_law_and_least_work(runs, name):
    res, varied = runs[name]
    for t in res.technologies:
        ok = t.feasible
        eff = t.second_law_efficiency[ok]
        assert np.all((eff > 0) & (eff < 1)), (t.technology, np.max(eff))
        assert np.all(t.least_work[ok] > 0)
        if res.scenario.values["energy"]["heat_to_work"] == "exergy":
            # work spent (electricity plus the heat's exergy) at least the least work
            assert np.all(t.work_equivalent[ok] >= t.least_work[ok])


@pytest.mark.parametrize("name", FAMILIES)
def test_salt_balance(runs, name):
    res, varied = runs[name]
    S_f = varied["feed.salinity"]
    for t in res.technologies:
        ok = t.feasible
        r, S_p, S_b = t.recovery[ok], t.product_salinity[ok], t.brine_salinity[ok]
        if t.technology == "fo":
            # FO's feed side: feed salt plus the net salt the draw passed back across the membrane (per kg of feed)
            # leaves in the brine; the product comes from the draw loop. Net flux per kg of feed = J_s r / (rho J).
            d = t.details
            rho = density(0.0, varied["feed.temperature"][ok], res.scenario.values["feed"]["water"])
            passed = d["reverse_salt_flux"][ok] * r / (rho * d["average_flux"][ok])
            assert (1 - r) * S_b == pytest.approx(S_f[ok] + passed, rel=1e-9)
            assert np.all(np.abs(passed) < 0.1 * S_f[ok])
        else:
            # feed salt = product salt + brine salt, per kg of feed
            assert r * S_p + (1 - r) * S_b == pytest.approx(S_f[ok], rel=1e-9)
        assert np.all(S_p < S_f[ok]) and np.all(S_b > S_f[ok])


@pytest.mark.parametrize("name", FAMILIES)
def test_feasible_records_have_no_nan_and_infeasible_ones_a_reason(runs, name):
    res, _ = runs[name]
    n = res.n_cases
    for t in res.technologies:
        for field in DESIGN_DEPENDENT:
            v = getattr(t, field)
            if v is None:
                continue
            v = np.asarray(v, dtype=float)
            assert np.all(np.isfinite(v[t.feasible])), (t.technology, field)
            assert np.all(np.isnan(v[~t.feasible])), (t.technology, field)
        reasons = infeasible_mask([*res.floor.flags, *t.flags], (n,))
        assert np.array_equal(reasons, ~t.feasible), t.technology


@pytest.mark.parametrize("name", FAMILIES)
def test_every_out_of_range_input_is_flagged(runs, name):
    res, varied = runs[name]
    n = res.n_cases
    model = res.scenario.values["feed"]
    v = model_validity(model["model"], model["water"])
    S, T = varied["feed.salinity"], varied["feed.temperature"]
    outside = ~v.salinity_ok(S) | ~v.temperature_ok(T)
    flagged = np.zeros(n, bool)
    for f in res.floor.flags:
        if f.kind == "out_of_range":
            flagged |= f.where((n,))
    assert np.array_equal(flagged, outside)
    for t in res.technologies:
        brine_out = t.feasible & ~v.salinity_ok(t.brine_salinity)
        said = np.zeros(n, bool)
        for f in [*res.floor.flags, *t.flags]:
            if f.kind == "out_of_range":
                said |= f.where((n,))
        assert np.all(said[brine_out]), t.technology


def test_hot_dead_states_are_noted_and_change_nothing_above_the_feed(runs):
    res, varied = runs["dead_states"]
    n = res.n_cases
    warm = varied["energy.dead_state_temperature"] > varied["feed.temperature"]
    note = [f for f in res.floor.flags if f.code == "dead_state"]
    assert len(note) == 1 and np.array_equal(note[0].where((n,)), warm)
    assert 0.2 < warm.mean() < 0.9
    # a dead state at or above the feed gives the least work at the feed's own temperature
    base, _ = runs["seawater"]
    from compare.thermo.activity import get_model
    from compare.thermo.floor import least_work
    model = get_model("teos10", "seawater")
    lw_feed = least_work(model, varied["feed.salinity"], varied["feed.temperature"], 0.0)
    assert res.floor.least_work_zero_recovery[warm] == pytest.approx(lw_feed[warm], rel=1e-12)
    assert np.all(res.floor.least_work_zero_recovery[~warm] < lw_feed[~warm])
