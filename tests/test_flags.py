"""Flags as data, infeasible records without figures, --strict by kind, inputs beyond the models' reach refused in
every command, cached tables that flag their edges, and the provenance of every default."""

import json
import os
import re
import stat
from pathlib import Path

import numpy as np
import pytest

from compare.cli import main
from compare.flags import KINDS, Flag, infeasible_mask, reduce_cases

ROOT = Path(__file__).resolve().parents[1]
GULL = str(ROOT / "scenarios" / "gull-harbour.toml")


def run(capsys, *argv):
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


# ------------------------------------------------------------------------------------------------ the Flag type
def test_flag_kinds_and_masks():
    with pytest.raises(ValueError):
        Flag("warning", "x", "", "m", "text")
    f = Flag("infeasible", "max_pressure", "feed_pressure", "ro", "too high", np.array([[True, False], [False, False]]))
    assert infeasible_mask([f, Flag("note", "n", "", "m", "", True)], (2, 2)).tolist() == [[True, False],
                                                                                           [False, False]]
    reduced = reduce_cases([f], (2, 2), axis=1)
    assert len(reduced) == 1 and reduced[0].mask.tolist() == [True, False]
    assert f.record() == {"kind": "infeasible", "code": "max_pressure", "quantity": "feed_pressure", "model": "ro",
                          "message": "too high"}
    assert set(KINDS) == {"out_of_range", "infeasible", "off_target", "simplification", "clipped", "note"}


# ------------------------------------------------------------------------------------- infeasible: no figures
DESIGN_FIGURES = ("electricity_kwh_per_m3", "heat_kwh_per_m3", "work_equivalent_kwh_per_m3", "second_law_efficiency",
                  "power_mw", "heat_mw", "annual_electricity_gwh", "annual_heat_gwh", "emissions_kg_per_m3",
                  "annual_emissions_t", "levelized_cost_per_m3")


@pytest.mark.parametrize("fmt", ["json", "csv", "markdown", "table"])
def test_infeasible_record_has_no_figures_in_any_format(capsys, fmt):
    # site heat at 50 degC: MED needs its steam at 70 degC, so it cannot work there
    code, out, err = run(capsys, "compare", GULL, "--no-save", "--set", "energy.heat_temperature=50 degC",
                         "--set", "fo.enabled=false", "--format", fmt)
    assert code == 0, err
    if fmt == "json":
        med = next(r for r in json.loads(out)["results"] if r["technology"] == "med")
        assert med["feasible"] is False
        assert all(med[k] is None for k in DESIGN_FIGURES)
        assert all(v is None for v in med["details"]["cost_breakdown_per_m3"].values())
        assert med["details"]["capital"] is None
        assert [f["code"] for f in med["flags"] if f["kind"] == "infeasible"] == ["heat_temperature"]
        assert med["least_work_kwh_per_m3"] > 0 and med["recovery"] > 0        # what describes the request stays
    elif fmt == "csv":
        import csv
        import io
        rows = {r["technology"]: r for r in csv.DictReader(io.StringIO(out))}
        assert rows["med"]["feasible"] == "False"
        assert all(rows["med"][k] == "" for k in DESIGN_FIGURES)
        assert "infeasible:heat_temperature" in rows["med"]["flags"]
        assert rows["ro"]["electricity_kwh_per_m3"] != ""
    else:
        text = " ".join(out.split())
        assert "needs heat hotter than the site supplies" in text
        assert not re.search(r"\bnan\b", text.lower())


