"""Scenario files: validation (every problem at once, one line each, exit 2, nothing written), defaults, overrides."""

import json
from pathlib import Path

import pytest

from compare.cli import main
from compare.errors import InputErrors
from compare.scenario import load

GOOD = """
name = "Test Bay (fictional)"
[site]
capacity = "20000 m^3/day"
[feed]
salinity = "35 g/kg"
temperature = "25 degC"
"""

MALFORMED = {
    # name: (text, expected fragment of the one line)
    "toml_syntax": ("[site\ncapacity = 1", "TOML syntax"),
    "unknown_section": (GOOD + "[sitee]\nx = 1\n", "[sitee]: expected a known section, got an unknown one (did you mean 'site'?)"),
    "unknown_key_suggests": (GOOD.replace('capacity = "20000 m^3/day"',
                                          'capacity = "20000 m^3/day"\navailabilty = 0.9'),
                             "site.availabilty: unknown key (did you mean 'availability'?)"),
    "missing_required": (GOOD.replace('salinity = "35 g/kg"\n', ""), "feed.salinity: required"),
    "wrong_dimension": (GOOD.replace('"35 g/kg"', '"35 m"'), 'feed.salinity: expected a salinity such as'),
    "negative_salinity": (GOOD.replace('"35 g/kg"', '"-3 g/kg"'), "feed.salinity: expected a salinity of zero or more"),
    "temperature_no_unit": (GOOD.replace('"25 degC"', "25"), "feed.temperature: expected a temperature"),
    "temperature_range": (GOOD.replace('"25 degC"', '"150 degC"'), "feed.temperature: expected a temperature between"),
    "eleven_months": (GOOD.replace('"25 degC"', "[" + ", ".join(['"20 degC"'] * 11) + "]"),
                      "one temperature or twelve monthly values"),
    "capacity_dimension": (GOOD.replace('"20000 m^3/day"', '"20000 kg"'), "site.capacity: expected a product flow"),
    "availability_above_one": (GOOD.replace('capacity = "20000 m^3/day"', 'capacity = "20000 m^3/day"\navailability = 1.2'),
                               "expected an availability in (0, 1]"),
    "other_currency": (GOOD + '[energy]\nelectricity_price = "0.1 EUR/kWh"\n',
                       "energy.electricity_price: expected a price in the scenario currency USD"),
    "default_in_other_currency": (GOOD + '[finance]\ncurrency = "EUR"\n',
                                  "energy.electricity_price: the default (0.08 USD/kWh) is in another currency"),
    "efficiency_zero": (GOOD + "[energy]\nturbine_efficiency = 0\n", "expected an efficiency in (0, 1]"),
    "bad_choice": (GOOD.replace('[feed]', '[feed]\nwater = "brine"'), "feed.water: expected one of"),
    "product_saltier_than_feed": (GOOD + '[product]\nsalinity = "40 g/kg"\n',
                                  "product.salinity: expected a product salinity below the feed salinity"),
    "ions_missing": (GOOD.replace('[feed]', '[feed]\nwater = "ions"'), 'feed.ions: required when feed.water = "ions"'),
    "discount_rate": (GOOD + "[finance]\ndiscount_rate = 1.5\n", "expected a discount rate in [0, 1)"),
    "price_no_currency": (GOOD + '[energy]\nheat_price = "0.02 1/kWh"\n', "energy.heat_price: expected a price"),
    "model_for_other_water": (GOOD.replace('[feed]', '[feed]\nmodel = "pitzer-nacl"'), "feed.model: model pitzer-nacl"),
    "bad_uncertainty": (GOOD + '[uncertainty]\n"energy.electricity_price" = { low = "0.1 USD/kWh" }\n',
                        "uncertainty.energy.electricity_price: expected the fields of one distribution"),
    "name_not_string": ("name = 3\n" + GOOD.split("\n", 2)[2], "name: expected a string"),
}


@pytest.mark.parametrize("case", sorted(MALFORMED))
def test_malformed_file_gives_one_line_exit_2_and_writes_nothing(case, tmp_path, capsys, monkeypatch):
    text, fragment = MALFORMED[case]
    path = tmp_path / f"{case}.toml"
    path.write_text(text)
    monkeypatch.chdir(tmp_path)
    code = main(["compare", str(path)])
    out, err = capsys.readouterr()
    assert code == 2
    assert out == ""
    lines = err.strip().splitlines()
    assert any(fragment in line for line in lines), err
    assert all(line.startswith(f"error: {path}") or line.startswith("error: --set") for line in lines), err
    assert not (tmp_path / "results").exists()          # nothing written


def test_every_problem_reported_at_once(tmp_path, capsys):
    path = tmp_path / "many.toml"
    path.write_text('[site]\ncapacity = "1 kg"\navailabilty = 2\n[feed]\nsalinity = "35 m"\n')
    code = main(["check", str(path)])
    err = capsys.readouterr().err.strip().splitlines()
    assert code == 2
    assert len(err) >= 4       # capacity, unknown key, salinity, missing temperature
    assert all(line.startswith(f"error: {path}: ") for line in err)


def test_missing_file(capsys):
    assert main(["check", "no/such/file.toml"]) == 2
    assert "cannot read the scenario file" in capsys.readouterr().err


