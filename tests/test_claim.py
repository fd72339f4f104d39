"""Claims: verdicts against the least work of the claimed streams and this tool's best-practice and scenario designs,
heat valued by exergy, [claim] tables, and desal claim."""

import json

import pytest

from compare import floor
from compare.claim import MARGIN, claim_work_equivalent, judge, load_claims
from compare.cli import main
from compare.errors import InputErrors

KWH = 3.6e6
SITE = """name = "Test Shore (fictional)"
[site]
capacity = "20000 m^3/day"
[feed]
salinity = "35 g/kg"
temperature = "25 degC"
"""


@pytest.fixture(scope="module")
def site(tmp_path_factory):
    path = tmp_path_factory.mktemp("claims") / "site.toml"
    path.write_text(SITE)
    return str(path)


def claim(tech, electricity, heat=0.0, heat_temperature=None, recovery=0.5, scope="plant"):
    return {"technology": tech, "electricity": electricity * KWH, "heat": heat * KWH,
            "heat_temperature": None if heat_temperature is None else heat_temperature + 273.15,
            "recovery": recovery, "scope": scope, "source": "test"}


# Seawater RO at 50 % recovery, 35 g/kg and 25 degC: the least work is about 1 kWh/m3 (Elimelech & Phillip 2011,
# Science 333, 712: about 1.06, memory), whole seawater RO plants use 3-4 kWh/m3 (same source; practice). So 0.6 is
# impossible, 1.8 whole-plant is beyond any RO design the tool can make, 3.5 is ordinary and 9 is wasteful.
@pytest.mark.parametrize("electricity, verdict", [(0.6, "below_floor"), (1.8, "below_model"),
                                                  (3.5, "within_model"), (9.0, "above_model")])
def test_seawater_ro_verdicts(site, electricity, verdict):
    j = judge(site, claim("ro", electricity))
    assert j["verdict"] == verdict, j["explanation"]
    figures = {row["figure"]: row["kwh_per_m3"] for row in j["compared"]}
    # each verdict names the figures it compared, and they sit in the order the verdicts assume
    lw, best, scen = (figures["least work of the claimed streams"], figures["best-practice RO design"],
                      figures["scenario's RO design"])
    assert 0.9 < lw < 1.1 < best < scen                       # memory: about 1.06 kWh/m3 at 50 % recovery
    assert 2.9 < scen < 4.0                                     # practice: whole-plant SWRO 3-4 kWh/m3
    assert figures["scenario's design x 1.25 (top of within_model)"] == pytest.approx(MARGIN * scen)
    assert j["within_model_kwh_per_m3"] == pytest.approx([best, MARGIN * scen])
    assert f"{electricity:.2f} kWh/m3" in j["explanation"]
    assert j["claim"]["scope"] == "plant" and "whole plant" in j["claim"]["scope_means"]
    # the best-practice parameters are stated, each with its reason
    params = j["best_practice"]["parameters"]
    assert params["energy_recovery_efficiency"]["value"] == "0.98"
    assert params["pump_efficiency"]["value"] == "0.88" and params["motor_efficiency"]["value"] == "0.97"
    assert params["pressure_drop_per_element"]["value"] == "0 bar"
    assert params["water_permeability"]["why"].startswith("searched")
    assert all(p["why"] for p in params.values())


def test_least_work_is_that_of_the_claimed_streams(site):
    j = judge(site, claim("ro", 3.0, recovery=0.5))
    # identity: the public floor function for the same feed, recovery and the scenario's product target (0.5 g/kg)
    expected = floor(0.035, 298.15, 0.5, product_salinity=0.0005)["least_work_kwh_per_m3"]
    assert j["least_work_kwh_per_m3"] == pytest.approx(expected, rel=1e-9)
    assert j["site"]["product_salinity_g_per_kg"] == pytest.approx(0.5)


def test_exergy_of_claimed_heat():
    # Carnot factor of 70 degC heat at a 25 degC dead state: 0.1311 (library: Q (1 - T0/T))
    we, phi = claim_work_equivalent(1.0, 10.0, 343.15, 298.15)
    assert phi == pytest.approx(1 - 298.15 / 343.15) and round(phi, 4) == 0.1311
    assert we == pytest.approx(1.0 + 10.0 * phi)
    assert claim_work_equivalent(1.0, 10.0, 290.0, 298.15) == (1.0, 0.0)      # heat below the dead state: no work


