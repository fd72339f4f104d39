"""Brine properties besides water activity: density, the mg/L <-> g/kg conversion, boiling-point elevation and
enthalpy.

Density of seawater: TEOS-10 (``gsw.rho_t_exact``) inside its density range (to 42 g/kg and 40 degC); outside it,
CoolProp's incompressible ``INCOMP::MITSW`` (Sharqawy, Lienhard & Zubair 2010, to 120 g/kg and 120 degC), through a
table built on first use. Density of NaCl(aq): CoolProp ``INCOMP::MNA`` (to 23 % and 40 degC); above 40 degC its
40-degC value is scaled by the thermal expansion of pure water, a screening approximation within a few tenths of a per
cent (from memory). A composition of major ions uses the seawater density at the same salinity.

References
----------
Sharqawy, M. H., Lienhard, J. H. and Zubair, S. M. (2010), Desalination and Water Treatment 16, 354-380.
IOC, SCOR and IAPSO (2010), TEOS-10.
"""

from __future__ import annotations

import functools

import numpy as np

from . import water as _water
from .constants import T0_C

SEAWATER_GSW_LIMITS = (0.042, T0_C + 40.0)
MITSW_LIMITS = (0.12, T0_C + 120.0)
MNA_LIMITS = (0.23, T0_C + 40.0)


def _incomp_values(fluid: str, S: np.ndarray, T: np.ndarray) -> dict:
    from CoolProp.CoolProp import PropsSI

    rho = np.empty((S.size, T.size))
    for i, s in enumerate(S):
        # incompressible model: pressure only keeps CoolProp from calling it vapour above 100 degC
        rho[i] = PropsSI("D", "T", T, "P", 1.0e6, f"INCOMP::{fluid}[{s:.6f}]")
    if not np.all(np.isfinite(rho)):
        raise RuntimeError(f"CoolProp INCOMP::{fluid} returned non-finite densities while building the table")
    return {"rho": rho}


@functools.lru_cache(maxsize=4)
def _incomp_table(fluid: str, s_max: float, t_max: float):
    """A cubic table of CoolProp's incompressible density (a tensor-product spline, as RegularGridInterpolator's
    cubic method), its values and coefficients kept in the user's cache folder."""
    from ..cache import arrays, library_version
    from .spline import Spline2D, coefficients_2d

    S = np.linspace(0.0, s_max * 0.9999, 24)     # CoolProp answers inf exactly at its limits
    T = np.linspace(T0_C + 0.01 if fluid == "MITSW" else T0_C, t_max - 0.01, 41)
    key = {"coolprop": library_version("CoolProp"), "fluid": fluid, "s": [0.0, s_max * 0.9999, S.size],
           "t": [float(T[0]), float(T[-1]), T.size], "format": 2}

    def build():
        rho = _incomp_values(fluid, S, T)["rho"]
        return {"rho": rho, "coef": coefficients_2d(S, T, rho)}
    return Spline2D(S, T, arrays(f"incomp-{fluid.lower()}-density", key, build)["coef"])


def _incomp(fluid, limits, S, T):
    S, T = np.broadcast_arrays(np.asarray(S, dtype=float), np.asarray(T, dtype=float))
    tab = _incomp_table(fluid, *limits)
    Tc = np.clip(T, tab.grid[1][0], tab.grid[1][-1])
    return tab(S, Tc)


def seawater_density(S, T):
    """Density of seawater [kg/m^3] at mass fraction S [kg/kg] and T [K], atmospheric pressure.

    Examples
    --------
    >>> round(float(seawater_density(0.035, 298.15)), 2)   # regression: gsw.rho_t_exact(35, 25, 0)
    1023.22
    """
    import gsw

    S, T = np.broadcast_arrays(np.asarray(S, dtype=float), np.asarray(T, dtype=float))
    inside = (S <= SEAWATER_GSW_LIMITS[0]) & (T <= SEAWATER_GSW_LIMITS[1])
    out = np.empty(S.shape)
    if inside.any():
        out[inside] = gsw.rho_t_exact(S[inside] * 1e3, T[inside] - T0_C, 0.0)
    if (~inside).any():
        out[~inside] = _incomp("MITSW", MITSW_LIMITS, S[~inside], T[~inside])
    return out


