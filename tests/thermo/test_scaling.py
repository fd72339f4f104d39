"""Saturation indices of concentrates: the tabulated PHREEQC figures against PHREEQC run directly, a published
solubility, and how the scaling limit moves with temperature and sulfate."""

import numpy as np
import pytest

from compare.thermo.phreeqc import Composition, check_charge_balance, check_total
from compare.thermo.scaling import (DEFAULT_LIMITS, Limit, molality_factor, phreeqc_input, salinity_factor,
                                    scaling_table, solute_per_water)
from tests.conftest import requires_phreeqc

#: a fictional brackish groundwater (invented numbers; mg/L at 22 degC, pH 7.6), the one of the Saltbush Flat demo
BRACKISH_MG_L = {"Na": 780, "K": 18, "Ca": 240, "Mg": 95, "Sr": 6, "Ba": 0.08, "Cl": 1150, "SO4": 900, "HCO3": 290,
                 "F": 1.2, "Br": 3, "B": 0.8, "SiO2": 28}
RHO = 1002.0    # its density [kg/m^3], near enough for a test composition


def brackish(**change) -> Composition:
    mg = {**BRACKISH_MG_L, **change}
    return Composition.of({k: v * 1e-3 / RHO for k, v in mg.items()}, ph=7.6, temperature=295.15)


def test_composition_balance_and_total():
    comp = brackish()
    cat, an = comp.equivalents()
    # regression of our own arithmetic, checked by hand: Na 780/22.99 + ... = 54.3 meq/L, anions 56.0 meq/L
    assert cat * RHO == pytest.approx(54.33, rel=2e-3) and an * RHO == pytest.approx(56.03, rel=2e-3)   # eq/m^3 = meq/L
    assert check_charge_balance(comp) is None
    # a 2:1 cation excess is refused, with both sums named
    excess = Composition.of({"Na": 2 * 0.0229898, "Cl": 0.035453})
    why = check_charge_balance(excess)
    assert "cations 2000 meq/kg" in why and "anions 1000 meq/kg" in why
    # a total far from the given salinity is refused, naming both
    why = check_total(Composition.of({"Na": 0.001, "Cl": 0.0015}), 0.035, 0.10)
    assert "2.5 g/kg" in why and "35 g/kg" in why
    assert check_total(comp, comp.salinity * 1.05, 0.10) is None


def _direct(pp, feed, k, t_c, minerals):
    """PHREEQC run directly: the feed copied, the fraction 1 - 1/k of its water removed, brought to t_c, and PHREEQC's
    own saturation indices read (phreeqpython's ``Solution.si`` leaves the water activity out of a hydrate's ion
    activity product, so the indices are read from a SELECTED_OUTPUT of the same solution)."""
    sol = feed.copy()
    sol.remove_fraction("H2O", 1 - 1 / k)
    sol.change_temperature(t_c)
    pp.ip.run_string(f"USE SOLUTION {sol.number}\nREACTION 1\n H2O 1\n 0 moles\nSELECTED_OUTPUT 1\n -reset false\n"
                     f" -si {' '.join(minerals)}\nEND\n")
    return sol, dict(zip(minerals, pp.ip.get_selected_output_array()[1]))


@requires_phreeqc
def test_saturation_indices_against_phreeqc_run_directly():
    # library: PHREEQC (phreeqpython, pitzer.dat) at 1x, 2x and 4x concentration (and 7.3x), on and off the table's
    # temperatures; every phase PHREEQC knows for this water within 0.01 SI units (this bounds the interpolation)
    from phreeqpython import PhreeqPython
    comp = brackish()
    table = scaling_table(comp)
    assert {"Calcite", "Aragonite", "Gypsum", "Anhydrite", "Barite", "Celestite", "SiO2(a)", "Chalcedony",
            "Quartz"} <= set(table.minerals)
    assert not any(m.endswith("(g)") for m in table.minerals)
    pp = PhreeqPython(database="pitzer.dat")
    feed = pp.add_solution({"units": "mol/kgw", "temp": 22.0, "pH": 7.6,
                            **{k: float(v) for k, v in (x.split() for x in phreeqc_input(comp.molalities()))}})
    X = solute_per_water(comp)
    worst = 0.0
    for k in (1.0, 2.0, 4.0, 7.3):
        for t_c in (22.0, 25.0, 47.3, 71.9):
            sol, si = _direct(pp, feed, k, t_c, list(table.minerals))
            cf = salinity_factor(k, X)
            for m, value in si.items():
                worst = max(worst, abs(float(table.saturation_index(m, cf, t_c + 273.15)) - value))
            if t_c == 25.0:
                # phreeqpython's own si() agrees for the anhydrous minerals
                for m in ("Calcite", "Barite", "Celestite", "Anhydrite"):
                    assert sol.si(m) == pytest.approx(si[m], abs=1e-9)
    assert worst < 0.01