# A thermal claim (MED, heat at 70 degC) is judged on electricity plus the exergy of its heat. Practice: MED GOR about
# 0.8-0.9 times the effects, so 8-16 effects need roughly 40-90 kWh_th/m3, plus 1.5-2.5 kWh/m3 of electricity.
@pytest.mark.parametrize("electricity, heat, verdict", [(0.2, 4.0, "below_floor"), (1.0, 30.0, "below_model"),
                                                        (1.8, 80.0, "within_model"), (2.0, 150.0, "above_model")])
def test_thermal_claim_verdicts_by_exergy(site, electricity, heat, verdict):
    j = judge(site, claim("med", electricity, heat, 70.0))
    assert j["verdict"] == verdict, j["explanation"]
    c = j["claim"]
    assert c["exergy_factor"] == pytest.approx(1 - 298.15 / 343.15)
    assert c["work_equivalent_kwh_per_m3"] == pytest.approx(electricity + heat * c["exergy_factor"])
    assert j["best_practice"]["feasible"] and j["scenario_design"]["feasible"]
    assert j["best_practice"]["recovery"] == pytest.approx(0.5, abs=1e-6)        # brine at twice the feed
    assert j["best_practice"]["parameters"]["effects"]["value"] == "16"
    assert j["site"]["dead_state_c"] == pytest.approx(25.0)


def test_heat_counted_at_face_value_would_mislead(site):
    # 1 kWh/m3 + 30 kWh_th/m3 at 70 degC is a remarkable MED (below the best-practice design); adding heat to
    # electricity as if equal would call it wasteful next to RO figures
    j = judge(site, claim("med", 1.0, 30.0, 70.0))
    assert j["verdict"] == "below_model"
    assert 1.0 + 30.0 > j["within_model_kwh_per_m3"][1]


def test_scope_is_explicit(site):
    plant = judge(site, claim("ro", 2.0, scope="plant"))
    process = judge(site, claim("ro", 2.0, scope="process"))
    assert plant["verdict"] == "below_model"
    assert process["verdict"] == "within_model"          # the RO step alone of a best-practice design is below 2
    assert process["best_practice"]["parameters"]["other_electricity"]["value"] == "0 kWh/m^3"
    assert process["scenario_design"]["parameters"]["other_electricity"]["value"] == "0 kWh/m^3"
    assert plant["scenario_design"]["parameters"] == {}  # a whole-plant claim meets the scenario's own figures


def test_recovery_defaults_to_the_scenario_design(site):
    j = judge(site, claim("med", 1.8, 80.0, 70.0, recovery=None))
    assert j["claim"]["recovery"] == pytest.approx(0.5)          # MED's default brine, 70 g/kg, from 35 g/kg
    assert j["claim"]["recovery_from"] == "the scenario's MED design"


def test_claim_tables_in_a_scenario_and_a_claim_file(tmp_path, capsys):
    path = tmp_path / "s.toml"
    path.write_text(SITE + """
[[claim]]
technology = "med"
electricity = "0.2 kWh/m^3"
heat = "4 kWh/m^3"
heat_temperature = "70 degC"
recovery = "50 %"
source = "a fictional proposal"

[[claim]]
technology = "med"
electricity = "1.8 kWh/m^3"
heat = "80 kWh/m^3"
heat_temperature = "70 degC"
recovery = 0.5
""")
    assert main(["claim", str(path), "--format", "json"]) == 0
    body = json.loads(capsys.readouterr().out)
    assert [j["verdict"] for j in body["claims"]] == ["below_floor", "within_model"]
    assert body["claims"][0]["claim"]["source"] == "a fictional proposal"
    assert "Screening estimate" in body["notice"]
    extra = tmp_path / "claims.toml"
    extra.write_text('[claim]\ntechnology = "ro"\nelectricity = "3.5 kWh/m^3"\n')
    assert [c["technology"] for c in load_claims(extra)] == ["ro"]


@pytest.mark.parametrize("table, message", [
    ('technology = "ro"\nelectricity = "3 kWh/m^3"\ncolour = "red"', "claim.colour: unknown key"),
    ('technology = "med"\nelectricity = "1 kWh/m^3"\nheat = "50 kWh/m^3"', "claim.heat_temperature: required"),
    ('technology = "xx"\nelectricity = "1 kWh/m^3"', "claim.technology: expected one of"),
    ('technology = "ro"\nelectricity = "3 m"', "claim.electricity: expected an electricity"),
])
def test_bad_claim_tables_are_one_line_errors(tmp_path, capsys, table, message):
    path = tmp_path / "s.toml"
    path.write_text(SITE + "\n[claim]\n" + table + "\n")
    assert main(["claim", str(path)]) == 2
    err = capsys.readouterr().err
    assert err.startswith(f"error: {path}: {message}") and len(err.strip().splitlines()) == 1


