"""Forward osmosis: the flux equation against its published closed form and its limits, balances, the regenerator,
and the comparison with direct RO (McGovern & Lienhard 2014)."""

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from compare.tech import fo, ro
from compare.tech.base import Feed
from compare.thermo.activity import get_model
from compare.thermo.floor import osmotic_pressure
from compare.present.records import records
from compare.spec import specs_of
from tests.tech.helpers import codes, params

SEAWATER = get_model("teos10", "seawater")
NACL = get_model("pitzer-nacl", "nacl")
LMH = 1e-3 / 3600


def feed(S, T=298.15, model=SEAWATER, kind="seawater", S_p=5e-4):
    S = np.asarray(S, dtype=float)
    b = lambda x: np.broadcast_to(np.asarray(x, dtype=float), S.shape)  # noqa: E731
    return Feed(model, kind, S, b(T), b(S_p), b(393.15), b(1.0))


def exact_pi(model):
    return lambda S, T: osmotic_pressure(model.ln_aw(S, T), T)


def test_flux_limit_without_polarisation_or_salt_passage():
    # identity (the limit the issue asks for): k -> inf, S = 0, B = 0 gives J = A (Pi_D - Pi_F) to 1e-9
    c_D = np.array([0.05, 0.08, 0.12])
    c_F = np.array([0.035, 0.04, 0.06])
    T = np.array([288.15, 298.15, 308.15])
    A = 1.5 * LMH / 1e5
    pD, pF = exact_pi(NACL), exact_pi(SEAWATER)
    J, Js, _, _ = fo.local_flux(c_D, c_F, T, A, 0.0, 0.0, 1.5e-9, np.inf, pD, pF)
    assert J == pytest.approx(A * (pD(c_D, T) - pF(c_F, T)), rel=1e-9)
    assert np.all(Js == 0)


def test_flux_matches_the_published_closed_forms_for_linear_osmotic_pressure():
    # published, with a van 't Hoff (linear) osmotic pressure pi = beta c, FO mode (K = S/D):
    # (1) Tiraferri et al. 2011 (J. Membr. Sci. 367), deionised feed (their characterisation test):
    #       J = A pi_D exp(-J K) / [1 + (B/J) (exp(J/k) - exp(-J K))],  J_s = B c_D exp(-J K) / [same]
    # (2) McCutcheon & Elimelech 2006 (J. Membr. Sci. 284), no salt passage:
    #       J = A [pi_D exp(-J K) - pi_F exp(J/k)]
    # The feed's own salts are a second solute, fully rejected, so (1) is the form with salt passage that applies.
    beta = 8.0e7                                        # [Pa per kg/kg], an invented linear law for the identity
    lin = lambda c, T: beta * np.asarray(c)            # noqa: E731
    A, B, S_s, D, k = 2.0 * LMH / 1e5, 0.3 * LMH, 500e-6, 1.5e-9, 2.5e-5
    K = S_s / D
    c_D = np.array([0.06, 0.1, 0.15])
    J, Js, _, _ = fo.local_flux(c_D, 0.0, 298.15, A, B, S_s, D, k, lin, lin)
    den = 1 + B / J * (np.exp(J / k) - np.exp(-J * K))
    assert J == pytest.approx(A * beta * c_D * np.exp(-J * K) / den, rel=1e-9)
    assert Js == pytest.approx(B * c_D * np.exp(-J * K) / den, rel=1e-9)
    c_F = np.array([0.0, 0.01, 0.035])
    J2, Js2, _, _ = fo.local_flux(c_D, c_F, 298.15, A, 0.0, S_s, D, k, lin, lin)
    assert J2 == pytest.approx(A * beta * (c_D * np.exp(-J2 * K) - c_F * np.exp(J2 / k)), rel=1e-9)
    assert np.all(Js2 == 0)
    # polarisation lowers the flux below the ideal A (pi_D - pi_F)
    assert np.all(J2 < A * beta * (c_D - c_F))


def _balance(perf, S_f, r, m_din):
    # identity: the draw salt that left the draw is the salt the feed's brine gained
    d = perf.details
    lost_by_draw = m_din * d["draw_in"] - (m_din + r) * d["draw_out"]
    gained_by_feed = (1 - r) * perf.brine_salinity - S_f
    return lost_by_draw, gained_by_feed


