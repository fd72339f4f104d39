"""Reverse osmosis: spiral-wound pressure vessels in 1-3 stages, solution-diffusion transport with film-model
concentration polarisation, marched along the flow path, in design mode (recovery and average flux given; feed
pressure and membrane area solved; the average flux lowered where the lead element would pass its limit), vectorised
over every case at once. The march along the vessels runs compiled by numba where it loads
(:mod:`compare.tech.ro_kernel`, the same method case by case), else in numpy; the two agree within 1e-8.

Model
-----
Per unit of membrane area (solution-diffusion: Wijmans & Baker 1995; film model: e.g. Mulder 1996, ch. VII):

    J_w = A(T) (dP - (Pi(S_m) - Pi(S_p)))          water flux [m/s]
    S_m = S_p + (S_b - S_p) exp(J_w / k)            membrane-wall salinity (film model)
    J_s = B(T) (S_m - S_p),  S_p = J_s / J_w        local permeate (so S_p = B S_m / (J_w + B))

with Pi from the feed's own water activity model (the core of the floor, through the bounded
:class:`~compare.thermo.floor.OsmoticTable`). Salinities are mass fractions; the film model is written on them
(density differences between wall and bulk are neglected, as is usual). The local flux is solved by Newton's method.

The vessel train is marched in equal steps of permeate (recovery), not of area: the area a step needs is its permeate
over the log-mean of the flux at its two ends, exact when the net driving pressure is linear across the step and
infinite when it reaches zero, so the march honours the thermodynamic restriction (the applied pressure must exceed
the concentrate's osmotic pressure at the outlet) at any step size, and stays stable as the membrane becomes very
permeable. Water and salt balances are kept step by step. Stage areas follow the usual tapered array (2:1, 4:2:1);
pressure falls by ``pressure_drop_per_element`` per element along each vessel; an optional booster raises the
pressure at the inlet of stages 2 and 3. The feed pressure that makes the needed area equal the design area
(capacity / average flux) is found by the Illinois variant of regula falsi, bracketed, for all cases at once; a
case leaves the loop as soon as it has converged.

Temperature: A(T) = A_25 exp(2640 K (1/298.15 K - 1/T)), B likewise (from memory: the exponential
temperature-correction factor in the form membrane suppliers publish; no source at hand).

Energy (per m^3 of permeate, from gauge pressures and specific volumes): high-pressure pump and motor; energy recovery
as an isobaric exchanger (equal volumes of brine and raw feed swapped, the feed leaving at efficiency x brine pressure,
a booster pump making up the rest, and volumetric mixing that raises the membrane feed salinity to
S_f (1 - x (1 - r)) / (1 - x)), a turbine on the pump shaft, or none; interstage boosters; and other plant electricity
(intake, pretreatment, post-treatment), reported separately in ``details``.

The lead element's limit is a design rule (``lead_flux_limit = "lower_flux"``): where the design flux ``flux`` puts
the lead element's average flux above ``max_lead_flux`` (at high recovery the profile along the vessel grows more
skewed), the design lowers its average flux, adding membrane, until the lead element sits at the limit, down to
:data:`LOWEST_FLUX_SHARE` of the design flux. With periods (cases x periods, the last axis) one design serves them
all: the flux is the lowest any period needs. ``"infeasible"`` holds the design flux and judges it.

Limits (each makes the case infeasible, with its reason): the feed pressure needed is above ``max_pressure``; at
``max_pressure`` the net driving pressure falls to zero before the end of the vessel (thermodynamic restriction); the
lead element's average flux is above ``max_lead_flux`` (with ``"lower_flux"``: even at the lowest flux searched); the
membrane brine is outside the activity model's validated range. A permeate above the product target is flagged by
the pipeline.

References
----------
Wijmans, J. G. and Baker, R. W. (1995), The solution-diffusion model: a review, J. Membr. Sci. 107, 1-21.
Mulder, M. (1996), Basic Principles of Membrane Technology, 2nd ed., Kluwer (film model).
Zhu, A., Christofides, P. D. and Cohen, Y. (2009), Effect of thermodynamic restriction on energy cost optimization of
RO membrane water desalination, Ind. Eng. Chem. Res. 48, 6010-6021.
Li, M. (2010), Minimization of energy in reverse osmosis water desalination using constrained nonlinear
optimization, Ind. Eng. Chem. Res. 49, 1822-1831.
"""

from __future__ import annotations

import numpy as np

from dataclasses import dataclass
from typing import Any

from ..spec import OPTIONAL, efficiency, param
from ..thermo import brine as _brine
from ..thermo.floor import OsmoticTable, osmotic_table
from ..flags import Flag
from .base import Detail, Feed, Performance, Technology, case_shape, register, take

LMH = 1e-3 / 3600.0            # 1 L/(m^2 h) in m/s
BAR = 1e5
TEMPERATURE_EXPONENT = 2640.0  # [K], membrane temperature correction (from memory, supplier form)
P_SEARCH_MAX = 400e5           # [Pa] upper end of the feed-pressure search
S_CAP = 0.34                   # [kg/kg] wall salinities are capped here (inside the osmotic table) during the search
CORRECTOR_TOL = 1e-3           # march: a step's end is settled when it moves by less than this share of the step
CORRECTOR_PASSES = 60          # march: at most this many corrector passes per step
FLUX_RTOL = 1e-10              # local flux: Newton steps stop below this share of the flux (then ~1e-20: quadratic)
SECANT_FROM = 1e-3             # pressure search: secant slopes once the trial before is this close (|g|)
GRADING = 3.0                  # march: permeate steps shrink towards the outlet as (1 - t)^GRADING
LOWEST_FLUX_SHARE = 0.5        # the lead element's limit may lower the average flux to this share of the design flux
LEAD_TOLERANCE = 1e-4          # the lead element's flux is held at its limit to about this relative tolerance
LEAD_RUNGS = 9                 # fluxes tried at once between the design flux and its lowest share
#: the feed-pressure solves of the flux search (not of the design kept) settle at 1e-6 of the pressure: the lead flux
#: they give moves by a few 1e-6 of itself, and designs at the restriction (lowered fluxes reach it) need twenty
#: fewer bisections
SEARCH = {"tol": 1e-6, "narrow_to": 1e-6}


