"""Least work and osmotic pressure against outside sources and identities."""

import numpy as np
import pytest
from hypothesis import assume, given, settings
from hypothesis import strategies as st

from compare.thermo.activity import get_model
from compare.thermo.constants import J_PER_KWH
from compare.thermo.floor import (brine_salinity, evaluate_floor, least_work, least_work_per_kg, osmotic_pressure)

TEOS10 = get_model("teos10", "seawater")
PITZER = get_model("pitzer-nacl", "nacl")


def test_osmotic_pressure_of_seawater_against_gsw():
    # library: gsw: Pi = 2.589 MPa at S_A = 35.16504 g/kg, 25 degC, taking Pi = -dmu_w / v_w(pure, T),
    # computed here from gsw alone: dmu_w [J/kg], v_w = gsw.specvol_t_exact(0, t, 0).
    import gsw
    SA, t = 35.16504, 25.0
    dmu = (gsw.chem_potential_water_t_exact(SA, t, 0) - gsw.chem_potential_water_t_exact(0, t, 0)) * 1e3
    pi_gsw = -dmu / gsw.specvol_t_exact(0, t, 0)
    ours = osmotic_pressure(TEOS10.ln_aw(SA / 1e3, t + 273.15), t + 273.15)
    assert ours == pytest.approx(pi_gsw, rel=1e-4)      # IAPWS-95 vs IAPWS-09 water volume: 1e-5 apart
    assert ours / 1e6 == pytest.approx(2.589, abs=1e-3)


@pytest.mark.parametrize("S_f,t,r,S_p", [(0.035, 25.0, 0.5, 0.0), (0.045, 30.0, 0.4, 0.0002), (0.003, 15.0, 0.8, 0.0),
                                         (0.070, 60.0, 0.3, 0.001)])
def test_least_work_against_gsw_gibbs_form(S_f, t, r, S_p):
    # library: gsw. Least work w = g_p + (1/r - 1) g_b - g_f / r (Mistry & Lienhard 2013) from gsw.gibbs directly
    # (TEOS-10 absolute reference state), times the product density from gsw.rho_t_exact.
    import gsw
    S_b = (S_f - r * S_p) / (1 - r)
    g = lambda s: gsw.gibbs(0, 0, 0, s * 1e3, t, 0)  # noqa: E731
    w = g(S_p) + (1 / r - 1) * g(S_b) - g(S_f) / r
    assert least_work_per_kg(TEOS10, S_f, t + 273.15, r, S_p) == pytest.approx(w, rel=1e-8)
    # per m^3: product density from gsw here, from gsw or CoolProp MITSW (above 40 degC) in the project: 1e-3
    ref = w * gsw.rho_t_exact(S_p * 1e3, t, 0)
    assert least_work(TEOS10, S_f, t + 273.15, r, S_p) == pytest.approx(ref, rel=1e-3)


@pytest.mark.parametrize("S_f,t,t0,r", [(0.035, 30.0, 15.0, 0.5), (0.070, 45.0, 20.0, 0.3), (0.035, 25.0, 25.0, 0.4)])
def test_least_work_against_a_colder_dead_state_is_the_flow_exergy_change(S_f, t, t0, r):
    # library: gsw. With streams at t and the environment at t0, the least work is the change of flow exergy
    # h - T0 s summed over the streams (Bejan 2016, flow exergy): w = x_p + (1/r - 1) x_b - x_f / r, with h and s from
    # TEOS-10's Gibbs function (gsw.enthalpy_t_exact, gsw.entropy_from_t). The reference states cancel through the
    # salt and water balances. Ours differentiates dG in T numerically (step 0.05 K): 1e-6.
    import gsw
    T0 = t0 + 273.15
    S_b = S_f / (1 - r)
    x = lambda s: gsw.enthalpy_t_exact(s * 1e3, t, 0) - T0 * gsw.entropy_from_t(s * 1e3, t, 0)  # noqa: E731
    w = x(0.0) + (1 / r - 1) * x(S_b) - x(S_f) / r
    from compare.thermo.brine import density
    ours = least_work(TEOS10, S_f, t + 273.15, r, 0.0, dead_state=T0) / density(0.0, t + 273.15, "seawater")
    assert ours == pytest.approx(w, rel=2e-6)
    if t0 < t:       # the entropy term: a colder environment makes the separation cheaper (ideal limit: x T0/T)
        assert ours < least_work_per_kg(TEOS10, S_f, t + 273.15, r)
        assert ours / least_work_per_kg(TEOS10, S_f, t + 273.15, r) == pytest.approx(T0 / (t + 273.15), rel=0.03)