def test_balances_close_and_details():
    S = np.array([0.02, 0.035, 0.035])
    r = np.array([0.3, 0.35, 0.3])
    perf = fo.evaluate(feed(S), params(fo, recovery=r))
    assert perf.feasible.all()
    lost, gained = _balance(perf, S, r, 1.0)
    assert lost == pytest.approx(gained, rel=1e-9, abs=1e-15)
    assert np.all(gained > 0)                          # the reverse salt flux goes from the draw to the feed
    d = perf.details
    assert np.all(d["draw_out"] < d["draw_in"])
    assert d["draw_in_molality"] == pytest.approx(np.full(3, 1.2), rel=1e-12)
    assert np.all(d["fo_membrane_area"] > 0) and np.all(d["average_flux"] > 0)
    # the RO regenerator returns the draw at its strength: its recovery takes out exactly the product
    assert d["regenerator_recovery"] == pytest.approx(r / (1 + r), rel=1e-12)


def test_weak_draw_is_infeasible_with_reason():
    # 0.5 mol/kg NaCl cannot pull water from a 35 g/kg seawater feed: the premise, from the two activity models
    # (library: Pitzer NaCl with pitzer.dat coefficients; TEOS-10 via gsw), is that its osmotic pressure is lower
    m_w = 0.5 * 0.05844277 / (1 + 0.5 * 0.05844277)
    assert exact_pi(NACL)(m_w, 298.15) < exact_pi(SEAWATER)(0.035, 298.15)
    perf = fo.evaluate(feed([0.035]), params(fo, draw_concentration="0.5 mol/kg"))
    assert not perf.feasible[0]
    assert codes(perf) == {"driving_force"}
    assert np.isnan(perf.electricity[0])
    # a draw strong at the inlet but weaker than the brine it reaches: also infeasible
    late = fo.evaluate(feed([0.035]), params(fo, recovery=0.6))
    assert not late.feasible[0]


def test_regenerator_limits_carry_through():
    # a strong draw needs a regenerator pressure above the element limit: infeasible, named as the regenerator's
    perf = fo.evaluate(feed([0.035]), params(fo, draw_concentration="2.0 mol/kg"))
    reasons = [f for f in perf.flags if f.kind == "infeasible" and f.where((1,))[0]]
    assert reasons and all(f.model == "fo/ro" and f.message.startswith("FO regenerator: ") for f in reasons)


@settings(max_examples=10, deadline=None)
@given(S=st.floats(0.01, 0.04), r=st.floats(0.2, 0.4), A=st.floats(0.5, 4.0), B=st.floats(0.0, 0.5),
       S_s=st.floats(100.0, 800.0), m=st.floats(1.0, 1.6), ratio=st.floats(0.7, 2.0))
def test_fo_with_ro_regeneration_uses_more_energy_than_direct_ro(S, r, A, B, S_s, m, ratio):
    # published: McGovern & Lienhard 2014 (J. Membr. Sci. 469): for the same feed, recovery and product, FO with RO
    # regeneration is not expected to beat RO, because the draw must be stronger than the brine and is then
    # regenerated. Across membrane and draw parameters, with the same RO parameters on both sides.
    common = dict(max_pressure="120 bar", max_lead_flux="1000 L/m^2/h")
    perf = fo.evaluate(feed([S]), params(fo, recovery=r, water_permeability=f"{A} L/m^2/h/bar",
                                         salt_permeability=f"{B} L/m^2/h", structural_parameter=f"{S_s} um",
                                         draw_concentration=f"{m} mol/kg", draw_flow_ratio=ratio,
                                         **{f"regenerator.{k}": v for k, v in common.items()}))
    if not perf.feasible[0]:
        return
    direct = ro.evaluate(feed([S]), params(ro, recovery=r, **common))
    # like with like: FO's other_electricity (intake, treatment) is RO's default, and its regenerator carries none
    assert specs_of(fo.FOParameters)["other_electricity"].default == specs_of(ro.ROParameters)["other_electricity"].default
    assert perf.electricity[0] > direct.electricity[0]


def test_thermal_regeneration():
    perf = fo.evaluate(feed([0.035, 0.035]), params(fo, regeneration="thermal",
                                                   **{"regenerator.gain_output_ratio": np.array([4.0, 8.0])}))
    assert perf.feasible.all()
    # heat per kg of product = latent heat / GOR (the screening model's own statement); library IAPWS-95 latent heat
    # between the feed and the regenerator temperature lies in 2320-2440 kJ/kg
    q = perf.heat / 3.6e6
    assert q[0] == pytest.approx(2 * q[1], rel=1e-12)
    assert 2320 / 8 / 3.6 < q[1] < 2440 / 8 / 3.6
    assert perf.heat_temperature == pytest.approx([348.15, 348.15])
    cold = fo.evaluate(feed([0.035]), params(fo, regeneration="thermal",
                                             **{"regenerator.heat_temperature": "45 degC"}))
    assert not cold.feasible[0]


