"""Feed chemistry through the whole tool: ion compositions refused or accepted, scaling in every record of an ion
feed, designs at the scaling limit, site flows, one PHREEQC table per sweep, and the optional extra."""

import json
from pathlib import Path

import numpy as np
import pytest

from compare.cli import main
from compare.errors import InputErrors
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