@dataclass(frozen=True)
class ROParameters:
    """Parameters of the [section] in SI; each field's metadata holds its key's spec (unit, default, source)."""

    recovery: Any = param("fraction", "0.45", "common practice: seawater RO, 40-50 %", expect="a mass recovery in (0, 1)",
                     lo=0.0, hi=1.0, lo_open=True, hi_open=True, role="recovery")
    stages: Any = param("count", "1", "common practice: one stage for seawater, two or three for brackish water",
                   expect="a number of stages 1, 2 or 3", lo=1, hi=3)
    flux: Any = param("quantity", "14 L/m^2/h", "common practice: seawater design flux 12-15 L/m2/h", "m/s",
                 'an average flux such as "14 L/m^2/h"', lo=0.0, lo_open=True)
    water_permeability: Any = param("quantity", "1.0 L/m^2/h/bar", "from memory: seawater elements, about 1 L/m2/h/bar "
                               "at 25 degC", "m/s/Pa", 'a permeability such as "1.0 L/m^2/h/bar"', lo=0.0,
                               lo_open=True)
    salt_permeability: Any = param("quantity", "0.03 L/m^2/h", "from memory: about 99.8 % rejection at design flux",
                              "m/s", 'a salt permeability such as "0.03 L/m^2/h"', lo=0.0)
    mass_transfer_coefficient: Any = param("quantity", "2e-5 m/s", "from memory: spiral-wound feed channels, 1-4e-5 m/s",
                                      "m/s", 'a mass transfer coefficient such as "2e-5 m/s"', lo=0.0, lo_open=True)
    elements_per_vessel: Any = param("count", "7", "common practice: 6-8 elements per vessel",
                                expect="a number of elements 1-8", lo=1, hi=8)
    element_area: Any = param("quantity", "37 m^2", "common practice: 8-inch element, 400 ft2", "m^2",
                         'an element area such as "37 m^2"', lo=0.0, lo_open=True)
    pressure_drop_per_element: Any = param("quantity", "0.3 bar", "from memory: 0.2-0.4 bar per element", "Pa",
                                      'a pressure drop such as "0.3 bar"', lo=0.0)
    max_pressure: Any = param("quantity", "82.7 bar", "common practice: standard seawater element limit", "Pa",
                         'a pressure such as "82.7 bar"', lo=0.0, lo_open=True)
    max_lead_flux: Any = param("quantity", "35 L/m^2/h", "from memory: a common limit on the lead element's average flux",
                          "m/s", 'a flux such as "35 L/m^2/h"', lo=0.0, lo_open=True)
    lead_flux_limit: Any = param("choice", "lower_flux", "common practice: designers add membrane (a lower average "
                                 "flux) until the lead element is within its limit; \"infeasible\" holds the design "
                                 "flux and judges it against the limit", choices=("lower_flux", "infeasible"))
    booster_pressure: Any = param("quantity", "0 bar", "tool default: no interstage booster", "Pa",
                             'a pressure such as "5 bar"', lo=0.0)
    pump_efficiency: Any = efficiency("0.85", "common practice: high-pressure pump 80-88 %")
    motor_efficiency: Any = efficiency("0.95", "common practice: large induction motor")
    energy_recovery: Any = param("choice", "isobaric", "common practice: isobaric exchangers in seawater RO",
                            choices=("isobaric", "turbine", "none"))
    energy_recovery_efficiency: Any = efficiency("0.96", "common practice: isobaric exchanger 94-98 %")
    energy_recovery_mixing: Any = param("fraction", "0.03", "from memory: isobaric exchanger volumetric mixing, 2-6 %",
                                   expect="a mixing fraction in [0, 0.5)", lo=0.0, hi=0.5, hi_open=True)
    other_electricity: Any = param("quantity", "0.8 kWh/m^3", "common practice: intake, pretreatment and post-treatment of a "
                              "seawater plant (whole plant 3-4 kWh/m3)", "J/m^3",
                              'an energy per volume such as "0.8 kWh/m^3"', lo=0.0)
    segments: Any = param("count", "20", "numerics: permeate steps per stage (0.1 % convergence, tested)",
                     expect="a number of segments 4-400", lo=4, hi=400)
    capital_cost: Any = param("money", OPTIONAL, "tool default: built up from the design's equipment (compare/costing.py); a "
                              "value replaces the build-up", "day/m^3",
                              'a cost per capacity such as "1200 USD/(m^3/day)"', lo=0.0)
    fixed_om: Any = param("fraction", "0.02", "common practice: maintenance and insurance 1.5-2.5 % of capital per "
                          "year", expect='a share of capital per year such as 0.02 or "2 %"', lo=0.0, hi=1.0)
    membrane_price: Any = param("money", "20 USD/m^2", "from memory: an 8-inch seawater element (37 m2) about "
                                "600-900 USD", "1/m^2", 'a price per area such as "20 USD/m^2"', lo=0.0)
    membrane_life: Any = param("quantity", "5 year", "common practice: seawater elements replaced every 5-7 years",
                               "year", 'a life such as "5 year"', lo=0.0, lo_open=True)
    vessel_price: Any = param("money", "8000 USD", "from memory: a seawater pressure vessel (3,000-4,000 USD) with its "
                              "share of racks and manifold piping", None, 'a price per vessel such as "8000 USD"',
                              lo=0.0)
    high_pressure_pump_price: Any = param("money", "900 USD/kW", "from memory: duplex-steel high-pressure pumps with "
                                          "motors and drives, 600-1200 USD/kW, at 1 MW (plant.equipment_scale_exponent)",
                                          "1/W", 'a price per power such as "900 USD/kW"', lo=0.0)
    energy_recovery_price: Any = param("money", "1500 USD/(m^3/h)", "from memory: isobaric exchangers installed, "
                                       "1,000-2,000 USD per m3/h of brine (also used for a turbine)", "s/m^3",
                                       'a price per brine flow such as "1500 USD/(m^3/h)"', lo=0.0)
    pretreatment_cost: Any = param("money", "150 USD/(m^3/day)", "from memory: media filtration or ultrafiltration "
                                   "with dosing, 100-250 USD per m3/day of feed, at 100,000 m3/day", "s/m^3",
                                   'a cost per feed capacity such as "150 USD/(m^3/day)"', lo=0.0)
    chemicals_cost: Any = param("money", "0.03 USD/m^3", "from memory: coagulant, antiscalant, acid and cleaning, "
                                "0.02-0.05 USD per m3 of feed", "1/m^3", 'a cost per feed volume such as '
                                '"0.03 USD/m^3"', lo=0.0)

#: share of the membrane area in each stage (the usual tapered arrays)
STAGE_SHARES = {1: (1.0,), 2: (2 / 3, 1 / 3), 3: (4 / 7, 2 / 7, 1 / 7)}


def temperature_factor(T):
    """Membrane permeability factor exp(2640 K (1/298.15 K - 1/T)) [-] (from memory, supplier form)."""
    return np.exp(TEMPERATURE_EXPONENT * (1 / 298.15 - 1 / np.asarray(T, dtype=float)))


def _value_and_slope(pi):
    """``pi``'s osmotic pressure with its slope in S: the table's own, else a central difference."""
    own = getattr(pi, "value_and_slope", None)
    if own is not None:
        return own

    def both(S, T):
        h = np.maximum(1e-7 * np.abs(S), 1e-12)
        return pi(S, T), (pi(S + h, T) - pi(np.maximum(S - h, 0.0), T)) / (h + np.minimum(h, S))
    return both


