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
from ..flags import Flag
from .model import ActivityModel, range_flags, simplification_flag
from .constants import R


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


#: temperature step [K] of the central difference that gives the entropy of separation
_DT = 0.05


def least_work(model: ActivityModel, S_f, T, r, S_p=0.0, water: str | None = None, dead_state=None):
    """Least work of separation per m^3 of product [J/m^3] (product density from :mod:`compare.thermo.brine`).

    All streams are at T. With a dead state T0 other than T (the environment the plant rejects heat to), the least
    work is the change of the streams' flow exergy, dH - T0 dS, rather than their Gibbs energy dG = dH - T dS:

        w(T0) = dG + (T - T0) dS,  dS = -d(dG)/dT,

    the entropy of separation taken from dG by a central difference in T (step 0.05 K). At T0 = T it is dG.
    The tests check it against TEOS-10's enthalpy and entropy (gsw) stream by stream.
    """
    w = least_work_per_kg(model, S_f, T, r, S_p)
    if dead_state is not None:
        T0 = np.asarray(dead_state, dtype=float)
        T_arr = np.asarray(T, dtype=float)
        if np.any(T0 != T_arr):
            hi = least_work_per_kg(model, S_f, T_arr + _DT, r, S_p)
            lo = least_work_per_kg(model, S_f, T_arr - _DT, r, S_p)
            dS = -(hi - lo) / (2 * _DT)
            w = w + (T_arr - T0) * dS
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
    flags: tuple                           # Flag: out of the model's validated range, simplification


def evaluate_floor(model: ActivityModel, S_f, T, r, S_p=0.0, dead_state=None) -> Floor:
    """Water activity, osmotic pressures, brine salinity and least work for feed S_f [kg/kg] at T [K], recovery r
    (least work against the dead state T0 [K] when given, see :func:`least_work`)."""
    S_f, T, r, S_p = np.broadcast_arrays(*(np.asarray(x, dtype=float) for x in (S_f, T, r, S_p)))
    ln_aw = model.ln_aw(S_f, T)
    S_b = brine_salinity(S_f, r, S_p)
    beyond = ~(S_b <= model.validity.max_salinity) | ~(S_f <= model.validity.max_salinity)
    S_b = np.where(beyond, np.nan, S_b)         # beyond the model's reach nothing is computed (never extrapolated)
    ln_aw_b = model.ln_aw(S_b, T)
    lw = np.where(beyond, np.nan, least_work(model, S_f, T, r, S_p, dead_state=dead_state))
    lw0 = least_work(model, S_f, T, np.zeros_like(r), S_p, dead_state=dead_state)
    flags = range_flags(model, S_f, T, "feed")
    flags += [f for f in range_flags(model, np.where(beyond, np.inf, S_b), T, "brine") if f.code == "brine_salinity"]
    if beyond.any():
        flags.append(Flag("infeasible", "beyond_reach", "brine_salinity", model.name,
                          f"brine beyond {model.validity.max_salinity * 1e3:.4g} g/kg, the reach of model "
                          f"{model.name}: not computed", beyond))
    flags += simplification_flag(model)
    return Floor(ln_aw, np.exp(ln_aw), osmotic_pressure(ln_aw, T), S_b, osmotic_pressure(ln_aw_b, T), lw, lw0,
                 tuple(flags))


