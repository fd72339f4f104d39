"""Sensitivity: Sobol indices (against closed forms, on MED's cost at a site with an uncertain heat price), their
intervals and reproducibility, the feasibility index, the tornado, and the command line."""

import json

import numpy as np
import pytest

from compare import sensitivity as se
from compare import sweep as sw
from compare.cli import main
from tests.test_sweep import scenario

MED_ONLY = dict(ro={"enabled": False}, fo={"enabled": False},
                uncertainty={"energy.heat_price": {"low": "0.0 USD/kWh", "high": "0.06 USD/kWh"},
                             "energy.electricity_price": {"low": "0.075 USD/kWh", "high": "0.08 USD/kWh"},
                             "med.capital_cost": {"low": "1700 USD/(m^3/day)", "high": "1800 USD/(m^3/day)"}})


@pytest.fixture(scope="module")
def med_sobol():
    s = scenario(**MED_ONLY)
    cases, keys, _ = se.sobol_cases(s, 256, seed=5)
    res = sw.run(s, cases, mode="samples")
    return s, keys, res


def test_linear_model_indices_match_the_closed_form():
    # identity: for f = a1 x1 + a2 x2 with independent uniforms, S_i = ST_i = a_i^2 / (a1^2 + a2^2)
    # (Saltelli et al. 2008, Global Sensitivity Analysis: The Primer, ch. 1: additive models have no interactions)
    from scipy.stats import qmc
    n, d = 256, 2
    base = qmc.Sobol(d=2 * d, scramble=True, seed=1).random_base2(8)
    A, B = base[:, :d], base[:, d:]
    rows = [A, B] + [np.where(np.arange(d) == i, B, A) for i in range(d)]
    y = np.concatenate([3.0 * r[:, 0] + 1.0 * r[:, 1] for r in rows])
    r = se.sobol_indices(y, n, d, seed=2)
    np.testing.assert_allclose(r["first"], [0.9, 0.1], atol=0.05)
    np.testing.assert_allclose(r["total"], [0.9, 0.1], atol=0.05)
    assert np.all(r["first_low"] <= r["first"] + 1e-9) and np.all(r["first"] <= r["first_high"] + 1e-9)


def test_med_cost_is_driven_by_the_wide_heat_price(med_sobol):
    s, keys, res = med_sobol
    rows = se.sobol_rows(res, keys, 256, seed=5)
    cost = {r["key"]: r for r in rows if r["technology"] == "med" and r["metric"] == "levelized_cost_per_m3"}
    assert max(cost, key=lambda k: cost[k]["total"]) == "energy.heat_price"
    assert cost["energy.heat_price"]["total"] > 0.9
    for r in rows:
        if r["first"] is None:
            continue
        # every index within [0, 1] within its 95 % interval
        assert r["first_low"] <= 1 and r["first_high"] >= 0 and r["total_low"] <= 1 and r["total_high"] >= 0
        assert r["total_low"] <= r["total_high"]
    # MED's work equivalent does not depend on prices: no variance, no indices
    assert all(r["first"] is None for r in rows if r["metric"] == "work_equivalent_kwh_per_m3")
    # the same seed gives the same indices and intervals
    again = se.sobol_rows(res, keys, 256, seed=5)
    assert json.dumps(rows) == json.dumps(again)
    cases, _, _ = se.sobol_cases(s, 256, seed=5)
    for k in keys:
        np.testing.assert_array_equal(cases[k], res.cases[k])


def test_feasibility_has_its_own_index_and_metrics_use_feasible_rows(toy):
    # the toy is infeasible above a recovery of 0.9: feasibility depends on recovery alone
    s = scenario(uncertainty={"toy.recovery": {"low": "0.5", "high": "0.99"}, "toy.efficiency": {"low": "0.7",
                                                                                                "high": "0.95"}})
    cases, keys, _ = se.sobol_cases(s, 512, seed=3)
    res = sw.run(s, cases, mode="samples")
    rows = {(r["metric"], r["key"]): r for r in se.sobol_rows(res, keys, 512, seed=3)}
    assert rows[("feasible", "toy.recovery")]["total"] > 0.9
    assert abs(rows[("feasible", "toy.efficiency")]["total"]) < 0.05
    used = rows[("levelized_cost_per_m3", "toy.efficiency")]["samples"]
    assert 16 <= used < 512 and used & (used - 1) == 0