def local_flux(dP, S_b, T, A, B, k, pi, J0=None, iterations=8, slope=False):
    """Water flux J_w [m/s] and permeate salinity [kg/kg] at applied pressure difference dP [Pa] over a bulk of
    salinity S_b, solved by Newton's method with the residual's analytic slope (the film model's derivatives and
    the osmotic-pressure table's own slope), vectorised, until every case's step is below :data:`FLUX_RTOL` of
    its flux (at most ``iterations``). With ``slope``, also dJ_w/d(dP) [m/s/Pa] at the solution,
    A over the residual's slope (0 where there is no flux), for the march's sensitivity to the feed pressure.

    ``pi(S, T)`` gives the osmotic pressure [Pa]; ``k = inf`` means no polarisation, ``B = 0`` full rejection.
    Where the driving force is not positive the flux is 0. ``J0`` is a starting value (the previous step's flux).
    """
    S_b = np.minimum(S_b, S_CAP)
    both = _value_and_slope(pi)
    with np.errstate(over="ignore", invalid="ignore", divide="ignore"):
        inv_k = np.where(np.isinf(k), 0.0, 1.0 / k)

        def resid(J):
            """Residual, its slope in J and the permeate salinity at flux J."""
            e = J * inv_k
            cp = np.exp(np.minimum(e, 30.0))
            dcp = np.where(e < 30.0, cp * inv_k, 0.0)
            JB = J + B + 1e-300
            f = B / JB                                      # S_p = f S_m
            df = -f / JB
            D = 1 - f + f * cp
            S_m = S_b * cp / D
            dS_m = np.where(S_m < S_CAP, S_b * (dcp * D - cp * (df * (cp - 1) + f * dcp)) / (D * D), 0.0)
            S_m = np.minimum(S_m, S_CAP)
            S_p = f * S_m
            pm, dpm = both(S_m, T)
            pp, dpp = both(S_p, T)
            return J - A * (dP - pm + pp), 1 + A * (dpm * dS_m - dpp * (df * S_m + f * dS_m)), S_p

        ndp0 = dP - pi(S_b, T)
        J = np.maximum(A * ndp0, 0.0) if J0 is None else np.minimum(J0, np.maximum(A * ndp0, 0.0))
        J = np.maximum(J, 1e-13)
        for _ in range(iterations):
            r, d, S_p = resid(J)
            J_new = np.maximum(J - r / np.where(d > 0, d, 1.0), 1e-13)
            settled = not (np.abs(J_new - J) > FLUX_RTOL * J).any()
            J = J_new
            if settled:
                # every case's Newton step was below the tolerance, so J is now converged (quadratically) and the
                # permeate and slope of the last evaluation are within that tolerance of J's own
                break
        else:
            r, d, S_p = resid(J)
        off = ndp0 <= 0
        J = np.where(off, 0.0, J)
        S_p = np.where(off, S_b, S_p)
        if slope:
            return J, S_p, np.where(off | ~(d > 0), 0.0, A / d)
    return J, S_p


def _log_mean_inverse(J0, J1):
    """Mean of 1/J over a step where J varies linearly in the permeate: ln(J0/J1)/(J0 - J1); inf where J1 = 0."""
    with np.errstate(divide="ignore", invalid="ignore"):
        ratio = J1 / J0
        near = np.abs(ratio - 1) < 1e-6
        lm = np.where(near, 2.0 / (J0 + J1), np.log(J0 / J1) / (J0 - J1))
    return np.where((J1 <= 0) | (J0 <= 0), np.inf, lm)


def _step_salt(dm, J0, J1, Sp0, Sp1, B):
    """Salt passed with the permeate dm of one step [kg per kg/s of feed]: the local permeate S_p = B S_m / (J + B)
    integrated over the step with J linear in the permeate, (mean of B S_m) x dm x log-mean of 1/(J + B). Unlike the
    trapezoid on S_p it stays right where the flux collapses at the restriction (S_p -> S_m over a short stretch)."""
    with np.errstate(divide="ignore", invalid="ignore"):
        BSm = 0.5 * (Sp0 * (J0 + B) + Sp1 * (J1 + B))             # S_p (J + B) = B S_m at the two ends
        out = dm * BSm * _log_mean_inverse(J0 + B, J1 + B)
    return np.where(B > 0, out, 0.0)


def _correct(x, x_pred, x1, J0, J1, Sp0, Sp1, a1, dm, scale, salt, Q, c, pi, pressure, x_end):
    """Corrector of one march step (see :func:`_march`): the step's end x1 with the flux J1, permeate Sp1 and flux
    slope a1 = dJ/dP at the pressure where it lies. ``x1``, ``J1``, ``Sp1``, ``a1`` come from the predictor's
    trial at ``x_pred``."""
    x1, J1, Sp1, a1 = x1.copy(), J1.copy(), Sp1.copy(), a1.copy()
    n = x.size
    lo, F_lo = x.copy(), np.full(n, np.nan)
    hi, F_hi = np.full(n, np.inf), np.full(n, np.nan)
    zero = np.full(n, np.inf)
    trial = x_pred.copy()
    span0 = np.maximum(x_pred - x, 1e-300)          # the predicted step, the scale of the tolerance
    # settled at once where the pressure at the predictor's end and at the end it reached differ too little to
    # move the flux by the tolerance (no pressure drop, or a good prediction)
    with np.errstate(invalid="ignore"):
        dP = np.abs(pressure(np.minimum(np.where(np.isfinite(x1), x1, x_end), x_end))[0]
                    - pressure(np.minimum(x_pred, x_end))[0])
        moving = np.flatnonzero(~(np.isfinite(x1) & (c["A"] * dP <= CORRECTOR_TOL * J1))
                                & np.isfinite(x) & (J0 > 0))      # a march that has failed stays failed
    if moving.size == 0:
        return x1, J1, Sp1, a1
    for _ in range(CORRECTOR_PASSES + 1):
        xm, fm = trial[moving], x1[moving]
        span = np.where(np.isfinite(fm), fm, xm) - x[moving]
        F = fm - xm
        fin = np.isfinite(fm)
        pos, neg = fin & (F > 0), fin & (F < 0)
        up = pos & (xm >= lo[moving])
        prev_x, prev_F = lo[moving], F_lo[moving]
        with np.errstate(divide="ignore", invalid="ignore"):
            secant = xm - F * (xm - prev_x) / (F - prev_F)
        # settled: F is small and, below the fixed point, the secant puts the fixed point within the tolerance too
        # (near the restriction F can creep along small but positive, the ghost of a fixed point that is gone)
        far = pos & np.isfinite(prev_F) & (F < prev_F) & ~(np.abs(secant - xm) <= CORRECTOR_TOL * span)
        settled = fin & (np.abs(F) <= CORRECTOR_TOL * span) & ~far
        lo[moving] = np.where(up, xm, lo[moving])
        F_lo[moving] = np.where(up, F, F_lo[moving])
        down = neg & (xm <= hi[moving])
        hi[moving] = np.where(down, xm, hi[moving])
        F_hi[moving] = np.where(down, F, F_hi[moving])
        zero[moving] = np.where(~fin, np.minimum(zero[moving], xm), zero[moving])
        # next trial
        l, h, z = lo[moving], hi[moving], zero[moving]
        with np.errstate(divide="ignore", invalid="ignore"):
            falsi = l - F_lo[moving] * (h - l) / (F_hi[moving] - F_lo[moving])
        bracketed = np.isfinite(h) & np.isfinite(F_lo[moving]) & np.isfinite(falsi)
        # below the fixed point: the secant through the last two lower points where it reaches further than the
        # fixed-point step (F falls slowly towards a fixed point at the restriction)
        ahead = up & np.isfinite(prev_F) & (F < prev_F) & np.isfinite(secant) & (secant > fm)
        step = np.where(pos, np.where(ahead, secant, fm), 0.5 * (l + np.minimum(z, h)))
        step = np.where(step >= z, 0.5 * (l + z), step)
        nxt = np.where(bracketed, np.clip(falsi, l, h), step)
        # no fixed point before the flux vanishes: the bracket [lo, zero] has closed
        gone = ~settled & ~np.isfinite(h) & np.isfinite(z) & (z - l <= CORRECTOR_TOL * span0[moving])
        settled = settled | gone
        x1[moving] = np.where(gone, np.inf, x1[moving])
        moving = moving[~settled]
        if moving.size == 0:
            break
        trial[moving] = nxt[~settled]
        cm = take(c, moving)
        xt = trial[moving]
        P1m, _ = pressure(np.minimum(xt, x_end), moving)
        S_b1m = (salt[moving] - _step_salt(dm[moving], J0[moving], J1[moving], Sp0[moving], Sp1[moving],
                                           cm["B"])) / (Q[moving] - dm[moving])
        J1m, Sp1m, a1[moving] = local_flux(P1m, S_b1m, cm["T"], cm["A"], cm["B"], cm["k"], pi,
                                           np.maximum(J1[moving], 1e-13), slope=True)
        with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
            x1[moving] = x[moving] + dm[moving] * scale[moving] * _log_mean_inverse(J0[moving], J1m)
        J1[moving], Sp1[moving] = J1m, Sp1m
    # unsettled after every pass (a slow approach to the point where the flux vanishes): where that point is known
    # and no fixed point was seen above the last lower point, the step cannot be completed
    if moving.size:
        x1[moving] = np.where(np.isfinite(zero[moving]) & ~np.isfinite(hi[moving]), np.inf, x1[moving])
    return x1, J1, Sp1, a1


