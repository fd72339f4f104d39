"""The thermodynamic floor: osmotic pressure and the least work of separation, from a water activity model.

All functions are pure and broadcast over their array arguments.

Least work, per kg of product, for feed -> product + brine at mass recovery r (Mistry & Lienhard 2013, eq. 17):

    w = g_p + (1/r - 1) g_b - g_f / r

with g the specific Gibbs energy of each stream at the same temperature and pressure. It is evaluated here with g
replaced by its departure from the tangent at the feed composition, g~(S) = g(S) - g_f - g'_f (S - S_f); the terms
that the salt and water balances cancel then cancel exactly, so the form stays well conditioned as r -> 0, where it
tends to g~(S_p) (the least work of an infinitesimal recovery). For a pure product it equals the integral of the
osmotic pressure over recovery, (v_w / r) * integral_0^r Pi(S_b(x)) dx, which the tests check.

References
----------
Mistry, K. H. and Lienhard, J. H. (2013), "Generalized least energy of separation for desalination and other chemical
separation processes", Entropy 15, 2046-2080.
"""

from __future__ import annotations

from typing import NamedTuple

import numpy as np

from . import brine as _brine
from . import water as _water
from .activity import ActivityModel, out_of_range_text, range_flags
from .constants import J_PER_KWH, R


def osmotic_pressure(ln_aw, T):
    """Osmotic pressure Pi = -(R T / V_w) ln a_w [Pa].

    Parameters
    ----------
    ln_aw : array_like
        ln of the water activity [-].
    T : array_like
        Temperature [K]; V_w is the molar volume of pure liquid water at T (IAPWS-95).

    Examples
    --------
    >>> round(float(osmotic_pressure(np.log(0.98131), 298.15)) / 1e6, 3)
    2.589
    """
    T = np.asarray(T, dtype=float)
    return -R * T * np.asarray(ln_aw, dtype=float) / _water.molar_volume(T)


def brine_salinity(S_f, r, S_p=0.0):
    """Brine mass fraction [kg/kg] from the salt balance at mass recovery r: S_b = (S_f - r S_p) / (1 - r)."""
    S_f, r, S_p = (np.asarray(x, dtype=float) for x in (S_f, r, S_p))
    return (S_f - r * S_p) / (1 - r)


def _tangent_departure(model: ActivityModel, S, S_f, g_f, dg_f, T):
    return model.gibbs(S, T) - g_f - dg_f * (S - S_f)


def least_work_per_kg(model: ActivityModel, S_f, T, r, S_p=0.0):
    """Least work of separation [J/kg of product].

    Parameters
    ----------
    model : ActivityModel
        Water activity model of the feed.
    S_f : array_like
        Feed salinity, mass fraction [kg/kg], > 0.
    T : array_like
        Temperature of all streams [K].
    r : array_like
        Mass recovery (product mass / feed mass) [-], 0 <= r < 1; r = 0 gives the limit of infinitesimal recovery.
    S_p : array_like
        Product salinity [kg/kg], 0 <= S_p < S_f.
    """
    S_f, T, r, S_p = np.broadcast_arrays(*(np.asarray(x, dtype=float) for x in (S_f, T, r, S_p)))
    g_f = model.gibbs(S_f, T)
    dg_f = model.dgibbs_dS(S_f, T)
    S_b = brine_salinity(S_f, r, S_p)
    gp = _tangent_departure(model, S_p, S_f, g_f, dg_f, T)
    gb = _tangent_departure(model, S_b, S_f, g_f, dg_f, T)
    with np.errstate(divide="ignore", invalid="ignore"):
        w = gp + np.where(r > 0, (1 / np.where(r > 0, r, 1.0) - 1) * gb, 0.0)
    return w


def least_work(model: ActivityModel, S_f, T, r, S_p=0.0, water: str | None = None):
    """Least work of separation per m^3 of product [J/m^3] (product density from :mod:`compare.thermo.brine`)."""
    w = least_work_per_kg(model, S_f, T, r, S_p)
    rho_p = _brine.density(np.asarray(S_p, dtype=float), T, water or model.water)
    return w * rho_p


class Floor(NamedTuple):
    """The floor of one feed at one or more recoveries. Arrays broadcast to the inputs' shape. SI units."""

    ln_aw: np.ndarray                      # feed [-]
    water_activity: np.ndarray             # feed [-]
    osmotic_pressure: np.ndarray           # feed [Pa]
    brine_salinity: np.ndarray             # [kg/kg]
    brine_osmotic_pressure: np.ndarray     # [Pa]
    least_work: np.ndarray                 # [J/m^3 of product] at the recovery
    least_work_zero_recovery: np.ndarray   # [J/m^3 of product]
    flags: dict                            # name -> bool array: out of the model's validated range


def evaluate_floor(model: ActivityModel, S_f, T, r, S_p=0.0) -> Floor:
    """Water activity, osmotic pressures, brine salinity and least work for feed S_f [kg/kg] at T [K], recovery r."""
    S_f, T, r, S_p = np.broadcast_arrays(*(np.asarray(x, dtype=float) for x in (S_f, T, r, S_p)))
    ln_aw = model.ln_aw(S_f, T)
    S_b = brine_salinity(S_f, r, S_p)
    ln_aw_b = model.ln_aw(S_b, T)
    lw = least_work(model, S_f, T, r, S_p)
    lw0 = least_work(model, S_f, T, np.zeros_like(r), S_p)
    feed = range_flags(model, S_f, T)
    flags = {
        "feed_salinity": feed["salinity"],
        "brine_salinity": range_flags(model, S_b, T)["salinity"],
        "temperature": feed["temperature"],
    }
    return Floor(ln_aw, np.exp(ln_aw), osmotic_pressure(ln_aw, T), S_b, osmotic_pressure(ln_aw_b, T), lw, lw0, flags)


