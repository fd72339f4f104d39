"""Forward osmosis with draw regeneration: a counter-current FO exchanger with internal and external concentration
polarisation and reverse salt flux, then a regenerator that takes the water back out of the diluted draw, either the
RO model itself (its public :func:`compare.tech.ro.evaluate`) or a thermal screening model. Vectorised over cases.

Exchanger
---------
FO mode (active layer towards the feed, support towards the draw). Local water flux J and reverse salt flux J_s from
the film model on the feed side (mass-transfer coefficient k) and internal polarisation in the support (structural
parameter S over the draw solute's diffusivity D, K = S/D), in the form of Tiraferri et al. (2011, eq. 2) and Yip et
al. (2010) for the same salt on both sides, written on total salinities (mass fractions) so that any activity model
gives the osmotic pressures:

    J_s   = B (c_D e^{-J K} - c_P e^{J/k}) / (1 + (B/J)(e^{J/k} - e^{-J K}))
    c_D,i = c_D e^{-J K} - (J_s/J)(1 - e^{-J K})       draw side of the active layer (inside the support)
    c_F,m = c_F e^{J/k} + (J_s/J)(e^{J/k} - 1)          feed side of the active layer
    J     = A (Pi_D(c_D,i) - Pi_F(c_F,m))

The transport lines are linear in the salinities; only the last is nonlinear, through the activity models (Pi_D:
the draw's, NaCl by Pitzer; Pi_F: the feed's). With linear osmotic pressures it is Tiraferri's closed form exactly.
J_s is the reverse salt flux: the draw's salt (NaCl) passing to the feed, positive. Of the feed's salt c_F only
c_P, its sodium and chloride (the draw's own salt, :func:`feed_passing_share`), passes back with the same
permeability B; the feed's other ions (magnesium, calcium, sulphate ...) are taken as retained, as thin-film
composite membranes retain divalent ions far better than NaCl (from memory), and they only polarise, as in c_F,m.
So the draw stays NaCl, as its model and the regenerator assume. (Counting all of a seawater feed's salt as
NaCl, as the first release did, made the net flux run from the feed into the draw near osmotic balance, since sea
salt has less osmotic pressure per kg than NaCl: sea salt's sodium and chloride, 86 % of it, are less concentrated
at the membrane than the draw's, and pass towards the feed.) J is solved by a safeguarded Newton iteration to a
stated tolerance (:data:`FLUX_RTOL`).

The exchanger is marched from the feed inlet (where the diluted draw leaves, at salinity u) in equal steps of
permeate, the area of a step being its permeate over the log-mean flux (as in the RO model). The march needs no
inner iteration: the draw's inlet salinity follows from u and the salt passed. Design mode (``draw_concentration``
not given, the default): u is solved so that the exchanger's average flux is ``flux`` (:func:`design_draw`); the
draw's inlet salinity is reported. Rating mode (``draw_concentration`` given): u is solved so that the inlet salinity
is the given one. A design whose draw would exceed 6 mol/kg (the Pitzer model's range; NaCl's solubility is about
6.1 mol/kg at 25 degC) is infeasible; in rating mode, a case whose flux falls to zero before the recovery is reached
(the draw is no stronger than the feed or the brine beside it) is infeasible.

Regeneration
------------
``ro``: the diluted draw is the feed of the RO model (parameters from ``[fo.regenerator]``, with its own limits, the
pressure first), at the recovery that returns the draw to ``draw_concentration``; its permeate is the product.
``thermal``: a screening model: the product water is evaporated from the diluted draw in ``gain_output_ratio``
effect-equivalents, heat per kg of product = latent heat at the regenerator's brine temperature / GOR (sensible heat
assumed recovered); the heat is taken at the lowest temperature that drives the effects, the feed temperature plus a
cold-end approach plus GOR times (the draw's boiling-point elevation + ``temperature_difference`` per effect), or at a
given ``heat_temperature``, which must not be below that. Figures of this model are
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
S_CAP = 0.34               # [kg/kg] interface salinities are held inside the osmotic tables
COLD_END_APPROACH = 5.0   # [K] thermal regenerator's last condenser above the feed (practice, no source)

#: RO keys that the FO regenerator takes from ``[fo.regenerator]``, with the defaults it changes
_RO_OWN = {"recovery", "capital_cost", "fixed_om", "pretreatment_cost", "chemicals_cost"}
_RO_FIELDS = set(specs_of(_ro.ROParameters)) - _RO_OWN
_RO_DEFAULTS = {
    "other_electricity": ("0 kWh/m^3", "tool default: the FO plant's own other_electricity covers intake and treatment"),
    "flux": ("10 L/m^2/h", "common practice: RO of feeds above seawater strength runs at the low end of the "
                           "seawater design flux, 10-12 L/m2/h"),
}


RegeneratorParameters = subrecord(
    __name__, "RegeneratorParameters", _ro.ROParameters, drop=_RO_OWN,
    change={**{k: {"default": d, "source": src} for k, (d, src) in _RO_DEFAULTS.items()}},
    extra=[
        ("gain_output_ratio", param("fraction", "8", "from memory: thermal regeneration in a multi-effect evaporator "
                                    "(thermal only)", expect="a gain output ratio such as 8", lo=0.0, lo_open=True)),
        ("heat_temperature", param("temperature", OPTIONAL, "tool default: the lowest that drives the effects with "
                                   "the draw (thermal only)", expect='a temperature such as "75 degC"', lo=T0_C + 20,
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
    draw_concentration: Any = param("nacl_concentration", OPTIONAL, "tool default: design mode, the draw is solved "
                                    "from fo.flux",
                                    expect='a molality such as "1.5 mol/kg" or a mass fraction such as "80 g/kg"',
                                    lo=0.0, hi=0.26, lo_open=True)
    flux: Any = param("quantity", "3 L/m^2/h", "from memory: thin-film composite FO against seawater-strength feeds "
                      "and brines, a few L/m2/h averaged along a counter-current exchanger", "m/s",
                      'an average flux such as "3 L/m^2/h"', lo=0.0, lo_open=True)
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
    segments: Any = param("count", "20", "numerics: permeate steps along the exchanger", expect="a number 4-400",
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


#: local flux solve: |residual| <= FLUX_RTOL x the ideal flux A (Pi_D(c_D) - Pi_F(c_F)) in every case
FLUX_RTOL = 1e-12
FLUX_MAX_ITER = 60


def _interfaces(J, c_D, c_F, B, inv_k, K, c_P=None):
    """Reverse salt flux and the salinities at the two faces of the active layer at water flux J (Tiraferri et al.
    2011; total salinities). ``c_P``: the part of the feed's salt that passes (the draw's own salt), default all."""
    c_P = c_F if c_P is None else c_P
    Jc = np.maximum(J, 1e-30)
    with np.errstate(over="ignore", invalid="ignore"):
        a = np.where(inv_k > 0, np.expm1(np.minimum(Jc * inv_k, 50.0)) / Jc, 0.0)   # (e^{J/k} - 1)/J -> 1/k
        b = np.where(K > 0, -np.expm1(-Jc * K) / Jc, 0.0)                        # (1 - e^{-J K})/J -> K
    e_F, e_D = 1.0 + Jc * a, 1.0 - Jc * b                                          # e^{J/k}, e^{-J K}
    Js = B * (c_D * e_D - c_P * e_F) / (1.0 + B * (a + b))
    return Js, c_D * e_D - Js * b, c_F * e_F + Js * a


def _interfaces_slope(J, c_D, c_F, B, inv_k, K, c_P):
    """:func:`_interfaces` with the derivatives of the two interface salinities in J (for Newton's method)."""
    Jc = np.maximum(J, 1e-30)
    with np.errstate(over="ignore", invalid="ignore"):
        # (no branch for 1/k = 0 or K = 0: expm1(0) = 0 gives a = 0 and b = -0.0, which change no sum)
        a = np.expm1(np.minimum(Jc * inv_k, 50.0)) / Jc
        b = -np.expm1(-Jc * K) / Jc
    e_F, e_D = 1.0 + Jc * a, 1.0 - Jc * b
    da = (e_F * inv_k - a) / Jc                          # d/dJ of (e^{J/k} - 1)/J
    db = (K * e_D - b) / Jc                              # d/dJ of (1 - e^{-J K})/J
    M = 1.0 + B * (a + b)
    cDe, cFe, cPe = c_D * e_D, c_F * e_F, c_P * e_F
    N = cDe - cPe
    Js = B * N / M
    gD, gF, gP = -(cDe * K), cFe * inv_k, cPe * inv_k     # d/dJ of c_D e^{-J K}, c_F e^{J/k} and c_P e^{J/k}
    dJs = B * ((gD - gP) * M - N * B * (da + db)) / (M * M)
    return Js, cDe - Js * b, cFe + Js * a, gD - dJs * b - Js * db, gF + dJs * a + Js * da


def flux_residual(J, c_D, c_F, T, A, B, S_struct, D, k, pi_D, pi_F, c_P=None):
    """Residual [m/s] of the local flux equation, J - A (Pi_D(c_D,i) - Pi_F(c_F,m)), at water flux J [m/s]
    (interfaces from :func:`local_flux`'s transport model). Zero at the solution."""
    K = np.asarray(S_struct, dtype=float) / D
    k = np.asarray(k, dtype=float)
    inv_k = np.where(np.isinf(k), 0.0, 1.0 / np.where(np.isinf(k), 1.0, k))
    _, cDi, cFm = _interfaces(J, c_D, c_F, B, inv_k, K, c_P)
    return J - A * (pi_D(np.clip(cDi, 0.0, S_CAP), T) - pi_F(np.clip(cFm, 0.0, S_CAP), T))


def local_flux(c_D, c_F, T, A, B, S_struct, D, k, pi_D, pi_F, J0=None, rtol=None, max_iter=FLUX_MAX_ITER,
               stats=None, prepared=None, c_P=None):
    """Water flux J [m/s], reverse salt flux J_s [m/s x kg/kg] and the salinities at the two faces of the active
    layer (c_D,i, c_F,m) [kg/kg] of an FO membrane in FO mode, with bulk draw c_D and feed c_F [kg/kg] beside it.
    Vectorised; every argument broadcasts.

    Transport (Tiraferri et al. 2011, eq. 2, and Yip et al. 2010, written on total salinities; of the feed's salt
    only c_P passes, with the draw's permeability)::

        J_s  = B (c_D e^{-J K} - c_P e^{J/k}) / (1 + (B/J)(e^{J/k} - e^{-J K}))      K = S_struct / D
        c_D,i = c_D e^{-J K} - (J_s/J)(1 - e^{-J K}),  c_F,m = c_F e^{J/k} + (J_s/J)(e^{J/k} - 1)
        J = A (Pi_D(c_D,i) - Pi_F(c_F,m))

    With linear osmotic pressures (Pi = k_pi c for both) this is Tiraferri's closed form exactly; with our activity
    models only the last line is nonlinear. J_s > 0 is the reverse salt flux (draw salt to the feed); J_s < 0
    would be a net forward flux of the draw's salt. Against a feed free of that salt (c_P = 0) and with a van 't
    Hoff osmotic pressure, J_s / J = B / (A n R T) in moles, whatever the draw and the support (Phillip, Yip and
    Elimelech 2010, Environ. Sci. Technol. 44, 5170-5176).

    Solved by Newton's method (the residual's analytic slope, with the osmotic tables' own slopes) safeguarded by
    the bracket [0, A (Pi_D(c_D) - Pi_F(c_F))],
    case by case until |J - A (...)| <= ``rtol`` (default :data:`FLUX_RTOL`) x the bracket's upper end; cases leave the loop as they converge.
    ``pi_D(c, T)`` and ``pi_F(c, T)`` give osmotic pressures [Pa]; ``k = inf`` means no external polarisation,
    ``S_struct = 0`` no internal polarisation, ``B = 0`` no salt passage. Where no positive flux solves the
    equation (the draw is not stronger than the feed across the active layer), J = 0. ``stats`` (a dict), if given,
    receives the number of iterations and residual evaluations and the largest scaled residual. ``prepared``
    (the exchanger's march, which calls this at every step) is (K, 1/k) for inputs that are already 1-D float
    arrays of one size, so that nothing is broadcast or recomputed per call. ``c_P`` [kg/kg] is the part of the
    feed's salt c_F that passes the membrane (the draw's own salt; the rest is retained and only polarises); by
    default all of it, the same salt on both sides.
    """
    c_P = c_F if c_P is None else c_P
    if prepared is not None:
        K, inv_k = prepared
        shape = c_D.shape
    else:
        c_D, c_F, c_P, T, A, B, S_struct, D, k = np.broadcast_arrays(*(np.asarray(x, dtype=float) for x in (
            c_D, c_F, c_P, T, A, B, S_struct, D, k)))
        shape = c_D.shape
        c_D, c_F, c_P, T, A, B, K, k = (x.ravel() for x in (c_D, c_F, c_P, T, A, B, S_struct / D, k))
        inv_k = np.where(np.isinf(k), 0.0, 1.0 / np.where(np.isinf(k), 1.0, k))

    both_D, both_F = _ro._value_and_slope(pi_D), _ro._value_and_slope(pi_F)

    def resid_slope(J, i):
        Js, cDi, cFm, dD, dF = _interfaces_slope(J, c_D[i], c_F[i], B[i], inv_k[i], K[i], c_P[i])
        pD, sD = both_D(np.minimum(np.maximum(cDi, 0.0), S_CAP), T[i])
        pF, sF = both_F(np.minimum(np.maximum(cFm, 0.0), S_CAP), T[i])
        sD = np.where((cDi > 0) & (cDi < S_CAP), sD * dD, 0.0)
        sF = np.where((cFm > 0) & (cFm < S_CAP), sF * dF, 0.0)
        return J - A[i] * (pD - pF), 1.0 - A[i] * (sD - sF), Js, cDi, cFm

    rtol = FLUX_RTOL if rtol is None else rtol
    n = c_D.size
    cap = lambda x: np.minimum(np.maximum(x, 0.0), S_CAP)  # noqa: E731 - np.clip's values, without its overhead
    J_hi = A * (pi_D(cap(c_D), T) - pi_F(cap(c_F), T))
    tol = rtol * np.abs(J_hi)
    # a positive root exists where the residual is negative just above J = 0 (the bracket's other end has
    # r(J_hi) >= 0: polarisation and salt passage only lower the driving force); the interfaces as J -> 0 in closed
    # form: (e^{J/k} - 1)/J -> 1/k, (1 - e^{-J K})/J -> K
    Js0 = B * (c_D - c_P) / (1.0 + B * (inv_k + K))
    r0 = -A * (pi_D(cap(c_D - Js0 * K), T) - pi_F(cap(c_F + Js0 * inv_k), T))
    on = (J_hi > 0) & (r0 < 0)
    lo, hi = np.zeros(n), np.where(on, J_hi, 0.0)
    J = 0.5 * hi if J0 is None else np.minimum(np.maximum(
        np.broadcast_to(np.asarray(J0, dtype=float), shape).ravel(), 0.02 * hi), 0.98 * hi)
    J = np.where(on, J, 0.0)
    active = np.flatnonzero(on)
    evaluations, it, worst = 2, 0, 0.0
    Js, cDi, cFm = np.zeros(n), c_D.copy(), c_F.copy()         # at the solution (no flux: the bulk)
    while active.size and it < max_iter:
        it += 1
        sel = slice(None) if active.size == n else active      # every case still iterating: views, not copies
        Ja = J[sel]
        r, d, Js_a, cDi_a, cFm_a = resid_slope(Ja, sel)
        evaluations += 1
        done = (np.abs(r) <= tol[sel]) | (hi[sel] - lo[sel] <= 1e-15 * J_hi[sel])
        la = np.where(r < 0, Ja, lo[sel])
        ha = np.where(r > 0, Ja, hi[sel])
        lo[sel], hi[sel] = la, ha
        with np.errstate(divide="ignore", invalid="ignore"):
            step = Ja - r / np.where(d > 0, d, np.nan)
        # a Newton step inside the (closed) bracket is taken, even onto its end; otherwise bisect
        new = np.where((step >= la) & (step <= ha), step, 0.5 * (la + ha))
        J[sel] = np.where(done, Ja, new)
        # a settled case keeps J, so its interfaces are those just computed (the others' are overwritten later)
        Js[sel], cDi[sel], cFm[sel] = Js_a, cDi_a, cFm_a
        if stats is not None:
            worst = max(worst, float(np.max(np.abs(r[done]) / np.maximum(tol[sel][done], 1e-300), initial=0.0)))
        active = active[~done]
    if stats is not None:
        stats.update(iterations=it, evaluations=evaluations, unconverged=int(active.size), worst=worst * rtol)
    if active.size:                                             # unsettled after every iteration
        Js[active], cDi[active], cFm[active] = _interfaces(J[active], c_D[active], c_F[active], B[active],
                                                           inv_k[active], K[active], c_P[active])
    off = ~on
    rs = lambda x: x.reshape(shape)  # noqa: E731
    return (rs(np.where(off, 0.0, J)), rs(np.where(off, 0.0, Js)), rs(np.where(off, c_D, cDi)),
            rs(np.where(off, c_F, cFm)))


#: share of sea salt's mass that is sodium and chloride, the draw's own salt: (10.78145 + 19.35271) / 35.16504 g/kg
#: in the Reference Composition (Millero, Feistel, Wright and McDougall 2008, Deep-Sea Res. I 55, 50-72, table 4;
#: from memory)
SEAWATER_NACL_SHARE = (10.78145 + 19.35271) / 35.16504


def feed_passing_share(model) -> float:
    """The share of a feed's salt that passes an FO membrane with the NaCl draw's permeability: its sodium and
    chloride (the draw's own salt); the other ions are taken as retained (from memory: thin-film composite
    membranes retain divalent ions far better than NaCl). NaCl: all; seawater: :data:`SEAWATER_NACL_SHARE`; an
    ion composition: its Na and Cl share (with a model that does not carry the composition, seawater's).

    Examples
    --------
    >>> from compare.thermo.activity import get_model
    >>> round(feed_passing_share(get_model("teos10", "seawater")), 4)
    0.8569
    """
    if model.water == "nacl":
        return 1.0
    shares = model.extra.get("shares") if isinstance(model.extra, dict) else None
    if shares:
        return float(shares.get("Na", 0.0) + shares.get("Cl", 0.0))
    return SEAWATER_NACL_SHARE


#: NaCl solubility at 25 degC, 6.14 mol/kg (from memory: CRC Handbook of Chemistry and Physics, about 26.4 % by
#: mass); the Pitzer NaCl model is validated to 6 mol/kg, which is the binding limit of a designed draw
NACL_SOLUBILITY = 6.14
DRAW_LIMIT = min(6.0, NACL_SOLUBILITY) * M_NACL / (1 + min(6.0, NACL_SOLUBILITY) * M_NACL)   # [kg/kg]


def _march(u, a, pi_D, pi_F, steps):
    """March the counter-current exchanger from the feed inlet, where the diluted draw leaves at salinity ``u``
    [kg/kg], to the feed outlet, per kg/s of feed, in equal steps of permeate. ``a`` holds the per-case inputs.

    Returns the area [m^2 per kg/s of feed] (inf where the flux vanishes first), the salt passed from the draw to
    the feed [kg/s per kg/s of feed; negative for a net forward flux], the draw inlet salinity this implies
    [kg/kg] and the smallest bulk osmotic-pressure margin along the way [Pa]."""
    T, A, B, Ss, D, k, rho, r, m = (a[x] for x in ("T", "A", "B", "S_struct", "D", "k", "rho", "r", "m_din"))
    dm = r / steps
    Qf, sf = np.ones(u.size), a["S_f"].copy()
    sp = a["S_f"] * a.get("passing", 1.0)            # the feed's salt that passes (the draw's own), which it gains
    md = m + r
    sd = u * md
    pre = (Ss / D, np.where(np.isinf(k), 0.0, 1.0 / np.where(np.isinf(k), 1.0, k)))   # as local_flux makes them
    J0, Js0, _, _ = local_flux(sd / md, sf / Qf, T, A, B, Ss, D, k, pi_D, pi_F, prepared=pre, c_P=sp / Qf)
    area, passed = np.zeros(u.size), np.zeros(u.size)
    margin = pi_D(sd / md, T) - pi_F(sf / Qf, T)
    J_prev = J0
    with np.errstate(divide="ignore", invalid="ignore"):
        for _ in range(steps):
            # predictor: the states at the end of the step with the salt flux at its start; the flux solve starts
            # from the flux extrapolated along the last step
            ds_pred = Js0 * dm / np.maximum(J0, 1e-30)
            Qf1, md1 = Qf - dm, md - dm
            J1, Js1, _, _ = local_flux((sd + ds_pred) / md1, (sf + ds_pred) / Qf1, T, A, B, Ss, D, k,
                                       pi_D, pi_F, J0=2 * J0 - J_prev, prepared=pre, c_P=(sp + ds_pred) / Qf1)
            J_prev = J0
            dA = dm / rho * _ro._log_mean_inverse(J0, J1)
            ds = rho * 0.5 * (Js0 + Js1) * np.where(np.isfinite(dA), dA, 0.0)
            area, passed = area + dA, passed + ds
            Qf, md, sf, sd, sp = Qf1, md1, sf + ds, sd + ds, sp + ds
            margin = np.minimum(margin, pi_D(sd / md, T) - pi_F(sf / Qf, T))
            J0, Js0 = J1, Js1
    return dict(area=area, passed=passed, S_din=sd / m, margin=margin)


def _equivalent_draw(S_f, T, pi_D, pi_F):
    """NaCl salinity [kg/kg] whose osmotic pressure equals the feed's (bisection on the tables), the weakest draw
    outlet that can still pull water at the feed inlet."""
    target = pi_F(S_f, T)
    lo, hi = np.zeros_like(S_f), np.full_like(S_f, S_CAP)
    for _ in range(48):
        mid = 0.5 * (lo + hi)
        up = pi_D(mid, T) < target
        lo, hi = np.where(up, mid, lo), np.where(up, hi, mid)
    return hi


def _rate(a, S_din, pi_D, pi_F, steps, tol=1e-14, max_iter=16):
    """Rating: the draw outlet salinity u that a given inlet salinity S_din leads to, by a secant iteration on
    S_din(u) - S_din, for all cases at once (a case leaves as it converges)."""
    m, r = a["m_din"], a["r"]
    n = S_din.size
    u0 = S_din * m / (m + r)                     # no salt passage
    out = _march(u0, a, pi_D, pi_F, steps)
    f0 = out["S_din"] - S_din
    u1 = u0 - f0 * m / (m + r)
    u = u0.copy()
    active = np.flatnonzero(np.isfinite(out["area"]) & (np.abs(f0) > tol))
    for _ in range(max_iter):
        if active.size == 0:
            break
        o = _march(u1[active], take(a, active), pi_D, pi_F, steps)
        f1 = o["S_din"] - S_din[active]
        for key in out:
            out[key][active] = o[key]
        u[active] = u1[active]
        with np.errstate(divide="ignore", invalid="ignore"):
            slope = (f1 - f0[active]) / (u1[active] - u0[active])
            nxt = np.where(np.isfinite(slope) & (slope > 0), u1[active] - f1 / slope,
                           u1[active] - f1 * m[active] / (m[active] + r[active]))
        u0[active], f0[active] = u1[active], f1
        u1[active] = np.clip(nxt, 0.0, S_din[active])
        active = active[np.isfinite(o["area"]) & (np.abs(f1) > tol)]
    out["u"] = u
    out["converged"] = np.ones(n, dtype=bool)
    return out


def _search(x):
    """Search function of the design: design area / area needed - 1, increasing in the draw, -1 where the area is
    infinite."""
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(np.isfinite(x) & (x > 0), 1.0 / x, 0.0) - 1.0




def draw_guess(a, area_design, pi_D, pi_F, u_min=None, iterations=5):
    """A first guess of the draw outlet salinity u [kg/kg] of a design, and the slope of the search function in u
    there [1/(kg/kg)], without a march. Salt passage is neglected, so at permeate fraction t from the feed inlet the
    feed is S_f / (1 - r t) and the draw u (m + r) / (m + r (1 - t)); the local flux solves the closed form of
    Tiraferri et al. (2011) for linear osmotic pressures, J + B (e^{J/k} - e^{-J K}) = A (Pi_D(c_D e^{-J K}) -
    Pi_F(c_F e^{J/k})), each osmotic pressure taken on its tangent at the bulk salinity, by Newton's method
    at six Gauss points; the design asks their harmonic mean over the permeate to be the design flux, solved for u
    by Newton's method with each point's dJ/du from just above ``u_min`` (the feed's osmotic equivalent), kept
    inside [u_min, :data:`DRAW_LIMIT`] by bisection (within about 1 % of the march's u on seawater designs)."""
    T, A, B, r, m = (a[x][:, None] for x in ("T", "A", "B", "r", "m_din"))
    K = (a["S_struct"] / a["D"])[:, None]
    inv_k = np.where(np.isinf(a["k"]), 0.0, 1.0 / a["k"])[:, None]
    nodes, weights = _ro.gauss_points()
    t = nodes[None, :]
    Tn = np.broadcast_to(T, (T.shape[0], t.size))
    cF = np.minimum(a["S_f"][:, None] / (1 - r * t), S_CAP)
    pF, sF = _ro._value_and_slope(pi_F)(cF, Tn)
    w = (m + r) / (m + r * (1 - t))
    J_design = (r / (a["rho"][:, None] * area_design[:, None]))[:, 0]
    both = _ro._value_and_slope(pi_D)
    n = J_design.size
    lo = np.zeros(n) if u_min is None else np.asarray(u_min, dtype=float).copy()
    hi = np.full(n, DRAW_LIMIT)
    u = np.minimum(np.maximum(1.05 * lo, 0.01), 0.5 * (lo + hi))
    slope = np.full(n, np.nan)
    J = np.zeros(Tn.shape)
    with np.errstate(over="ignore", invalid="ignore", divide="ignore"):
        for _ in range(iterations):
            cD = np.minimum(u[:, None] * w, S_CAP)
            pD, sD = both(cD, Tn)
            # the residual is negative at J = 0 where the draw is the stronger, positive at the ideal flux, and
            # concave (internal polarisation saturates): Newton from J = 0 climbs to the root from below
            J_lo, J_hi = np.zeros(J.shape), np.maximum(A * (pD - pF), 0.0)
            J = np.zeros(J.shape)
            for _ in range(4):
                xD, xF = np.exp(-J * K), np.exp(np.minimum(J * inv_k, 50.0))
                d = 1 + B * (xF * inv_k + K * xD) + A * (K * sD * cD * xD + sF * cF * xF * inv_k)
                g = J + B * (xF - xD) - A * (pD + sD * cD * (xD - 1) - pF - sF * cF * (xF - 1))
                J_lo, J_hi = np.where(g < 0, J, J_lo), np.where(g > 0, J, J_hi)
                step = J - g / d
                J = np.where((step >= J_lo) & (step <= J_hi), step, 0.5 * (J_lo + J_hi))   # closed: at a root
                # of rounding size the step stays put
            pull = np.all(J > 0, axis=1)
            H = np.where(pull, 1.0 / np.sum(weights / np.where(J > 0, J, 1.0), axis=1), 0.0)
            dH = H * H * np.sum(weights * A * sD * w * xD / d / np.where(J > 0, J * J, 1.0), axis=1)
            f = H / J_design - 1
            lo, hi = np.where(f < 0, u, lo), np.where(f >= 0, u, hi)
            slope = dH / J_design
            step = u - f / slope
            u = np.where(pull & (slope > 0) & (step >= lo) & (step <= hi), step, 0.5 * (lo + hi))
    return u, slope


def design_draw(a, area_design, pi_D, pi_F, steps, tol=1e-10, max_iter=60):
    """Design: the draw outlet salinity u [kg/kg] at which the exchanger needs exactly ``area_design`` [m^2 per
    kg/s of feed], for all cases at once. Returns the march at the solution with ``u`` and ``within``: False where
    even a draw leaving at :data:`DRAW_LIMIT` cannot reach the design flux.

    The search function is f(u) = design area / area needed - 1 (an average flux ratio, increasing in the draw,
    -1 where the flux vanishes before the recovery). From :func:`draw_guess`, a Newton step with the guess's slope,
    then secant steps through the last two trials, inside a bracket that starts between the feed's osmotic
    equivalent and the limit: a step that leaves the bracket or does not halve the last move bisects (or, before
    any trial had enough area, moves halfway to the limit), a trial where the flux vanishes bisects, a case
    settles when |f| <= ``tol`` or the bracket is narrower than 1e-13 of u, and a trial at the limit that still
    lacks area means the design is beyond it. The march returned is the last one on the feasible side."""
    n = a["S_f"].size
    lo = _equivalent_draw(a["S_f"], a["T"], pi_D, pi_F)
    hi = np.full(n, np.inf)
    u0, slope0 = draw_guess(a, area_design, pi_D, pi_F, lo)
    trial = np.clip(u0, lo, DRAW_LIMIT)
    u = np.full(n, DRAW_LIMIT)
    within = np.ones(n, dtype=bool)
    u_old, f_old = np.full(n, np.nan), np.full(n, np.nan)
    span = np.full(n, np.inf)                    # the last move: a Newton step must halve it, else bisect
    out = None
    active = np.arange(n)
    for _ in range(max_iter):
        if active.size == 0:
            break
        ta = trial[active]
        o = _march(ta, take(a, active), pi_D, pi_F, steps)
        f = _search(o["area"] / area_design[active])
        upper = f > 0
        conv = np.abs(f) <= tol
        top = (ta >= DRAW_LIMIT) & ~upper & ~conv
        keep = upper | conv | top
        if out is None:
            out = {key: np.full(n, np.nan) for key in o}
        for key in out:
            out[key][active] = np.where(keep, o[key], out[key][active])
        u[active] = np.where(keep, ta, u[active])
        within[active[top]] = False
        lo_a, hi_a = np.where(upper, lo[active], ta), np.where(upper, ta, hi[active])
        lo[active], hi[active] = lo_a, hi_a
        narrow = np.isfinite(hi_a) & (hi_a - lo_a <= 1e-13 * hi_a)
        with np.errstate(divide="ignore", invalid="ignore"):
            secant = (f - f_old[active]) / (ta - u_old[active])
            use = np.isfinite(secant) & (secant > 0)
            slope = np.where(use, secant, slope0[active])
            step = ta - f / slope
        smooth = f > -1.0
        good = smooth & (slope > 0) & (step > lo_a) & (step < hi_a) & (np.abs(step - ta) < 0.5 * span[active])
        known = np.isfinite(hi_a)
        fallback = np.where(known, 0.5 * (lo_a + hi_a), np.minimum(ta + 0.5 * (DRAW_LIMIT - ta), DRAW_LIMIT))
        fallback = np.where(~known & (ta >= 0.999 * DRAW_LIMIT), DRAW_LIMIT, fallback)
        nxt = np.minimum(np.where(good, step, fallback), DRAW_LIMIT)
        span[active] = np.abs(nxt - ta)
        trial[active] = nxt
        u_old[active], f_old[active] = ta, np.where(smooth, f, np.nan)
        active = active[~(conv | narrow | top)]
    out["u"] = u
    out["within"] = within
    return out


def _flat_mask(mask, size: int) -> np.ndarray:
    """A flag mask over ``size`` flattened cases: a scalar broadcast, or an array of that many values flattened."""
    m = np.asarray(True if mask is None else mask, dtype=bool)
    return np.broadcast_to(m.reshape(-1) if m.size == size else m, (size,))


def evaluate(feed: Feed, p: FOParameters) -> Performance:
    """Forward osmosis with draw regeneration for every case (see the module notes)."""
    shape = case_shape(feed, p)
    rs = lambda x: np.asarray(x, dtype=float).reshape(shape)  # noqa: E731
    size = int(np.prod(shape))
    b = lambda x: np.broadcast_to(np.asarray(x, dtype=float), shape).ravel().copy()  # noqa: E731
    S_f, T, r = b(feed.salinity), b(feed.temperature), b(p.recovery)
    tf = _ro.temperature_factor(T)
    A, B = b(p.water_permeability) * tf, b(p.salt_permeability) * tf
    m_din = b(p.draw_flow_ratio)
    draw_model = get_model("pitzer-nacl", "nacl")
    pi_D, pi_F = osmotic_table(draw_model), osmotic_table(feed.model)
    rho = _brine.density(np.zeros(size), T, feed.water)           # permeate (water) density
    steps = int(np.max(p.segments))
    a = dict(S_f=S_f, T=T, r=r, m_din=m_din, A=A, B=B, S_struct=b(p.structural_parameter),
             D=b(p.draw_diffusivity), k=b(p.mass_transfer_coefficient), rho=rho,
             passing=np.full(size, feed_passing_share(feed.model)))
    if p.draw_concentration is None:
        # design mode: the draw that gives the design average flux over the exchanger
        ex = design_draw(a, r / (rho * b(p.flux)), pi_D, pi_F, steps)
        S_din = ex["S_din"]
        beyond = ~ex["within"] | (S_din > DRAW_LIMIT * (1 + 1e-12))
    else:
        S_din = b(p.draw_concentration)
        ex = _rate(a, S_din, pi_D, pi_F, steps)
        beyond = np.zeros(size, dtype=bool)
    ex["S_dout"], ex["Js"] = ex["u"], ex["passed"]
    ex["S_b"] = (S_f + ex["passed"]) / (1 - r)
    reached = np.isfinite(ex["area"]) & (ex["margin"] > 0) & ~beyond
    S_dout = ex["S_dout"]
    m_dout = m_din + r
    reg = p.regenerator
    flags = [Flag("infeasible", "driving_force", "draw_concentration", "fo",
                  "FO: the driving force vanishes before the recovery is reached (the draw is not stronger than the "
                  "feed or brine beside it)", ~reached & ~beyond),
             Flag("infeasible", "draw_solubility", "draw_concentration", "fo",
                  "FO: the draw needed for the design flux (fo.flux) is beyond 6 mol/kg, the NaCl model's range and "
                  "close to NaCl's solubility (6.1 mol/kg at 25 degC)", beyond)]
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
        # the regenerator's own flags, where the exchanger worked (elsewhere it saw a stand-in feed)
        # (its masks are over FO's flattened cases, or a scalar)
        flags += [f.within("fo", "FO regenerator: ").with_mask(_flat_mask(f.mask, size) & reached)
                  for f in perf.flags]
        d = perf.details
        # the regenerator's electricity in its parts (no subtotal: each figure is shown once, and with FO's own
        # parts below they add up to FO's electricity)
        details.update({
            "regenerator_recovery": r_ro, "regenerator_feed_pressure": d["feed_pressure"].ravel(),
            "regenerator_membrane_area": d["membrane_area"].ravel(),
            "regenerator_high_pressure_pump": d["high_pressure_pump"].ravel(),
            "regenerator_booster": d["booster"].ravel(),
        })
        if np.any(d["other_electricity"] != 0):      # fo.regenerator.other_electricity, 0 unless given
            details["regenerator_other_electricity"] = d["other_electricity"].ravel()
        makeup = np.maximum(ex["Js"] + r * product, 0.0)   # draw salt lost to the brine and the product [kg/s per kg/s]
    else:
        gor = b(reg.gain_output_ratio)
        T_low = T + COLD_END_APPROACH                 # the cold end condenses against the feed
        dT = b(reg.temperature_difference)
        # the lowest heat temperature that drives the effects with the (designed) draw: its BPE taken at that
        # temperature (a fixed point: the BPE changes by hundredths of a K)
        needed = T_low + 40.0
        for _ in range(5):
            needed = T_low + gor * (_brine.boiling_point_elevation(draw_model, S_din, needed) + dT)
        T_reg = needed if reg.heat_temperature is None else b(reg.heat_temperature)
        bpe = _brine.boiling_point_elevation(draw_model, S_din, T_reg)
        flags.append(Flag("infeasible", "regenerator_temperature", "regenerator_heat_temperature", "fo",
                          "FO thermal regenerator: its heat temperature is too low for the effects it must drive "
                          "(gain output ratio x (draw BPE + temperature difference) above the feed)",
                          T_reg < needed * (1 - 1e-12)))
        flags.append(Flag("simplification", "thermal_regenerator", "heat", "fo",
                          "FO thermal regenerator: a screening model; its heat is the latent heat over a gain output "
                          "ratio, taken at the lowest temperature that drives its effects unless "
                          "fo.regenerator.heat_temperature is given, and checked against the site's heat",
                          np.ones(size, dtype=bool)))
        h_fg = _water.latent_heat(0.5 * (T_reg + T_low))
        heat = h_fg / gor * rho                       # J per m^3 of product
        heat_T = T_reg
        electricity = b(p.circulation_electricity) + b(p.other_electricity)
        product = np.zeros(size)
        details.update({"regenerator_gor": gor, "regenerator_draw_bpe": bpe, "regenerator_heat": heat})
        makeup = np.maximum(ex["Js"], 0.0)
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
            "circulation_electricity": b(p.circulation_electricity), "other_electricity": b(p.other_electricity),
        })
    nan = ~reached | beyond
    flags = [f.with_mask(rs(f.mask).astype(bool)) for f in flags]
    return Performance(
        electricity=rs(np.where(nan, np.nan, electricity)), heat=rs(np.where(nan, np.nan, heat)),
        heat_temperature=rs(heat_T), recovery=rs(r), product_salinity=rs(product),
        brine_salinity=rs(ex["S_b"]), flags=tuple(f for f in flags if f.any()),
        details={key: rs(np.where(nan, np.nan, val)) for key, val in details.items()})


