"""Feed chemistry through the whole tool: ion compositions refused or accepted, scaling in every record of an ion
feed, designs at the scaling limit, site flows, one PHREEQC table per sweep, and the optional extra."""

import json
from pathlib import Path

import numpy as np
import pytest

from compare.cli import main
from compare.scenario import load
from tests.conftest import requires_phreeqc

ROOT = Path(__file__).resolve().parents[1]
SALTBUSH = str(ROOT / "scenarios" / "saltbush-flat.toml")
TERN = str(ROOT / "scenarios" / "tern-shoal.toml")

IONS_FILE = """
name = "Test Wells (fictional)"
[site]
capacity = "1000 m^3/day"
[feed]
water = "ions"
temperature = "20 degC"
{salinity}
[feed.ions]
{ions}
"""


def _write(tmp_path, ions, salinity=""):
    path = tmp_path / "wells.toml"
    path.write_text(IONS_FILE.format(ions=ions, salinity=salinity))
    return path


@requires_phreeqc
@pytest.mark.parametrize("ions, salinity, fragment", [
    # a 2:1 cation excess (in equivalents): both sums named
    ('Na = "2.0 g/kg"\nCl = "1.54 g/kg"', "", "cations 87"),
    # a total that disagrees with the given salinity: both figures named
    ('Na = "1 g/kg"\nCl = "1.5 g/kg"', 'salinity = "35 g/kg"', "ions totalling 2.5 g/kg against feed.salinity 35 g/kg"),
    ('Na = "1 g/kg"\nCl = "1.54 g/kg"\nHCO3 = "0.1 g/kg"', "", "feed.ions.pH: required with HCO3 or CO3"),
    ('Na = "1 g/kg"\nCl = "1.54 g/kg"\nNO3 = "0.1 g/kg"', "", "feed.ions.NO3: unknown ion"),
    ('Na = "1 g/kg"\nCl = "1.54 g/kg"\npH = 15', "", "feed.ions.pH: expected a pH between 0 and 14"),
])
def test_bad_compositions_are_refused_in_one_line(tmp_path, capsys, ions, salinity, fragment):
    path = _write(tmp_path, ions, salinity)
    assert main(["check", str(path)]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and fragment in err[0], err
    if "cations" in fragment:
        assert "anions 4" in err[0]


@requires_phreeqc
def test_salinity_is_computed_from_the_ions_when_left_out(tmp_path):
    path = _write(tmp_path, 'Na = "1000 mg/L"\nCl = "1540 mg/L"\nSiO2 = "20 mg/L"')
    s = load(path)
    comp = s.values["feed"]["ions"]
    assert s.values["feed"]["salinity"] == pytest.approx(comp.salinity, rel=1e-12)
    # 2560 mg/L over a density near 1000.6 kg/m^3 at 20 degC (library: gsw via the tool's density)
    assert s.values["feed"]["salinity"] == pytest.approx(2.56e-3 / 1.0006, rel=1e-3)
    assert s.sources["feed.salinity"].startswith("computed")


@requires_phreeqc
def test_seawater_demo_given_as_ions_agrees_with_teos10():
    # library: PHREEQC pitzer.dat for the demo's ions against TEOS-10 (gsw), within 0.5 % in ln a_w to 100 g/kg at
    # 40 degC, the tolerance held for seawater of Reference Composition in tests/thermo/test_activity.py
    from compare.thermo.activity import get_model
    s = load(TERN)
    model = get_model(None, "ions", composition=s.values["feed"]["ions"])
    teos = get_model(None, "seawater")
    S = np.array([0.01, 0.038, 0.07, 0.1])
    assert model.ln_aw(S, 313.15) == pytest.approx(teos.ln_aw(S, 313.15), rel=5e-3)
    assert abs(s.values["feed"]["ions"].charge_imbalance) < 0.01


def test_without_phreeqc_ion_feeds_get_one_line_and_salinity_feeds_work(monkeypatch, capsys):
    from compare.thermo import phreeqc
    monkeypatch.setattr(phreeqc, "available", lambda: False)
    assert main(["check", SALTBUSH]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and "needs PHREEQC: install the optional extra 'ions'" in err[0]
    assert main(["check", str(ROOT / "scenarios" / "alder-point.toml")]) == 0


def _compare(capsys, *args):
    # coarser RO steps than the default (8 instead of 20 per stage) keep these tests fast; they are about scaling
    assert main(["compare", SALTBUSH, "--no-save", "--format", "json", "--set", "ro.segments=8", *args]) == 0
    body = json.loads(capsys.readouterr().out)
    return {r["technology"]: r for r in body["results"]}


@requires_phreeqc
def test_compare_shows_the_limiting_mineral_and_flags_a_recovery_above_it(capsys):
    recs = _compare(capsys, "--set", "ro.recovery=86 %")
    for name in ("ro", "med"):
        sc = recs[name]["details"]["scaling"]
        assert sc["limiting_mineral"] in {"Calcite", "Gypsum", "Barite", "Celestite", "silica"}
        assert 0.5 < sc["max_recovery"] < 0.95
        assert {"Calcite", "Gypsum", "Barite", "Celestite", "SiO2(a)", "Anhydrite"} <= set(sc["saturation_index"])
        assert sc["limits"]["silica"] == pytest.approx(200.0)     # with antiscalant (the demo's choice)
    # the planner's first ask, 86 %, is above RO's limit: infeasible with code scaling, and no energy figures
    ro = recs["ro"]
    assert ro["recovery"] == pytest.approx(0.86) and ro["details"]["scaling"]["above_limit"]
    flag = next(f for f in ro["flags"] if f["code"] == "scaling")
    assert flag["kind"] == "infeasible" and not ro["feasible"] and ro["electricity_kwh_per_m3"] is None
    # a recovery under the limit is not flagged; "warning" keeps a recovery above it as a note
    ro_only = ["--set", "med.enabled=false"]
    recs = _compare(capsys, "--set", "ro.recovery=0.8", *ro_only)
    assert not any(f["code"] == "scaling" for f in recs["ro"]["flags"])
    recs = _compare(capsys, "--set", "ro.recovery=0.87", "--set", "scaling.above_limit=warning",
                    "--set", "ro.max_lead_flux=60 L/m^2/h", *ro_only)
    assert [f["kind"] for f in recs["ro"]["flags"] if f["code"] == "scaling"] == ["note"]
    # the table shows the block
    assert main(["compare", SALTBUSH, "--no-save", "--set", "ro.segments=8", *ro_only]) == 0
    out = capsys.readouterr().out
    assert "limiting mineral" in out and "Gypsum" in out and "highest recovery under the scaling limits" in out


@requires_phreeqc
def test_max_designs_at_the_scaling_limit(capsys):
    recs = _compare(capsys)
    for name in ("ro", "med"):            # the demo designs both at the limit (recovery, brine_salinity = "max")
        rec = recs[name]
        sc = rec["details"]["scaling"]
        assert rec["feasible"] and not sc["above_limit"]
        assert rec["recovery"] == pytest.approx(sc["max_recovery"], abs=1e-4)
        mineral = sc["limiting_mineral"]
        if mineral == "silica":
            assert sc["silica_mg_per_l"] == pytest.approx(sc["limits"]["silica"], rel=1e-3)
        else:
            assert sc["saturation_index"][mineral] == pytest.approx(sc["limits"][mineral], abs=5e-3)
    # without antiscalant the limits are lower, and so is the design
    lower = _compare(capsys, "--set", "ro.recovery=max", "--set", "scaling.antiscalant=false",
                     "--set", "scaling.calcite_si=1.0", "--set", "med.enabled=false")
    assert lower["ro"]["recovery"] < recs["ro"]["recovery"] - 0.05


def test_max_needs_an_ion_composition(capsys):
    assert main(["compare", str(ROOT / "scenarios" / "alder-point.toml"), "--no-save",
                 "--set", "ro.recovery=max"]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and '--set ro.recovery: "max" designs at the scaling limit' in err[0]


@requires_phreeqc
def test_site_flows_balance_in_every_record(capsys):
    from compare.thermo.brine import density
    recs = _compare(capsys, "--set", "ro.recovery=0.8")
    S_f = load(SALTBUSH).values["feed"]["salinity"]
    T = 295.15
    for name, rec in recs.items():
        q_p = 6000.0                                 # m^3/day of product
        intake, brine = rec["intake_m3_per_day"], rec["brine_m3_per_day"]
        r = rec["recovery"]
        S_b = rec["brine_salinity_g_per_kg"] * 1e-3
        T_b = rec["brine_temperature_c"] + 273.15
        m_p = q_p * float(density(0.0, T, "ions"))
        # identity: brine mass = product mass (1/r - 1), at the brine's own density and temperature
        assert brine * float(density(S_b, T_b, "ions")) == pytest.approx(m_p * (1 / r - 1), rel=1e-9)
        if name == "ro":
            assert intake * float(density(S_f, T, "ions")) == pytest.approx(m_p / r, rel=2e-3)
            assert rec["brine_temperature_c"] == pytest.approx(22.0)
        else:                                        # MED draws its cooling water too, and its brine leaves warm
            assert intake > 5 * q_p / r
            assert rec["brine_temperature_c"] == pytest.approx(rec["details"]["last_brine_temperature_c"])
    # salinity-only feeds carry the site figures too
    assert main(["compare", str(ROOT / "scenarios" / "alder-point.toml"), "--no-save", "--format", "json"]) == 0
    for rec in json.loads(capsys.readouterr().out)["results"]:
        assert rec["intake_m3_per_day"] > 100000 and rec["brine_m3_per_day"] > 0
        assert rec["brine_temperature_c"] is not None and "scaling" not in rec["details"]


@requires_phreeqc
def test_a_sweep_of_1000_cases_builds_one_phreeqc_table(capsys, tmp_path):
    # 40 recoveries x 25 temperatures on one composition: PHREEQC runs once (the table), never per case
    from compare.thermo import scaling
    scaling.scaling_table.cache_clear()
    before = scaling.RUNS["tables"]
    fast = ["--set", "med.enabled=false", "--set", "ro.segments=6"]      # coarser RO steps: the test is about PHREEQC
    assert main(["sweep", SALTBUSH, "--no-save", "--format", "csv", *fast,
                 "--vary", "ro.recovery=0.6:0.86:40", "--vary", "feed.temperature=10 degC:40 degC:25"]) == 0
    assert scaling.RUNS["tables"] == before + 1
    import io

    import pandas as pd
    rows = pd.read_csv(io.StringIO(capsys.readouterr().out))
    assert len(rows) == 1000
    above = rows["scaling_above_limit"].astype(bool)
    assert (above == (rows["recovery"] > rows["scaling_max_recovery"] + 5e-5)).all()
    assert set(rows.loc[above, "feasible"]) == {False}
    # designs at the limit vary with temperature, case by case
    assert main(["sweep", SALTBUSH, "--no-save", "--format", "csv", *fast, "--set", "ro.recovery=max",
                 "--vary", "feed.temperature=10 degC:40 degC:4"]) == 0
    rows = pd.read_csv(io.StringIO(capsys.readouterr().out))
    assert rows["recovery"].to_numpy() == pytest.approx(rows["scaling_max_recovery"].to_numpy(), abs=1e-4)
    assert rows["recovery"].nunique() == 4
    assert scaling.RUNS["tables"] == before + 1


_WELL = {"Na": "780 mg/L", "K": "18 mg/L", "Ca": "240 mg/L", "Mg": "95 mg/L", "Sr": "6 mg/L", "Ba": "0.08 mg/L",
         "Cl": "1150 mg/L", "SO4": "900 mg/L", "HCO3": "290 mg/L", "SiO2": "28 mg/L", "pH": 7.6}


@requires_phreeqc
@pytest.mark.parametrize("given", [True, False])
def test_silica_and_minerals_not_given_show_as_not_given_never_as_0(tmp_path, capsys, given):
    # a feed without silica (or barium) has no silica figure: not 0, which reads as a measurement; a feed with it
    # shows its figure against its limit (JSON, Markdown and the terminal)
    ions = {k: v for k, v in _WELL.items() if given or k not in ("SiO2", "Ba")}
    path = _write(tmp_path, "\n".join(f"{k} = {v!r}".replace("'", '"') for k, v in ions.items()))
    args = ["compare", str(path), "--no-save", "--set", "ro.segments=8", "--set", "fo.enabled=false"]
    assert main([*args, "--format", "json"]) == 0
    for r in json.loads(capsys.readouterr().out)["results"]:
        sc = r["details"]["scaling"]
        if given:
            assert sc["not_given"] == [] and sc["silica_mg_per_l"] > 28 and sc["limits"]["silica"] == 200.0
        else:
            assert set(sc["not_given"]) == {"silica", "Barite"} and sc["silica_mg_per_l"] is None
            assert "silica" not in sc["limits"] and "Barite" not in sc["limits"]
    assert main([*args, "--format", "markdown"]) == 0
    md = capsys.readouterr().out
    silica = next(line for line in md.splitlines() if line.startswith("| silica (SiO2)"))
    if given:
        assert "[mg/L] (limit)" in silica and "(200)" in silica and "not given" not in md
    else:
        assert silica.split(" | ")[1:] == ["—", "— |"] and "not given in the feed" in silica
        assert any(line.startswith("| saturation index, barite: its ions not given in the feed") for line in
                   md.splitlines())
    assert main(args) == 0
    term = " ".join(capsys.readouterr().out.split())
    assert "0 (—)" not in term          # (the label wraps in the terminal: its start says which row it is)
    assert ("silica (SiO2) in the concentrate [mg/L]" in term) is given
    assert ("silica (SiO2) in the concentrate: not" in term) is not given


@requires_phreeqc
def test_report_shows_the_scaling_check_as_the_terminal_does(tmp_path, monkeypatch, capsys):
    # the report carries the scaling block: the same limiting minerals, highest recoveries and figures against
    # their limits as the comparison's JSON
    from compare.present import browser
    recs = _compare(capsys)
    monkeypatch.setattr(browser, "find", lambda: None)
    assert main(["report", SALTBUSH, "--out", str(tmp_path), "--set", "ro.segments=8"]) == 0
    html = next(tmp_path.iterdir()).joinpath("report.html").read_text(encoding="utf-8")
    assert 'id="scaling"' in html
    part = html.split('id="scaling"')[1].split("</table>")[0]
    scaled = [r["details"].get("scaling") for r in recs.values()]
    assert sum(sc is not None for sc in scaled) >= 2          # the premise: RO and MED judged
    for sc in filter(None, scaled):
        assert sc["limiting_mineral"] in part
        assert f"{100 * sc['max_recovery']:.1f}" in part
    assert "saturation index, gypsum (limit)" in part and "(0.360)" in part
