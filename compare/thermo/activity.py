"""Water activity models: ln a_w and the specific Gibbs energy of a solution, consistently.

Every model gives, for salt mass fraction S [kg/kg] and temperature T [K]:

* ``ln_aw(S, T)``: natural logarithm of the water activity [-];
* ``gibbs(S, T)``: specific Gibbs energy of the solution [J/kg of solution], up to terms linear in S (those cancel in
  every balance of salt and water, so the least work of separation is unaffected).

The two are tied by Gibbs-Duhem: the chemical potential of water per kg of water is ``mu_w = g - S dg/dS`` and equals
``R T ln a_w / M_w``. ``tests/thermo/test_activity.py`` checks this identity for every model, which is what makes the
least work exact for a salty product.

Models (registry ``MODELS``):

``teos10``
    Seawater of Reference Composition, TEOS-10 Gibbs function through gsw. Validated 0-120 g/kg, 0-80 degC at
    atmospheric pressure (Feistel 2008).
``pitzer-nacl``
    NaCl(aq) by the Pitzer equations, temperature-dependent parameters of PHREEQC's pitzer.dat (Appelo 2015),
    Debye-Hueckel slope from the water density (IAPWS-95) and the dielectric constant of Bradley & Pitzer (1979).
    0-6 mol/kg, 0-200 degC.
``ideal``
    Ideal solution on the mole-fraction scale with full dissociation. A simplification, for comparison only.
``vant-hoff``
    Dilute limit linear in mass fraction, Pi = rho_w R T S / M (van 't Hoff). A simplification, for comparison only;
    it makes the closed-form reverse-osmosis limits exact.
``phreeqc``
    Any major-ion composition through PHREEQC with pitzer.dat (optional extra ``ions``), tabulated once per
    composition against salinity and temperature; see :mod:`compare.thermo.phreeqc`.
"""

from __future__ import annotations

from typing import Callable

import numpy as np

from . import water as _water
from .constants import E_CHARGE, EPS_0, K_B, M_NACL, M_SEA_SALT, M_W, N_A, P_ATM, R, T0_C
from .model import ActivityModel, ModelError, Validity, range_flags, simplification_flag  # noqa: F401

WATERS = ("seawater", "nacl", "ions")
DEFAULT_MODEL = {"seawater": "teos10", "nacl": "pitzer-nacl", "ions": "phreeqc"}
#: mean molar mass of solute particles [kg/mol] per kind of water (full dissociation for NaCl)
PARTICLE_MOLAR_MASS = {"seawater": M_SEA_SALT, "nacl": M_NACL / 2}


