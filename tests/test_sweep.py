"""Sweeps: reproducible sampling, Latin hypercube strata, one code path with single runs, a closed-form break-even,
the command line and its files."""

import json

import numpy as np
import pytest

from compare import sweep as sw
from compare.cli import main
from compare.pipeline import evaluate
from compare.scenario import resolve
from compare.present.records import records

BASE = {
    "name": "Test Bay (fictional)",
    "site": {"capacity": "20000 m^3/day"},
    "feed": {"salinity": "35 g/kg", "temperature": "25 degC"},
}


def scenario(overrides=(), **sections):
    data = json.loads(json.dumps(BASE))
    for sec, body in sections.items():
        data.setdefault(sec, {}).update(body)
    return resolve(data, label="test", overrides=overrides)


UNCERTAIN = {
    "energy.electricity_price": {"low": "0.05 USD/kWh", "mode": "0.08 USD/kWh", "high": "0.15 USD/kWh"},
    "toy.efficiency": {"low": "0.7", "high": "0.95"},
    "feed.salinity": {"mean": "35 g/kg", "sd": "2 g/kg"},
    "energy.heat_price": {"median": "0.02 USD/kWh", "gsd": "1.5"},
}


def test_same_seed_same_output_other_seed_other_samples(toy):
    s = scenario(uncertainty=UNCERTAIN)
    a, _ = sw.sample_cases(s, 500, seed=7)
    b, _ = sw.sample_cases(s, 500, seed=7)
    c, _ = sw.sample_cases(s, 500, seed=8)
    for k in a:
        assert np.array_equal(a[k], b[k])
        assert not np.array_equal(a[k], c[k])
    ra = sw.payload(sw.run(s, a, mode="samples", seed=7))
    rb = sw.payload(sw.run(s, b, mode="samples", seed=7))
    assert json.dumps(ra, default=str) == json.dumps(rb, default=str)
    for row in ra["summary"]:
        if row["n"]:
            assert row["p10"] <= row["p50"] <= row["p90"]


def test_distributions_match_their_definitions(toy):
    # library: scipy.stats moments of the same distributions, to sampling error at n = 20000
    from scipy import stats
    s = scenario(uncertainty=UNCERTAIN)
    x, _ = sw.sample_cases(s, 20000, seed=1)
    tri = stats.triang((0.08 - 0.05) / 0.10, loc=0.05, scale=0.10)
    assert np.mean(x["energy.electricity_price"]) * 3.6e6 == pytest.approx(tri.mean(), rel=0.01)
    assert np.mean(x["feed.salinity"]) == pytest.approx(0.035, rel=0.005)
    assert np.std(x["feed.salinity"]) == pytest.approx(0.002, rel=0.03)
    assert np.median(x["energy.heat_price"]) * 3.6e6 == pytest.approx(0.02, rel=0.02)
    assert np.std(np.log(x["energy.heat_price"])) == pytest.approx(np.log(1.5), rel=0.03)


def test_latin_hypercube_fills_every_stratum(toy):
    # identity of Latin hypercube sampling (scipy.stats.qmc): one sample in each of n equal-probability strata
    s = scenario(uncertainty={"toy.efficiency": {"low": "0.7", "high": "0.9"}})
    x, _ = sw.sample_cases(s, 64, seed=3, lhs=True)
    strata = np.floor((x["toy.efficiency"] - 0.7) / 0.2 * 64).astype(int)
    assert sorted(strata) == list(range(64))


def test_grid_equals_single_runs_at_the_same_points():
    # one code path: each grid point equals a single comparison with --set to 1e-9 (real RO, MED and FO)
    s = scenario()
    axis = sw.parse_vary("ro.recovery=0.40:0.50:3", s)
    res = sw.run(s, sw.grid_cases([axis]), mode="grid", axes=[axis])
    for i, r in enumerate(("0.40", "0.45", "0.50")):
        single = {rec["technology"]: rec for rec in records(evaluate(scenario(overrides=[f"ro.recovery={r}"])))}
        for t in res.technologies:
            for m, (field, _) in sw.METRICS.items():
                a, b = res.metrics[t][m][i], single[t][field]
                if single[t]["feasible"]:
                    assert a == pytest.approx(b, rel=1e-9, abs=1e-12)
                else:
                    assert np.isnan(a)


