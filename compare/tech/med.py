"""Multi-effect distillation: effect-by-effect mass, salt and energy balances on steam tables and the brine's own water
activity, with parallel/cross or forward feed, feed preheaters, distillate flash boxes, a down condenser and optional
thermal vapour compression. Vectorised over every case (a loop over effects, never over cases).

Flow sheet
----------
Effects 1..N have brine temperatures falling in equal steps from the top brine temperature to the last-effect
temperature (by default the feed temperature plus ``last_brine_margin``). The evaporator feed (taken from the
down condenser's cooling-water outlet) is heated through preheaters 1..N-1, each fed by part of the vapour of its
effect, ``preheater_approach`` below that vapour's condensing temperature. Parallel/cross feed gives each effect the share
of the feed that brings its brine to the salinity limit, taken from the preheater train at that effect's level, and
cascades the brine from effect to effect (where it flashes); forward feed sends all the feed, fully preheated, to effect 1. The steam condenses in
effect 1; the vapour of effect i condenses in the tubes of effect i+1 (the last one in the down condenser).
Condensate collects in flash boxes, each flashing to the condensing temperature of its vapour line; the flash vapour
joins that line. The brine salinity limit ``brine_salinity`` sets the recovery of the evaporator feed.

Per effect: the vapour leaves the brine at p_i = a_w(S_i, T_i) p_sat(T_i), so at T_sat(p_i) = T_i - BPE_i (the
boiling-point elevation from the feed's activity model, :func:`compare.thermo.brine.boiling_point_elevation`); the
demister drops its pressure by ``demister_pressure_drop``, and a lumped ``non_equilibrium_allowance`` lowers the
temperature at which it condenses further. The vapour's superheat (the BPE, below about 1.5 K, 0.1 % of its enthalpy)
is neglected. Steam and condensate: saturated IAPWS-95 properties from CoolProp (tables built once, bounded against
CoolProp in tests); seawater and brine enthalpy: TEOS-10 (:func:`compare.thermo.brine.enthalpy`).

All flows are affine in the steam flow once the salinity profile is fixed, so each pass solves the steam flow that
gives the recovery exactly (two marches); passes repeat with the updated salinities until they settle (a fixed-point
iteration, converged below 1e-12 in a handful of passes).

Thermal vapour compression: a steam ejector takes motive steam at ``motive_steam_pressure``, entrains vapour from
effect ``suction_effect`` (default: the last) and discharges into effect 1's tubes at the heating-steam pressure. Its
entrainment ratio Ra (motive per entrained mass) follows El-Dessouky & Ettouney (2002, ch. 7; from memory):
Ra = 0.296 p_s^1.19 / p_ev^1.04 (p_m / p_ev)^0.015 (PCF / TCF), p in kPa, PCF = 3e-7 p_m^2 - 9e-4 p_m + 1.6101,
TCF = 2e-8 T_ev^2 - 6e-4 T_ev + 1.0047 (T_ev in degC), stated for compression ratios p_s/p_ev >= 1.81, Ra <= 4
and motive steam 100-3500 kPa; outside that the case is flagged. GOR counts the motive steam only.

Heat-transfer area: overall coefficients of El-Dessouky & Ettouney (2002; from memory) for falling-film evaporators,
U_e = 1.9695 + 1.2057e-2 t - 8.5989e-5 t^2 + 2.5651e-7 t^3 [kW/(m^2 K)], and condensers and preheaters,
U_c = 1.7194 + 3.2063e-3 t + 1.5971e-5 t^2 - 1.9918e-7 t^3, t in degC (at the brine or the condensing vapour).

Limits: a case is infeasible where an effect has no temperature difference left for heat transfer (losses and BPE
exceed the step), where the last effect is too close to the seawater to run the condenser, where the brine limit is
not above the feed, or where the ejector's motive steam is not above the heating steam. A top brine temperature
above 70 degC is flagged (scaling practice); above the activity model's range (80 degC for TEOS-10) it is flagged as
out of range.
"""

from __future__ import annotations

import numpy as np

import dataclasses
from dataclasses import dataclass
from typing import Any

from ..spec import OPTIONAL, efficiency, param
from ..thermo import brine as _brine
from ..thermo import water as _water
from ..thermo.constants import T0_C
from ..flags import Flag
from ..spec import values
from ..thermo.model import range_flags
from .base import Detail, Feed, Performance, Technology, case_shape, register

