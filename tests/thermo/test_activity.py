"""Water activity models against outside sources.

Marks (see DEVELOPERS.md): published, library, memory, practice, regression.
"""

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from compare.thermo.activity import MODELS, get_model, pitzer_nacl_osmotic_coefficient
from compare.thermo.constants import M_NACL, M_SEA_SALT, M_W, R
from tests.conftest import requires_phreeqc

TEOS10 = get_model("teos10", "seawater")
PITZER = get_model("pitzer-nacl", "nacl")


def all_models():
    return [TEOS10, PITZER, get_model("ideal", "seawater"), get_model("vant-hoff", "seawater"),
            get_model("ideal", "nacl"), get_model("vant-hoff", "nacl")]


# ------------------------------------------------------------------------------------------------------ TEOS-10
def test_teos10_documented_osmotic_coefficient():
    # published: TEOS-10 documentation of its osmotic coefficient function (gsw_osmotic_coefficient_t_exact check
    # value): phi = 0.902847177948535 at S_A = 34.7118 g/kg, t = 28.7856 degC, p = 10 dbar. The documentation uses
    # R = 8.314472 J/(mol K); we use CODATA 2018, hence the 2e-6 relative tolerance.
    S, T, p = 34.7118e-3, 28.7856 + 273.15, 101325.0 + 10e4
    from compare.thermo.activity import teos10_ln_aw
    ln_aw = teos10_ln_aw(S, T, p)
    m_sum = S / (M_SEA_SALT * (1 - S))
    phi = -ln_aw / (M_W * m_sum) * (R / 8.314472)
    assert phi == pytest.approx(0.902847177948535, rel=2e-6)


def test_teos10_against_gsw_directly():
    # library: gsw, computed in the test without project code.
    import gsw
    SA = np.array([5.0, 20.0, 35.16504, 70.0, 120.0])
    t = np.array([2.0, 15.0, 25.0, 40.0, 80.0])
    dmu = (gsw.chem_potential_water_t_exact(SA, t, 0) - gsw.chem_potential_water_t_exact(0 * SA, t, 0)) * 1e3
    aw = np.exp(dmu * 0.018015268 / (8.314462618 * (t + 273.15)))
    assert np.exp(TEOS10.ln_aw(SA / 1e3, t + 273.15)) == pytest.approx(aw, rel=1e-12)


def test_teos10_seawater_reference_point():
    # library: gsw: a_w = 0.98131, phi = 0.9026 at S_A = 35.16504 g/kg, 25 degC.
    S, T = 0.03516504, 298.15
    assert np.exp(TEOS10.ln_aw(S, T)) == pytest.approx(0.98131, abs=1e-5)
    assert TEOS10.osmotic_coefficient(S, T) == pytest.approx(0.9026, abs=1e-4)


# -------------------------------------------------------------------------------------------------- Pitzer NaCl
MOLALITIES = np.array([0.1, 0.5, 1.0, 2.0, 3.0, 4.0, 5.0, 6.0])


def test_pitzer_against_pitzer_mayorga_1973():
    # published: Pitzer & Mayorga 1973, J. Phys. Chem. 77, 2300, Table I, NaCl at 25 degC: beta0 = 0.0765,
    # beta1 = 0.2664, Cphi = 0.00127, alpha = 2, b = 1.2, A_phi = 0.3915. Evaluated here independently.
    m = MOLALITIES
    sI = np.sqrt(m)
    phi_pm = 1 - 0.3915 * sI / (1 + 1.2 * sI) + m * (0.0765 + 0.2664 * np.exp(-2 * sI)) + m * m * 0.00127
    assert pitzer_nacl_osmotic_coefficient(m, 298.15) == pytest.approx(phi_pm, rel=3e-3)


def test_pitzer_against_robinson_stokes():
    # memory: Robinson & Stokes 1959, Electrolyte Solutions, NaCl osmotic coefficients at 25 degC (values recalled,
    # to be confirmed against the book); held at 0.3 %.
    phi_rs = np.array([0.9324, 0.9209, 0.9355, 0.9833, 1.0453, 1.1158, 1.1916, 1.2721])
    assert pitzer_nacl_osmotic_coefficient(MOLALITIES, 298.15) == pytest.approx(phi_rs, rel=3e-3)


def test_pitzer_aphi_at_25c():
    # published: Pitzer & Mayorga 1973: A_phi = 0.3915 at 25 degC (ours from IAPWS-95 density, Bradley-Pitzer eps).
    from compare.thermo.activity import debye_huckel_aphi
    assert debye_huckel_aphi(298.15) == pytest.approx(0.3915, rel=1e-3)


def test_dielectric_constant_against_iapws_r8_97():
    # library: iapws package, IAPWS R8-97 static dielectric constant (Fernandez et al. 1997), within 0.3 %.
    from iapws._iapws import _Dielectric
    from compare.thermo.activity import dielectric_constant_bradley_pitzer
    from compare.thermo.water import liquid_density
    for t in (0.01, 25.0, 50.0, 75.0, 100.0):
        T = t + 273.15
        ref = _Dielectric(float(liquid_density(T)), T)
        assert float(dielectric_constant_bradley_pitzer(T)) == pytest.approx(ref, rel=3e-3)