class OsmoticTable:
    """Osmotic pressure of one model as a fast bilinear table on (sqrt(S), T), for the hot loops of the
    technology models. Built from the model itself; ``tests/thermo/test_floor.py`` bounds its error against it.

    Grid: sqrt(S) uniform to S = 0.35 kg/kg (700 nodes), T uniform over 0-150 degC (151 nodes). The tabulated
    quantity is Pi / S, smooth and finite at S = 0. Outside the grid the nearest edge is used: callers flag
    such points with :meth:`flags` (``out_of_range``, code ``osmotic_table``), besides the model's own validity.
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
        self._prepare()

    def _prepare(self):
        """Per cell, the four coefficients of its bilinear form c0 + a cu + b (ct + a cut) in one row, so that a
        lookup gathers one contiguous row per point."""
        y = self.y
        c0 = y[:-1, :-1]
        cu = y[1:, :-1] - c0
        ct = y[:-1, 1:] - c0
        cut = y[1:, 1:] - y[1:, :-1] - ct
        self._coef = np.ascontiguousarray(np.stack([c0, cu, ct, cut], axis=-1).reshape(-1, 4))
        self._cells_t = self.t.size - 1
        self._inv_du, self._inv_dt = 1.0 / self.du, 1.0 / self.dt
        self._fu_max, self._ft_max = self.u.size - 1.000001, self.t.size - 1.000001

    def __call__(self, S, T):
        """Osmotic pressure [Pa] at S [kg/kg] and T [K] (arrays broadcast).

        Outside the grid the nearest edge is used (NaN or negative S reads the S = 0 column, and the result is S
        times it); :meth:`outside` and :meth:`flags` say where."""
        S = np.asarray(S, dtype=float)
        T = np.asarray(T, dtype=float)
        if S.shape != T.shape:
            S, T = np.broadcast_arrays(S, T)
        if S.ndim == 0:
            return self(S.reshape(1), T.reshape(1))[0]
        kernel = _compiled() if S.size >= _COMPILED_FROM or _KERNEL else None   # once loaded, for every size
        if kernel is None and S.size <= _PYTHON_UPTO:
            kernel = _lookup                    # a few points: the same loop in Python beats numpy's call overheads
        if kernel is not None:
            out = np.empty(S.shape)
            kernel(np.ascontiguousarray(S).reshape(-1), np.ascontiguousarray(T).reshape(-1), self._coef,
                   self._inv_du, self._inv_dt, self.T_MIN, self._fu_max, self._ft_max, self._cells_t,
                   out.reshape(-1))
            return out
        fu = np.sqrt(np.maximum(S, 0.0))
        fu *= self._inv_du
        np.fmin(np.fmax(fu, 0.0, out=fu), self._fu_max, out=fu)        # fmax/fmin send NaN to the bound
        ft = T - self.T_MIN
        ft *= self._inv_dt
        np.fmin(np.fmax(ft, 0.0, out=ft), self._ft_max, out=ft)
        i = fu.astype(np.intp)
        j = ft.astype(np.intp)
        fu -= i                                # a: position inside the cell along sqrt(S)
        ft -= j                                # b: along T
        i *= self._cells_t
        i += j
        c = self._coef[i]
        val = c[..., 3] * fu
        val += c[..., 2]
        val *= ft
        val += c[..., 1] * fu
        val += c[..., 0]
        val *= S
        return val

    def value_and_slope(self, S, T):
        """Osmotic pressure [Pa] and its slope dPi/dS [Pa per kg/kg] of the table's bilinear form at S [kg/kg] and
        T [K] (arrays of one shape, at least 1-D), for Newton iterations on the table. Edges as :meth:`__call__`;
        at and beyond the edge of sqrt(S) the slope is that of Pi = S y (y held). The same operations in the same
        order as the compiled kernel, so both give the same values."""
        S = np.asarray(S, dtype=float)
        T = np.asarray(T, dtype=float)
        if S.shape != T.shape:
            S, T = np.broadcast_arrays(S, T)
        kernel = _KERNEL[1] if (S.size >= _COMPILED_FROM or _KERNEL) and _compiled() is not None else None
        if kernel is None and S.size <= _PYTHON_UPTO:
            kernel = _lookup_slope
        if kernel is not None:
            val, slope = np.empty(S.shape), np.empty(S.shape)
            kernel(np.ascontiguousarray(S).reshape(-1), np.ascontiguousarray(T).reshape(-1), self._coef,
                       self._inv_du, self._inv_dt, self.T_MIN, self._fu_max, self._ft_max, self._cells_t,
                       val.reshape(-1), slope.reshape(-1))
            return val, slope
        root = np.sqrt(np.fmax(S, 0.0))                # fmax sends NaN to 0, as the kernel does
        fu = root * self._inv_du
        inside = fu < self._fu_max
        np.fmin(np.fmax(fu, 0.0, out=fu), self._fu_max, out=fu)
        ft = T - self.T_MIN
        ft *= self._inv_dt
        np.fmin(np.fmax(ft, 0.0, out=ft), self._ft_max, out=ft)
        i = fu.astype(np.intp)
        j = ft.astype(np.intp)
        fu -= i
        ft -= j
        i *= self._cells_t
        i += j
        c = self._coef[i]
        y = c[..., 3] * fu
        y += c[..., 2]
        y *= ft
        y += c[..., 1] * fu
        y += c[..., 0]
        dy = c[..., 3] * ft
        dy += c[..., 1]
        dy *= root
        dy *= 0.5 * self._inv_du
        dy *= inside
        dy += y
        y *= S
        return y, dy

    def outside(self, S, T) -> np.ndarray:
        """True where (S [kg/kg], T [K]) lies outside the table (the nearest edge is used there)."""
        S, T = np.asarray(S, dtype=float), np.asarray(T, dtype=float)
        return (S > self.S_MAX) | (T < self.T_MIN - 1e-9) | (T > self.T_MAX + 1e-9) | ~np.isfinite(S)

    def flags(self, S, T, what: str, model: str) -> list[Flag]:
        """An ``out_of_range`` flag where (S, T) of ``what`` lies outside the table (none when all is inside)."""
        bad = self.outside(S, T)
        if not np.any(bad):
            return []
        return [Flag("out_of_range", "osmotic_table", f"{what}_salinity", model,
                     f"{what} outside the osmotic-pressure table (0-{self.S_MAX * 1e3:.0f} g/kg, "
                     f"{self.T_MIN - 273.15:.0f}-{self.T_MAX - 273.15:.0f} degC); the edge value is used", bad)]


#: arrays at least this large load the compiled lookup when numba is installed; once loaded it serves every size
#: (smaller arrays alone never import numba, so that a single comparison does not pay its import)
_COMPILED_FROM = 4096
#: arrays of at most this many points (without the compiled lookup) take the same loop in plain Python: a numpy
#: lookup costs about 20 us whatever its size, the loop about 2 us a point; the same operations in the same order
#: give the same values (tested)
_PYTHON_UPTO = 8


def _cell_steps(s, t, inv_du, inv_dt, t_min, fu_max, ft_max):  # pragma: no cover - compiled
    """The table cell of one point, salinity s [kg/kg] and T [K], by the steps of :meth:`OsmoticTable.__call__`
    (edges as there): i and j, the cell along sqrt(S) and along T; a and b, the position inside it; sqrt(s) (0 where
    s is not positive, NaN included) and 1.0 where sqrt(s) lies inside the grid (0.0 at and beyond its edge). Shared
    by the lookups below and RO's compiled march (:mod:`compare.tech.ro_kernel`)."""
    root = np.sqrt(s) if s > 0.0 else 0.0
    u = root * inv_du
    inside = 1.0 if u < fu_max else 0.0
    if u > fu_max:
        u = fu_max
    t = (t - t_min) * inv_dt
    if not t >= 0.0:                           # also NaN
        t = 0.0
    if t > ft_max:
        t = ft_max
    i = int(u)
    j = int(t)
    return i, j, u - i, t - j, root, inside