PASSES = 12              # salinity fixed-point passes (converged well before)
VENT_APPROACH = 3.0      # [K] the vent condenser's gas leaves this far above the seawater (common practice)


@dataclass(frozen=True)
class MEDParameters:
    """Parameters of the [section] in SI; each field's metadata holds its key's spec (unit, default, source)."""

    effects: Any = param("count", "8", "common practice: 4-12 effects in low-temperature MED", expect="a number of effects 2-16",
                    lo=2, hi=16)
    feed_arrangement: Any = param("choice", "parallel", "common practice: parallel/cross feed in seawater MED",
                             choices=("parallel", "forward"))
    top_brine_temperature: Any = param("temperature", "65 degC", "common practice: 65-70 degC to limit scaling",
                                  expect='a temperature such as "65 degC"', lo=T0_C + 30, hi=T0_C + 130)
    last_brine_temperature: Any = param("temperature", OPTIONAL, "tool default: the feed temperature plus last_brine_margin",
                                   expect='a temperature such as "40 degC"', lo=T0_C + 5, hi=T0_C + 120)
    last_brine_margin: Any = param("quantity", "10 K", "common practice: last effect about 10 K above the seawater", "K",
                              'a temperature difference such as "10 K"', lo=0.0, lo_open=True)
    brine_salinity: Any = param("salinity", "70 g/kg", "common practice: brine concentration limit about twice seawater",
                           expect='a salinity such as "70 g/kg"', lo=0.0, lo_open=True, role="brine_salinity")
    steam_temperature_difference: Any = param("quantity", "4 K", "common practice: heating steam a few K above the top brine",
                                         "K", 'a temperature difference such as "4 K"', lo=0.0, lo_open=True)
    preheater_approach: Any = param("quantity", "4 K", "from memory: preheater terminal difference 3-5 K", "K",
                               'a temperature difference such as "4 K"', lo=0.0, lo_open=True)
    condenser_terminal_difference: Any = param("quantity", "3 K", "from memory: condensing vapour 2-4 K above the "
                                          "cooling-water outlet", "K", 'a temperature difference such as "3 K"',
                                          lo=0.0, lo_open=True)
    demister_pressure_drop: Any = param("quantity", "40 Pa", "from memory: demister losses of tens of Pa", "Pa",
                                   'a pressure drop such as "40 Pa"', lo=0.0)
    non_equilibrium_allowance: Any = param("quantity", "0.3 K", "from memory: a few tenths of a K per effect", "K",
                                      'a temperature difference such as "0.3 K"', lo=0.0)
    vapor_compression: Any = param("flag", False, "tool default: no thermal vapour compression")
    motive_steam_pressure: Any = param("quantity", "10 bar", "from memory: TVC motive steam 3-25 bar", "Pa",
                                  'a pressure such as "10 bar"', lo=0.0, lo_open=True)
    suction_effect: Any = param("count", OPTIONAL, "tool default: the last effect", expect="an effect number 1-16", lo=1, hi=16)
    electricity: Any = param("quantity", OPTIONAL, "tool default: computed from the pumps and the vacuum system "
                             "(give a figure to override)", "J/m^3", 'an energy per volume such as "1.8 kWh/m^3"',
                             lo=0.0)
    intake_head: Any = param("quantity", "3 bar", "common practice: seawater intake and cooling-water pumps lift "
                             "through screens, the down condenser's tubes and the outfall, about 25-35 m of water",
                             "Pa", 'a pressure rise such as "3 bar"', lo=0.0)
    feed_head: Any = param("quantity", "2 bar", "common practice: evaporator feed through the preheaters to the spray "
                           "nozzles, about 15-25 m of water", "Pa", 'a pressure rise such as "2 bar"', lo=0.0)
    brine_head: Any = param("quantity", "1 bar", "common practice: brine from the last effect's vacuum to the "
                            "atmosphere, plus this much to the outfall", "Pa", 'a pressure rise such as "1 bar"',
                            lo=0.0)
    distillate_head: Any = param("quantity", "2 bar", "common practice: distillate from the condenser's vacuum to the "
                                 "atmosphere, plus this much to post-treatment and storage", "Pa",
                                 'a pressure rise such as "2 bar"', lo=0.0)
    pump_efficiency: Any = efficiency("0.72", "common practice: pump and motor together, low-head centrifugal "
                                      "seawater pumps 65-80 %")
    noncondensable_gas: Any = param("quantity", "30 mg/kg", "from memory: dissolved air (about 15-20 mg/kg) and "
                                    "carbon dioxide released from bicarbonate in the evaporator feed", "kg/kg",
                                    'a mass per kg of feed such as "30 mg/kg"', lo=0.0)
    vacuum_efficiency: Any = efficiency("0.3", "common practice: liquid-ring vacuum pumps, 25-40 % of the isothermal "
                                        "compression work", "an isothermal efficiency")
    capital_cost: Any = param("money", OPTIONAL, "tool default: built up from the design's equipment (compare/costing.py); a "
                              "value replaces the build-up", "day/m^3",
                              'a cost per capacity such as "1800 USD/(m^3/day)"', lo=0.0)
    fixed_om: Any = param("fraction", "0.02", "common practice: maintenance and insurance 1.5-2.5 % of capital per "
                          "year", expect='a share of capital per year such as 0.02 or "2 %"', lo=0.0, hi=1.0)
    heat_transfer_price: Any = param("money", "120 USD/m^2", "from memory: installed evaporator with shells, tubes "
                                     "and vacuum system, 100-300 USD per m2 of heat-transfer area", "1/m^2",
                                     'a price per area such as "120 USD/m^2"', lo=0.0)
    ejector_price: Any = param("money", "50000 USD/(kg/s)", "from memory: steam ejectors are small next to the "
                               "evaporator; per kg/s of motive steam, at 1 kg/s (plant.equipment_scale_exponent)",
                               "s/kg", 'a price per steam flow such as "50000 USD/(kg/s)"', lo=0.0)
    pretreatment_cost: Any = param("money", "30 USD/(m^3/day)", "from memory: screening, antiscalant dosing and "
                                   "deaeration, 20-50 USD per m3/day of feed, at 100,000 m3/day", "s/m^3",
                                   'a cost per feed capacity such as "30 USD/(m^3/day)"', lo=0.0)
    chemicals_cost: Any = param("money", "0.01 USD/m^3", "from memory: antiscalant and antifoam, about 0.01 USD per "
                                "m3 of evaporator feed", "1/m^3", 'a cost per feed volume such as "0.01 USD/m^3"',
                                lo=0.0)