def _log_mean_slopes(J0, J1, lm):
    """Derivatives of the log-mean of 1/J, ``lm`` = :func:`_log_mean_inverse` (J0, J1), in J0 and in J1."""
    with np.errstate(divide="ignore", invalid="ignore"):
        near = np.abs(J1 / J0 - 1) < 1e-6
        diff = J0 - J1
        half = -0.5 * lm * lm
        return np.where(near, half, (1 / J0 - lm) / diff), np.where(near, half, (lm - 1 / J1) / diff)


def _march(P_feed, c, shares, n_seg, full=False, slope=True):
    """March the vessel train from the membrane feed to recovery ``c["r"]`` in equal steps of permeate, at feed
    pressure P_feed (gauge) [Pa], per kg/s of membrane feed.

    Returns ``x``, the area needed as a fraction of the design area (inf where the driving force vanishes first) and,
    with ``full``, the rest of the profile: permeate salt, brine salinity and pressure, per-stage permeate and salt,
    the lead element's average flux, and ``dx_dP``, the sensitivity of x to the feed pressure [1/Pa], carried along
    the march (each step's log-mean area with the local fluxes' slopes, dJ/dP = A / (residual's slope), and the
    pressure drop over the step's own area; the salt passed is held; zero unless ``slope``), for Newton's method
    on the feed pressure.
    """
    n_st = len(shares)
    cum = np.cumsum((0.0,) + tuple(shares))
    share = np.asarray(shares)
    T, A, B, k, pi = c["T"], c["A"], c["B"], c["k"], c["pi"]
    drop_stage = c["n_elem"] * c["dp_elem"]
    boost = c["boost"]
    scale = c["v_p"] / c["area_per_feed"]          # area fraction per kg of permeate at unit flux

    def pressure(x, idx=slice(None)):
        if n_st == 1:                               # (the same arithmetic, without the stage lookup)
            return P_feed[idx] - drop_stage[idx] * np.minimum(np.maximum(x, 0.0), 1.0), 0
        s = np.minimum(np.maximum(np.searchsorted(cum, x, side="right") - 1, 0), n_st - 1)
        frac = np.minimum(np.maximum((x - cum[s]) / share[s], 0.0), 1.0)
        return P_feed[idx] - drop_stage[idx] * (s + frac) + boost[idx] * s, s

    steps = n_seg * n_st
    # permeate steps graded towards the outlet, where the flux may collapse (the restriction): the march's share of
    # the recovery after step j is 1 - (1 - j/steps)^GRADING
    edges = 1.0 - (1.0 - np.arange(steps + 1) / steps) ** GRADING
    kernel = _march_kernel(pi)
    if kernel is not None:
        x, xs, ms, cs, salt, Q, J0, Sp0, y = kernel.run(P_feed, c, shares, edges, full, slope, _CONSTS)
        if not full:
            return x
        return _profile(x, xs, ms, cs, salt, Q, J0, Sp0, y, c, share, cum, pressure)
    Q = np.ones_like(P_feed)
    salt = c["S_in"].copy()
    x = np.zeros_like(P_feed)
    J0, Sp0, dJ0 = local_flux(P_feed, salt, T, A, B, k, pi, iterations=12, slope=True)
    trend = np.zeros_like(P_feed)                 # dJ/dm of the last step (for the predictor)
    y = np.zeros_like(P_feed)                     # dx/dP_feed
    rate = drop_stage / share[:, None] if n_st > 1 else drop_stage[None, :]    # dP/dx inside each stage
    if full:
        xs, ms, cs = [x], [np.zeros_like(P_feed)], [np.zeros_like(P_feed)]
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        for j in range(steps):
            dm = c["r"] * (edges[j + 1] - edges[j])
            # predictor: the end of the step placed with the flux extrapolated from the last step's trend
            J_guess = np.maximum(J0 + trend * dm, 0.5 * J0)
            x_pred = np.minimum(x + dm * scale * _log_mean_inverse(J0, J_guess), cum[-1])
            P1, _ = pressure(x_pred)
            S_b1 = (salt - dm * Sp0) / (Q - dm)
            J1, Sp1, a1 = local_flux(P1, S_b1, T, A, B, k, pi, J_guess, slope=True)
            x1 = x + dm * scale * _log_mean_inverse(J0, J1)
            # corrector: the flux at the end is that of the pressure where the step really ends (further along
            # where the flux collapses near the restriction): x1 = f(x1), f(x) = x0 + dm scale LM(J0, J1(x)), an
            # increasing map whose least fixed point is wanted. F = f(x) - x is positive below it; where the flux
            # at x is zero, f is infinite. Each case keeps a lower point (F > 0), an upper point (F < 0) once one
            # is seen, and the nearest point of zero flux; trials are false position inside a bracket, else a
            # fixed-point step (halfway to the zero-flux point if it would pass it); no fixed point before the flux
            # vanishes means the step cannot be completed (x1 = inf). Only the cases still moving are solved.
            x1, J1, Sp1, a1 = _correct(x, x_pred, x1, J0, J1, Sp0, Sp1, a1, dm, scale, salt, Q, c, pi, pressure,
                                       cum[-1])
            if full and slope:
                # sensitivity: y1 = y0 + K (L0 dJ0/dP + L1 a1 (1 - d1 y1)), d1 the pressure's slope in x at x1
                # (the step's log-mean from its area: a slope needs no last bit)
                K = dm * scale
                L0, L1 = _log_mean_slopes(J0, J1, (x1 - x) / K)
                if n_st > 1:
                    s1 = np.clip(np.searchsorted(cum, x1, side="right") - 1, 0, n_st - 1)
                    d1 = np.where(x1 < cum[-1], np.take_along_axis(rate, s1[None, :], 0)[0], 0.0)
                else:
                    d1 = np.where(x1 < cum[-1], rate[0], 0.0)
                KLa = K * L1 * a1
                y = (y + K * L0 * dJ0 + KLa) / (1 + KLa * d1)
                dJ0 = a1 * (1 - d1 * y)
            with np.errstate(invalid="ignore"):
                trend = np.where(np.isfinite(x1), np.minimum((J1 - J0) / dm, 0.0), 0.0)
            x = x1
            Q = Q - dm
            salt = salt - _step_salt(dm, J0, J1, Sp0, Sp1, B)
            J0, Sp0 = J1, Sp1
            if full:
                xs.append(x)
                ms.append(c["r"] * edges[j + 1])
                cs.append(c["S_in"] - salt)
    if not full:
        return x
    return _profile(x, np.array(xs), np.array(ms), np.array(cs), salt, Q, J0, Sp0, y, c, share, cum, pressure)


#: the march's constants as the compiled march takes them (see :mod:`compare.tech.ro_kernel`)
_CONSTS = np.array([S_CAP, FLUX_RTOL, CORRECTOR_TOL, CORRECTOR_PASSES], dtype=float)
_KERNEL: list = []