@pytest.mark.parametrize("model", [TEOS10, PITZER, get_model("ideal", "seawater"), get_model("vant-hoff", "nacl")],
                         ids=lambda m: m.name)
@pytest.mark.parametrize("r", [0.1, 0.5, 0.75])
def test_gibbs_form_equals_integral_of_osmotic_pressure(model, r):
    # identity: for a pure product, w = (1/r) * integral_0^r (-mu_w(S_b(x))) dx per kg, to 1e-4.
    S_f, T = 0.035, 298.15
    x, wts = np.polynomial.legendre.leggauss(40)
    xs = 0.5 * r * (x + 1)
    integral = 0.5 * r * np.sum(wts * -model.mu_w(S_f / (1 - xs), T))
    assert least_work_per_kg(model, S_f, T, r) == pytest.approx(integral / r, rel=1e-4)


def test_zero_recovery_limit_is_continuous():
    # identity: the r -> 0 limit equals the feed osmotic pressure times v_w(pure) for a pure product.
    S_f, T = 0.035, 298.15
    w0 = least_work_per_kg(TEOS10, S_f, T, 0.0)
    assert w0 == pytest.approx(least_work_per_kg(TEOS10, S_f, T, 1e-7), rel=1e-6)
    from compare.thermo.water import liquid_density
    pi = osmotic_pressure(TEOS10.ln_aw(S_f, T), T)
    assert w0 == pytest.approx(pi / liquid_density(T), rel=1e-9)


def test_least_work_near_half_recovery_elimelech_phillip():
    # memory: Elimelech & Phillip 2011, Science 333, 712: about 1.06 kWh/m3 at 50 % recovery for 35 g/L seawater;
    # their property model sits a few percent above TEOS-10, so +-5 %. Read here as 35 g/kg (the common loose use of
    # "g/L" for seawater salinity): TEOS-10 gives 1.022 (3.6 % below). At a strict 35 g/L (34.2 g/kg) it is 0.996,
    # 6 % below: noted in DEVELOPERS.md.
    lw = least_work(TEOS10, 0.035, 298.15, 0.5) / J_PER_KWH
    assert lw == pytest.approx(1.06, rel=0.05)


def test_brine_salinity_salt_balance():
    S_f, r, S_p = 0.035, np.array([0.2, 0.5, 0.7]), 0.0003
    S_b = brine_salinity(S_f, r, S_p)
    assert r * S_p + (1 - r) * S_b == pytest.approx(np.full(3, S_f), rel=1e-14)


def test_salty_product_needs_less_work():
    lw_pure = least_work(TEOS10, 0.035, 298.15, 0.5, 0.0)
    lw_salty = least_work(TEOS10, 0.035, 298.15, 0.5, 0.0005)
    assert lw_salty < lw_pure


@settings(max_examples=80, deadline=None)
@given(S=st.floats(0.001, 0.08), t=st.floats(1.0, 75.0), r1=st.floats(0.01, 0.6), dr=st.floats(0.01, 0.3),
       dS=st.floats(1e-4, 0.02), sp=st.floats(0.0, 0.5))