def u_evaporator(T):
    """Overall heat-transfer coefficient of a falling-film evaporator [W/(m^2 K)] at brine T [K]
    (El-Dessouky & Ettouney 2002; from memory)."""
    t = np.asarray(T, dtype=float) - T0_C
    return 1e3 * (1.9695 + 1.2057e-2 * t - 8.5989e-5 * t ** 2 + 2.5651e-7 * t ** 3)


def u_condenser(T):
    """Overall heat-transfer coefficient of a condenser or feed preheater [W/(m^2 K)] at condensing T [K]
    (El-Dessouky & Ettouney 2002; from memory)."""
    t = np.asarray(T, dtype=float) - T0_C
    return 1e3 * (1.7194 + 3.2063e-3 * t + 1.5971e-5 * t ** 2 - 1.9918e-7 * t ** 3)


def entrainment_ratio(p_m, p_s, p_ev, T_ev):
    """Motive steam per kg of entrained vapour of a steam ejector (El-Dessouky & Ettouney 2002; from memory).
    Pressures in Pa, T_ev in K. Returns (Ra, in_range)."""
    pm, ps, pev = p_m / 1e3, p_s / 1e3, p_ev / 1e3
    t = T_ev - T0_C
    pcf = 3e-7 * pm ** 2 - 9e-4 * pm + 1.6101
    tcf = 2e-8 * t ** 2 - 6e-4 * t + 1.0047
    with np.errstate(divide="ignore", invalid="ignore"):
        ra = 0.296 * ps ** 1.19 / pev ** 1.04 * (pm / pev) ** 0.015 * pcf / tcf
    ok = (ps / pev >= 1.81) & (ra <= 4.0) & (pm >= 100.0) & (pm <= 3500.0)
    return ra, ok


def _lmtd(hot, c_in, c_out):
    """Log-mean temperature difference of a condensing (isothermal) hot side against a heated cold stream."""
    d1, d2 = hot - c_in, hot - c_out
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(np.abs(d1 - d2) < 1e-9, d1, (d1 - d2) / np.log(d1 / d2))