def test_chunking_does_not_change_results(toy):
    s = scenario(uncertainty=UNCERTAIN)
    x, _ = sw.sample_cases(s, 300, seed=5)
    a = sw.run(s, x, mode="samples", chunk=7)
    b = sw.run(s, x, mode="samples", chunk=1000)
    for m in sw.METRICS:
        np.testing.assert_array_equal(a.metrics["toy"][m], b.metrics["toy"][m])


def _second_toy():
    from compare.tech.base import Technology, register
    from tests import toytech
    register(Technology("toy2", "a second test technology", toytech.evaluate, toytech.ToyParameters, "tests only",
                        "none"))


def test_break_even_heat_price_in_closed_form(toy):
    # closed form: two technologies with equal capital and O&M; one uses e1 of electricity, the other e2 and heat q2.
    # Their levelised costs cross where p_e e1 = p_e e2 + p_h q2, i.e. p_h* = p_e (e1 - e2) / q2. Costs are linear in
    # the heat price, so linear interpolation between grid points is exact.
    from compare.tech.base import unregister
    _second_toy()
    try:
        s = scenario(toy={"electricity": "2 kWh/m^3"},
                     toy2={"electricity": "1 kWh/m^3", "heat": "20 kWh/m^3", "heat_temperature": "70 degC"},
                     energy={"electricity_price": "0.1 USD/kWh", "heat_temperature": "100 degC"})
        axis = sw.parse_vary("energy.heat_price=0 USD/kWh:0.013 USD/kWh:14", s)
        res = sw.run(s, sw.grid_cases([axis]), mode="grid", axes=[axis])
        changes = sw.break_even(res, "cost")
        e1, e2, q2, p_e, eff = 2.0, 1.0, 20.0, 0.1, 0.9       # electricity is divided by the toy's efficiency
        expected = p_e * (e1 - e2) / eff / q2                   # [USD/kWh]
        assert len(changes) == 1
        c = changes[0]
        assert (c["from"], c["to"], c["kind"]) == ("toy2", "toy", "crossing")
        assert c["value"] == pytest.approx(expected, rel=1e-9)
        assert c["unit"] == "USD/kWh"
    finally:
        unregister("toy2")


def test_vary_forms_and_errors(toy):
    s = scenario()
    lin = sw.parse_vary("feed.salinity=20 g/kg:40 g/kg:5", s)
    assert lin.values == pytest.approx([0.02, 0.025, 0.03, 0.035, 0.04])
    assert lin.unit == "g/kg"
    log = sw.parse_vary("energy.heat_price=0.001 USD/kWh:0.1 USD/kWh:3:log", s)
    assert log.display == pytest.approx([0.001, 0.01, 0.1])
    lst = sw.parse_vary("feed.temperature=15 degC,25 degC", s)
    assert lst.values == pytest.approx([288.15, 298.15]) and lst.unit == "degC"
    bad = {
        "feed.salinity=20 m:40 m:5": "feed.salinity",
        "feed.salinty=20 g/kg:40 g/kg:5": "did you mean 'feed.salinity'",
        "toy.recovery=0.5:1.2:3": "toy.recovery",
        "energy.heat_to_work=exergy": "cannot be varied",
        "toy.recovery=0.1:0.5:1": "N of 2 or more",
        "toy.recovery=0.1:0.5:x": "N of 2 or more",
        "energy.heat_price=0 USD/kWh:0.1 USD/kWh:3:log": "above zero",
        "toy.recovery": "expected key=",
    }
    from compare.errors import InputError
    for text, needle in bad.items():
        with pytest.raises(InputError) as exc:
            sw.parse_vary(text, s)
        assert needle in str(exc.value) and "\n" not in str(exc.value)