#: the cell function the lookups call: :func:`_cell_steps`, or its compiled form once :func:`_compiled` has run
_cell = _cell_steps
_CELL: list = []


def compiled_cell(numba):
    """:func:`_cell_steps` compiled by ``numba`` (once per process, ``cache=True``)."""
    if not _CELL:
        _CELL.append(numba.njit(cache=True, nogil=True)(_cell_steps))
    return _CELL[0]


def _lookup(S, T, coef, inv_du, inv_dt, t_min, fu_max, ft_max, cells_t, out):  # pragma: no cover - compiled
    """The table lookup of :meth:`OsmoticTable.__call__` point by point, the same operations in the same order (so
    the compiled and the numpy paths agree exactly; tested)."""
    for k in range(S.size):
        s = S[k]
        i, j, a, b, _, _ = _cell(s, T[k], inv_du, inv_dt, t_min, fu_max, ft_max)
        r = i * cells_t + j
        out[k] = ((((coef[r, 3] * a + coef[r, 2]) * b) + coef[r, 1] * a) + coef[r, 0]) * s
    return out


def _lookup_slope(S, T, coef, inv_du, inv_dt, t_min, fu_max, ft_max, cells_t, out, slope):  # pragma: no cover
    """:meth:`OsmoticTable.value_and_slope` point by point, the same operations in the same order (compiled)."""
    half = 0.5 * inv_du
    for k in range(S.size):
        s = S[k]
        i, j, a, b, root, inside = _cell(s, T[k], inv_du, inv_dt, t_min, fu_max, ft_max)
        r = i * cells_t + j
        y = ((coef[r, 3] * a + coef[r, 2]) * b + coef[r, 1] * a) + coef[r, 0]
        slope[k] = ((coef[r, 3] * b + coef[r, 1]) * root * half) * inside + y
        out[k] = y * s
    return out


_KERNEL: list = []


def _compiled():
    """The lookup compiled by numba (``cache=True``: compiled once per machine), or None without numba; with it,
    ``_KERNEL[1]`` is the lookup with slope."""
    if not _KERNEL:
        try:
            import numba
            global _cell
            _cell = compiled_cell(numba)           # the kernels call it compiled (read when they compile)
            jit = numba.njit(cache=True, nogil=True)
            _KERNEL.extend([jit(_lookup), jit(_lookup_slope)])
        except Exception:                      # noqa: BLE001 - numba absent or unusable: the numpy path serves
            _KERNEL.append(None)
    return _KERNEL[0]


_TABLES: dict = {}


def osmotic_table(model: ActivityModel) -> OsmoticTable:
    """The cached :class:`OsmoticTable` of ``model``."""
    key = (model.name, model.water, id(model.ln_aw))
    if key not in _TABLES:
        _TABLES[key] = OsmoticTable(model)
    return _TABLES[key]