def _march(M, st, N, tvc, k_suc, Ra, parallel):
    """One pass of the effect-by-effect balances per kg/s of evaporator feed at heating (or motive) steam M [kg/s],
    with every temperature and enthalpy fixed in ``st``. Every flow returned is affine in M.

    Parallel/cross feed gives effect i the feed F_i = V_i / rec that brings its brine to the salinity limit (every
    effect at the limit, the usual design); forward feed sends all the feed to effect 1."""
    n = M.shape[0]
    zeros = np.zeros(n)
    V, Vph, Fl, Dx, Q, B, salt, F = ([zeros] * N for _ in range(8))
    hv, hb, hf, hlc, hgc = st["h_v"], st["h_b"], st["h_fp"], st["h_lc"], st["h_gc"]
    rec = st["rec"]
    E = M / Ra if tvc else zeros                    # entrained vapour
    if tvc:
        Q[0] = M * st["h_m"] + E * hv[k_suc] - (M + E) * st["h_ls"]
    else:
        Q[0] = M * (st["h_gs"] - st["h_ls"])
    C_prev = zeros
    B_prev, salt_prev, hb_prev = zeros, zeros, zeros
    W = zeros
    for i in range(N):
        if parallel:
            # Q + F h_f + B' h_b' = (B' + F - V) h_b + V h_v with F = V / rec
            V[i] = (Q[i] + B_prev * (hb_prev - hb[i])) / (hv[i] - hb[i] + (hb[i] - hf[i]) / rec)
            F[i] = V[i] / rec
        else:
            F[i] = np.ones(n) if i == 0 else zeros
            V[i] = (Q[i] + F[i] * hf[i] + B_prev * hb_prev - (B_prev + F[i]) * hb[i]) / (hv[i] - hb[i])
        B[i] = B_prev + F[i] - V[i]
        salt[i] = salt_prev + F[i] * st["S_f"]
        W = W + F[i]
        if i < N - 1:
            # preheater i heats the feed of effects 1..i from the level of effect i+1 to its own
            Vph[i] = W * (hf[i] - hf[i + 1]) / (hv[i] - hlc[i])
        if i >= 1:
            # flash box i: condensate of effect i's tubes and of preheater i-1 (at the condensing temperature of
            # line i-1) and the distillate of box i-1 flash to the condensing temperature of line i
            liquid = C_prev + Vph[i - 1] + (Dx[i - 1] if i >= 2 else zeros)
            H = liquid * hlc[i - 1]
            if i == 1 and tvc:
                liquid = liquid + E
                H = H + E * st["h_ls"]                # the entrained vapour's condensate comes at T_s
            Fl[i] = (H - liquid * hlc[i]) / (hgc[i] - hlc[i])
            Dx[i] = liquid - Fl[i]
        # vapour line i condenses in the tubes of effect i+1 (or the down condenser)
        to_next = V[i] - Vph[i] - (E if (tvc and i == k_suc) else zeros)
        duty = to_next * (hv[i] - hlc[i]) + Fl[i] * (hgc[i] - hlc[i])
        if i < N - 1:
            Q[i + 1] = duty
        C_prev = to_next + Fl[i]
        B_prev, salt_prev, hb_prev = B[i], salt[i], hb[i]
    return dict(V=np.array(V), Vph=np.array(Vph), Fl=np.array(Fl), Dx=np.array(Dx), Q=np.array(Q), B=np.array(B),
                salt=np.array(salt), F=np.array(F), Q_cond=duty, E=E)