@requires_phreeqc
@pytest.mark.parametrize("t_c", [25.0, 50.0, 75.0])
def test_pitzer_against_phreeqc(t_c):
    # library: PHREEQC with pitzer.dat (phreeqpython), OSMOTIC punched per solution; 0.3 %.
    from phreeqpython import PhreeqPython
    ip = PhreeqPython(database="pitzer.dat").ip
    ref = []
    for m in MOLALITIES:
        ip.run_string(f"SOLUTION 1\n temp {t_c}\n units mol/kgw\n Na {m}\n Cl {m}\nSELECTED_OUTPUT\n -reset false\n"
                      "USER_PUNCH\n -headings osm\n 10 PUNCH OSMOTIC\nEND\n")
        ref.append(ip.get_selected_output_array()[1][0])
    assert pitzer_nacl_osmotic_coefficient(MOLALITIES, t_c + 273.15) == pytest.approx(np.array(ref), rel=3e-3)


# --------------------------------------------------------------------------------------------------- all models
@pytest.mark.parametrize("model", all_models(), ids=lambda m: f"{m.name}-{m.water}")
def test_gibbs_duhem_consistency(model):
    # identity: mu_w = g - S dg/dS must equal R T ln a_w / M_w (what makes least work exact for a salty product).
    S = np.array([0.001, 0.01, 0.035, 0.07, 0.11])
    T = 303.15
    h = 1e-7
    dg = (model.gibbs(S + h, T) - model.gibbs(S - h, T)) / (2 * h)
    mu_w = model.gibbs(S, T) - S * dg
    assert mu_w == pytest.approx(model.mu_w(S, T), rel=2e-6)


def test_unknown_model_and_wrong_water():
    from compare.thermo.model import ModelError
    with pytest.raises(ModelError, match="expected a model among"):
        get_model("nope", "seawater")
    with pytest.raises(ModelError, match="for seawater"):
        get_model("teos10", "nacl")
    assert set(MODELS) >= {"teos10", "pitzer-nacl", "ideal", "vant-hoff", "phreeqc"}


@settings(max_examples=60, deadline=None)
@given(S=st.floats(1e-5, 0.2), t=st.floats(0.0, 90.0))
def test_activity_in_unit_interval(S, t):
    for model in (TEOS10, PITZER, get_model("ideal", "nacl")):
        aw = float(np.exp(model.ln_aw(S, t + 273.15)))
        assert 0.0 < aw <= 1.0


def test_broadcasting_shapes():
    S = np.linspace(0.01, 0.1, 6).reshape(2, 3)
    T = np.array([290.0, 300.0, 310.0])
    for model in all_models():
        assert model.ln_aw(S, T).shape == (2, 3)
        assert model.gibbs(S, T).shape == (2, 3)
    assert np.ndim(TEOS10.ln_aw(0.035, 298.15)) == 0


def test_nacl_particle_mass():
    assert PITZER.particle_molar_mass == pytest.approx(M_NACL / 2)


# ------------------------------------------------------------------------------------------------------ PHREEQC
REFERENCE_COMPOSITION = {  # published: Millero et al. 2008, Deep-Sea Res. I 55, 50-72, Table 4 (g/kg at S_R 35.16504)
    "Na": 10.78145, "Mg": 1.28372, "Ca": 0.41208, "K": 0.39910, "Sr": 0.00795, "Cl": 19.35271, "SO4": 2.71235,
    "Br": 0.06728, "HCO3": 0.10481,
}


@requires_phreeqc
def test_phreeqc_seawater_against_teos10():
    # library: PHREEQC pitzer.dat vs TEOS-10 for seawater of Reference Composition (within about 0.5 %
    # to 100 g/kg at 40 degC and 2 % at 120 g/kg, 80 degC).
    model = get_model("phreeqc", "ions", composition=REFERENCE_COMPOSITION)
    S = np.array([0.01, 0.035, 0.07, 0.1])
    assert model.ln_aw(S, 313.15) == pytest.approx(TEOS10.ln_aw(S, 313.15), rel=5e-3)
    assert model.ln_aw(0.12, 353.15) == pytest.approx(TEOS10.ln_aw(0.12, 353.15), rel=2e-2)
    assert model.extra["charge_imbalance"] < 0.01


@requires_phreeqc
def test_phreeqc_gibbs_duhem():
    model = get_model("phreeqc", "ions", composition=REFERENCE_COMPOSITION)
    S = np.array([0.005, 0.035, 0.1, 0.2])
    h = 1e-6
    mu_w = model.gibbs(S, 300.0) - S * (model.gibbs(S + h, 300.0) - model.gibbs(S - h, 300.0)) / (2 * h)
    assert mu_w == pytest.approx(model.mu_w(S, 300.0), rel=1e-5)


@requires_phreeqc
def test_phreeqc_table_against_direct_run():
    # library: the interpolated table against PHREEQC itself at off-grid points, 1e-4 relative.
    from compare.thermo.phreeqc import _run, _normalise
    model = get_model("phreeqc", "ions", composition=REFERENCE_COMPOSITION)
    S = np.array([0.0123, 0.0567, 0.1789])
    T = np.array([281.0, 318.3, 342.7])
    direct = np.log(_run(_normalise(REFERENCE_COMPOSITION), S, T))
    assert model.ln_aw(S, T) == pytest.approx(direct, rel=1e-4)