def test_claim_command_line(site, capsys):
    code = main(["claim", site, "--technology", "ro", "--electricity", "0.6 kWh/m^3", "--recovery", "0.5",
                 "--format", "json"])
    assert code == 0
    j = json.loads(capsys.readouterr().out)["claims"][0]
    assert j["verdict"] == "below_floor" and j["claim"]["source"] == "command line"
    assert main(["claim", site, "--technology", "ro", "--electricity", "9 kWh/m^3", "--recovery", "0.5"]) == 0
    out = capsys.readouterr().out
    assert "above_model" in out and "1.25" in out and "least work of the claimed streams" in out
    assert main(["claim", site, "--technology", "med", "--electricity", "1 kWh/m^3", "--heat", "30 kWh/m^3"]) == 2
    assert "--heat-temperature: required" in capsys.readouterr().err
    assert main(["claim", site]) == 2
    assert "[claim] section" in capsys.readouterr().err
    assert main(["claim", site, "--technology", "ro", "--electricity", "3 kWh/m^3", "--scope", "site"]) == 2
    assert main(["claim", site, "--technology", "ro", "--electricity", "3 kWh/m^3", "--recovery", "0.97"]) == 2
    assert "--recovery: expected a recovery that leaves a liquid brine" in capsys.readouterr().err
    assert main(["claim", site, "--technology", "ro", "--electricity", "3 kWh/m^3", "--format", "csv",
                 "--recovery", "0.5"]) == 0
    assert "verdict" in capsys.readouterr().out.splitlines()[0]


def test_a_bad_claim_file_names_it(tmp_path):
    bad = tmp_path / "c.toml"
    bad.write_text('[claims]\ntechnology = "ro"\n')
    with pytest.raises(InputErrors) as exc:
        load_claims(bad)
    assert any("claims: unknown key" in m for m in exc.value.messages)


def test_a_brine_beyond_the_model_is_flagged_and_no_design_is_below_model(site):
    # 35 g/kg at 80 % recovery leaves a 173 g/kg brine: beyond TEOS-10's 120 g/kg (Feistel 2008), and beyond RO's
    # pressure limit (the concentrate's osmotic pressure is above 82.7 bar: thermodynamic restriction)
    j = judge(site, claim("ro", 3.0, recovery=0.8))
    assert any("outside the validated range" in w for w in j["warnings"])
    assert j["verdict"] == "no_model_design" and "no feasible RO design" in j["explanation"]
    assert j["within_model_kwh_per_m3"] == [None, None]


def test_monthly_feed_temperature_is_the_production_weighted_mean_compare_shows(tmp_path):
    # consistency check (not an outside source): with twelve monthly temperatures the claim's site states the same
    # production-weighted feed temperature as compare's floor and as its own dead state, not the plain mean of months
    from compare.pipeline import evaluate
    from compare.present.records import payload
    from compare.scenario import load

    months = ["24 degC", "24 degC", "25 degC", "27 degC", "29 degC", "31 degC", "32 degC", "33 degC", "32 degC",
              "30 degC", "28 degC", "25 degC"]
    path = tmp_path / "monthly.toml"
    path.write_text(SITE.replace('temperature = "25 degC"', "temperature = [" + ", ".join(
        f'"{m}"' for m in months) + "]") + "[med]\nenabled = false\n[fo]\nenabled = false\n")
    j = judge(str(path), claim("ro", 3.5))
    shown = payload(evaluate(load(str(path))))["floor"]["feed_temperature_c"]
    plain = sum(float(m.split()[0]) for m in months) / 12
    assert abs(shown - plain) > 0.01                           # premise: the two means differ here
    assert j["site"]["feed_temperature_c"] == pytest.approx(shown, abs=1e-9)
    assert j["site"]["dead_state_c"] == pytest.approx(shown, abs=1e-9)