def _group(feed, p, idx, N, k_suc, tvc, size):
    """All cases of one effect count and suction effect (0-based ``k_suc``; indices idx among size cases), solved
    together."""
    n = idx.size
    g = lambda x: np.broadcast_to(np.asarray(x, dtype=float), (size,))[idx]  # noqa: E731
    S_f, T_sw = g(feed.salinity), g(feed.temperature)
    T1 = g(p.top_brine_temperature)
    T_N = g(p.last_brine_temperature) if p.last_brine_temperature is not None \
        else T_sw + g(p.last_brine_margin)
    S_max = g(p.brine_salinity)
    dp_dem, nea = g(p.demister_pressure_drop), g(p.non_equilibrium_allowance)
    T_s = T1 + g(p.steam_temperature_difference)
    frac = np.linspace(0.0, 1.0, N)[:, None]
    T = T1[None, :] - (T1 - T_N)[None, :] * frac                   # (N, n) brine temperatures
    rec = 1.0 - S_f / S_max                                         # distillate per kg of evaporator feed
    parallel = p.feed_arrangement != "forward"
    # salinity profile: start from the ideal split of the recovery, then iterate
    if parallel:
        S = np.broadcast_to(S_max, (N, n)).copy()
    else:
        S = S_f[None, :] + (S_max - S_f)[None, :] * np.linspace(1.0 / N, 1.0, N)[:, None]
    st = dict(S_f=S_f, rec=rec)
    st["h_gs"], st["h_ls"] = _water.vapour_enthalpy(T_s), _water.liquid_enthalpy(T_s)
    p_s = _water.saturation_pressure(T_s)
    if tvc:
        p_m = g(p.motive_steam_pressure)
        T_m = _water.saturation_temperature(np.minimum(p_m, 0.99 * 22.06e6))
        st["h_m"] = _water.vapour_enthalpy(np.minimum(T_m, 520.0))
    M = np.ones(n)
    for _ in range(PASSES):
        S_safe = np.clip(S, 0.0, 0.3)
        bpe = _brine.boiling_point_elevation(feed.model, S_safe, T)
        p_v = _water.saturation_pressure(T - bpe)
        T_c = _water.saturation_temperature(np.maximum(p_v - dp_dem, 50.0)) - nea   # condensing, line i
        T_cw = T_c[-1] - g(p.condenser_terminal_difference)
        # preheat levels: feed to effect N at the condenser outlet; above, approach below line i's condensing T
        T_fp = np.empty_like(T)
        T_fp[-1] = T_cw
        for i in range(N - 2, -1, -1):
            T_fp[i] = np.maximum(T_c[i] - g(p.preheater_approach), T_fp[i + 1])
        st.update(h_v=_water.vapour_enthalpy(T - bpe), h_b=_brine.enthalpy(S_safe, T),
                  h_fp=_brine.enthalpy(S_f[None, :] + 0 * T, T_fp), h_lc=_water.liquid_enthalpy(T_c),
                  h_gc=_water.vapour_enthalpy(T_c))
        Ra = np.inf
        if tvc:
            Ra, ra_ok = entrainment_ratio(p_m, p_s, p_v[k_suc], T[k_suc] - bpe[k_suc])
        a = _march(np.zeros(n), st, N, tvc, k_suc, Ra, parallel)
        b = _march(np.ones(n), st, N, tvc, k_suc, Ra, parallel)
        Da, Db = a["V"].sum(axis=0), b["V"].sum(axis=0)
        M = (rec - Da) / (Db - Da)
        out = {key: a[key] + M * (b[key] - a[key]) for key in a}
        with np.errstate(divide="ignore", invalid="ignore"):
            S_new = np.where(out["B"] > 0, out["salt"] / out["B"], S_max)
        change = np.max(np.abs(S_new - S))
        S = S_new
        if change < 1e-13:
            break
    # the final pass's states and flows belong together (the salinities used are those of the pass before, equal
    # to the ones returned to 1e-13)
    D = out["V"].sum(axis=0)                                        # = rec
    h_cw_in = _brine.enthalpy(S_f, T_sw)
    h_cw_out = _brine.enthalpy(S_f, T_cw)
    M_cw = out["Q_cond"] / (h_cw_out - h_cw_in)                     # seawater through the down condenser
    # heat-transfer areas per kg/s of evaporator feed
    dT_eff = np.vstack([T_s[None, :], T_c[:-1]]) - T
    with np.errstate(divide="ignore", invalid="ignore"):
        area_e = out["Q"] / (u_evaporator(T) * dT_eff)
        area_ph = np.zeros(n)
        for i in range(N - 1):
            duty = out["Vph"][i] * (st["h_v"][i] - st["h_lc"][i])          # the heat its vapour gives up
            area_ph = area_ph + np.where(duty > 0, duty / (u_condenser(T_c[i]) * _lmtd(T_c[i], T_fp[i + 1],
                                                                                         T_fp[i])), 0.0)
        area_c = out["Q_cond"] / (u_condenser(T_c[-1]) * _lmtd(T_c[-1], T_sw, T_cw))
    heat = M * ((st["h_m"] if tvc else st["h_gs"]) - st["h_ls"])   # per kg/s of evaporator feed
    T_heat = T_m if tvc else T_s
    # (kind, code, quantity, message) -> mask of this group's cases
    bad = {
        ("infeasible", "temperature_step", "temperature_step",
         "MED: an effect has no temperature difference left for heat transfer (losses and boiling-point elevation "
         "exceed the step between effects)"): np.any(dT_eff <= 0.05, axis=0),
        ("infeasible", "condenser", "last_brine_temperature",
         "MED: the last effect is too close to the seawater temperature to run the condenser"): T_cw <= T_sw + 0.5,
        ("infeasible", "brine_limit", "brine_salinity",
         "MED: the brine salinity limit is not above the feed salinity"): S_max <= S_f,
        ("infeasible", "temperature_range", "last_brine_temperature",
         "MED: the last brine temperature is not below the top brine temperature"): T_N >= T1,
        ("infeasible", "cooling_water", "cooling_water",
         "MED: the condenser's seawater flow is less than the evaporator feed it must supply"): M_cw < 1.0,
        ("infeasible", "negative_flow", "effects",
         "MED: the balances gave a negative flow (the temperature range cannot carry this many effects)"):
            np.any(out["V"] <= 0, axis=0) | np.any(out["B"] <= 0, axis=0) | (M <= 0),
        ("note", "top_brine_temperature", "top_brine_temperature",
         "MED: top brine temperature above 70 degC (scaling risk; common practice keeps it at 65-70 degC)"):
            T1 > T0_C + 70.0 + 1e-9,
    }
    if tvc:
        bad[("infeasible", "motive_steam", "motive_steam_pressure",
             "MED: the motive steam is not above the heating steam")] = p_m <= p_s
        bad[("out_of_range", "ejector", "entrainment_ratio",
             "MED: the ejector is outside the entrainment-ratio correlation's range (compression ratio >= 1.81, "
             "Ra <= 4, motive steam 1-35 bar); extrapolated")] = ~ra_ok
        bad[("out_of_range", "steam_table", "motive_steam_temperature",
             "MED: the motive steam is outside the water and steam tables; its enthalpy is taken at the table's "
             "edge")] = ~_water.in_table(T_m)
    return dict(D=D, M=M, heat=heat, T_heat=T_heat, S_b=S[-1], T_b=T[-1], T_d=T_c[-1], M_cw=M_cw, T_cw=T_cw,
                area=area_e.sum(axis=0) + area_ph + area_c, T_s=T_s, rec=rec, bpe_last=bpe[-1],
                step=(T1 - T_N) / (N - 1), E=out["E"], Ra=np.broadcast_to(Ra, (n,)), bad=bad, T1=T1)