def _march_kernel(pi):
    """:mod:`compare.tech.ro_kernel` (the march compiled by numba) when numba can be imported and ``pi`` is an
    osmotic table, else None (the numpy march serves). Loaded at the first march, so that commands without RO
    never import numba."""
    if not isinstance(pi, OsmoticTable):
        return None
    if not _KERNEL:
        try:
            from . import ro_kernel
            _KERNEL.append(ro_kernel)
        except Exception:                      # noqa: BLE001 - numba absent or unusable: the numpy march serves
            _KERNEL.append(None)
    return _KERNEL[0]


def _profile(x, xs, ms, cs, salt, Q, J0, Sp0, y, c, share, cum, pressure):
    """The rest of a full march's profile (see :func:`_march`) from its steps: ``xs``, ``ms``, ``cs`` (steps + 1 x
    cases) the area fraction, permeate and permeate salt after each step; ``salt``, ``Q``, ``J0``, ``Sp0``, ``y``
    the end state."""
    n_st = share.size
    P_b, _ = pressure(np.minimum(x, cum[-1]))
    perm_salt = cs[-1]
    # permeate and its salt up to each stage boundary and the end of the lead element (the first 1/n_elem of stage
    # 1's area), by linear interpolation along the march
    m_at = [_along(xs, ms, np.full_like(x, cum[si])) for si in range(1, n_st)] + [ms[-1]]
    c_at = [_along(xs, cs, np.full_like(x, cum[si])) for si in range(1, n_st)] + [cs[-1]]
    st_perm = np.diff(np.array([np.zeros_like(x)] + m_at), axis=0)
    st_salt = np.diff(np.array([np.zeros_like(x)] + c_at), axis=0)
    x_lead = share[0] / c["n_elem"]
    lead = _along(xs, ms, np.full_like(x, x_lead)) * c["v_p"] / (x_lead * c["area_per_feed"])
    return dict(x=x, perm_salt=perm_salt, S_b=salt / Q, P_b=P_b, st_perm=st_perm, st_salt=st_salt, lead=lead,
                J_out=J0, Sp_out=Sp0, dx_dP=y)


def _along(xs, ys, x_target):
    """ys (steps+1 x cases) at area fraction x_target, interpolated linearly along the march (x increasing)."""
    idx = np.clip(np.argmax(xs >= x_target, axis=0), 1, xs.shape[0] - 1)
    cols = np.arange(xs.shape[1])
    xa, xb, ya, yb = xs[idx - 1, cols], xs[idx, cols], ys[idx - 1, cols], ys[idx, cols]
    with np.errstate(invalid="ignore", divide="ignore"):
        w = np.where(np.isfinite(xb) & (xb > xa), (x_target - xa) / (xb - xa), 0.0)
    return ya + (yb - ya) * np.clip(w, 0.0, 1.0)


def _g(x):
    """Search function of the feed pressure: 1/x - 1, increasing, continuous (-1 where the area is infinite)."""
    with np.errstate(divide="ignore"):
        return np.where(np.isfinite(x), 1.0 / x, 0.0) - 1.0


_GAUSS: list = []


def gauss_points():
    """Six Gauss-Legendre nodes and weights on [0, 1] (for the first guesses; computed at first use, since
    ``numpy.polynomial`` is not otherwise imported)."""
    if not _GAUSS:
        t, w = np.polynomial.legendre.leggauss(6)
        _GAUSS.extend([0.5 * (t + 1), 0.5 * w])
    return _GAUSS[0], _GAUSS[1]


def first_guess(c, shares):
    """A first guess of the feed pressure [Pa] from the brine's osmotic pressure along the recovery and the flux's
    hydraulic term, without a march. With full rejection the bulk salinity at permeate m is S_in / (1 - m); the
    pressure falls along the stages with the area taken in proportion to the permeate; at six Gauss points the
    local flux solves J = A (P - drop - Pi_b exp(J / k)) (film model, Newton from above, where the convex residual
    is positive); the design asks the harmonic mean of the local fluxes over the permeate to be J_avg, solved for P
    by Newton's method with each point's dJ/dP = A / (1 + A Pi_b exp(J / k) / k)."""
    cum = np.cumsum((0.0,) + tuple(shares))
    n_st = len(shares)
    nodes, weights = gauss_points()
    t = nodes[None, :]
    S = c["S_in"][:, None] / (1 - c["r"][:, None] * t)
    T = np.broadcast_to(c["T"][:, None], S.shape)
    inv_k = np.where(np.isinf(c["k"]), 0.0, 1.0 / c["k"])[:, None]
    A, J_avg = c["A"][:, None], c["J_avg"][:, None]
    s = np.clip(np.searchsorted(cum, t, side="right") - 1, 0, n_st - 1)
    frac = (t - cum[s]) / np.asarray(shares)[s]
    drop = (c["n_elem"] * c["dp_elem"])[:, None] * (s + frac) - c["boost"][:, None] * s
    pi_b = c["pi"](np.minimum(S, S_CAP), T)
    base = pi_b + drop                                   # the local flux vanishes at P = base
    P = np.max(pi_b * np.exp(np.minimum(J_avg * inv_k, 30.0)) + drop, axis=1, keepdims=True) + J_avg / A
    J = np.maximum(A * (P - base), 1e-6 * J_avg)
    with np.errstate(over="ignore", invalid="ignore", divide="ignore"):
        for _ in range(4):
            for _ in range(3):
                e = pi_b * np.exp(np.minimum(J * inv_k, 30.0))
                d = 1 + A * e * inv_k
                J = np.maximum(J - (J - A * (P - drop - e)) / d, 1e-6 * J_avg)
            dJ = A / d
            q = (weights / J).sum(axis=1, keepdims=True)
            H = 1.0 / q
            dH = H * H * (weights * dJ / (J * J)).sum(axis=1, keepdims=True)
            P_new = np.maximum(P - (H - J_avg) / dH, np.max(base, axis=1, keepdims=True))
            J = np.maximum(J + dJ * (P_new - P), 1e-6 * J_avg)
            P = P_new
    return np.where(np.isfinite(P[:, 0]), P[:, 0], np.max(base, axis=1) + c["J_avg"] / c["A"])


