"""Pure water and steam from CoolProp (IAPWS-95), through tables built on first use.

CoolProp is the source of truth for pure water and steam. Calling it point by point is slow and its import costs about
two seconds, so this module evaluates it once on a fine grid, keeps the values in the user's cache folder
(:mod:`compare.thermo.cache`, keyed by CoolProp's version and the grid; CoolProp is imported only to build them) and
serves every call by cubic-spline interpolation, vectorised. ``tests/thermo/test_water.py`` bounds the
interpolation error against CoolProp itself (below 1e-6 relative).

Grid: 0.01-250 degC along saturation. Liquid density is taken at max(1 atm, saturation pressure), the state of liquid
water at the surface below 100 degC and of saturated liquid above it.

References
----------
Wagner, W. and Pruss, A. (2002), "The IAPWS formulation 1995 for the thermodynamic properties of ordinary water
substance for general and scientific use", J. Phys. Chem. Ref. Data 31, 387-535 (via CoolProp).
Bell, I. H. et al. (2014), "Pure and pseudo-pure fluid thermophysical property evaluation and the open-source
thermophysical property library CoolProp", Ind. Eng. Chem. Res. 53, 2498-2508.
"""

from __future__ import annotations

import functools

import numpy as np

from .constants import P_ATM

T_MIN = 273.16    # [K] triple point
T_MAX = 523.15    # [K] table limit
_N = 2001


def _coolprop():
    from CoolProp.CoolProp import PropsSI  # imported lazily: about 2 s
    return PropsSI


def coolprop_liquid_density(T):
    """Liquid water density [kg/m^3] from CoolProp directly (no table), at max(1 atm, p_sat)."""
    props = _coolprop()
    T = np.atleast_1d(np.asarray(T, dtype=float))
    psat = props("P", "T", T, "Q", 0, "Water")
    p = np.maximum(P_ATM, psat * (1 + 1e-6))
    rho_sat = props("D", "T", T, "Q", 0, "Water")
    rho_p = props("D", "T", T, "P", p, "Water")
    return np.where(psat * (1 + 1e-6) > P_ATM, rho_sat, rho_p)


def _grid_values() -> dict:
    """CoolProp's values on the table's grid (the slow part: CoolProp's import and 16,000 calls)."""
    props = _coolprop()
    T = np.linspace(T_MIN, T_MAX, _N)
    return {"T": T, "psat": props("P", "T", T, "Q", 0, "Water"), "rho_l": coolprop_liquid_density(T),
            "h_l": props("H", "T", T, "Q", 0, "Water"), "h_v": props("H", "T", T, "Q", 1, "Water"),
            "s_l": props("S", "T", T, "Q", 0, "Water"), "s_v": props("S", "T", T, "Q", 1, "Water"),
            "cp_l": props("C", "T", T, "Q", 0, "Water"), "rho_v": props("D", "T", T, "Q", 1, "Water")}


_PROPERTIES = ("ln_psat", "rho_l", "h_l", "h_v", "s_l", "s_v", "cp_l", "rho_v")


def _build() -> dict:
    """The grid values and each property's spline coefficients (and those of T as a function of ln p_sat)."""
    from .spline import coefficients_1d

    v = _grid_values()
    v["ln_psat"] = np.log(v["psat"])
    out = {"T": v["T"]}
    for name in _PROPERTIES:
        out[name] = v[name]
        out[f"{name}_coef"] = coefficients_1d(v["T"], v[name])
    out["T_of_lnp_coef"] = coefficients_1d(v["ln_psat"], v["T"])
    return out


@functools.lru_cache(maxsize=1)
def _tables():
    from ..cache import arrays, library_version
    from .spline import Spline1D

    key = {"coolprop": library_version("CoolProp"), "t_min": T_MIN, "t_max": T_MAX, "n": _N, "format": 2}
    v = arrays("iapws95-saturation", key, _build)
    tab = {name: Spline1D(v["T"], v[f"{name}_coef"]) for name in _PROPERTIES}
    tab["T_of_lnp"] = Spline1D(v["ln_psat"], v["T_of_lnp_coef"])    # inverse of saturation: T of ln p
    return tab


def _eval(name, T):
    T = np.asarray(T, dtype=float)
    return _tables()[name](T)


def in_table(T) -> np.ndarray:
    """True where T [K] lies inside the tabulated range."""
    T = np.asarray(T, dtype=float)
    return (T >= T_MIN) & (T <= T_MAX)


def table_flags(T, what: str) -> list:
    """An ``out_of_range`` flag (code ``steam_table``) where T [K] of ``what`` is outside the water and steam
    tables (the spline is extrapolated there); none inside."""
    from ..flags import Flag

    bad = ~in_table(T)
    if not np.any(bad):
        return []
    return [Flag("out_of_range", "steam_table", f"{what}_temperature", "iapws95",
                 f"{what} temperature outside the water and steam tables ({T_MIN - 273.15:.2f}-"
                 f"{T_MAX - 273.15:.0f} degC); extrapolated", bad)]


def liquid_density(T):
    """Density of liquid water [kg/m^3] at temperature T [K] (IAPWS-95 via CoolProp).

    Examples
    --------
    >>> round(float(liquid_density(298.15)), 3)
    997.048
    """
    return _eval("rho_l", T)


def molar_volume(T):
    """Molar volume of liquid water [m^3/mol] at T [K]."""
    from .constants import M_W
    return M_W / liquid_density(T)


def saturation_pressure(T):
    """Saturation pressure of water [Pa] at T [K].

    Examples
    --------
    >>> round(float(saturation_pressure(373.124)), -1)
    101320.0
    """
    return np.exp(_eval("ln_psat", T))


def saturation_temperature(p):
    """Saturation temperature of water [K] at pressure p [Pa]."""
    return _tables()["T_of_lnp"](np.log(np.asarray(p, dtype=float)))


def latent_heat(T):
    """Latent heat of vaporisation [J/kg] at T [K] (saturated vapour minus saturated liquid enthalpy).

    Examples
    --------
    >>> round(float(latent_heat(313.15)) / 1e3, 2)
    2405.98
    """
    return _eval("h_v", T) - _eval("h_l", T)


def liquid_enthalpy(T):
    """Specific enthalpy of saturated liquid water [J/kg] at T [K] (IAPWS-95 reference state)."""
    return _eval("h_l", T)


def vapour_enthalpy(T):
    """Specific enthalpy of saturated steam [J/kg] at T [K]."""
    return _eval("h_v", T)


def liquid_entropy(T):
    """Specific entropy of saturated liquid water [J/(kg K)] at T [K]."""
    return _eval("s_l", T)


def vapour_entropy(T):
    """Specific entropy of saturated steam [J/(kg K)] at T [K]."""
    return _eval("s_v", T)


def liquid_heat_capacity(T):
    """Isobaric heat capacity of saturated liquid water [J/(kg K)] at T [K]."""
    return _eval("cp_l", T)


def vapour_density(T):
    """Density of saturated steam [kg/m^3] at T [K]."""
    return _eval("rho_v", T)