#: molar mass of air [kg/mol], for the non-condensable gases the vacuum system removes
M_AIR = 0.02896
P_ATM = 101325.0


def pump_electricity(intake, feed, brine, distillate, rho_sw, rho_b, rho_d, p_low, T_vent, p_vent_sat,
                     intake_head, feed_head, brine_head, distillate_head, eta, gas, eta_vac):
    """Electricity of an MED plant's pumps and vacuum system [J per kg of product], by part. Vectorised.

    Each pump takes flow x head / efficiency: the seawater ``intake`` (all of it passes the down condenser, the
    evaporator feed being drawn from its outlet) against ``intake_head``; the evaporator ``feed`` against
    ``feed_head``; the ``brine`` from the last effect's pressure ``p_low`` up to the atmosphere plus
    ``brine_head``; the ``distillate`` from ``p_low`` up to the atmosphere plus ``distillate_head``. The vacuum
    system compresses the non-condensable gases released from the feed (``gas`` kg per kg of feed, taken as air),
    saturated with vapour at the vent (its partial pressure ``p_vent_sat``), isothermally from ``p_low`` to the
    atmosphere, at isothermal efficiency ``eta_vac``.

    Parameters
    ----------
    intake, feed, brine, distillate : array [kg per kg of product]
    rho_sw, rho_b, rho_d : array [kg/m^3] densities of seawater, brine and distillate
    p_low : array [Pa] pressure of the last effect and the down condenser
    T_vent : array [K] temperature at the vent
    p_vent_sat : array [Pa] saturation pressure of water at the vent
    intake_head, feed_head, brine_head, distillate_head : array [Pa]
    eta, eta_vac : array [-] pump-and-motor and vacuum-system efficiencies
    gas : array [kg/kg] non-condensable gases released per kg of evaporator feed

    Returns
    -------
    dict of arrays [J/kg of product]: intake, feed, brine, distillate, vacuum

    Examples
    --------
    Ten kg of seawater per kg of product against 3 bar at 72 %: 10/1025 x 3e5/0.72 = 4065 J/kg (1.13 kWh/m^3).

    >>> e = pump_electricity(10.0, 2.4, 1.4, 1.0, 1025.0, 1050.0, 995.0, 8000.0, 303.15, 4200.0,
    ...                      3e5, 2e5, 1e5, 2e5, 0.72, 30e-6, 0.3)
    >>> round(float(e["intake"]))
    4065
    """
    lift = np.maximum(P_ATM - p_low, 0.0)
    n_gas = gas * feed / M_AIR                                      # [mol per kg of product]
    with np.errstate(divide="ignore", invalid="ignore"):
        vapour = np.where(p_low > p_vent_sat, p_vent_sat / (p_low - p_vent_sat), np.inf)
    R = 8.314462618
    return {
        "intake": intake / rho_sw * intake_head / eta,
        "feed": feed / rho_sw * feed_head / eta,
        "brine": brine / rho_b * (lift + brine_head) / eta,
        "distillate": distillate / rho_d * (lift + distillate_head) / eta,
        "vacuum": n_gas * (1 + vapour) * R * T_vent * np.log(P_ATM / np.minimum(p_low, P_ATM)) / eta_vac,
    }