# ----------------------------------------------------------------------------------------------- --strict
STRICT_CASES = [
    # (technology, overrides, code of the out_of_range flag it raises)
    ("med", ["med.top_brine_temperature=90 degC"], "brine_temperature"),
    ("med", ["med.vapor_compression=true", "med.motive_steam_pressure=60 bar"], "ejector"),
    ("med", ["med.vapor_compression=true", "med.motive_steam_pressure=60 bar"], "steam_table"),
    ("ro", ["feed.salinity=45 g/kg", "ro.recovery=0.7", "ro.max_pressure=400 bar"], "density"),
    ("ro", ["feed.salinity=45 g/kg", "ro.recovery=0.7", "ro.max_pressure=400 bar"], "brine_salinity"),
    # (the wall brine at the design flux: held, not lowered for the lead element's limit)
    ("ro", ["feed.salinity=60 g/kg", "ro.recovery=0.75", "ro.max_pressure=400 bar",
            "ro.mass_transfer_coefficient=1e-5 m/s", "ro.lead_flux_limit=infeasible"], "wall_salinity_cap"),
    ("ro", ["feed.salinity=60 g/kg", "ro.recovery=0.75", "ro.max_pressure=400 bar",
            "ro.mass_transfer_coefficient=5e-6 m/s", "ro.lead_flux_limit=infeasible"], "osmotic_table"),
    ("fo", ["fo.draw_concentration=26 %"], "draw_salinity"),
    ("floor", ["feed.salinity=130 g/kg"], "feed_salinity"),
]


@pytest.mark.parametrize("tech,overrides,code", STRICT_CASES)
def test_strict_refuses_every_out_of_range_flag(capsys, tech, overrides, code):
    # only the technology under test is evaluated (fewer evaluations, same flags)
    others = [f"{t}.enabled=false" for t in ("ro", "med", "fo") if t != tech]
    sets = [x for o in overrides + others for x in ("--set", o)]
    c, out, err = run(capsys, "compare", GULL, "--no-save", "--format", "json", *sets)
    assert c == 0, err
    payload = json.loads(out)
    raised = {f["code"] for f in payload["floor"]["flags"] if f["kind"] == "out_of_range"}
    for r in payload["results"]:
        raised |= {f["code"] for f in r["flags"] if f["kind"] == "out_of_range"}
    assert code in raised
    c, out, err = run(capsys, "compare", GULL, "--no-save", "--strict", *sets)
    assert c == 2 and out == ""
    assert err.startswith("error: --strict: ") and "out_of_range" in err and err.count("\n") == 1


def test_strict_passes_a_clean_site(capsys):
    c, _, err = run(capsys, "compare", str(ROOT / "scenarios" / "alder-point.toml"), "--no-save", "--strict")
    assert c == 0, err


# ------------------------------------------------------------------------------ beyond reach: refused, one line
@pytest.mark.parametrize("argv,where", [
    (["compare", GULL, "--no-save", "--set", "feed.salinity=400 g/kg"], "--set feed.salinity"),
    (["compare", GULL, "--no-save", "--set", "feed.salinity=35 %"], "--set feed.salinity"),
    (["compare", GULL, "--no-save", "--set", "feed.temperature=150 degC"], "--set feed.temperature"),
    (["compare", GULL, "--no-save", "--set", "ro.recovery=0.95"], "--set ro.recovery"),
    (["compare", GULL, "--no-save", "--set", "med.brine_salinity=300 g/kg"], "--set med.brine_salinity"),
    (["check", GULL, "--set", "feed.salinity=400 g/kg"], "--set feed.salinity"),
    (["check", GULL, "--set", "feed.salinity=35 %"], "--set feed.salinity"),
    (["check", GULL, "--set", "feed.temperature=150 degC"], "--set feed.temperature"),
    (["check", GULL, "--set", "fo.recovery=0.95"], "--set fo.recovery"),
    (["floor", "--salinity", "400 g/kg", "--temperature", "25 degC"], "--salinity"),
    (["floor", "--salinity", "35 %", "--temperature", "25 degC"], "--salinity"),
    (["floor", "--salinity", "35 g/kg", "--temperature", "150 degC"], "--temperature"),
    (["floor", "--salinity", "35 g/kg", "--temperature", "25 degC", "--recovery", "0.95"], "--recovery"),
    (["sweep", GULL, "--no-save", "--vary", "feed.salinity=35 g/kg:400 g/kg:3"], "--vary feed.salinity"),
    (["sweep", GULL, "--no-save", "--vary", "feed.salinity=35 g/kg,35 %"], "--vary feed.salinity"),
    (["sweep", GULL, "--no-save", "--vary", "feed.temperature=20 degC:150 degC:3"], "--vary feed.temperature"),
    (["sweep", GULL, "--no-save", "--vary", "ro.recovery=0.4,0.95"], "--vary ro.recovery"),
])
def test_beyond_reach_is_bad_input_in_every_command(capsys, tmp_path, argv, where):
    before = set(os.listdir(tmp_path))
    code, out, err = run(capsys, *argv)
    assert code == 2, err
    assert out == "" and err.count("\n") == 1
    assert err.startswith(f"error: {where}: expected ")
    assert set(os.listdir(tmp_path)) == before