def test_least_work_properties(S, t, r1, dr, dS, sp):
    # property: least work rises with recovery and with feed salinity, and stays below the brine's osmotic pressure.
    T = t + 273.15
    S_p = sp * 1e-3 * S / 0.035          # a product of up to 0.5 g/kg for seawater, scaled
    r2 = r1 + dr
    assume((S - r2 * S_p) / (1 - r2) <= 0.12)     # the brine within TEOS-10's validated range (beyond it gsw's
    #                                               Gibbs function is extrapolated and its osmotic pressure can turn)
    w1 = least_work(TEOS10, S, T, r1, S_p)
    w2 = least_work(TEOS10, S, T, r2, S_p)
    assert w2 > w1
    assert least_work(TEOS10, S + dS, T, r1, S_p) > w1
    f = evaluate_floor(TEOS10, S, T, r2, S_p)
    assert f.least_work < f.brine_osmotic_pressure
    assert f.least_work > 0


def test_floor_broadcasts_and_flags():
    S = np.array([0.035, 0.07, 0.13])
    r = np.array([[0.3], [0.6]])
    f = evaluate_floor(TEOS10, S, 298.15, r)
    assert f.least_work.shape == (2, 3)
    by = {fl.code: fl.where(f.least_work.shape) for fl in f.flags}
    assert by["feed_salinity"].tolist() == [[False, False, True], [False, False, True]]
    assert by["brine_salinity"][1].tolist() == [False, True, True]
    assert by["beyond_reach"].tolist() == [[False, False, False], [False, False, True]]   # 325 g/kg: not computed
    assert np.isnan(f.least_work[1, 2]) and np.isfinite(f.least_work[0]).all()
    assert all(fl.kind == "out_of_range" and fl.model == "teos10" for fl in f.flags if fl.code != "beyond_reach")


def test_pitzer_nacl_least_work_against_phi_integral_closed_form():
    # identity: for NaCl the zero-recovery least work per kg equals 2 m M_w phi R T / M_w per kg of water.
    from compare.thermo.activity import pitzer_nacl_osmotic_coefficient
    from compare.thermo.constants import M_NACL, R
    S, T = 0.05, 310.0
    m = S / ((1 - S) * M_NACL)
    expected = 2 * m * pitzer_nacl_osmotic_coefficient(m, T) * R * T
    assert least_work_per_kg(PITZER, S, T, 0.0) == pytest.approx(expected, rel=1e-10)


@pytest.mark.parametrize("model", [TEOS10, PITZER], ids=lambda m: m.name)
def test_osmotic_table_error_bound(model):
    # the hot-loop table against the model itself: 1e-4 relative
    from compare.thermo.floor import osmotic_table
    rng = np.random.default_rng(3)
    S = rng.uniform(0.0005, 0.25, 2000)
    T = rng.uniform(275.0, 365.0, 2000)
    exact = osmotic_pressure(model.ln_aw(S, T), T)
    assert osmotic_table(model)(S, T) == pytest.approx(exact, rel=1e-4)


def test_compiled_table_lookup_equals_the_numpy_one():
    # identity: with numba installed, large arrays take the compiled lookup; it must give the numpy path's values
    # exactly, edges included (NaN, negative, beyond the grid), so results never depend on numba being there
    pytest.importorskip("numba", reason="numba (a dependency) is not installed here: only the numpy lookup can run")
    from compare.thermo import floor
    from compare.thermo.activity import get_model
    tab = floor.osmotic_table(get_model("teos10", "seawater"))
    rng = np.random.default_rng(4)
    S = np.concatenate([rng.uniform(0.0, 0.3, 6000), [np.nan, -0.01, 0.0, 0.5, np.inf, 0.035]])
    T = np.concatenate([rng.uniform(270.0, 430.0, 6000), [300.0, 300.0, 300.0, 300.0, 300.0, np.nan]])
    compiled = tab(S, T)
    assert floor._compiled() is not None
    small = tab(S[-8:], T[-8:])                              # once loaded, small arrays use it too
    saved, kernel = floor._COMPILED_FROM, list(floor._KERNEL)
    floor._COMPILED_FROM = 10 ** 12
    floor._KERNEL.clear()
    try:
        plain = tab(S, T)
    finally:
        floor._COMPILED_FROM = saved
        floor._KERNEL[:] = kernel
    np.testing.assert_array_equal(compiled, plain)
    np.testing.assert_array_equal(small, plain[-8:])