def solve_feed_pressure(c, shares, n_seg, tol=1e-10, max_iter=60, profile=False, narrow_to=1e-12):
    """Feed pressure [Pa] at which the needed membrane area equals the design area, for all cases at once.
    Returns (P, reachable): reachable is False where no pressure up to :data:`P_SEARCH_MAX` suffices; with
    ``profile``, also the march's profile at P (at :data:`P_SEARCH_MAX` where unreachable).

    Newton's method on g(P) = 1/x - 1 (x the area needed over the design area; nearly linear in P, since the mean
    flux is) with the slope the march carries, safeguarded by a bracket: a trial where the area suffices is the
    upper end, one where it does not (or where the driving force vanishes first, g = -1) the lower; a Newton step
    outside the bracket, or not shrinking to half the one before, bisects; without an upper end yet the trial
    grows by half its margin over the feed's osmotic pressure. It starts from :func:`first_guess` (within a few
    per cent), so most cases settle in three or four marches. A case settles when |g| < ``tol`` or the bracket is
    narrower than ``narrow_to`` of P (then P is its upper end: a design at the restriction, where x jumps from infinite to
    below 1); cases leave the loop as they settle. Every trial march is a full one, so the profile of the accepted
    trial is kept rather than marched again."""
    n = c["S_in"].size
    pi_in = c["pi"](c["S_in"], c["T"])
    lo = pi_in.copy()
    hi = np.full(n, np.inf)
    trial = np.clip(first_guess(c, shares), pi_in, P_SEARCH_MAX)
    step_old = np.full(n, np.inf)
    P_old, g_old = np.full(n, np.nan), np.full(n, np.nan)
    P = np.full(n, np.nan)
    reachable = np.zeros(n, dtype=bool)
    prof = None
    active = np.arange(n)
    for _ in range(max_iter):
        if active.size == 0:
            break
        Pa = trial[active]
        # the march's slope is used only until the trial before is close enough for the secant
        o = _march(Pa, take(c, active), shares, n_seg, full=True,
                   slope=bool((~(np.abs(g_old[active]) < SECANT_FROM)).any()))
        x, y = o["x"], o["dx_dP"]
        g = _g(x)
        upper = g > 0
        conv = np.abs(g) < tol
        top = (Pa >= P_SEARCH_MAX) & ~upper & ~conv
        keep = np.flatnonzero(upper | conv | top)
        if prof is None:
            prof = {key: np.full((n,) + v.shape[:-1], np.nan) if v.ndim > 1 else np.full(n, np.nan)
                    for key, v in o.items()}
        for key, v in o.items():
            prof[key][active[keep]] = v[keep] if v.ndim == 1 else v[:, keep].T
        P[active[keep]] = Pa[keep]
        reachable[active[keep]] = (upper | conv)[keep]
        lo_a = np.where(upper, lo[active], Pa)
        hi_a = np.where(upper, Pa, hi[active])
        lo[active], hi[active] = lo_a, hi_a
        narrow = np.isfinite(hi_a) & (hi_a - lo_a <= narrow_to * hi_a)
        with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
            # the slope: the secant through the last two trials once there are two on the smooth part (the
            # march's own slope is within about 0.5 % of it; the secant's superlinear order saves a march),
            # else the march's, g' = -x'/x^2
            secant = (g - g_old[active]) / (Pa - P_old[active])
            use = np.isfinite(secant) & (secant > 0) & np.isfinite(x) & (np.abs(g_old[active]) < SECANT_FROM)
            slope = np.where(use, secant, -y / (x * x))
            newton = Pa - g / slope
            step = np.abs(newton - Pa)
            good = np.isfinite(x) & (slope > 0) & (newton > lo_a) & (newton < hi_a) & (step < 0.5 * step_old[active])
        known = np.isfinite(hi_a)
        fallback = np.where(known, 0.5 * (lo_a + hi_a), Pa + 0.5 * (Pa - pi_in[active]))
        nxt = np.minimum(np.where(good, newton, fallback), P_SEARCH_MAX)
        step_old[active] = np.where(good, step, np.where(known, 0.5 * (hi_a - lo_a), np.inf))
        P_old[active], g_old[active] = Pa, np.where(np.isfinite(x), g, np.nan)
        trial[active] = nxt
        active = active[~(conv | narrow | top)]
    # unsettled after every trial: the upper end where one was found (its profile is the one kept)
    if active.size:
        P[active] = np.where(np.isfinite(hi[active]), hi[active], np.nan)
    if prof is not None:
        prof["st_perm"], prof["st_salt"] = prof["st_perm"].T, prof["st_salt"].T
    return (P, reachable, prof) if profile else (P, reachable)


def _with_flux(c, J):
    """The design arrays ``c`` at average flux ``J`` [m/s] (the design area follows: capacity / J)."""
    out = dict(c)
    out["J_avg"] = np.asarray(J, dtype=float)
    out["area_per_feed"] = c["r"] * c["v_p"] / out["J_avg"]
    return out


def _solve(c, stages, n_seg, P_max, limits=True, tol=1e-10, narrow_to=1e-12) -> dict:
    """Feed pressure and profile of the cases of ``c`` (stage counts ``stages``), in a few groups by stage count:
    ``P``, ``reachable``, the march's profile (``x``, ``perm_salt``, ``S_b``, ``P_b``, ``lead``, ``J_out``,
    ``Sp_out``), per-stage permeate and salt (3 x cases) and, with ``limits``, ``thermo_limit`` (the driving force
    vanishes before the end even at ``P_max``). ``tol`` and ``narrow_to`` go to :func:`solve_feed_pressure`."""
    n = stages.size
    out = {"P": np.full(n, np.nan), "reachable": np.zeros(n, dtype=bool), "thermo_limit": np.zeros(n, dtype=bool),
           "st_perm": np.zeros((3, n)), "st_salt": np.zeros((3, n))}
    out.update({key: np.full(n, np.nan) for key in ("x", "perm_salt", "S_b", "P_b", "lead", "J_out", "Sp_out")})
    for ns in np.unique(stages):                 # a few groups by stage count, never a loop over cases
        idx = np.flatnonzero(stages == ns)
        ci = take(c, idx)
        shares = STAGE_SHARES[int(ns)]
        Pi, ok, prof = solve_feed_pressure(ci, shares, n_seg, tol=tol, profile=True, narrow_to=narrow_to)
        out["P"][idx], out["reachable"][idx] = Pi, ok
        for key in ("x", "perm_salt", "S_b", "P_b", "lead", "J_out", "Sp_out"):
            out[key][idx] = prof[key]
        out["st_perm"][:ns, idx], out["st_salt"][:ns, idx] = prof["st_perm"], prof["st_salt"]
        if limits:
            # at the pressure limit, does the driving force vanish before the end? (thermodynamic restriction)
            over = np.flatnonzero(ok & (Pi > P_max[idx]))
            if over.size:
                out["thermo_limit"][idx[over]] = ~np.isfinite(_march(P_max[idx][over], take(ci, over), shares,
                                                                     n_seg))
            out["thermo_limit"][idx[~ok]] = True
    return out