def test_in_reach_but_outside_validation_is_computed_and_flagged(capsys):
    code, out, _ = run(capsys, "floor", "--salinity", "150 g/kg", "--temperature", "25 degC", "--recovery", "0.2",
                       "--format", "json")
    assert code == 0
    rec = json.loads(out)
    assert {f["code"] for f in rec["flags"]} == {"feed_salinity", "brine_salinity"}
    assert all(f["kind"] == "out_of_range" for f in rec["flags"])
    assert np.isfinite(rec["least_work_kwh_per_m3"])


# ---------------------------------------------------------------------------- cached tables flag their edges
def test_osmotic_table_flags_points_outside():
    from compare.thermo.activity import get_model
    from compare.thermo.floor import osmotic_table
    tab = osmotic_table(get_model("vant-hoff", "seawater"))
    assert tab.flags(np.array([0.1, 0.2]), 298.15, "brine", "vant-hoff") == []
    S = np.array([0.1, 0.36, 0.1])
    T = np.array([298.15, 298.15, 430.0])
    (f,) = tab.flags(S, T, "brine", "vant-hoff")
    assert f.kind == "out_of_range" and f.code == "osmotic_table" and f.mask.tolist() == [False, True, True]


def test_density_table_flags_points_outside():
    from compare.thermo.brine import density_flags
    assert density_flags(np.array([0.035, 0.1]), 298.15, "seawater", "brine") == []
    (f,) = density_flags(np.array([0.035, 0.13]), np.array([298.15, 298.15]), "seawater", "brine")
    assert f.code == "density" and f.mask.tolist() == [False, True]
    (g,) = density_flags(np.array([0.1, 0.24]), 298.15, "nacl", "brine")
    assert g.mask.tolist() == [False, True]


def test_water_tables_flag_points_outside():
    from compare.thermo.water import T_MAX, table_flags
    assert table_flags(np.array([300.0, 400.0]), "steam") == []
    (f,) = table_flags(np.array([300.0, T_MAX + 10]), "steam")
    assert f.code == "steam_table" and f.mask.tolist() == [False, True]


def test_phreeqc_free_models_flag_their_validity():
    from compare.thermo.activity import get_model
    from compare.thermo.model import range_flags
    m = get_model("pitzer-nacl", "nacl")
    flags = range_flags(m, np.array([0.1, 0.262]), np.array([298.15, 298.15]), "brine")
    assert [f.code for f in flags] == ["brine_salinity"] and flags[0].mask.tolist() == [False, True]


# ------------------------------------------------------------------------------------------- provenance
def test_every_default_names_its_source(capsys):
    code, out, _ = run(capsys, "check", GULL, "--format", "json")
    assert code == 0
    inputs = json.loads(out)["inputs"]
    files = set(p.name for p in ROOT.rglob("*") if ".git" not in p.parts)
    for key, v in inputs.items():
        src = v["source"]
        for name in re.findall(r"[\w-]+\.(?:md|txt|toml|py)\b", src):
            assert name in files, f"{key} cites {name}, which is not in the project"
        if src.startswith("default ("):
            inner = src[len("default ("):-1].removeprefix("RO regenerator: ")
            assert inner.startswith(("common practice", "from memory", "tool default", "numerics")) or \
                re.search(r"\b(19|20)\d\d\b", inner), f"{key}: {src}"


# ----------------------------------------------------------------------------------------------- run files
def test_run_json_records_the_command_as_typed_and_one_file_mode(capsys, tmp_path):
    argv = ["compare", GULL, "--out", str(tmp_path), "--set", "ro.recovery=0.4"]
    assert main(argv) == 0
    (run_dir,) = [p for p in tmp_path.iterdir() if not p.name.startswith(".")]
    record = json.loads((run_dir / "run.json").read_text())
    assert record["command"] == ["desal", *argv]
    modes = {stat.S_IMODE(p.stat().st_mode) for p in run_dir.iterdir()}
    assert len(modes) == 1