def evaluate(feed: Feed, p: MEDParameters) -> Performance:
    """Multi-effect distillation for every case (see the module notes)."""
    shape = case_shape(feed, p)
    size = int(np.prod(shape))
    full = lambda x: np.broadcast_to(np.asarray(x, dtype=float), shape).ravel()  # noqa: E731
    rs = lambda x: np.asarray(x, dtype=float).reshape(shape)  # noqa: E731
    N_all = full(p.effects).astype(int)
    tvc = bool(np.any(p.vapor_compression))
    pp = dataclasses.replace(p, vapor_compression=tvc, **{
        key: full(v) for key, v in values(p).items()
        if isinstance(v, (np.ndarray, float, int)) and not isinstance(v, (bool, np.bool_))})
    fd = Feed(feed.model, feed.water, full(feed.salinity), full(feed.temperature), full(feed.product_salinity),
              full(feed.heat_temperature), full(feed.capacity))
    keys = ("D", "M", "heat", "T_heat", "S_b", "T_b", "T_d", "M_cw", "T_cw", "area", "T_s", "rec", "bpe_last",
            "step", "E", "Ra", "T1")
    res = {key: np.full(size, np.nan) for key in keys}
    masks = {}
    # the ejector draws from suction_effect (default and at most: the last effect)
    suc_all = N_all if p.suction_effect is None else np.minimum(full(p.suction_effect).astype(int), N_all)
    # one group per (effect count, suction effect): at most a few dozen, never a loop over cases
    for N, suc in np.unique(np.stack([N_all, suc_all if tvc else N_all], axis=1), axis=0):
        idx = np.flatnonzero((N_all == N) & ((suc_all if tvc else N_all) == suc))
        out = _group(fd, pp, idx, int(N), int(suc) - 1, tvc, size)
        for key in keys:
            res[key][idx] = out[key]
        for key, mask in out["bad"].items():
            masks.setdefault(key, np.zeros(size, dtype=bool))[idx] = mask
    flags = [Flag(kind, code, quantity, "med", message, rs(m)) for (kind, code, quantity, message), m in masks.items()]
    if feed.water != "seawater":
        flags.append(Flag("note", "brine_enthalpy", "brine_enthalpy", "teos10",
                          "MED: brine enthalpy taken from TEOS-10 seawater at the same salinity (the feed is not "
                          "seawater)", True))
    # the hottest brine (the first effect) against the activity model; the last effect's brine is the saltiest
    flags += [f.with_mask(rs(f.mask)) for f in range_flags(feed.model, np.nan_to_num(res["S_b"]), res["T1"],
                                                           "MED brine", "brine")]
    flags = [f for f in flags if f.any()]
    rho_d = _brine.density(np.zeros(size), res["T_d"], "seawater")
    per_m3 = rho_d / res["D"]                         # kg/s of evaporator feed per (m^3/s of distillate)
    heat = res["heat"] * per_m3                       # J per m^3 of distillate
    gor = res["D"] / res["M"]
    # pumps and vacuum system, per kg of product (intake: all the seawater through the down condenser)
    D = res["D"]
    T_vent = full(feed.temperature) + VENT_APPROACH
    rho_sw = _brine.density(full(feed.salinity), full(feed.temperature), "seawater")
    rho_b = _brine.density(np.clip(np.nan_to_num(res["S_b"]), 0.0, 0.12), np.nan_to_num(res["T_b"], nan=300.0),
                           "seawater")
    p_low = _water.saturation_pressure(np.nan_to_num(res["T_d"], nan=300.0))
    parts = pump_electricity(res["M_cw"] / D, 1.0 / D, (1.0 - D) / D, np.ones(size), rho_sw, rho_b, rho_d, p_low,
                             T_vent, _water.saturation_pressure(T_vent), full(p.intake_head), full(p.feed_head),
                             full(p.brine_head), full(p.distillate_head), full(p.pump_efficiency),
                             full(p.noncondensable_gas), full(p.vacuum_efficiency))
    parts = {key: v * rho_d for key, v in parts.items()}       # J per m^3 of product
    pumps = sum(parts.values())
    elec = pumps if p.electricity is None else full(p.electricity)
    details = {
        "gor": gor, "heating_steam_temperature": res["T_s"], "heat_supply_temperature": res["T_heat"],
        "top_brine_temperature": full(p.top_brine_temperature), "last_brine_temperature": res["T_b"],
        "temperature_step": res["step"], "last_effect_bpe": res["bpe_last"], "brine_salinity": res["S_b"],
        "evaporator_recovery": res["rec"], "specific_area": res["area"] / res["D"],
        "cooling_water_per_product": res["M_cw"] / res["D"], "cooling_water_outlet_temperature": res["T_cw"],
        "product_temperature": res["T_d"], "steam_per_product": res["M"] / res["D"],
        "specific_heat": res["heat"] / res["D"],
        "intake_pump_electricity": parts["intake"], "feed_pump_electricity": parts["feed"],
        "brine_pump_electricity": parts["brine"], "distillate_pump_electricity": parts["distillate"],
        "vacuum_electricity": parts["vacuum"], "pump_electricity": pumps,
    }
    if tvc:
        details["entrainment_ratio"] = res["Ra"]
        details["entrained_vapour_per_product"] = res["E"] / res["D"]
    return Performance(
        electricity=rs(elec), heat=rs(heat), heat_temperature=rs(res["T_heat"]), recovery=rs(res["rec"]),
        product_salinity=rs(np.zeros(size)), brine_salinity=rs(res["S_b"]), flags=tuple(flags),
        details={key: rs(v) for key, v in details.items()})


