"""Forward osmosis with draw regeneration: a counter-current FO exchanger with internal and external concentration
polarisation and reverse salt flux, then a regenerator that takes the water back out of the diluted draw, either the
RO model itself (its public :func:`compare.tech.ro.evaluate`) or a thermal screening model. Vectorised over cases.

Exchanger
---------
FO mode (active layer towards the feed, support towards the draw). Local water flux J and reverse salt flux J_s from
the film model on the feed side (mass-transfer coefficient k) and internal polarisation in the support (structural
parameter S over the draw solute's diffusivity D), with the salt term of Tiraferri et al. (2011) and Yip et al.
(2010), written on salinities (mass fractions) so that any activity model gives the osmotic pressures:

    c_F,m = c_F exp(J/k) + (J_s/J) (exp(J/k) - 1)             feed side of the active layer: its own salt
                                                              polarised plus the draw solute that came through
    c_D,i = c_D exp(-J S/D) - (J_s/J) (1 - exp(-J S/D))       draw side of the active layer (inside the support)
    J_s = B (c_D,i - (J_s/J) (exp(J/k) - 1)),                 reverse flux of the draw solute (none in the feed)
    J = A (Pi_D(c_D,i) - Pi_F(c_F,m))

J is solved by a bracketed Newton iteration. Pi_D comes from the draw's activity model (NaCl: the Pitzer model),
Pi_F from the feed's, both through the bounded osmotic tables of the floor core. Without polarisation or salt
passage (k -> inf, S = 0, B = 0) the flux is exactly A (Pi_D - Pi_F) (tested). Salt of the feed is taken as fully
rejected; the draw salt that crosses ends up in the feed's brine.

The exchanger is marched from the feed inlet (where the diluted draw leaves) in equal steps of permeate, the area of
a step being its permeate over the log-mean flux (as in the RO model), with the total reverse salt flux found by a
fixed-point iteration on the draw's salt balance. The regenerated draw enters at the feed outlet at
``draw_concentration`` with ``draw_flow_ratio`` kg per kg of feed. Where the flux falls to zero before the recovery
is reached (the draw is no stronger than the feed or the brine beside it), the case is infeasible.

Regeneration
------------
``ro``: the diluted draw is the feed of the RO model (parameters from ``[fo.regenerator]``, with its own limits, the
pressure first), at the recovery that returns the draw to ``draw_concentration``; its permeate is the product.
``thermal``: a screening model: the product water is evaporated from the diluted draw in ``gain_output_ratio``
effect-equivalents, heat per kg of product = latent heat at the regenerator's brine temperature / GOR (sensible heat
assumed recovered); the heat must be supplied at ``heat_temperature``, which must exceed the feed temperature by GOR
times (the draw's boiling-point elevation + ``temperature_difference`` per effect). Figures of this model are
screening values (from memory); its electricity is in ``circulation_electricity``.

References
----------
Loeb, S. et al. (1997), J. Membr. Sci. 129, 243-249 (internal polarisation).
McCutcheon, J. R. and Elimelech, M. (2006), J. Membr. Sci. 284, 237-247 (internal and external polarisation).
Yip, N. Y. et al. (2010), Environ. Sci. Technol. 44, 3812-3818; Tiraferri, A. et al. (2011), J. Membr. Sci. 367,
340-352 (the salt term).
McGovern, R. K. and Lienhard, J. H. (2014), J. Membr. Sci. 469, 245-250 (FO with regeneration against RO).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np

from ..spec import OPTIONAL, param, specs_of, subrecord, table
from ..thermo import brine as _brine
from ..thermo import water as _water
from ..thermo.activity import get_model
from ..thermo.constants import M_NACL, T0_C
from ..thermo.floor import osmotic_table
from . import ro as _ro
from ..flags import Flag
from ..spec import values
from ..thermo.model import range_flags
from .base import Detail, Feed, Performance, Technology, case_shape, register, take

LMH = 1e-3 / 3600.0
COLD_END_APPROACH = 5.0   # [K] thermal regenerator's last condenser above the feed (practice, no source)

#: RO keys that the FO regenerator takes from ``[fo.regenerator]``, with the defaults it changes
_RO_OWN = {"recovery", "capital_cost", "fixed_om", "pretreatment_cost", "chemicals_cost"}
_RO_FIELDS = set(specs_of(_ro.ROParameters)) - _RO_OWN
_RO_DEFAULTS = {
    "other_electricity": ("0 kWh/m^3", "tool default: the FO plant's own other_electricity covers intake and treatment"),
    "flux": ("12 L/m^2/h", "common practice: seawater-strength RO design flux"),
}


RegeneratorParameters = subrecord(
    __name__, "RegeneratorParameters", _ro.ROParameters, drop=_RO_OWN,
    change={**{k: {"default": d, "source": src} for k, (d, src) in _RO_DEFAULTS.items()}},
    extra=[
        ("gain_output_ratio", param("fraction", "8", "from memory: thermal regeneration in a multi-effect evaporator "
                                    "(thermal only)", expect="a gain output ratio such as 8", lo=0.0, lo_open=True)),
        ("heat_temperature", param("temperature", "75 degC", "from memory: low-temperature thermal regeneration "
                                   "(thermal only)", expect='a temperature such as "75 degC"', lo=T0_C + 20,
                                   hi=T0_C + 200)),
        ("temperature_difference", param("quantity", "3 K", "common practice: a few K per effect (thermal only)", "K",
                                         'a temperature difference such as "3 K"', lo=0.0, lo_open=True)),
        ("thermal_regenerator_cost", param("money", "900 USD/(m^3/day)", "from memory: a low-temperature evaporator, "
                                           "700-1500 USD per m3/day of product, at 100,000 m3/day (thermal only)",
                                           "s/m^3", 'a cost per capacity such as "900 USD/(m^3/day)"', lo=0.0)),
    ], source_prefix="RO regenerator: ")
RegeneratorParameters.__doc__ = ("Parameters of [fo.regenerator]: the RO keys (less recovery and cost) for "
                                 "regeneration = \"ro\", and the thermal screening keys for \"thermal\".")


@dataclass(frozen=True)
class FOParameters:
    """Parameters of the [section] in SI; each field's metadata holds its key's spec (unit, default, source)."""

    recovery: Any = param("fraction", "0.35", "from memory: FO on seawater, 30-50 %", expect="a mass recovery in (0, 1)",
                     lo=0.0, hi=1.0, lo_open=True, hi_open=True, role="recovery")
    draw: Any = param("choice", "nacl", "tool default: the draw solute with an activity model (NaCl: Pitzer)", choices=("nacl",))
    draw_concentration: Any = param("nacl_concentration", "1.2 mol/kg", "from memory: NaCl draws 0.5-2 mol/kg",
                               expect='a molality such as "1.5 mol/kg" or a mass fraction such as "80 g/kg"',
                               lo=0.0, hi=0.26, lo_open=True)
    draw_flow_ratio: Any = param("fraction", "1.0", "from memory: counter-current FO runs near equal flows",
                            expect="regenerated draw per kg of feed, such as 1.0", lo=0.0, lo_open=True)
    water_permeability: Any = param("quantity", "1.5 L/m^2/h/bar", "from memory: thin-film composite FO membranes",
                               "m/s/Pa", 'a permeability such as "1.5 L/m^2/h/bar"', lo=0.0, lo_open=True)
    salt_permeability: Any = param("quantity", "0.1 L/m^2/h", "from memory: thin-film composite FO membranes", "m/s",
                              'a salt permeability such as "0.1 L/m^2/h"', lo=0.0)
    structural_parameter: Any = param("quantity", "400 um", "from memory: FO supports 300-600 um", "m",
                                 'a length such as "400 um"', lo=0.0)
    draw_diffusivity: Any = param("quantity", "1.5e-9 m^2/s", "from memory: NaCl in water at 25 degC, 1.5e-9 m2/s",
                             "m^2/s", 'a diffusivity such as "1.5e-9 m^2/s"', lo=0.0, lo_open=True)
    mass_transfer_coefficient: Any = param("quantity", "3e-5 m/s", "from memory: FO feed channels, 1-5e-5 m/s", "m/s",
                                      'a mass transfer coefficient such as "3e-5 m/s"', lo=0.0, lo_open=True)
    regeneration: Any = param("choice", "ro", "tool default: RO regeneration of a NaCl draw", choices=("ro", "thermal"))
    circulation_electricity: Any = param("quantity", "0.2 kWh/m^3", "from memory: low-pressure feed and draw loops, "
                                    "0.1-0.3 kWh/m3", "J/m^3", 'an energy per volume such as "0.2 kWh/m^3"', lo=0.0)
    other_electricity: Any = param("quantity", "0.8 kWh/m^3", "common practice (the RO default): intake, pretreatment and post-treatment "
                              "on the same assumptions", "J/m^3", 'an energy per volume such as "0.8 kWh/m^3"',
                              lo=0.0)
    segments: Any = param("count", "40", "numerics: permeate steps along the exchanger", expect="a number 4-400",
                     lo=4, hi=400)
    capital_cost: Any = param("money", OPTIONAL, "tool default: built up from the design's equipment (compare/costing.py); a "
                              "value replaces the build-up", "day/m^3",
                              'a cost per capacity such as "1500 USD/(m^3/day)"', lo=0.0)
    fixed_om: Any = param("fraction", "0.025", "common practice: maintenance and insurance 2-3 % of capital per year",
                          expect='a share of capital per year such as 0.025 or "2.5 %"', lo=0.0, hi=1.0)
    membrane_price: Any = param("money", "40 USD/m^2", "from memory: FO modules cost about twice RO elements per m2",
                                "1/m^2", 'a price per area such as "40 USD/m^2"', lo=0.0)
    membrane_life: Any = param("quantity", "5 year", "common practice: as RO elements, 5-7 years", "year",
                               'a life such as "5 year"', lo=0.0, lo_open=True)
    draw_price: Any = param("money", "0.1 USD/kg", "from memory: bulk sodium chloride, 50-150 USD per tonne", "1/kg",
                            'a price per mass of draw solute such as "0.1 USD/kg"', lo=0.0)
    draw_holdup: Any = param("quantity", "0.5 h", "common practice: pipes and tanks hold about half an hour of the "
                             "draw flow", "s", 'a time such as "0.5 h"', lo=0.0)
    pretreatment_cost: Any = param("money", "60 USD/(m^3/day)", "from memory: FO fouls less than RO; cartridge "
                                   "filtration and dosing, 40-100 USD per m3/day of feed, at 100,000 m3/day",
                                   "s/m^3", 'a cost per feed capacity such as "60 USD/(m^3/day)"', lo=0.0)
    chemicals_cost: Any = param("money", "0.02 USD/m^3", "from memory: antiscalant and cleaning, 0.01-0.03 USD per "
                                "m3 of feed", "1/m^3", 'a cost per feed volume such as "0.02 USD/m^3"', lo=0.0)
    regenerator: Any = table(RegeneratorParameters)


def local_flux(c_D, c_F, T, A, B, S_struct, D, k, pi_D, pi_F, J0=None, iterations=None):
    """Water flux J [m/s] and reverse salt flux J_s [m/s x kg/kg] of an FO membrane in FO mode, with the bulk draw
    c_D and feed c_F [kg/kg] beside it; also the interface salinities (c_D,i, c_F,m). Vectorised.

    ``pi_D(c, T)`` and ``pi_F(c, T)`` give the osmotic pressures [Pa]; ``k = inf`` means no external polarisation,
    ``S_struct = 0`` no internal polarisation, ``B = 0`` no salt passage. Where the draw is not stronger than the feed,
    J = 0.
    """
    c_D, c_F = np.broadcast_arrays(np.asarray(c_D, dtype=float), np.asarray(c_F, dtype=float))
    K = np.asarray(S_struct / D, dtype=float)          # [s/m] resistance to solute diffusion in the support
    inv_k = np.where(np.isinf(k), 0.0, 1.0 / np.where(np.isinf(k), 1.0, k))

    def interfaces(J):
        Jc = np.maximum(J, 1e-30)
        with np.errstate(over="ignore"):
            a = np.where(inv_k > 0, np.expm1(Jc * inv_k) / Jc, 0.0)   # (exp(J/k) - 1)/J -> 1/k
            b = np.where(K > 0, -np.expm1(-Jc * K) / Jc, 0.0)        # (1 - exp(-J K))/J -> K
        # the draw solute's difference across the active layer (none of it in the bulk feed):
        # c_D,i - c_F,m^draw = c_D (1 - J b) - J_s (a + b), J_s = B x that difference
        Js = B * c_D * (1 - Jc * b) / (1 + B * (a + b))
        # feed side: its own (rejected) salt polarised, plus the draw solute that came through
        return c_D * (1 - Jc * b) - Js * b, c_F * (1 + Jc * a) + Js * a, Js

    def resid(J):
        cDi, cFm, _ = interfaces(J)
        return J - A * (pi_D(np.clip(cDi, 0.0, 0.34), T) - pi_F(np.clip(cFm, 0.0, 0.34), T))

    J_hi = A * (pi_D(c_D, T) - pi_F(c_F, T))
    on = J_hi > 0
    lo = np.zeros_like(J_hi)
    hi = np.where(on, J_hi, 1e-30)
    J = 0.5 * hi if J0 is None else np.clip(J0, 0.05 * hi, 0.95 * hi)
    for _ in range(iterations or (24 if J0 is None else 8)):
        r = resid(J)
        lo = np.where(r < 0, J, lo)
        hi = np.where(r >= 0, J, hi)
        h = np.maximum(1e-7 * J, 1e-16)
        d = (resid(J + h) - r) / h
        step = J - r / np.where(d > 0, d, 1.0)
        J = np.where((step > lo) & (step < hi), step, 0.5 * (lo + hi))
    J = np.where(on, J, 0.0)
    cDi, cFm, Js = interfaces(J)
    return J, np.where(on, Js, 0.0), cDi, cFm


def _exchanger(S_f, T, r, S_din, m_din, A, B, S_struct, D, k, pi_D, pi_F, rho, steps):
    """Counter-current exchanger per kg/s of feed: area [m^2 per kg/s], draw out salinity, reverse salt [kg/s], the
    feed's brine salinity, and the smallest osmotic-pressure margin along the way.

    The total reverse salt flux fixes the draw's state at the feed inlet (where the march starts); it is found by a
    secant iteration on (salt passed in the march) - (salt assumed), case by case in the arrays."""
    dm = r / steps
    salt_in = m_din * S_din
    args = dict(S_f=S_f, T=T, r=r, m_din=m_din, A=A, B=B, S_struct=S_struct, D=D, k=k, rho=rho, dm=dm,
                salt_in=salt_in)

    def march(guess, idx):
        a = take(args, idx)
        T_, A_, B_, Ss, D_, k_, rho_, dm_ = (a[x] for x in ("T", "A", "B", "S_struct", "D", "k", "rho", "dm"))
        Qf, sf = np.ones(idx.size), a["S_f"].copy()
        md, sd = a["m_din"] + a["r"], a["salt_in"] - guess
        J0, Js0, _, _ = local_flux(sd / md, sf / Qf, T_, A_, B_, Ss, D_, k_, pi_D, pi_F)
        area, passed = np.zeros(idx.size), np.zeros(idx.size)
        margin = pi_D(sd / md, T_) - pi_F(sf / Qf, T_)
        with np.errstate(divide="ignore", invalid="ignore"):
            for _ in range(steps):
                # predictor: the states at the end of the step with the salt flux at its start
                ds_pred = Js0 * dm_ / np.maximum(J0, 1e-30)
                Qf1, md1 = Qf - dm_, md - dm_
                J1, Js1, _, _ = local_flux((sd + ds_pred) / md1, (sf + ds_pred) / Qf1, T_, A_, B_, Ss, D_, k_,
                                           pi_D, pi_F, J0=J0)
                dA = dm_ / rho_ * _ro._log_mean_inverse(J0, J1)
                ds = rho_ * 0.5 * (Js0 + Js1) * np.where(np.isfinite(dA), dA, 0.0)
                area, passed = area + dA, passed + ds
                Qf, md, sf, sd = Qf1, md1, sf + ds, sd + ds
                margin = np.minimum(margin, pi_D(sd / md, T_) - pi_F(sf / Qf, T_))
                J0, Js0 = J1, Js1
        return passed, area, margin

    n = S_f.size
    everyone = np.arange(n)
    x0 = np.zeros(n)
    p0, area, margin = march(x0, everyone)
    f0 = p0 - x0
    x1 = p0.copy()
    guess = x1.copy()
    active = np.flatnonzero(np.isfinite(area) & (np.abs(f0) > 1e-14))
    for _ in range(12):
        if active.size == 0:
            break
        p1, a1, m1 = march(x1[active], active)
        f1 = p1 - x1[active]
        area[active], margin[active], guess[active] = a1, m1, x1[active]
        with np.errstate(divide="ignore", invalid="ignore"):
            slope = (f1 - f0[active]) / (x1[active] - x0[active])
            nxt = np.where(np.isfinite(slope) & (slope != 0), x1[active] - f1 / slope, p1)
        x0[active], f0[active] = x1[active], f1
        x1[active] = np.maximum(nxt, 0.0)
        active = active[np.isfinite(a1) & (np.abs(f1) > 1e-14)]
    # the draw leaves with the salt the march assumed; the brine gained what the march passed (equal when converged)
    S_dout = (salt_in - guess) / (m_din + r)
    return dict(area=area, S_dout=S_dout, Js=guess, S_b=(S_f + guess) / (1 - r), margin=margin)


def evaluate(feed: Feed, p: FOParameters) -> Performance:
    """Forward osmosis with draw regeneration for every case (see the module notes)."""
    shape = case_shape(feed, p)
    rs = lambda x: np.asarray(x, dtype=float).reshape(shape)  # noqa: E731
    size = int(np.prod(shape))
    b = lambda x: np.broadcast_to(np.asarray(x, dtype=float), shape).ravel().copy()  # noqa: E731
    S_f, T, r = b(feed.salinity), b(feed.temperature), b(p.recovery)
    tf = _ro.temperature_factor(T)
    A, B = b(p.water_permeability) * tf, b(p.salt_permeability) * tf
    S_din, m_din = b(p.draw_concentration), b(p.draw_flow_ratio)
    draw_model = get_model("pitzer-nacl", "nacl")
    pi_D, pi_F = osmotic_table(draw_model), osmotic_table(feed.model)
    rho = _brine.density(np.zeros(size), T, feed.water)           # permeate (water) density
    steps = int(np.max(p.segments))
    ex = _exchanger(S_f, T, r, S_din, m_din, A, B, b(p.structural_parameter), b(p.draw_diffusivity),
                    b(p.mass_transfer_coefficient), pi_D, pi_F, rho, steps)
    reached = np.isfinite(ex["area"]) & (ex["margin"] > 0)
    S_dout = ex["S_dout"]
    m_dout = m_din + r
    reg = p.regenerator
    flags = [Flag("infeasible", "driving_force", "draw_concentration", "fo",
                  "FO: the driving force vanishes before the recovery is reached (the draw is not stronger than the "
                  "feed or brine beside it)", ~reached)]
    flags += range_flags(draw_model, S_din, T, "FO draw", "draw")
    flags += pi_D.flags(S_din, T, "FO draw", draw_model.name)
    # the feed side of the active layer at the brine end, polarised at the mean flux (the flux solve holds interface
    # salinities at 340 g/kg, inside the osmotic-pressure tables)
    with np.errstate(invalid="ignore", divide="ignore"):
        wall = ex["S_b"] * np.exp(np.minimum(r / (rho * ex["area"]) / b(p.mass_transfer_coefficient), 30.0))
    wall = np.where(reached & np.isfinite(wall), wall, 0.0)
    flags += pi_F.flags(wall, T, "FO brine at the membrane", feed.model.name)
    flags.append(Flag("out_of_range", "wall_salinity_cap", "membrane_wall_salinity", "fo",
                      "FO: the feed-side brine at the membrane passes 340 g/kg, where the flux solve holds it",
                      (wall > 0.34) & ~pi_F.outside(wall, T)))
    details = {}
    if p.regeneration == "ro":
        # the diluted draw is the RO feed; recovery returns it to the draw strength (product r per m_dout)
        r_ro = r / m_dout
        # where the exchanger failed its draw-out salinity is meaningless: give the regenerator a harmless stand-in
        # (the case is infeasible and reported as NaN anyway)
        reg_feed = Feed(draw_model, "nacl", np.where(reached, S_dout, S_din * 0.5), T, b(feed.product_salinity),
                        b(feed.heat_temperature), b(feed.capacity))
        # the regenerator sees FO's flattened cases: varied keys (arrays of the case shape) are flattened alike
        reg_p = {k: (b(v) if isinstance(v, np.ndarray) else v) for k, v in values(reg).items()
                 if k in _RO_FIELDS}
        perf = _ro.evaluate(reg_feed, _ro.ROParameters(**reg_p, recovery=r_ro, **dict.fromkeys(_RO_OWN - {"recovery"}, 0.0)))
        electricity = perf.electricity + b(p.circulation_electricity) + b(p.other_electricity)
        heat = np.zeros(size)
        heat_T = np.full(size, np.nan)
        product = perf.product_salinity
        flags += [f.within("fo", "FO regenerator: ").with_mask(np.asarray(f.mask, dtype=bool).ravel())
                  for f in perf.flags]
        d = perf.details
        details.update({
            "regenerator_recovery": r_ro, "regenerator_feed_pressure": d["feed_pressure"].ravel(),
            "regenerator_ro_step": d["ro_step"].ravel(), "regenerator_membrane_area": d["membrane_area"].ravel(),
            "regenerator_electricity": perf.electricity.ravel(),
        })
        makeup = ex["Js"] + r * product              # draw salt lost to the brine and the product, per kg/s of feed
    else:
        gor = b(reg.gain_output_ratio)
        T_reg = b(reg.heat_temperature)
        bpe = _brine.boiling_point_elevation(draw_model, S_din, T_reg)
        T_low = T + COLD_END_APPROACH                 # the cold end condenses against the feed
        needed = T_low + gor * (bpe + b(reg.temperature_difference))
        flags.append(Flag("infeasible", "regenerator_temperature", "regenerator_heat_temperature", "fo",
                          "FO thermal regenerator: its heat temperature is too low for the effects it must drive "
                          "(gain output ratio x (draw BPE + temperature difference) above the feed)", T_reg < needed))
        h_fg = _water.latent_heat(0.5 * (T_reg + T_low))
        heat = h_fg / gor * rho                       # J per m^3 of product
        heat_T = T_reg
        electricity = b(p.circulation_electricity) + b(p.other_electricity)
        product = np.zeros(size)
        details.update({"regenerator_gor": gor, "regenerator_draw_bpe": bpe, "regenerator_heat": heat})
        makeup = ex["Js"]
    area = ex["area"] * b(feed.capacity) * rho / r     # [m^2] for the plant (area per kg/s of feed x feed flow)
    with np.errstate(invalid="ignore", divide="ignore"):
        avg_flux = r / (rho * ex["area"])
        details.update({
            "draw_in": S_din, "draw_out": S_dout,
            "draw_in_molality": S_din / (M_NACL * (1 - S_din)),
            "draw_out_molality": S_dout / (M_NACL * (1 - S_dout)),
            "draw_flow_ratio": m_din, "average_flux": avg_flux, "fo_membrane_area": area,
            "reverse_salt_flux": ex["Js"] / ex["area"],
            "min_osmotic_margin": ex["margin"],
            "brine_wall_salinity": wall,
            "draw_makeup": makeup / r * rho,
        })
    nan = ~reached
    flags = [f.with_mask(rs(f.mask)) for f in flags]
    return Performance(
        electricity=rs(np.where(nan, np.nan, electricity)), heat=rs(np.where(nan, np.nan, heat)),
        heat_temperature=rs(heat_T), recovery=rs(r), product_salinity=rs(product),
        brine_salinity=rs(ex["S_b"]), flags=tuple(f for f in flags if f.any()),
        details={key: rs(np.where(nan, np.nan, val)) for key, val in details.items()})


DETAILS = {
    "draw_in": Detail("draw salinity in (regenerated)", "g/kg"),
    "draw_out": Detail("draw salinity out (diluted)", "g/kg"),
    "draw_in_molality": Detail("draw molality in", "mol/kg"),
    "draw_out_molality": Detail("draw molality out", "mol/kg"),
    "draw_flow_ratio": Detail("regenerated draw per kg of feed", "kg/kg"),
    "average_flux": Detail("FO average flux", "L/m2/h"),
    "fo_membrane_area": Detail("FO membrane area", "m2"),
    "reverse_salt_flux": Detail("reverse salt flux", "g/m2/h"),
    "min_osmotic_margin": Detail("smallest osmotic-pressure margin along the exchanger", "bar"),
    "brine_wall_salinity": Detail("brine at the membrane, polarised at the mean flux", "g/kg"),
    "draw_makeup": Detail("draw salt make-up", "kg/m3"),
    "regenerator_recovery": Detail("regenerator recovery", "-"),
    "regenerator_feed_pressure": Detail("regenerator feed pressure", "bar"),
    "regenerator_ro_step": Detail("regenerator RO step electricity", "kWh/m3"),
    "regenerator_membrane_area": Detail("regenerator membrane area", "m2"),
    "regenerator_electricity": Detail("regenerator electricity", "kWh/m3"),
    "regenerator_gor": Detail("thermal regenerator gain output ratio", "-"),
    "regenerator_draw_bpe": Detail("draw boiling-point elevation in the regenerator", "K"),
    "regenerator_heat": Detail("thermal regenerator heat", "kWh_th/m3"),
}


FO = register(Technology(
    "fo", "forward osmosis (counter-current, NaCl draw) with RO or thermal draw regeneration", evaluate, FOParameters,
    "draw within the NaCl model's range; feed within its own model's range",
    "McCutcheon & Elimelech 2006; Tiraferri et al. 2011; McGovern & Lienhard 2014; the RO model", DETAILS,
    concentrate={"wall_salinity": "brine_wall_salinity"}))