def test_no_feasible_design_is_not_below_a_missing_figure(site):
    # 35 g/kg at 65 % recovery leaves a brine near 100 g/kg whose osmotic pressure (about 80 bar and more at the
    # membrane wall; van 't Hoff, practice) reaches the default 82.7 bar limit: neither design is feasible, so the claim
    # is compared with no design figure and the binding limit is named with its value, once
    from compare.present.claims import notes
    j = judge(site, claim("ro", 3.0, recovery=0.65))
    assert j["verdict"] == "no_model_design", j["explanation"]
    assert "below" not in j["explanation"]
    figures = {row["figure"]: row["kwh_per_m3"] for row in j["compared"]}
    assert figures["best-practice RO design"] is None and figures["scenario's RO design"] is None
    assert figures["top of within_model (no feasible design)"] is None
    assert [lim["designs"] for lim in j["binding_limits"]][0] == ["best_practice", "scenario_design"]
    lines = notes(j)
    text = " ".join(lines)
    assert text.count("ro.max_pressure 82.7 bar") == 1
    assert "— to —" not in text and "No within_model band: neither" in text
    assert all(text.count(lim["limit"]) == 1 for lim in j["binding_limits"])


def test_band_is_labelled_by_the_design_it_is_computed_from(site):
    # with a 120 bar limit the best-practice design is feasible; a design flux of 40 L/m2/h keeps the scenario's own
    # design beyond its lead-element limit: the top of within_model is then the best-practice design x 1.25, so labelled
    from compare.present.claims import band
    j = judge(site, claim("ro", 3.0, recovery=0.65), ["ro.max_pressure=120 bar", "ro.flux=40 L/m^2/h"])
    figures = {row["figure"]: row["kwh_per_m3"] for row in j["compared"]}
    best = figures["best-practice RO design"]
    assert best is not None and figures["scenario's RO design"] is None
    assert "scenario's design x 1.25 (top of within_model)" not in figures
    assert figures["best-practice design x 1.25 (top of within_model)"] == pytest.approx(MARGIN * best)
    assert j["within_model_from"] == ["best_practice", "best_practice"]
    assert j["binding_limits"] == [{"limit": j["binding_limits"][0]["limit"], "designs": ["scenario_design"]}]
    assert "ro.max_lead_flux" in j["binding_limits"][0]["limit"]
    assert "to the best-practice design times 1.25" in band(j) and "scenario's design is infeasible" in band(j)


@pytest.mark.parametrize("heat_temperature", [20.0, 25.0])
def test_heat_no_warmer_than_the_feed_makes_a_claim_invalid(site, heat_temperature):
    # thermodynamics (Carnot): heat at or below the feed (the dead state, 25 degC here) has no exergy and cannot drive
    # a thermal process on this feed: the claim is invalid as stated, never "below the design"
    j = judge(site, claim("med", 1.5, 60.0, heat_temperature, recovery=0.4))
    assert j["verdict"] == "invalid", j["explanation"]
    assert (f"heat at {heat_temperature:g} degC is no warmer than the feed (25.0 degC): it cannot drive MED"
            in j["explanation"])
    assert judge(site, claim("med", 1.5, 60.0, 70.0, recovery=0.4))["verdict"] != "invalid"


def test_heat_below_the_warmest_months_feed_is_invalid_too():
    # the fictional Gull Harbour feed runs 24-33 degC over the months (production-weighted 28.4): heat at 30 degC is
    # above the mean but cannot drive a thermal process in the warmest months
    from pathlib import Path
    path = str(Path(__file__).resolve().parents[1] / "scenarios" / "gull-harbour.toml")
    j = judge(path, claim("med", 1.5, 60.0, 30.0, recovery=None))
    assert j["verdict"] == "invalid"
    assert "no warmer than the feed in its warmest months (up to 33.0 degC)" in j["explanation"]


def test_an_invalid_claim_of_a_technology_that_takes_no_heat_is_not_judged(capsys):
    # RO takes no heat: its claimed heat at 30 degC only adds its exergy, which is zero in the warmest months of the
    # fictional Gull Harbour feed (24-33 degC); the claim is not judged, so neither band nor comparison is shown
    from pathlib import Path
    path = str(Path(__file__).resolve().parents[1] / "scenarios" / "gull-harbour.toml")
    assert main(["claim", path, "--technology", "ro", "--electricity", "3 kWh/m^3", "--heat", "10 kWh/m^3",
                 "--heat-temperature", "30 degC"]) == 0
    out = " ".join(capsys.readouterr().out.split())
    assert "Heat at 30 degC has no work value at this site (the feed reaches 33.0 degC)" in out
    assert "drive RO" not in out and "thermal process" not in out
    assert "within_model spans" not in out and "not judged" in out
    assert main(["claim", path, "--technology", "ro", "--electricity", "3 kWh/m^3", "--heat", "10 kWh/m^3",
                 "--heat-temperature", "30 degC", "--format", "markdown"]) == 0
    md = capsys.readouterr().out
    assert "not judged (invalid claim)" in md and "compared (work equivalent)" not in md
    assert "within_model spans" not in md