def nacl_density(S, T):
    """Density of NaCl(aq) [kg/m^3] at mass fraction S [kg/kg] and T [K] (CoolProp INCOMP::MNA, see module notes)."""
    S, T = np.broadcast_arrays(np.asarray(S, dtype=float), np.asarray(T, dtype=float))
    t_ref = MNA_LIMITS[1]
    Tc = np.minimum(T, t_ref)
    rho = _incomp("MNA", MNA_LIMITS, S, Tc)
    scale = np.where(T > t_ref, _water.liquid_density(T) / _water.liquid_density(t_ref), 1.0)
    return rho * scale


def density(S, T, water: str):
    """Solution density [kg/m^3] for the kind of water (``seawater``, ``nacl``, ``ions``)."""
    return nacl_density(S, T) if water == "nacl" else seawater_density(S, T)


def density_out_of_range(S, T, water: str):
    """True where the density correlation is extrapolated (or its table's edge is used)."""
    S, T = np.asarray(S, dtype=float), np.asarray(T, dtype=float)
    limits = MNA_LIMITS if water == "nacl" else MITSW_LIMITS
    t_max = _water.T_MAX if water == "nacl" else limits[1]
    return (S > limits[0]) | (T > t_max) | (T < T0_C)


def density_flags(S, T, water: str, what: str) -> list:
    """An ``out_of_range`` flag (code ``density``) where the density of ``what`` is extrapolated; none inside."""
    from ..flags import Flag

    bad = density_out_of_range(S, T, water)
    if not np.any(bad):
        return []
    name = "INCOMP::MNA" if water == "nacl" else "INCOMP::MITSW"
    limits = MNA_LIMITS if water == "nacl" else MITSW_LIMITS
    return [Flag("out_of_range", "density", f"{what}_density", name,
                 f"{what} density outside its correlation's range ({name}, to {limits[0] * 1e3:.0f} g/kg and "
                 f"{limits[1] - T0_C:.0f} degC); the nearest tabulated value or an extrapolation is used", bad)]


def mass_fraction_from_concentration(c, T, water: str):
    """Mass fraction S [kg/kg] of a solution holding c [kg/m^3] of salt at T [K]: solves S = c / rho(S, T).

    Examples
    --------
    >>> round(float(mass_fraction_from_concentration(36.0, 298.15, "seawater")) * 1e3, 3)   # regression
    35.178
    """
    c = np.asarray(c, dtype=float)
    S = c / 1000.0
    for _ in range(30):
        S_new = c / density(S, T, water)
        if np.all(np.abs(S_new - S) <= 1e-13):
            S = S_new
            break
        S = S_new
    return S


def concentration_from_mass_fraction(S, T, water: str):
    """Mass concentration [kg/m^3] of salt from the mass fraction S [kg/kg] at T [K]."""
    return np.asarray(S, dtype=float) * density(S, T, water)


def boiling_point_elevation(model, S, T):
    """Boiling-point elevation [K] of a brine of salinity S [kg/kg] at temperature T [K], from its water activity.

    The vapour over the brine is at p = a_w(S, T) p_sat(T) (ideal vapour, Poynting term neglected), which boils pure
    water at T_sat(p); the elevation is T - T_sat(p). With TEOS-10 a_w and the IAPWS-95 saturation line it agrees
    with Sharqawy, Lienhard & Zubair (2010) eq. 36 within 0.02 K at 40-80 degC, 35-100 g/kg (tests).
    """
    S, T = np.broadcast_arrays(np.asarray(S, dtype=float), np.asarray(T, dtype=float))
    p = np.exp(model.ln_aw(S, T)) * _water.saturation_pressure(T)
    return T - _water.saturation_temperature(p)


def enthalpy(S, T):
    """Specific enthalpy of seawater or brine [J/kg] at salinity S [kg/kg] and T [K], at atmospheric pressure.

    TEOS-10 (``gsw.enthalpy_t_exact``; Gibbs function valid to 120 g/kg and 80 degC), whose pure-water reference
    is that of IAPWS-95 (internal energy and entropy of liquid water zero at the triple point), the reference of the
    CoolProp steam properties in :mod:`compare.thermo.water`. Other waters take the seawater value at the same mass
    fraction (a screening approximation; callers flag it).
    """
    import gsw
    S, T = np.broadcast_arrays(np.asarray(S, dtype=float), np.asarray(T, dtype=float))
    return gsw.enthalpy_t_exact(S * 1e3, T - T0_C, 0.0)