def _scenario_file(tmp_path, extra=""):
    path = tmp_path / "s.toml"
    path.write_text('name = "Test Bay (fictional)"\n[site]\ncapacity = "20000 m^3/day"\n[feed]\n'
                    'salinity = "35 g/kg"\ntemperature = "25 degC"\n' + extra)
    return path


def test_cli_sweep_grid_files_and_contract(toy, tmp_path, capsys):
    path = _scenario_file(tmp_path)
    out = tmp_path / "runs"
    assert main(["sweep", str(path), "--vary", "toy.recovery=0.3:0.6:4", "--vary", "feed.salinity=30 g/kg,40 g/kg",
                 "--format", "json", "--out", str(out), "--plot", "--quiet"]) == 0
    body = json.loads(capsys.readouterr().out)
    assert set(body) >= {"scenario", "cases", "varied", "summary", "ranking"}
    assert body["cases"] == 8 and body["varied"] == ["toy.recovery", "feed.salinity"]
    row = next(r for r in body["summary"] if r["technology"] == "toy" and r["metric"] == "levelized_cost_per_m3")
    assert set(row) >= {"p10", "p50", "p90", "mean", "min", "max"}
    assert {r["criterion"] for r in body["ranking"]} == {"cost", "energy", "emissions"}
    (folder,) = list(out.iterdir())
    names = {p.name for p in folder.iterdir()}
    assert {"summary.json", "cases", "run.json", "report.md", "sweep.png", "sweep.svg"} <= names
    import pandas as pd
    cases = pd.read_parquet(folder / "cases")
    assert len(cases) == 8 and {"toy.recovery [-]", "feed.salinity [g/kg]", "technology"} <= set(cases.columns)
    assert "Screening estimate only" in (folder / "report.md").read_text()


def test_cli_sweep_samples_csv_and_plot(toy, tmp_path, capsys):
    path = _scenario_file(tmp_path, '[uncertainty]\n"toy.efficiency" = { low = "0.7", high = "0.95" }\n')
    out = tmp_path / "runs"
    assert main(["sweep", str(path), "--samples", "50", "--seed", "4", "--format", "csv", "--out", str(out),
                 "--plot", "--lhs"]) == 0
    text = capsys.readouterr().out
    assert text.count("\n") == 51 and "toy.efficiency [-]" in text.splitlines()[0]
    (folder,) = list(out.iterdir())
    assert {"distributions.png", "distributions.svg"} <= {p.name for p in folder.iterdir()}


@pytest.mark.parametrize("args, needle", [
    (["--samples", "10"], "uncertainty"),
    ([], "either --vary (a grid) or --samples"),
    (["--vary", "toy.recovery=0.3:0.5:3", "--samples", "10"], "got both"),
    (["--vary", "toy.recovery=0.3:0.5:3", "--plot", "--no-save"], "--plot"),
    (["--vary", "toy.recovery=0.3:0.5:3", "--chunk", "0"], "--chunk"),
    (["--vary", "toy.recovery=0.3:0.5:3", "--set", "toy.recovery=x"], "toy.recovery"),
])
def test_cli_sweep_bad_input_one_line_exit_2_nothing_written(toy, tmp_path, capsys, args, needle):
    path = _scenario_file(tmp_path)
    out = tmp_path / "runs"
    where = [] if "--no-save" in args else ["--out", str(out)]
    assert main(["sweep", str(path), *where, *args]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and needle in err[0]
    assert not out.exists() or not any(out.iterdir())


def test_compare_plot_writes_stacked_bars(toy, tmp_path, capsys):
    path = _scenario_file(tmp_path)
    out = tmp_path / "runs"
    assert main(["compare", str(path), "--plot", "--out", str(out)]) == 0
    (folder,) = list(out.iterdir())
    assert {"energy.png", "energy.svg", "results.json"} <= {p.name for p in folder.iterdir()}