def test_floor_computes_nothing_beyond_the_models_reach():
    # a salt balance past the reach (or past pure salt) gives NaN and an infeasible flag, never a negative pressure
    f = evaluate_floor(TEOS10, np.array([0.035, 0.2, 0.625]), 298.15, np.array([0.5, 0.7, 0.0]))
    assert f.brine_osmotic_pressure[0] > 0 and np.isnan(f.brine_osmotic_pressure[1:]).all()
    assert np.isnan(f.least_work[1:]).all() and np.isfinite(f.least_work[0])
    beyond = [fl for fl in f.flags if fl.code == "beyond_reach"]
    assert beyond[0].kind == "infeasible" and beyond[0].where((3,)).tolist() == [False, True, True]


def test_table_slope_is_the_derivative_of_its_values():
    # identity: value_and_slope gives the table's own values and, inside a cell, the derivative of its bilinear
    # form in S (central differences within the cell); the compiled kernel gives the numpy path's values exactly
    from compare.thermo import floor
    from compare.thermo.activity import get_model
    tab = floor.osmotic_table(get_model("teos10", "seawater"))
    rng = np.random.default_rng(5)
    S = np.concatenate([rng.uniform(0.001, 0.3, 3000), [np.nan, -0.01, 0.0, 0.5, np.inf, 0.035]])
    T = np.concatenate([rng.uniform(275.0, 420.0, 3000), [300.0, 300.0, 300.0, 300.0, 300.0, np.nan]])
    with np.errstate(invalid="ignore"):                         # inf x 0 in the slope at S = inf
        val, slope = tab.value_and_slope(S, T)
    np.testing.assert_array_equal(val, tab(S, T))
    h = 1e-9 * S[:3000]
    fd = (tab(S[:3000] + h, T[:3000]) - tab(S[:3000] - h, T[:3000])) / (2 * h)
    same_cell = (np.floor(np.sqrt(S[:3000] + h) / tab.du) == np.floor(np.sqrt(S[:3000] - h) / tab.du))
    assert same_cell.mean() > 0.99
    assert slope[:3000][same_cell] == pytest.approx(fd[same_cell], rel=1e-5)
    assert slope[-3] == pytest.approx(val[-3] / 0.5)              # beyond the grid: Pi = S y(edge)
    # a few points at a time take the same loop in plain Python: the same values as the numpy path, edges included
    saved, kernel, upto = floor._COMPILED_FROM, list(floor._KERNEL), floor._PYTHON_UPTO
    try:
        floor._KERNEL.clear()
        floor._COMPILED_FROM = 10 ** 12
        with np.errstate(invalid="ignore"):
            loop = [(tab(S[i:i + 6], T[i:i + 6]), *tab.value_and_slope(S[i:i + 6], T[i:i + 6]))
                    for i in (0, 6, S.size - 6)]
            floor._PYTHON_UPTO = 0
            plain = [(tab(S[i:i + 6], T[i:i + 6]), *tab.value_and_slope(S[i:i + 6], T[i:i + 6]))
                     for i in (0, 6, S.size - 6)]
    finally:
        floor._COMPILED_FROM, floor._PYTHON_UPTO = saved, upto
        floor._KERNEL[:] = kernel
    for a, b in zip(loop, plain):
        for u, v in zip(a, b):
            np.testing.assert_array_equal(u, v)
    try:
        import numba  # noqa: F401
    except ImportError:
        return
    saved, kernel = floor._COMPILED_FROM, list(floor._KERNEL)
    try:
        floor._KERNEL.clear()
        floor._COMPILED_FROM = 10 ** 12
        assert floor._KERNEL == []
        with np.errstate(invalid="ignore"):
            plain = tab.value_and_slope(S, T)
            floor._COMPILED_FROM = 1
            compiled = tab.value_and_slope(S, T)
        assert floor._KERNEL and floor._KERNEL[0] is not None
    finally:
        floor._COMPILED_FROM = saved
        floor._KERNEL[:] = kernel
    np.testing.assert_array_equal(compiled[0], plain[0])
    np.testing.assert_array_equal(compiled[1], plain[1])