def _hold_lead_flux(c, stages, n_seg, P_max, cap, sol, cases, J_floor):
    """The average flux [m/s] per case that holds the lead element's flux at ``cap`` for the ``cases`` (a mask)
    whose lead element ``sol`` puts above it (elsewhere the present flux ``c["J_avg"]``), and ``short``: no flux down
    to ``J_floor`` brings the lead element to its limit (the flux there is returned).

    The lead element's flux falls with the average flux but not in proportion: at a low flux the design pressure
    tends to the outlet's osmotic pressure and the lead flux to A x (that pressure less the inlet's), so the search
    is bounded by ``J_floor``. A ladder of :data:`LEAD_RUNGS` fluxes from the present one to the floor is solved at
    once; the flux at the limit is interpolated (quadratic in the lead flux through three rungs) and corrected by
    one step of false position, which holds the lead flux at the limit to about :data:`LEAD_TOLERANCE`."""
    J0 = c["J_avg"]
    J = J0.copy()
    short = np.zeros(J0.size, dtype=bool)
    over = np.flatnonzero(cases & sol["reachable"] & (sol["lead"] > cap))
    if over.size == 0:
        return J, short
    m = over.size
    # a ladder of fluxes from the present one down to the floor, solved at once (one march per rung, vectorised)
    t = np.linspace(0.0, 1.0, LEAD_RUNGS)[1:]
    Jk = J0[over][:, None] * (J_floor[over][:, None] / J0[over][:, None]) ** t[None, :]      # (m, rungs - 1)
    rep = np.repeat(over, t.size)
    s = _solve(_with_flux(take(c, rep), Jk.ravel()), stages[rep], n_seg, P_max[rep], limits=False, **SEARCH)
    lead = np.where(s["reachable"], s["lead"], np.inf).reshape(m, t.size)
    Js = np.concatenate([J0[over][:, None], Jk], axis=1)
    Ls = np.concatenate([sol["lead"][over][:, None], lead], axis=1)
    below = Ls <= cap[over][:, None]
    found = below.any(axis=1)
    k = np.where(found, np.argmax(below, axis=1), 1)
    rows = np.arange(m)
    J_a, J_b, L_a, L_b = Js[rows, k - 1], Js[rows, k], Ls[rows, k - 1], Ls[rows, k]
    # a third rung beside the bracket (below it where there is one)
    k3 = np.where(k + 1 < Js.shape[1], k + 1, np.maximum(k - 2, 0))
    J_c, L_c = Js[rows, k3], Ls[rows, k3]
    L = cap[over]
    with np.errstate(divide="ignore", invalid="ignore"):
        # the average flux as a quadratic in the lead flux through the three rungs (Lagrange), at the limit; the
        # straight line through the bracket where the quadratic leaves it
        quad = (J_a * (L - L_b) * (L - L_c) / ((L_a - L_b) * (L_a - L_c))
                + J_b * (L - L_a) * (L - L_c) / ((L_b - L_a) * (L_b - L_c))
                + J_c * (L - L_a) * (L - L_b) / ((L_c - L_a) * (L_c - L_b)))
        line = J_b + (L - L_b) * (J_a - J_b) / (L_a - L_b)
    J_held = np.where(np.isfinite(quad) & (quad >= J_b) & (quad <= J_a), quad, line)
    J_held = np.where(np.isfinite(J_held), np.clip(J_held, J_b, J_a), J_b)
    # one step of false position from the design found, with the rung on the other side of the limit
    inner = np.flatnonzero(found)
    if inner.size:
        idx = over[inner]
        s = _solve(_with_flux(take(c, idx), J_held[inner]), stages[idx], n_seg, P_max[idx], limits=False,
                   **SEARCH)
        L_h = np.where(s["reachable"], s["lead"], np.inf)
        J_o = np.where(L_h > L[inner], J_b[inner], J_a[inner])
        L_o = np.where(L_h > L[inner], L_b[inner], L_a[inner])
        with np.errstate(divide="ignore", invalid="ignore"):
            step = J_held[inner] + (L[inner] - L_h) * (J_o - J_held[inner]) / (L_o - L_h)
        ok = np.isfinite(step) & (np.abs(L_h / L[inner] - 1) > LEAD_TOLERANCE / 10)
        J_held[inner] = np.where(ok, np.clip(step, J_b[inner], J_a[inner]), J_held[inner])
    J[over] = np.where(found, J_held, J_floor[over])
    short[over] = ~found
    return J, short


def design_arrays(feed: Feed, p: ROParameters) -> dict:
    """The per-case arrays (flattened to the case shape) that :func:`_march` and :func:`solve_feed_pressure` take:
    temperature-corrected permeabilities, the design's geometry and the membrane feed after exchanger mixing."""
    shape = case_shape(feed, p)
    b = lambda x: np.broadcast_to(np.asarray(x, dtype=float), shape).ravel().copy()  # noqa: E731
    S_f, T, r = b(feed.salinity), b(feed.temperature), b(p.recovery)
    tf = temperature_factor(T)
    mix = b(p.energy_recovery_mixing) if p.energy_recovery == "isobaric" else np.zeros_like(S_f)
    rho_p = _brine.density(np.zeros_like(S_f), T, feed.water)
    c = dict(T=T, A=b(p.water_permeability) * tf, B=b(p.salt_permeability) * tf,
             k=b(p.mass_transfer_coefficient), J_avg=b(p.flux), n_elem=b(p.elements_per_vessel),
             dp_elem=b(p.pressure_drop_per_element), boost=b(p.booster_pressure), r=r, v_p=1.0 / rho_p,
             S_in=S_f * (1 - mix * (1 - r)) / (1 - mix), pi=osmotic_table(feed.model))
    c["area_per_feed"] = r * c["v_p"] / c["J_avg"]        # design area [m^2 per kg/s of membrane feed]
    return c


