"""The command line: contract fields, errors, warnings in every format, help."""

import json
import re
import subprocess
import sys
from pathlib import Path

import pytest

from compare.cli import build_parser, main

ROOT = Path(__file__).resolve().parents[1]
FLOOR_FIELDS = {"water_activity", "osmotic_pressure_bar", "brine_salinity_g_per_kg", "brine_osmotic_pressure_bar",
                "least_work_kwh_per_m3", "least_work_kwh_per_m3_zero_recovery", "model", "warnings"}


def run(capsys, *argv):
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


def test_floor_json_contract(capsys):
    code, out, err = run(capsys, "floor", "--salinity", "35 g/kg", "--temperature", "25 degC", "--format", "json")
    assert code == 0, err
    rec = json.loads(out)
    assert FLOOR_FIELDS <= set(rec)
    assert rec["warnings"] == []
    assert rec["model"] == "teos10"
    assert rec["least_work_kwh_per_m3"] == pytest.approx(1.0216, rel=1e-3)   # regression (our own value)


def test_floor_recovery_range_gives_lists(capsys):
    code, out, _ = run(capsys, "floor", "--salinity", "35 g/kg", "--temperature", "25 degC", "--recovery",
                       "0.3:0.7:5", "--format", "json")
    rec = json.loads(out)
    assert rec["recovery"] == pytest.approx([0.3, 0.4, 0.5, 0.6, 0.7])
    assert len(rec["least_work_kwh_per_m3"]) == 5
    code, out, _ = run(capsys, "floor", "--salinity", "35 g/kg", "--temperature", "25 degC", "--recovery",
                       "0.3,0.5", "--format", "csv")
    assert len(out.strip().splitlines()) == 3


@pytest.mark.parametrize("fmt", ["table", "json", "csv", "markdown"])
def test_out_of_range_warning_in_every_format(capsys, fmt):
    code, out, err = run(capsys, "floor", "--salinity", "70 g/kg", "--temperature", "25 degC", "--recovery", "0.5",
                         "--format", fmt)
    assert code == 0
    assert "brine salinity 140 g/kg is outside the validated range of model teos10" in " ".join(out.split())


def test_strict_refuses_out_of_range(capsys):
    code, out, err = run(capsys, "floor", "--salinity", "70 g/kg", "--temperature", "25 degC", "--strict")
    assert code == 2 and out == ""
    assert err.startswith("error: --strict: out_of_range brine_salinity (teos10): brine salinity 140 g/kg")
    assert err.count("\n") == 1


@pytest.mark.parametrize("argv,pattern", [
    (["--salinity", "35 m", "--temperature", "25 degC"], r'--salinity: expected a salinity such as .* got "35 m"'),
    (["--salinity", "-5 g/kg", "--temperature", "25 degC"], r"--salinity: expected a salinity of zero or more"),
    (["--salinity", "35 g/kg", "--temperature", "25 kg"], r"--temperature: expected a temperature"),
    (["--salinity", "35 g/kg", "--temperature", "25 degC", "--recovery", "1.0"], r"--recovery: expected .*1 is outside"),
    (["--salinity", "35 g/kg", "--temperature", "25 degC", "--recovery", "a:b"], r"--recovery: expected"),
    (["--salinity", "35 g/kg", "--temperature", "25 degC", "--model", "magic"],
     r"--model: expected a model among .* got 'magic'"),
    (["--salinity", "35 g/kg", "--temperature", "25 degC", "--product-salinity", "40 g/kg"],
     r"--product-salinity: expected a product salinity below"),
    (["--salinity", "35 g/kg"], r"the following arguments are required: --temperature"),
])
def test_bad_input_is_one_line_exit_2(capsys, argv, pattern):
    code, out, err = run(capsys, "floor", *argv)
    assert code == 2
    assert out == ""
    assert err.count("\n") == 1 and err.startswith("error: ")
    assert re.search(pattern, err), err


def test_models_lists_every_activity_model(capsys):
    code, out, _ = run(capsys, "models", "--format", "json")
    names = {m["name"] for m in json.loads(out)["models"]}
    assert {"teos10", "pitzer-nacl", "ideal", "vant-hoff", "phreeqc"} <= names


def test_every_command_has_help_and_is_in_the_readme():
    parser = build_parser()
    sub = next(a for a in parser._actions if a.__class__.__name__ == "_SubParsersAction")
    readme = (ROOT / "README.md").read_text()
    for name, p in sub.choices.items():
        assert p.format_help().strip()
        assert f"desal {name}" in readme, f"desal {name} missing from README"
        for action in p._actions:
            for opt in action.option_strings:
                if opt.startswith("--") and opt != "--help":
                    assert opt in readme, f"{opt} of desal {name} missing from README"


def test_python_dash_m_entry_point():
    out = subprocess.run([sys.executable, "-m", "compare", "floor", "--salinity", "3 g/kg", "--temperature",
                          "20 degC", "--format", "json"], capture_output=True, text=True, check=True)
    assert json.loads(out.stdout)["water_activity"] < 1


def test_models_lists_the_built_in_technologies(capsys):
    assert main(["models", "--format", "json"]) == 0
    body = json.loads(capsys.readouterr().out)
    techs = {r["name"] for r in body["models"] if r["kind"] == "technology"}
    assert {"ro", "med", "fo"} <= techs