def xlogy(x, y):
    """x log(y), 0 where x = 0 (as ``scipy.special.xlogy``, whose module costs about 0.2 s to import).

    >>> float(xlogy(0.0, 0.0)), float(xlogy(2.0, np.e))
    (0.0, 2.0)
    """
    x, y = np.asarray(x, dtype=float), np.asarray(y, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(x == 0, 0.0, x * np.log(np.where(x == 0, 1.0, y)))

# --------------------------------------------------------------------------------------------------------- TEOS-10
def _teos10_args(S, T, p):
    SA = np.asarray(S, dtype=float) * 1e3
    t = np.asarray(T, dtype=float) - T0_C
    sp = (np.asarray(p, dtype=float) - P_ATM) / 1e4   # sea pressure [dbar]
    return SA, t, sp


def teos10_ln_aw(S, T, p=P_ATM):
    """ln a_w of seawater from the TEOS-10 Gibbs function.

    Parameters
    ----------
    S : array_like
        Absolute salinity as a mass fraction [kg/kg].
    T : array_like
        Temperature [K].
    p : array_like, optional
        Absolute pressure [Pa], default one standard atmosphere.

    Returns
    -------
    ln_aw : ndarray
        ln a_w = M_w (mu_w(S) - mu_w(0)) / (R T) [-].

    Notes
    -----
    mu_w from ``gsw.chem_potential_water_t_exact`` (returned in J/g, converted here). Validated 0-120 g/kg and
    0-80 degC at atmospheric pressure (Feistel 2008); gsw itself never warns outside that range, the pipeline does.

    References
    ----------
    IOC, SCOR and IAPSO (2010), The international thermodynamic equation of seawater - 2010 (TEOS-10), eq. 3.41.1.
    Feistel, R. (2008), Deep-Sea Research I 55, 1639-1671.

    Examples
    --------
    >>> round(float(np.exp(teos10_ln_aw(0.03516504, 298.15))), 5)
    0.98131
    """
    import gsw

    SA, t, sp = _teos10_args(S, T, p)
    dmu = (gsw.chem_potential_water_t_exact(SA, t, sp) - gsw.chem_potential_water_t_exact(0.0 * SA, t, sp)) * 1e3
    return dmu * M_W / (R * np.asarray(T, dtype=float))


def teos10_gibbs(S, T, p=P_ATM):
    """Specific Gibbs energy of seawater [J/kg], relative to pure water at the same T and p.

    ``gsw.gibbs(0, 0, 0, SA, t, p) - (1 - S) gsw.gibbs(0, 0, 0, 0, t, p)``: the pure-water term is linear in S, so
    subtracting it changes no balance, and it makes ``g - S dg/dS`` the chemical potential of water relative to pure
    water, the same reference as :func:`teos10_ln_aw`.
    """
    import gsw

    SA, t, sp = _teos10_args(S, T, p)
    S = np.asarray(S, dtype=float)
    return gsw.gibbs(0, 0, 0, SA, t, sp) - (1 - S) * gsw.gibbs(0, 0, 0, 0.0 * SA, t, sp)


# ------------------------------------------------------------------------------------------------------ Pitzer NaCl
#: Na+ Cl- parameters of PHREEQC's pitzer.dat (Appelo 2015, Appl. Geochem. 55, 62-71, "ref. 3" in the file):
#: P(T) = a0 + a1 (1/T - 1/Tr) + a2 ln(T/Tr) + a3 (T - Tr) + a4 (T^2 - Tr^2) + a5 (1/T^2 - 1/Tr^2), Tr = 298.15 K.
PITZER_NACL = {
    "beta0": (7.534e-2, 9598.4, 35.48, -5.8731e-2, 1.798e-5, -5e5),
    "beta1": (0.2769, 1.377e4, 46.8, -6.9512e-2, 2e-5, -7.4823e5),
    "cphi": (1.48e-3, -120.5, -0.2081, 0.0, 1.166e-7, 11121.0),
    "alpha": 2.0,
    "b": 1.2,
    "source": "PHREEQC pitzer.dat, Na+ Cl- lines of -B0, -B1, -C0 (Appelo 2015)",
}
_TR = 298.15


def pitzer_temperature_function(a, T):
    """Temperature function of a Pitzer parameter in PHREEQC's form [same unit as a0].

    P(T) = a0 + a1 (1/T - 1/Tr) + a2 ln(T/Tr) + a3 (T - Tr) + a4 (T^2 - Tr^2) + a5 (1/T^2 - 1/Tr^2), Tr = 298.15 K.
    """
    T = np.asarray(T, dtype=float)
    a0, a1, a2, a3, a4, a5 = a
    return (a0 + a1 * (1 / T - 1 / _TR) + a2 * np.log(T / _TR) + a3 * (T - _TR)
            + a4 * (T * T - _TR * _TR) + a5 * (1 / T ** 2 - 1 / _TR ** 2))


def dielectric_constant_bradley_pitzer(T, p=P_ATM):
    """Relative permittivity of water [-], Bradley & Pitzer (1979) correlation.

    Parameters
    ----------
    T : array_like
        Temperature [K].
    p : array_like
        Pressure [Pa].

    Notes
    -----
    eps = D1000 + C ln((B + P)/(B + 1000)), P in bar; D1000 = U1 exp(U2 T + U3 T^2), C = U4 + U5/(U6 + T),
    B = U7 + U8/T + U9 T. Valid 0-350 degC to 5 kbar. The same correlation serves PHREEQC's Pitzer model.

    References
    ----------
    Bradley, D. J. and Pitzer, K. S. (1979), J. Phys. Chem. 83, 1599-1603, Table I.

    Examples
    --------
    >>> round(float(dielectric_constant_bradley_pitzer(298.15)), 2)
    78.38
    """
    T = np.asarray(T, dtype=float)
    pbar = np.asarray(p, dtype=float) / 1e5
    u1, u2, u3, u4, u5, u6, u7, u8, u9 = (3.4279e2, -5.0866e-3, 9.4690e-7, -2.0525, 3.1159e3, -1.8289e2,
                                          -8.0325e3, 4.2142e6, 2.1417)
    d1000 = u1 * np.exp(u2 * T + u3 * T * T)
    c = u4 + u5 / (u6 + T)
    b = u7 + u8 / T + u9 * T
    return d1000 + c * np.log((b + pbar) / (b + 1000.0))


def debye_huckel_aphi(T):
    """Debye-Hueckel slope for the osmotic coefficient A_phi [kg^0.5 mol^-0.5].

    A_phi = (1/3) (2 pi N_A rho_w)^0.5 (e^2 / (4 pi eps0 eps k T))^1.5, rho_w from IAPWS-95 (CoolProp table),
    eps from Bradley & Pitzer (1979).

    Examples
    --------
    >>> round(float(debye_huckel_aphi(298.15)), 4)
    0.3914
    """
    T = np.asarray(T, dtype=float)
    rho = _water.liquid_density(T)
    eps = dielectric_constant_bradley_pitzer(T)
    return (np.sqrt(2 * np.pi * N_A * rho) * (E_CHARGE ** 2 / (4 * np.pi * EPS_0 * eps * K_B * T)) ** 1.5) / 3.0


def _nacl_molality(S):
    S = np.asarray(S, dtype=float)
    return S / ((1 - S) * M_NACL)


def _pitzer_nacl_parts(m, T):
    aphi = debye_huckel_aphi(T)
    b0 = pitzer_temperature_function(PITZER_NACL["beta0"], T)
    b1 = pitzer_temperature_function(PITZER_NACL["beta1"], T)
    cphi = pitzer_temperature_function(PITZER_NACL["cphi"], T)
    return aphi, b0, b1, cphi


def pitzer_nacl_osmotic_coefficient(m, T):
    """Osmotic coefficient of NaCl(aq) by the Pitzer equations [-].

    Parameters
    ----------
    m : array_like
        Molality of NaCl [mol/kg water].
    T : array_like
        Temperature [K].

    Notes
    -----
    phi - 1 = -A_phi sqrt(I)/(1 + b sqrt(I)) + m (beta0 + beta1 exp(-alpha sqrt(I))) + m^2 C_phi, I = m, b = 1.2,
    alpha = 2 (Pitzer 1973). Parameters from PHREEQC's pitzer.dat (Appelo 2015), valid to about 6 mol/kg and
    200 degC as that file states.

    References
    ----------
    Pitzer, K. S. and Mayorga, G. (1973), J. Phys. Chem. 77, 2300-2308.
    Appelo, C. A. J. (2015), Appl. Geochem. 55, 62-71 (pitzer.dat coefficients).

    Examples
    --------
    >>> round(float(pitzer_nacl_osmotic_coefficient(1.0, 298.15)), 4)
    0.9364
    """
    m = np.asarray(m, dtype=float)
    aphi, b0, b1, cphi = _pitzer_nacl_parts(m, T)
    sI = np.sqrt(m)
    return (1 - aphi * sI / (1 + PITZER_NACL["b"] * sI) + m * (b0 + b1 * np.exp(-PITZER_NACL["alpha"] * sI))
            + m * m * cphi)


def pitzer_nacl_ln_aw(S, T):
    """ln a_w of NaCl(aq) [-] at mass fraction S [kg/kg] and T [K]: ln a_w = -2 m M_w phi."""
    m = _nacl_molality(S)
    return -2.0 * m * M_W * pitzer_nacl_osmotic_coefficient(m, T)


def pitzer_nacl_gibbs(S, T):
    """Specific Gibbs energy of mixing of NaCl(aq) [J/kg of solution], up to terms linear in S.

    G per kg water = R T [2 m (ln m - 1) + f(m)], with the Pitzer excess function
    f = -A_phi (4 I / b) ln(1 + b sqrt(I)) + 2 m^2 (beta0 + beta1 g(alpha sqrt(I))) + m^3 C_phi,
    g(x) = 2 (1 - (1 + x) e^-x) / x^2; per kg solution this is multiplied by (1 - S). It reproduces
    :func:`pitzer_nacl_osmotic_coefficient` through Gibbs-Duhem exactly.
    """
    S = np.asarray(S, dtype=float)
    m = _nacl_molality(S)
    aphi, b0, b1, cphi = _pitzer_nacl_parts(m, T)
    b, alpha = PITZER_NACL["b"], PITZER_NACL["alpha"]
    sI = np.sqrt(m)
    x = alpha * sI
    with np.errstate(divide="ignore", invalid="ignore"):
        gx = np.where(x > 1e-6, 2 * (1 - (1 + x) * np.exp(-x)) / np.where(x > 0, x * x, 1.0), 1 - 2 * x / 3)
    f = -aphi * (4 * m / b) * np.log1p(b * sI) + 2 * m * m * (b0 + b1 * gx) + m ** 3 * cphi
    T = np.asarray(T, dtype=float)
    return R * T * (1 - S) * (2 * (xlogy(m, m) - m) + f)


# -------------------------------------------------------------------------------------------------- simplifications
def ideal_ln_aw(S, T, M):
    """ln a_w = ln x_w of an ideal solution, solute particles of molar mass M [kg/mol] fully dissociated [-]."""
    S = np.asarray(S, dtype=float)
    nw = (1 - S) / M_W
    ns = S / M
    return np.log(nw / (nw + ns)) + 0.0 * np.asarray(T, dtype=float)


def ideal_gibbs(S, T, M):
    """Gibbs energy of ideal mixing [J/kg of solution]: R T (n_w ln x_w + n_s ln x_s)."""
    S = np.asarray(S, dtype=float)
    nw = (1 - S) / M_W
    ns = S / M
    n = nw + ns
    return R * np.asarray(T, dtype=float) * (xlogy(nw, nw / n) + xlogy(ns, ns / n))


def vant_hoff_ln_aw(S, T, M):
    """ln a_w = -M_w S / M: the dilute limit, linear in the mass fraction S [-]."""
    return -M_W * np.asarray(S, dtype=float) / M + 0.0 * np.asarray(T, dtype=float)


def vant_hoff_gibbs(S, T, M):
    """Gibbs energy consistent with :func:`vant_hoff_ln_aw` [J/kg]: (R T / M) (S ln S - S)."""
    S = np.asarray(S, dtype=float)
    return R * np.asarray(T, dtype=float) / M * (xlogy(S, S) - S)


# ----------------------------------------------------------------------------------------------------- the registry
#: TEOS-10 is validated to 120 g/kg and 80 degC (Feistel 2008); its Gibbs function is computed, extrapolated and
#: flagged, to 250 g/kg (about where halite starts to precipitate from concentrated seawater, from memory) and
#: 0-130 degC (the hottest brine an MED key may ask for).
_TEOS10 = Validity(0.120, T0_C, T0_C + 80.0, "atmospheric pressure; Feistel 2008", salinity_reach=0.25,
                   temperature_reach=(T0_C, T0_C + 130.0))
#: Pitzer NaCl: validated to 6 mol/kg and 200 degC (pitzer.dat); computed to saturation, about 6.15 mol/kg at
#: 25 degC (from memory: Robinson & Stokes 1959, Electrolyte Solutions, appendix), beyond which no liquid remains
#: of that composition.
_PITZER = Validity(6.0 * M_NACL / (1 + 6.0 * M_NACL), T0_C, T0_C + 200.0, "to 6 mol/kg; PHREEQC pitzer.dat",
                   salinity_reach=6.15 * M_NACL / (1 + 6.15 * M_NACL))
#: the PHREEQC table of an ion composition (:mod:`compare.thermo.phreeqc`): 0-300 g/kg, 0-100 degC
_IONS_TABLE = Validity(0.30, T0_C, T0_C + 100.0, "PHREEQC pitzer.dat table")
WATER_VALIDITY = {"seawater": _TEOS10, "nacl": _PITZER, "ions": _IONS_TABLE}


def model_validity(name: str | None, water: str) -> Validity:
    """The validity (and reach) of model ``name`` (or the water's default) for ``water``, without building it (an
    ion composition's PHREEQC table is costly)."""
    name = name or DEFAULT_MODEL.get(water)
    if name == "teos10":
        return _TEOS10
    if name == "pitzer-nacl":
        return _PITZER
    return WATER_VALIDITY.get(water, _IONS_TABLE)


def _teos10(water: str, **_) -> ActivityModel:
    if water != "seawater":
        raise ModelError(f"model teos10 is for seawater of Reference Composition, not {water}")
    return ActivityModel(
        "teos10", "TEOS-10 Gibbs function of seawater (gsw)", water, False, _TEOS10,
        "IOC, SCOR and IAPSO 2010, TEOS-10; Feistel 2008, Deep-Sea Res. I 55, 1639-1671",
        teos10_ln_aw, teos10_gibbs, M_SEA_SALT)


def _pitzer_nacl(water: str, **_) -> ActivityModel:
    if water != "nacl":
        raise ModelError(f"model pitzer-nacl is for NaCl solutions, not {water}")
    return ActivityModel(
        "pitzer-nacl", "Pitzer equations for NaCl(aq), PHREEQC pitzer.dat parameters", water, False, _PITZER,
        "Pitzer & Mayorga 1973, J. Phys. Chem. 77, 2300; Appelo 2015, Appl. Geochem. 55, 62 (pitzer.dat); "
        "Bradley & Pitzer 1979, J. Phys. Chem. 83, 1599",
        pitzer_nacl_ln_aw, pitzer_nacl_gibbs, M_NACL / 2)


def _particle_mass(water: str, extra: dict) -> float:
    if water in PARTICLE_MOLAR_MASS:
        return PARTICLE_MOLAR_MASS[water]
    if "particle_molar_mass" in extra:
        return extra["particle_molar_mass"]
    if "composition" in extra:
        from .phreeqc import particle_molar_mass
        return particle_molar_mass(extra["composition"])
    raise ModelError(f"water {water!r} needs an ion composition for this model")


def _simplification(name, title, ln_aw, gibbs, reference):
    def factory(water: str, **extra) -> ActivityModel:
        M = _particle_mass(water, extra)
        validity = _IONS_TABLE if water == "ions" else WATER_VALIDITY[water]
        return ActivityModel(
            name, title, water, True,
            Validity(validity.salinity_max, validity.temperature_min, validity.temperature_max,
                     "a simplification for comparison only", salinity_reach=validity.max_salinity,
                     temperature_reach=validity.temperature_reach),
            reference,
            lambda S, T: ln_aw(S, T, M), lambda S, T: gibbs(S, T, M), M)
    return factory


def _phreeqc(water: str, **extra) -> ActivityModel:
    from .phreeqc import phreeqc_model
    if water != "ions" and "composition" not in extra:
        raise ModelError("model phreeqc needs an ion composition (water = \"ions\" with [feed.ions])")
    return phreeqc_model(extra["composition"])


MODELS: dict[str, Callable[..., ActivityModel]] = {
    "teos10": _teos10,
    "pitzer-nacl": _pitzer_nacl,
    "ideal": _simplification("ideal", "ideal solution, mole fraction, full dissociation", ideal_ln_aw, ideal_gibbs,
                             "Raoult's law on the mole-fraction scale (textbook)"),
    "vant-hoff": _simplification("vant-hoff", "van 't Hoff dilute limit, linear in mass fraction", vant_hoff_ln_aw,
                                 vant_hoff_gibbs, "van 't Hoff (1887) dilute-solution limit (textbook)"),
    "phreeqc": _phreeqc,
}

MODEL_SUMMARY = {
    "teos10": ("seawater", _TEOS10.describe(), "IOC/SCOR/IAPSO 2010 (TEOS-10), Feistel 2008, via gsw"),
    "pitzer-nacl": ("nacl", _PITZER.describe(), "Pitzer & Mayorga 1973; pitzer.dat (Appelo 2015); Bradley & Pitzer 1979"),
    "ideal": ("seawater, nacl, ions", "simplification for comparison only", "Raoult's law, mole fraction"),
    "vant-hoff": ("seawater, nacl, ions", "simplification for comparison only", "van 't Hoff dilute limit"),
    "phreeqc": ("ions", "0-300 g/kg, 0-100 degC (table); optional extra 'ions'",
                "PHREEQC with pitzer.dat via phreeqpython (Parkhurst & Appelo 2013; Appelo 2015)"),
}


def get_model(name: str | None, water: str, **extra) -> ActivityModel:
    """The activity model ``name`` (or the default for ``water``) bound to that water."""
    if water not in WATERS:
        raise ModelError(f"expected water to be one of {', '.join(WATERS)}, got {water!r}")
    name = name or DEFAULT_MODEL[water]
    if name not in MODELS:
        raise ModelError(f"expected a model among {', '.join(MODELS)}, got {name!r}")
    return MODELS[name](water, **extra)
