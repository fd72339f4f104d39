"""Uncertain inputs: distributions truncated to each key's valid range (never clipped), rank correlations through a
Gaussian copula, invalid correlation matrices refused, and physical inputs shared by construction."""


import numpy as np
import pytest
from scipy import stats

from compare import sweep as sw
from compare import uncertainty as unc
from compare.cli import main
from tests.test_sweep import scenario


def test_truncated_normal_matches_scipy_truncnorm(toy):
    # library: scipy.stats.truncnorm, the normal N(0.95, 0.1) truncated to the efficiency's range (0, 1]
    s = scenario(uncertainty={"toy.efficiency": {"mean": "0.95", "sd": "0.1"}})
    ref = stats.truncnorm((0.0 - 0.95) / 0.1, (1.0 - 0.95) / 0.1, loc=0.95, scale=0.1)
    _, specs = sw.uncertain_specs(s)
    p = np.linspace(0.001, 0.999, 41)
    exact = unc.truncated_ppf(s.uncertainty["toy.efficiency"], specs["toy.efficiency"], p)
    np.testing.assert_allclose(exact, ref.ppf(p), rtol=1e-7)
    x, notes = sw.sample_cases(s, 20000, seed=2)
    q = np.linspace(0.05, 0.95, 19)
    # sampling error of a quantile at n = 20000 is about 1e-3 here
    np.testing.assert_allclose(np.quantile(x["toy.efficiency"], q), ref.ppf(q), atol=4e-3)
    assert not any("clipped" in n for n in notes)
    assert "30.85 %" in notes[0] and "truncated" in notes[0]


def test_truncated_lognormal_matches_scipy_on_the_log_scale(toy):
    # library: scipy.stats.truncnorm of ln(x): a lognormal (median 0.9, gsd 1.2) truncated to the range (0, 1]
    s = scenario(uncertainty={"toy.efficiency": {"median": "0.9", "gsd": "1.2"}})
    x, _ = sw.sample_cases(s, 20000, seed=4, lhs=True)
    sig = np.log(1.2)
    ref = stats.truncnorm(-np.inf, (0.0 - np.log(0.9)) / sig, loc=np.log(0.9), scale=sig)
    q = np.linspace(0.05, 0.95, 19)
    np.testing.assert_allclose(np.quantile(np.log(x["toy.efficiency"]), q), ref.ppf(q), atol=4e-3)


def test_no_sample_outside_the_valid_range_and_no_clipped_flag(toy):
    s = scenario(uncertainty={"toy.efficiency": {"mean": "0.98", "sd": "0.2"},
                              "toy.recovery": {"mean": "0.5", "sd": "0.4"},
                              "finance.discount_rate": {"mean": "0.02", "sd": "0.05"}})
    x, notes = sw.sample_cases(s, 5000, seed=9)
    assert 0 < x["toy.efficiency"].min() and x["toy.efficiency"].max() <= 1.0
    assert 0 < x["toy.recovery"].min() and x["toy.recovery"].max() < 1.0
    assert 0 <= x["finance.discount_rate"].min() and x["finance.discount_rate"].max() < 1.0
    # no pile-up on a bound: the largest efficiency occurs once, not hundreds of times as clipping would give
    assert np.sum(x["toy.efficiency"] == x["toy.efficiency"].max()) == 1
    res = sw.run(s, {k: v[:500] for k, v in x.items()}, mode="samples")
    assert not [f for f in res.flags if f["kind"] == "clipped"]
    assert len(notes) == 3 and not any("clipped" in n for n in notes)


def test_rank_correlation_is_reproduced(toy):
    s = scenario(uncertainty={"energy.electricity_price": {"low": "0.05 USD/kWh", "mode": "0.08 USD/kWh",
                                                           "high": "0.15 USD/kWh"},
                              "energy.heat_price": {"median": "0.02 USD/kWh", "gsd": "1.5"},
                              "toy.efficiency": {"low": "0.7", "high": "0.95"}},
                 correlation={"energy.electricity_price": {"energy.heat_price": 0.7}})
    x, _ = sw.sample_cases(s, 4096, seed=11)
    rho = stats.spearmanr(x["energy.electricity_price"], x["energy.heat_price"]).statistic
    assert rho == pytest.approx(0.7, abs=0.05)
    assert abs(stats.spearmanr(x["energy.electricity_price"], x["toy.efficiency"]).statistic) < 0.05
    # the marginals are those of the distributions (library: scipy.stats.triang mean)
    tri = stats.triang((0.08 - 0.05) / 0.10, loc=0.05, scale=0.10)
    assert np.mean(x["energy.electricity_price"]) * 3.6e6 == pytest.approx(tri.mean(), rel=0.01)
    for lhs in (False, True):
        y, _ = sw.sample_cases(s, 4096, seed=12, lhs=lhs)
        assert stats.spearmanr(y["energy.electricity_price"], y["energy.heat_price"]).statistic == \
            pytest.approx(0.7, abs=0.05)


UNC3 = """
[uncertainty]
"energy.electricity_price" = { low = "0.05 USD/kWh", high = "0.1 USD/kWh" }
"energy.heat_price" = { low = "0.01 USD/kWh", high = "0.03 USD/kWh" }
"ro.pump_efficiency" = { low = "0.8", high = "0.88" }
"""