DETAILS = {
    "gor": Detail("gain output ratio (distillate per kg of steam)", "-"),
    "heating_steam_temperature": Detail("heating steam temperature", "degC"),
    "heat_supply_temperature": Detail("heat supply temperature (steam or motive steam)", "degC"),
    "top_brine_temperature": Detail("top brine temperature", "degC"),
    "last_brine_temperature": Detail("last brine temperature", "degC"),
    "temperature_step": Detail("temperature step between effects", "K"),
    "last_effect_bpe": Detail("boiling-point elevation, last effect", "K"),
    "brine_salinity": Detail("brine salinity", "g/kg"),
    "evaporator_recovery": Detail("recovery of the evaporator feed", "-"),
    "specific_area": Detail("heat-transfer area per kg/s of product", "m2/(kg/s)", "max"),
    "cooling_water_per_product": Detail("cooling water per kg of product", "kg/kg"),
    "cooling_water_outlet_temperature": Detail("cooling water outlet temperature", "degC"),
    "product_temperature": Detail("product temperature", "degC"),
    "steam_per_product": Detail("steam per kg of product", "kg/kg"),
    "specific_heat": Detail("heat per kg of product", "kJ/kg"),
    "intake_pump_electricity": Detail("seawater intake and cooling-water pumps", "kWh/m3"),
    "feed_pump_electricity": Detail("evaporator feed pumps", "kWh/m3"),
    "brine_pump_electricity": Detail("brine pumps", "kWh/m3"),
    "distillate_pump_electricity": Detail("distillate pumps", "kWh/m3"),
    "vacuum_electricity": Detail("vacuum system", "kWh/m3"),
    "pump_electricity": Detail("pumps and vacuum system, the sum of the lines above (the electricity unless "
                               "med.electricity is given)", "kWh/m3"),
    "entrainment_ratio": Detail("ejector entrainment ratio (motive per entrained)", "-"),
    "entrained_vapour_per_product": Detail("entrained vapour per kg of product", "kg/kg"),
}


MED = register(Technology(
    "med", "multi-effect distillation (parallel/cross or forward feed, optional thermal vapour compression)",
    evaluate, MEDParameters, "2-16 effects; brine within the activity model's range (TEOS-10: 120 g/kg, 80 degC)",
    "effect balances on IAPWS-95 (CoolProp) and TEOS-10; El-Dessouky & Ettouney 2002 (U, ejector)", DETAILS,
    concentrate={"hottest_brine_temperature": "top_brine_temperature",
                 "brine_temperature": "last_brine_temperature", "intake_per_product": "cooling_water_per_product"}))