def test_tornado_moves_each_key_alone(med_sobol):
    s = med_sobol[0]
    cases, keys = se.tornado_cases(s)
    assert len(cases["energy.heat_price"]) == 1 + 2 * len(keys)
    res = sw.run(s, cases, mode="samples")
    rows = se.tornado_rows(res, keys, sw.display_units(s, keys))
    heat = next(r for r in rows if r["key"] == "energy.heat_price" and r["metric"] == "levelized_cost_per_m3")
    assert heat["at_low"] < heat["base"] < heat["at_high"]
    assert heat["low"] == pytest.approx(0.006) and heat["high"] == pytest.approx(0.054)   # p10, p90 of U(0, 0.06)
    elec = next(r for r in rows if r["key"] == "energy.electricity_price" and r["metric"] == "levelized_cost_per_m3")
    assert abs(elec["at_high"] - elec["at_low"]) < 0.1 * (heat["at_high"] - heat["at_low"])


def _write(tmp_path, extra=""):
    p = tmp_path / "site.toml"
    p.write_text('name = "Test Bay (fictional)"\n[site]\ncapacity = "20000 m^3/day"\n[feed]\nsalinity = "35 g/kg"\n'
                 'temperature = "25 degC"\n[uncertainty]\n"toy.efficiency" = { low = "0.7", high = "0.95" }\n'
                 '"energy.electricity_price" = { low = "0.05 USD/kWh", high = "0.1 USD/kWh" }\n' + extra)
    return p


def test_cli_sobol_and_tornado(toy, tmp_path, capsys):
    path = _write(tmp_path)
    out = tmp_path / "out"
    assert main(["sweep", str(path), "--samples", "64", "--sensitivity", "sobol", "--format", "json", "--out",
                 str(out), "--quiet"]) == 0
    body = json.loads(capsys.readouterr().out)
    assert body["cases"] == 128 and body["sensitivity"]["evaluations"] == 64 * 4
    row = body["sensitivity"]["rows"][0]
    assert set(row) >= {"technology", "metric", "key", "first", "first_low", "first_high", "total", "total_low",
                        "total_high"}
    pytest.importorskip("matplotlib")
    from compare.present.plots import sobol_figure
    from compare.scenario import load

    class Folder:
        def file(self, name):
            return tmp_path / name
    assert sobol_figure(body["sensitivity"], load(path), Folder()) == ["sobol.png", "sobol.svg"]
    assert (tmp_path / "sobol.png").read_bytes()[:4] == b"\x89PNG"
    assert main(["sweep", str(path), "--samples", "32", "--sensitivity", "tornado", "--format", "json", "--out",
                 str(out), "--plot", "--quiet"]) == 0
    body = json.loads(capsys.readouterr().out)
    assert {"technology", "metric", "key", "at_low", "at_high"} <= set(body["sensitivity"]["rows"][0])
    assert any((f / "tornado.png").exists() for f in out.iterdir())


@pytest.mark.parametrize("argv, extra, words", [
    (["--samples", "100", "--sensitivity", "sobol"], "", "power of two"),
    (["--sensitivity", "tornado", "--vary", "toy.recovery=0.3:0.5:3"], "", "--samples"),
    (["--samples", "64", "--sensitivity", "sobol"],
     '[correlation]\n"toy.efficiency" = { "energy.electricity_price" = 0.5 }\n', "independent"),
])
def test_cli_sensitivity_refusals(toy, tmp_path, capsys, argv, extra, words):
    code = main(["sweep", str(_write(tmp_path, extra)), *argv, "--no-save", "--quiet"])
    err = capsys.readouterr().err
    assert code == 2 and len(err.strip().splitlines()) == 1 and words in err


def test_plot_labels_are_words_with_units():
    pytest.importorskip("matplotlib")
    from compare.present.plots import key_label, metric_label
    assert key_label("energy.electricity_price", "USD/kWh") == "electricity price [USD/kWh]"
    assert key_label("ro.pump_efficiency", "-") == "RO pump efficiency"
    assert key_label("ro.pump_efficiency", technology="fo") == "RO pump efficiency (shared by FO)"
    assert metric_label("levelized_cost_per_m3", "EUR") == "levelized cost of water [EUR/m3]"
    assert metric_label("second_law_efficiency", "USD") == "second-law efficiency [%]"