def test_least_work_equals_ro_for_the_same_streams():
    # identity: the floor depends on the streams, not the path. FO with no reverse salt and a fully rejecting
    # regenerator has RO's streams (same recovery, pure product, brine S_f / (1 - r)); the pipeline's least work
    # for both must agree.
    from compare.pipeline import evaluate
    from compare.scenario import resolve
    data = {"name": "Test Bay (fictional)", "site": {"capacity": "20000 m^3/day"},
            "feed": {"salinity": "35 g/kg", "temperature": "25 degC"}, "med": {"enabled": False},
            "ro": {"recovery": "30 %", "salt_permeability": "0 L/m^2/h"},
            "fo": {"recovery": "30 %", "salt_permeability": "0 L/m^2/h",
                   "regenerator": {"salt_permeability": "0 L/m^2/h"}}}
    recs = {r["technology"]: r for r in records(evaluate(resolve(data, label="test")))}
    assert recs["fo"]["feasible"] and recs["ro"]["feasible"]
    assert recs["fo"]["least_work_kwh_per_m3"] == pytest.approx(recs["ro"]["least_work_kwh_per_m3"], rel=1e-9)
    assert recs["fo"]["electricity_kwh_per_m3"] > recs["ro"]["electricity_kwh_per_m3"]


def test_vectorised_equals_one_by_one():
    S = np.array([0.02, 0.035])
    together = fo.evaluate(feed(S), params(fo)).electricity
    single = [fo.evaluate(feed([s]), params(fo)).electricity[0] for s in S]
    assert together == pytest.approx(np.array(single), rel=1e-9)


def test_segments_converged():
    # numerics: doubling the exchanger steps changes the energy and the area by under 0.1 %
    a = fo.evaluate(feed([0.035]), params(fo, segments=40))
    b = fo.evaluate(feed([0.035]), params(fo, segments=80))
    assert a.electricity[0] == pytest.approx(b.electricity[0], rel=1e-3)
    assert a.details["fo_membrane_area"][0] == pytest.approx(b.details["fo_membrane_area"][0], rel=1e-3)


def test_regenerator_subtable_in_scenario_files(tmp_path, capsys):
    from compare.cli import main
    path = tmp_path / "s.toml"
    path.write_text('name = "Test Bay (fictional)"\n[site]\ncapacity = "20000 m^3/day"\n[feed]\n'
                    'salinity = "35 g/kg"\ntemperature = "25 degC"\n[fo.regenerator]\nmax_pressure = "90 bar"\n'
                    'stages = 2\n')
    assert main(["check", str(path), "--format", "json"]) == 0
    out = capsys.readouterr().out
    assert "fo.regenerator.max_pressure" in out and "90 bar" in out
    bad = tmp_path / "bad.toml"
    bad.write_text(path.read_text().replace("stages = 2", "stagez = 2"))
    assert main(["check", str(bad)]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and "fo.regenerator.stagez: unknown key" in err[0] and "stages" in err[0]
    flat = tmp_path / "flat.toml"
    flat.write_text(path.read_text().split("[fo.regenerator]")[0] + "[fo]\nregenerator = 5\n")
    assert main(["check", str(flat)]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and "fo.regenerator: expected a table [fo.regenerator]" in err[0] and "5" in err[0]
    assert main(["check", str(path), "--set", "fo.regenerator.max_pressure=85 m"]) == 2
    err = capsys.readouterr().err
    assert "--set fo.regenerator.max_pressure" in err and '"85 m"' in err


def test_regenerator_keys_vary_with_monthly_temperatures():
    # a varied [fo.regenerator] key reaches the RO regenerator in FO's flattened case shape (N cases x 12 months)
    from compare.pipeline import evaluate
    from compare.scenario import resolve
    months = [f"{t} degC" for t in (14, 14, 15, 17, 19, 21, 23, 24, 23, 21, 18, 15)]
    data = {"name": "Test Bay (fictional)", "site": {"capacity": "20000 m^3/day"},
            "feed": {"salinity": "35 g/kg", "temperature": months}, "ro": {"enabled": False},
            "med": {"enabled": False}}
    res = evaluate(resolve(data, label="test"), varied={"fo.regenerator.flux": np.array([8.0, 12.0]) * LMH})
    (t,) = res.technologies
    assert t.feasible.all()
    area = t.details["regenerator_membrane_area"]
    assert area[0] == pytest.approx(1.5 * area[1])          # area = capacity / flux