def test_defaults_carry_sources(tmp_path):
    path = tmp_path / "s.toml"
    path.write_text(GOOD)
    s = load(path)
    assert s.sources["site.capacity"] == "file"
    assert s.sources["site.availability"].startswith("default (common practice")
    assert s.values["site.capacity".split(".")[0]]["capacity"] == pytest.approx(20000 / 86400)
    assert s.values["feed"]["temperature"].tolist() == [298.15]


def test_override_goes_through_validation(tmp_path, capsys):
    path = tmp_path / "s.toml"
    path.write_text(GOOD)
    s = load(path, ["feed.salinity=40 g/kg"])
    assert s.values["feed"]["salinity"] == pytest.approx(0.040)
    assert s.sources["feed.salinity"] == "--set"
    with pytest.raises(InputErrors, match=r"--set feed.salinity: expected a salinity"):
        load(path, ["feed.salinity=40 m"])
    with pytest.raises(InputErrors, match="set twice"):
        load(path, ["feed.salinity=40 g/kg", "feed.salinity=41 g/kg"])
    with pytest.raises(InputErrors, match=r"unknown key 'salinty'.*did you mean 'salinity'"):
        load(path, ["feed.salinty=40 g/kg"])


def test_mg_per_litre_converted_with_density(tmp_path):
    path = tmp_path / "s.toml"
    path.write_text(GOOD.replace('"35 g/kg"', '"36000 mg/L"'))
    s = load(path)
    # library: gsw.rho_t_exact; S = c / rho(S) solved here independently by iteration
    import gsw
    S = 0.035
    for _ in range(20):
        S = 36.0 / gsw.rho_t_exact(S * 1e3, 25.0, 0)
    assert s.values["feed"]["salinity"] == pytest.approx(S, rel=1e-9)


def test_check_prints_every_default_with_its_source(tmp_path, capsys):
    path = tmp_path / "s.toml"
    path.write_text(GOOD)
    assert main(["check", str(path), "--format", "json"]) == 0
    payload = json.loads(capsys.readouterr().out)
    assert payload["inputs"]["finance.discount_rate"]["source"].startswith("default (")
    assert payload["inputs"]["feed.salinity"] == {"value": "35 g/kg", "source": "file"}


def test_demo_scenarios_are_valid_and_fictional():
    root = Path(__file__).resolve().parents[1] / "scenarios"
    files = sorted(root.glob("*.toml"))
    assert len(files) >= 3
    for f in files:
        s = load(f)
        assert "fictional" in s.name.lower()
        assert "FICTIONAL" in f.read_text().splitlines()[0]


def test_ion_composition_in_mixed_units_and_simplified_model(tmp_path):
    # mg/L entries are turned into mass fractions with the feed density, so a mixed table equals the same table in
    # g/kg; the simplified model "ideal" serves an ion composition.
    from compare.pipeline import evaluate
    from compare.thermo.brine import density
    rho = float(density(0.0034, 293.15, "ions"))
    base = ('name = "Salt Flat wells (fictional)"\n[site]\ncapacity = "2000 m^3/day"\n[feed]\nwater = "ions"\n'
            'salinity = "3.4 g/kg"\ntemperature = "20 degC"\nmodel = "ideal"\n')
    mixed = tmp_path / "mixed.toml"
    mixed.write_text(base + 'ions = { Na = "1400 mg/L", Cl = "2 g/kg" }\n')
    same = tmp_path / "same.toml"
    same.write_text(base + f'ions = {{ Na = "{1.4 / rho * 1e3} g/kg", Cl = "2 g/kg" }}\n')
    a, b = load(mixed), load(same)
    assert a.values["feed"]["ions"].fractions == pytest.approx(b.values["feed"]["ions"].fractions, rel=1e-12)
    assert evaluate(a).floor.water_activity[0] == pytest.approx(evaluate(b).floor.water_activity[0], rel=1e-12)
    assert evaluate(a).floor.model == "ideal"


def test_uncertainty_spreads_have_units(tmp_path):
    path = tmp_path / "u.toml"
    path.write_text(GOOD + '[uncertainty]\n"feed.salinity" = { mean = "35 g/kg", sd = "1 g/kg" }\n'
                    '"site.availability" = { median = "0.9", gsd = "1.05" }\n')
    # a temperature's spread is a difference in K, its mean a temperature
    text = GOOD + '[uncertainty]\n"energy.heat_temperature" = { mean = "110 degC", sd = "5 K" }\n'
    (tmp_path / "t.toml").write_text(text)
    u = load(path).uncertainty
    assert u["feed.salinity"]["sd"] == pytest.approx(0.001)
    assert u["site.availability"]["gsd"] == pytest.approx(1.05)
    t = load(tmp_path / "t.toml").uncertainty["energy.heat_temperature"]
    assert t["mean"] == pytest.approx(383.15) and t["sd"] == pytest.approx(5.0)
    (tmp_path / "bad.toml").write_text(GOOD + '[uncertainty]\n"site.availability" = { median = "0.9", gsd = "x" }\n')
    with pytest.raises(InputErrors, match=r"uncertainty.site.availability.gsd: expected a geometric standard"):
        load(tmp_path / "bad.toml")