@pytest.mark.parametrize("body, words", [
    ('"energy.electricity_price" = { "energy.heat_price" = 0.7 }\n'
     '"energy.heat_price" = { "energy.electricity_price" = 0.5 }', "symmetric"),
    ('"energy.electricity_price" = { "energy.heat_price" = 0.9, "ro.pump_efficiency" = 0.9 }\n'
     '"energy.heat_price" = { "ro.pump_efficiency" = -0.9 }', "positive semi-definite"),
    ('"energy.electricity_price" = { "energy.heat_price" = 1.2 }', "between -1 and 1"),
    ('"energy.electricity_price" = { "energy.heat_prise" = 0.5 }', 'did you mean "energy.heat_price"'),
    ('"site.capacity" = { "energy.heat_price" = 0.5 }', "a key of [uncertainty]"),
    ('"energy.electricity_price" = { "energy.electricity_price" = 0.5 }', "with itself"),
])
def test_an_invalid_correlation_matrix_is_refused(tmp_path, capsys, body, words):
    path = tmp_path / "bad.toml"
    path.write_text('name = "Test Bay (fictional)"\n[site]\ncapacity = "20000 m^3/day"\n[feed]\n'
                    'salinity = "35 g/kg"\ntemperature = "25 degC"\n' + UNC3 + "[correlation]\n" + body + "\n")
    code = main(["sweep", str(path), "--samples", "16", "--no-save", "--quiet"])
    err = capsys.readouterr().err
    assert code == 2
    assert len(err.strip().splitlines()) == 1 and err.startswith("error: ") and words in err
    assert "correlation" in err


def test_fo_regenerator_shares_the_ro_pump_and_membrane_draws():
    s = scenario(uncertainty={"ro.pump_efficiency": {"low": "0.8", "high": "0.88"},
                              "ro.water_permeability": {"low": "0.8 L/m^2/h/bar", "high": "1.2 L/m^2/h/bar"}})
    x, notes = sw.sample_cases(s, 64, seed=1)
    np.testing.assert_array_equal(x["fo.regenerator.pump_efficiency"], x["ro.pump_efficiency"])
    np.testing.assert_array_equal(x["fo.regenerator.water_permeability"], x["ro.water_permeability"])
    assert any("also sets fo.regenerator.pump_efficiency" in n for n in notes)
    # the scenario says otherwise: the regenerator keeps its own value
    own = scenario(uncertainty={"ro.pump_efficiency": {"low": "0.8", "high": "0.88"}},
                   fo={"regenerator": {"pump_efficiency": "0.75"}})
    y, _ = sw.sample_cases(own, 64, seed=1)
    assert "fo.regenerator.pump_efficiency" not in y
    # the shared value reaches FO: its regeneration electricity moves with the RO pump draw
    fo_only = scenario(ro={"enabled": False}, med={"enabled": False})
    res = sw.run(fo_only, {k: v[:3] for k, v in x.items()}, mode="samples")
    assert np.all(np.isfinite(res.metrics["fo"]["electricity"]))
    single = sw.run(fo_only, {"ro.pump_efficiency": x["ro.pump_efficiency"][:3],
                              "ro.water_permeability": x["ro.water_permeability"][:3]}, mode="samples")
    assert not np.allclose(res.metrics["fo"]["electricity"], single.metrics["fo"]["electricity"])


@pytest.mark.parametrize("sd, kelvin", [("1 degC", 1.0), ("1 delta_degC", 1.0), ("1.8 degF", 1.0), ("2 K", 2.0)])
def test_a_temperature_spread_is_a_difference(sd, kelvin):
    # "1 degC" as a standard deviation is 1 K (it read as 274.15 K, an absolute temperature)
    from compare.errors import InputErrors as ScenarioError
    s = scenario(uncertainty={"feed.temperature": {"mean": "25 degC", "sd": sd}})
    assert s.uncertainty["feed.temperature"]["sd"] == pytest.approx(kelvin)
    with pytest.raises(ScenarioError) as err:
        scenario(uncertainty={"feed.temperature": {"mean": "25 degC", "sd": "-1 degC"}})
    assert '"-1 degC"' in str(err.value) and "delta_" not in str(err.value)


def test_a_distribution_parameter_is_one_value_and_errors_read_as_toml():
    from compare.errors import InputErrors as ScenarioError
    with pytest.raises(ScenarioError) as err:
        scenario(uncertainty={"feed.temperature": {"mean": [f"{t} degC" for t in range(20, 32)], "sd": "1 K"}})
    assert "uncertainty.feed.temperature.mean: expected one value" in str(err.value) and "12 values" in str(err.value)
    with pytest.raises(ScenarioError) as err:
        scenario(uncertainty={"energy.electricity_price": {"low": "0.2 USD/kWh", "mode": "0.1 USD/kWh",
                                                           "high": "0.3 USD/kWh"}})
    assert '{ low = "0.2 USD/kWh", mode = "0.1 USD/kWh", high = "0.3 USD/kWh" }' in str(err.value)