def evaluate(feed: Feed, p: ROParameters) -> Performance:
    """Reverse osmosis in design mode for every case (see the module notes)."""
    shape = case_shape(feed, p)
    rs = lambda x: np.asarray(x, dtype=float).reshape(shape)  # noqa: E731
    b = lambda x: np.broadcast_to(np.asarray(x, dtype=float), shape).ravel().copy()  # noqa: E731
    stages = b(p.stages).astype(int)
    n_seg = int(np.max(p.segments))
    erd = p.energy_recovery
    S_f, T = b(feed.salinity), b(feed.temperature)
    r = b(p.recovery)
    c = design_arrays(feed, p)
    rho_p = 1.0 / c["v_p"]
    n = S_f.size
    P_max = b(p.max_pressure)
    sol = _solve(c, stages, n_seg, P_max)
    cap = b(p.max_lead_flux)
    short = np.zeros(n, dtype=bool)             # no flux down to LOWEST_FLUX_SHARE holds the lead element
    J_design = c["J_avg"]
    if p.lead_flux_limit == "lower_flux":
        J_floor = LOWEST_FLUX_SHARE * J_design
        lowered = np.zeros(n, dtype=bool)
        for _ in range(3):
            # the cases (with periods: each case's period furthest above the limit, on the last axis) whose lead
            # element is above its limit; with periods, one membrane area per design: the lowest flux any period
            # needs; a period above the limit at that flux starts another round
            ratio = np.where(sol["reachable"] & ~short, sol["lead"] / cap, 0.0)
            if len(shape) == 2:
                grid = ratio.reshape(shape)
                worst = (grid == grid.max(axis=1, keepdims=True)) & (grid > 1 + 10 * LEAD_TOLERANCE)
                worst &= np.cumsum(worst, axis=1) == 1
                cases = worst.ravel()
            else:
                cases = ratio > 1 + 10 * LEAD_TOLERANCE
            if not cases.any():
                break
            J, held_short = _hold_lead_flux(c, stages, n_seg, P_max, cap, sol, cases, J_floor)
            if len(shape) == 2:
                J = np.broadcast_to(J.reshape(shape).min(axis=1, keepdims=True), shape).ravel().copy()
                held_short = np.broadcast_to(held_short.reshape(shape).any(axis=1, keepdims=True), shape).ravel()
            short = short | held_short
            moved = J < c["J_avg"] * (1 - 1e-12)
            lowered |= moved
            c = _with_flux(c, J)
            idx = np.flatnonzero(moved)
            sub = _solve(take(c, idx), stages[idx], n_seg, P_max[idx])
            for key, val in sub.items():
                if key.startswith("st_"):
                    sol[key][:, idx] = val
                else:
                    sol[key][idx] = val
    else:
        lowered = np.zeros(n, dtype=bool)
    P, reachable, thermo_limit = sol["P"], sol["reachable"], sol["thermo_limit"]
    st_perm, st_salt = sol["st_perm"], sol["st_salt"]
    prof = sol
    P_b = prof["P_b"]
    S_p = prof["perm_salt"] / r
    S_bm = prof["S_b"]
    # the brine leaving the plant: the membrane brine, less what mixing carried back in (overall salt balance)
    S_b_out = (S_f - r * S_p) / (1 - r)

    # energy per kg of permeate [J/kg], from gauge pressures and specific volumes
    eta_p, eta_m = b(p.pump_efficiency), b(p.motor_efficiency)
    eta = eta_p * eta_m
    eta_e = b(p.energy_recovery_efficiency)
    v_f = 1.0 / _brine.density(c["S_in"], T, feed.water)
    v_b = 1.0 / _brine.density(np.minimum(S_bm, S_CAP), T, feed.water)
    q_b, q_f = (1 - r) / r, 1.0 / r               # brine and membrane feed mass per kg of permeate
    if erd == "isobaric":
        # equal volumes swapped: the high-pressure pump lifts the rest of the membrane feed; a booster lifts the
        # exchanger's outflow from eta_e x brine pressure to the feed pressure
        hp = P * (q_f * v_f - q_b * v_b) / eta
        booster = q_b * v_b * np.maximum(P - eta_e * P_b, 0.0) / eta
    elif erd == "turbine":
        # a turbine on the pump shaft: its work (efficiency eta_e) offsets the pump's on the motor
        hp = (q_f * P * v_f / eta_p - eta_e * q_b * P_b * v_b) / eta_m
        booster = np.zeros_like(P)
    else:
        hp = q_f * P * v_f / eta
        booster = np.zeros_like(P)
    # interstage boosters lift the concentrate of the stages before
    boost = c["boost"]
    inter = np.zeros_like(P)
    conc = q_f.copy()
    for s in range(1, 3):
        conc = conc - st_perm[s - 1] / r
        inter = inter + np.where(stages > s, boost * conc * v_f / eta, 0.0)
    e_ro = (hp + booster + inter) * rho_p                     # [J/m^3 of permeate]
    other = b(p.other_electricity)
    electricity = e_ro + other
    area = b(feed.capacity) / c["J_avg"]
    elements = np.ceil(area / b(p.element_area) - 1e-9)
    vessels = np.ceil(elements / c["n_elem"] - 1e-9)
    table = c["pi"]
    # outlet wall salinity at the mean flux (the full-rejection brine where no pressure reached the recovery)
    wall = np.where(reachable & np.isfinite(S_bm), S_bm, c["S_in"] / (1 - r)) * np.exp(np.minimum(c["J_avg"] / c["k"], 30.0))
    flags = [
        Flag("infeasible", "max_pressure", "feed_pressure", "ro",
             "RO: the feed pressure needed is above the element's maximum pressure",
             rs(reachable & (P > b(p.max_pressure)) & ~thermo_limit)),
        Flag("infeasible", "driving_force", "net_driving_pressure", "ro",
             "RO: the net driving pressure falls to zero before the end of the vessel even at the maximum pressure "
             "(the concentrate's osmotic pressure; thermodynamic restriction)", rs(thermo_limit)),
        Flag("infeasible", "lead_flux", "lead_flux", "ro",
             "RO: the lead element's flux is above its limit (ro.max_lead_flux)"
             + (f" even at {LOWEST_FLUX_SHARE:.0%} of the design flux" if p.lead_flux_limit == "lower_flux" else ""),
             rs(reachable & (short if p.lead_flux_limit == "lower_flux" else prof["lead"] > cap))),
        Flag("note", "flux_lowered", "average_flux", "ro",
             "RO: the average flux is lowered below the design flux (ro.flux) to hold the lead element's flux at its "
             "limit (ro.max_lead_flux) in the period that needs it most; the membrane area rises in proportion",
             rs(reachable & lowered & ~short)),
        Flag("note", "at_restriction", "area_used_fraction", "ro",
             "RO design at the thermodynamic restriction: the outlet's net driving pressure is near zero and part "
             "of the membrane area produces almost nothing (see the area used)", rs(reachable & (prof["x"] < 1 - 1e-6))),
    ]
    flags += [f.with_mask(rs(f.mask)) for f in table.flags(np.nan_to_num(wall), T, "RO membrane-wall brine",
                                                            feed.model.name)]
    capped = (wall > S_CAP) & ~table.outside(np.nan_to_num(wall), T)
    if capped.any():
        flags.append(Flag("out_of_range", "wall_salinity_cap", "membrane_wall_salinity", "ro",
                          f"RO: the membrane-wall brine passes {S_CAP * 1e3:.0f} g/kg, where the flux solve holds it "
                          "(the edge of the osmotic-pressure table)", rs(capped)))
    flags += [f.with_mask(rs(f.mask)) for f in _brine.density_flags(np.nan_to_num(S_bm), T, feed.water,
                                                                     "RO brine")]
    flags = [f for f in flags if f.any()]
    nan = ~reachable
    # the membrane wall at the outlet, by the film model with the outlet's local flux (where scale forms first)
    with np.errstate(invalid="ignore", over="ignore"):
        outlet_wall = prof["Sp_out"] + (S_bm - prof["Sp_out"]) * np.exp(np.minimum(prof["J_out"] / c["k"], 30.0))
    details = {
        "feed_pressure": P, "brine_pressure": P_b, "outlet_wall_salinity": outlet_wall,
        "membrane_feed_salinity": c["S_in"], "membrane_brine_salinity": S_bm,
        "membrane_area": area, "elements": elements, "vessels": vessels, "lead_flux": prof["lead"],
        "average_flux": c["J_avg"], "area_used_fraction": prof["x"],
        "ro_step": e_ro, "high_pressure_pump": hp * rho_p, "booster": (booster + inter) * rho_p,
        "other_electricity": other,
    }
    for s in range(3):
        with np.errstate(invalid="ignore", divide="ignore"):
            details[f"stage_{s + 1}_permeate_salinity"] = np.where(stages > s, st_salt[s] / st_perm[s], np.nan)
            details[f"stage_{s + 1}_recovery"] = np.where(stages > s, st_perm[s], np.nan)
    details = {key: np.where(nan, np.nan, val) for key, val in details.items()}
    return Performance(
        electricity=rs(np.where(nan, np.nan, electricity)), heat=rs(np.zeros(n)),
        heat_temperature=rs(np.full(n, np.nan)), recovery=rs(r), product_salinity=rs(np.where(nan, np.nan, S_p)),
        brine_salinity=rs(np.where(nan, np.nan, S_b_out)), flags=tuple(flags),
        details={key: rs(val) for key, val in details.items()})


#: how the design figures are shown (label in words, display unit)
DETAILS = {
    "feed_pressure": Detail("feed pressure", "bar"),
    "brine_pressure": Detail("brine pressure at the outlet", "bar"),
    "membrane_feed_salinity": Detail("membrane feed salinity (after the exchanger's mixing)", "g/kg"),
    "membrane_brine_salinity": Detail("membrane brine salinity", "g/kg"),
    "outlet_wall_salinity": Detail("brine at the membrane wall, outlet", "g/kg"),
    "membrane_area": Detail("membrane area", "m2", "max"),
    "elements": Detail("elements", "count", "max"),
    "vessels": Detail("pressure vessels", "count", "max"),
    "lead_flux": Detail("lead element flux", "L/m2/h", "max"),
    "average_flux": Detail("average flux", "L/m2/h"),
    "area_used_fraction": Detail("share of the area producing", "-", "min"),
    "ro_step": Detail("RO step electricity (the two pump lines below it)", "kWh/m3"),
    "high_pressure_pump": Detail("of which high-pressure pump", "kWh/m3"),
    "booster": Detail("of which booster pumps (exchanger circulation and interstage)", "kWh/m3"),
    "other_electricity": Detail("other plant electricity (intake, treatment)", "kWh/m3"),
    **{f"stage_{s}_permeate_salinity": Detail(f"stage {s} permeate salinity", "g/kg") for s in (1, 2, 3)},
    **{f"stage_{s}_recovery": Detail(f"stage {s} recovery (share of the system feed)", "-") for s in (1, 2, 3)},
}


RO = register(Technology(
    "ro", "reverse osmosis (spiral-wound, solution-diffusion, design mode)", evaluate, ROParameters,
    "feed within the activity model's range; 1-3 stages; design mode (recovery and average flux given)",
    "Wijmans & Baker 1995; film model (Mulder 1996); Zhu, Christofides & Cohen 2009; Li 2010", DETAILS,
    concentrate={"wall_salinity": "outlet_wall_salinity"}))