def floor_warnings(model: ActivityModel, floor: Floor, S_f, T) -> list[str]:
    """Plain-text warnings for every flag raised in ``floor`` (empty when all is inside the validated range)."""
    out = []
    v = model.validity
    S_f = np.asarray(S_f, dtype=float)
    T = np.asarray(T, dtype=float)
    if floor.flags["feed_salinity"].any():
        worst = float(np.max(np.where(floor.flags["feed_salinity"], S_f, -np.inf)))
        out.append(out_of_range_text(f"feed salinity {worst * 1e3:.4g} g/kg", model))
    if floor.flags["brine_salinity"].any():
        worst = float(np.max(np.where(floor.flags["brine_salinity"], floor.brine_salinity, -np.inf)))
        out.append(out_of_range_text(f"brine salinity {worst * 1e3:.4g} g/kg", model))
    if floor.flags["temperature"].any():
        bad = np.broadcast_to(T, floor.flags["temperature"].shape)[floor.flags["temperature"]]
        t_c = float(bad[np.argmax(np.abs(bad - (v.temperature_min + v.temperature_max) / 2))]) - 273.15
        out.append(out_of_range_text(f"temperature {t_c:.4g} degC", model))
    if model.simplification:
        out.append(f"model {model.name} is a simplification for comparison only, not a property model for design")
    return out


def kwh_per_m3(j_per_m3):
    """[J/m^3] -> [kWh/m^3]."""
    return np.asarray(j_per_m3, dtype=float) / J_PER_KWH


def floor_record(model: ActivityModel, S_f, T, r, S_p=0.0) -> dict:
    """The floor as a plain record in reporting units (the ``desal floor --format json`` contract).

    Scalars stay scalars; a vector of recoveries gives lists for the recovery-dependent fields.
    """
    f = evaluate_floor(model, S_f, T, r, S_p)
    r_arr = np.asarray(r, dtype=float)

    def val(x, per_recovery=False):
        x = np.asarray(x, dtype=float)
        if r_arr.ndim == 0 or not per_recovery:
            return float(x.ravel()[0]) if x.ndim else float(x)
        return [float(v) for v in np.broadcast_to(x, r_arr.shape)]

    return {
        "water": model.water,
        "model": model.name,
        "salinity_g_per_kg": val(np.asarray(S_f) * 1e3),
        "temperature_c": round(val(np.asarray(T) - 273.15), 9),
        "product_salinity_g_per_kg": val(np.asarray(S_p) * 1e3),
        "recovery": val(r_arr, True),
        "water_activity": val(f.water_activity),
        "osmotic_coefficient": val(model.osmotic_coefficient(S_f, T)),
        "osmotic_pressure_bar": val(f.osmotic_pressure / 1e5),
        "brine_salinity_g_per_kg": val(f.brine_salinity * 1e3, True),
        "brine_osmotic_pressure_bar": val(f.brine_osmotic_pressure / 1e5, True),
        "least_work_kwh_per_m3": val(kwh_per_m3(f.least_work), True),
        "least_work_kwh_per_m3_zero_recovery": val(kwh_per_m3(f.least_work_zero_recovery)),
        "warnings": floor_warnings(model, f, S_f, T),
    }


class OsmoticTable:
    """Osmotic pressure of one model as a fast bilinear table on (sqrt(S), T), for the hot loops of the
    technology models. Built from the model itself; ``tests/thermo/test_floor.py`` bounds its error against it.

    Grid: sqrt(S) uniform to S = 0.35 kg/kg (700 nodes), T uniform over 0-150 degC (151 nodes). The tabulated
    quantity is Pi / S, smooth and finite at S = 0. Outside the grid the nearest edge is used; range flags come from
    the model's validity, not from this table.
    """

    S_MAX = 0.35
    T_MIN, T_MAX = 273.15, 423.15

    def __init__(self, model: ActivityModel, n_u: int = 700, n_t: int = 151):
        self.model = model
        self.u = np.linspace(0.0, np.sqrt(self.S_MAX), n_u)
        self.t = np.linspace(self.T_MIN, self.T_MAX, n_t)
        S = self.u[1:, None] ** 2
        T = self.t[None, :]
        y = osmotic_pressure(model.ln_aw(S, T), T) / S
        y0 = 2 * y[0] - y[1]                  # S -> 0 by linear extrapolation in sqrt(S)
        self.y = np.vstack([y0[None, :], y])
        self.du = self.u[1] - self.u[0]
        self.dt = self.t[1] - self.t[0]

    def __call__(self, S, T):
        """Osmotic pressure [Pa] at S [kg/kg] and T [K] (arrays broadcast)."""
        S, T = np.broadcast_arrays(np.asarray(S, dtype=float), np.asarray(T, dtype=float))
        fu = np.clip(np.nan_to_num(np.sqrt(np.clip(S, 0.0, None)) / self.du), 0.0, self.u.size - 1.000001)
        ft = np.clip((T - self.T_MIN) / self.dt, 0.0, self.t.size - 1.000001)
        i = fu.astype(np.intp)
        j = ft.astype(np.intp)
        a = fu - i
        b = ft - j
        y = self.y
        val = ((1 - a) * (1 - b) * y[i, j] + a * (1 - b) * y[i + 1, j] + (1 - a) * b * y[i, j + 1]
               + a * b * y[i + 1, j + 1])
        return val * S


_TABLES: dict = {}


def osmotic_table(model: ActivityModel) -> OsmoticTable:
    """The cached :class:`OsmoticTable` of ``model``."""
    key = (model.name, model.water, id(model.ln_aw))
    if key not in _TABLES:
        _TABLES[key] = OsmoticTable(model)
    return _TABLES[key]