@requires_phreeqc
def test_gypsum_solubility_in_pure_water():
    # published: Lebedev & Kosorukov 2017, Geochemistry International 55, 205-210 (abstract): estimates of gypsum
    # solubility in water at 25 degC range from 0.0147 to 0.0182 mol/L (about 2.0-2.5 g/L as CaSO4, 2.5-3.1 g/L as
    # CaSO4.2H2O). Found through the table and its limit solver: the concentration factor where gypsum reaches SI 0.
    m0 = 0.004
    comp = Composition.of({"Ca": m0 * 0.04008, "SO4": m0 * 0.096062}, ph=7.0, temperature=298.15)
    table = scaling_table(comp)
    cf, limiting, names = table.max_concentration_factor(298.15, {"Gypsum": Limit("si", 0.0)})
    assert names[limiting[0]] == "Gypsum"
    m_sat = m0 * molality_factor(cf[0], solute_per_water(comp))
    assert 0.0147 <= m_sat <= 0.0182
    assert float(table.saturation_index("Gypsum", cf[0], 298.15)) == pytest.approx(0.0, abs=2e-3)


def _max_recovery(comp, T, limits):
    table = scaling_table(comp)
    cf, limiting, names = table.max_concentration_factor(np.atleast_1d(T), limits)
    return 1 - 1 / cf, [names[i] if i >= 0 else None for i in limiting]


@requires_phreeqc
def test_scaling_limit_falls_as_temperature_or_sulfate_rises():
    # library: PHREEQC; calcite and anhydrite grow less soluble when hot, so the highest recovery falls with
    # temperature; more sulfate brings gypsum to its limit sooner
    limits = {m: v[1] for m, v in DEFAULT_LIMITS.items()}
    r, which = _max_recovery(brackish(), np.array([298.15, 313.15, 333.15, 353.15]), limits)
    assert np.all(np.diff(r) < 0), (r, which)
    assert 0.5 < r[0] < 0.95
    base = _max_recovery(brackish(), 298.15, {"Gypsum": limits["Gypsum"]})[0][0]
    # twice the sulfate, balanced by sodium (Na2SO4 added)
    more = _max_recovery(brackish(SO4=1800, Na=780 + 900 * 2 * 22.99 / 96.06), 298.15, {"Gypsum": limits["Gypsum"]})
    assert more[0][0] < base - 0.03
    assert more[1][0] == "Gypsum"


@requires_phreeqc
def test_silica_limit_is_a_concentration_in_the_concentrate():
    # published: 150 mg/L of silica in the concentrate (Haidari et al. 2022, Water Resources and Industry 27, 100171)
    comp = brackish()
    table = scaling_table(comp)
    cf, limiting, names = table.max_concentration_factor(298.15, {"silica": Limit("concentration", 0.150)})
    assert names[limiting[0]] == "silica"
    assert float(table.silica(cf[0], 298.15)) == pytest.approx(0.150, rel=1e-6)
    # 28 mg/L in a feed of density about 1002 kg/m^3 reaches 150 mg/L near 5.3-fold
    assert 5.0 < cf[0] < 5.6


@requires_phreeqc
def test_table_is_built_once_per_composition():
    from compare.thermo import scaling
    comp = brackish(K=19)
    before = scaling.RUNS["tables"]
    t1 = scaling_table(comp)
    t2 = scaling_table(brackish(K=19))
    assert t1 is t2 and scaling.RUNS["tables"] == before + 1