DETAILS = {
    "draw_in": Detail("draw salinity in (regenerated; designed from fo.flux unless fo.draw_concentration is given)",
                      "g/kg"),
    "draw_out": Detail("draw salinity out (diluted)", "g/kg"),
    "draw_in_molality": Detail("draw molality in", "mol/kg"),
    "draw_out_molality": Detail("draw molality out", "mol/kg"),
    "draw_flow_ratio": Detail("regenerated draw per kg of feed", "kg/kg"),
    "average_flux": Detail("FO average flux", "L/m2/h"),
    "fo_membrane_area": Detail("FO membrane area", "m2", "max"),
    "reverse_salt_flux": Detail("reverse salt flux (draw salt passing to the feed)", "g/m2/h"),
    "min_osmotic_margin": Detail("smallest osmotic-pressure margin along the exchanger", "bar", "min"),
    "brine_wall_salinity": Detail("brine at the membrane, polarised at the mean flux", "g/kg"),
    "draw_makeup": Detail("draw salt make-up (draw salt lost to the brine and the product)", "kg/m3"),
    "regenerator_recovery": Detail("regenerator recovery", "-"),
    "regenerator_feed_pressure": Detail("regenerator feed pressure", "bar"),
    "regenerator_membrane_area": Detail("regenerator membrane area", "m2", "max"),
    "regenerator_gor": Detail("thermal regenerator gain output ratio", "-"),
    "regenerator_draw_bpe": Detail("draw boiling-point elevation in the regenerator", "K"),
    # FO's electricity in its parts (ELECTRICITY_PARTS), then its heat
    "regenerator_high_pressure_pump": Detail("electricity: regenerator high-pressure pump", "kWh/m3"),
    "regenerator_booster": Detail("electricity: regenerator booster pumps (exchanger circulation and interstage)",
                                  "kWh/m3"),
    "regenerator_other_electricity": Detail("electricity: regenerator other loads (fo.regenerator.other_electricity)",
                                            "kWh/m3"),
    "circulation_electricity": Detail("electricity: feed and draw circulation pumps (a thermal regenerator's pumps "
                                      "included)", "kWh/m3"),
    "other_electricity": Detail("electricity: other plant loads (intake, treatment)", "kWh/m3"),
    "regenerator_heat": Detail("heat: thermal regenerator (latent heat over its gain output ratio)", "kWh_th/m3"),
}


#: the details that are FO's electricity, part by part: present ones add up to ``Performance.electricity``
ELECTRICITY_PARTS = ("regenerator_high_pressure_pump", "regenerator_booster", "regenerator_other_electricity",
                     "circulation_electricity", "other_electricity")


FO = register(Technology(
    "fo", "forward osmosis (counter-current, NaCl draw) with RO or thermal draw regeneration", evaluate, FOParameters,
    "draw within the NaCl model's range; feed within its own model's range",
    "McCutcheon & Elimelech 2006; Tiraferri et al. 2011; McGovern & Lienhard 2014; the RO model", DETAILS,
    concentrate={"wall_salinity": "brine_wall_salinity"}))
