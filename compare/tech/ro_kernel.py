"""Reverse osmosis's vessel march case by case, compiled by numba: the same method as the numpy march in
:mod:`compare.tech.ro` (``_march``, ``local_flux``, ``_correct``, ``_step_salt``, ``_log_mean_inverse``), the same
operations in the same order, written for one case at a time so that each case stops iterating on its own.

Imported only when a march runs and numba can be imported (``compare.tech.ro._march_kernel``); without numba the
numpy march serves. The two agree to the solvers' tolerances (``tests/tech/test_ro.py`` holds them together on
cases at ordinary sites, near the restriction and beyond it); they are not bitwise equal, because numpy's
vectorised ``exp`` and ``log`` may round differently from the C library's and because the numpy march stops a
Newton loop when every case has settled. Constants come in as arguments (a compiled function's cache would keep a
module constant changed later).

The osmotic-pressure lookup is :func:`compare.thermo.floor._lookup_slope`'s for one point: the floor's own cell
function (``_cell``) and the same bilinear lines after it, on the table's cells reordered along sqrt(S) (the same
numbers), so it gives the table's values; ``tp`` packs the table's scalars (1/du, 1/dt, T_min, u_max, t_max, cells
along sqrt(S)).
"""

from __future__ import annotations

import math

import numba
import numpy as np

from ..thermo.floor import compiled_cell

_jit = numba.njit(cache=True, nogil=True, error_model="numpy")
# Only the outer loop passes arrays: a call between compiled functions that passes an array counts its references
# atomically (about as long as a residual), so the flux solve reads the table itself and the helpers take scalars
# and tuples.


@_jit
def _mn(a, b):
    """numpy's ``minimum`` of two floats (NaN if either is)."""
    if a != a or b != b:
        return a + b
    return a if a < b else b


@_jit
def _mx(a, b):
    """numpy's ``maximum`` of two floats (NaN if either is)."""
    if a != a or b != b:
        return a + b
    return a if a > b else b


#: the table cell of one point, the floor's own steps (:func:`compare.thermo.floor._cell_steps`), compiled
_cell = compiled_cell(numba)


@_jit
def _flux(dP, S_b, T, A, B, inv_k, J_start, has_start, iterations, coef, tp, s_cap, rtol):
    """Water flux, permeate salinity and dJ/dP at pressure difference dP over bulk S_b (``local_flux``: Newton's
    method on the film model's residual with its analytic slope, the residual written out once)."""
    S_b = _mn(S_b, s_cap)
    cells = int(tp[5])
    i, j, a, b, root, inside = _cell(S_b, T, tp[0], tp[1], tp[2], tp[3], tp[4])
    q = j * cells + i
    ndp0 = dP - ((((coef[q, 3] * a + coef[q, 2]) * b) + coef[q, 1] * a) + coef[q, 0]) * S_b
    J = _mx(A * ndp0, 0.0)
    if has_start:
        J = _mn(J_start, J)
    J = _mx(J, 1e-13)
    half = 0.5 * tp[0]
    k = 0
    while True:
        # the residual, its slope in J and the permeate salinity at J (``local_flux``'s ``resid``)
        e = J * inv_k
        cp = math.exp(_mn(e, 30.0))
        dcp = cp * inv_k if e < 30.0 else 0.0
        JB = J + B + 1e-300
        f = B / JB
        df = -f / JB
        D = 1 - f + f * cp
        S_m = S_b * cp / D
        dS_m = S_b * (dcp * D - cp * (df * (cp - 1) + f * dcp)) / (D * D) if S_m < s_cap else 0.0
        S_m = _mn(S_m, s_cap)
        S_p = f * S_m
        i, j, a, b, root, inside = _cell(S_m, T, tp[0], tp[1], tp[2], tp[3], tp[4])
        q = j * cells + i
        y = ((coef[q, 3] * a + coef[q, 2]) * b + coef[q, 1] * a) + coef[q, 0]
        dpm = ((coef[q, 3] * b + coef[q, 1]) * root * half) * inside + y
        pm = y * S_m
        i, j, a, b, root, inside = _cell(S_p, T, tp[0], tp[1], tp[2], tp[3], tp[4])
        q = j * cells + i
        y = ((coef[q, 3] * a + coef[q, 2]) * b + coef[q, 1] * a) + coef[q, 0]
        dpp = ((coef[q, 3] * b + coef[q, 1]) * root * half) * inside + y
        pp = y * S_p
        r = J - A * (dP - pm + pp)
        d = 1 + A * (dpm * dS_m - dpp * (df * S_m + f * dS_m))
        if k == iterations:                  # out of iterations: the residual at the last J, as the numpy march
            break
        J_new = _mx(J - r / (d if d > 0 else 1.0), 1e-13)
        settled = not (abs(J_new - J) > rtol * J)
        J = J_new
        k += 1
        if settled:
            break
    off = ndp0 <= 0
    if off:
        J = 0.0
        S_p = S_b
    slope = 0.0 if (off or not d > 0) else A / d
    return J, S_p, slope


@_jit
def _lmi(J0, J1):
    """Mean of 1/J over a step, J linear in the permeate (``_log_mean_inverse``)."""
    if J1 <= 0 or J0 <= 0:
        return math.inf
    if abs(J1 / J0 - 1) < 1e-6:
        return 2.0 / (J0 + J1)
    return math.log(J0 / J1) / (J0 - J1)


@_jit
def _salt(dm, J0, J1, Sp0, Sp1, B):
    """Salt passed with the permeate dm of one step (``_step_salt``)."""
    if not B > 0:
        return 0.0
    BSm = 0.5 * (Sp0 * (J0 + B) + Sp1 * (J1 + B))
    return dm * BSm * _lmi(J0 + B, J1 + B)


@_jit
def _stage(x, cum, n_st):
    """The stage holding area fraction x (``searchsorted(cum, x, "right") - 1`` clipped to the stages)."""
    if x != x:
        idx = n_st + 1
    else:
        idx = 0
        while idx < n_st + 1 and cum[idx] <= x:
            idx += 1
    s = idx - 1
    if s < 0:
        s = 0
    if s > n_st - 1:
        s = n_st - 1
    return s


@_jit
def _pressure(x, P_feed, drop, boost, cum, share, n_st):
    """Feed-side pressure [Pa] at area fraction x along the stages (``_march``'s ``pressure``)."""
    if n_st == 1:
        return P_feed - drop * _mn(_mx(x, 0.0), 1.0)
    s = _stage(x, cum, n_st)
    frac = _mn(_mx((x - cum[s]) / share[s], 0.0), 1.0)
    return P_feed - drop * (s + frac) + boost * s


@_jit
def _one(P_feed, S_in, T, A, B, inv_k, r, scale, drop, boost, cum, share, n_st, edges, full, slope, coef, tp,
         consts, i, xs, ms, cs, out):
    """The march of case ``i``; the profile into column i of ``xs``, ``ms``, ``cs`` (with ``full``) and the end
    state into row i of ``out``: x, salt, Q, J, S_p, dx/dP."""
    s_cap, rtol, tol, passes = consts[0], consts[1], consts[2], int(consts[3])
    x_end = cum[n_st]
    steps = edges.size - 1
    Q = 1.0
    salt = S_in
    x = 0.0
    J0, Sp0, dJ0 = _flux(P_feed, salt, T, A, B, inv_k, 0.0, False, 12, coef, tp, s_cap, rtol)
    trend = 0.0
    y = 0.0
    if full:
        xs[0, i] = x
        ms[0, i] = 0.0
        cs[0, i] = 0.0
    for j in range(steps):
        dm = r * (edges[j + 1] - edges[j])
        J_guess = _mx(J0 + trend * dm, 0.5 * J0)
        x_pred = _mn(x + dm * scale * _lmi(J0, J_guess), x_end)
        P1 = _pressure(x_pred, P_feed, drop, boost, cum, share, n_st)
        S_b1 = (salt - dm * Sp0) / (Q - dm)
        J1, Sp1, a1 = _flux(P1, S_b1, T, A, B, inv_k, J_guess, True, 8, coef, tp, s_cap, rtol)
        x1 = x + dm * scale * _lmi(J0, J1)
        # the corrector (``_correct``): the least fixed point of x1 = x + dm scale LM(J0, J1(x1))
        x1c = x1 if math.isfinite(x1) else x_end
        dP = abs(_pressure(_mn(x1c, x_end), P_feed, drop, boost, cum, share, n_st)
                 - _pressure(_mn(x_pred, x_end), P_feed, drop, boost, cum, share, n_st))
        moving = (not (math.isfinite(x1) and A * dP <= tol * J1)) and math.isfinite(x) and J0 > 0
        if moving:
            lo, F_lo = x, math.nan
            hi, F_hi = math.inf, math.nan
            zero = math.inf
            trial = x_pred
            span0 = _mx(x_pred - x, 1e-300)
            for _ in range(passes + 1):
                xm, fm = trial, x1
                fin = math.isfinite(fm)
                span = (fm if fin else xm) - x
                F = fm - xm
                pos = fin and F > 0
                neg = fin and F < 0
                up = pos and xm >= lo
                prev_x, prev_F = lo, F_lo
                secant = xm - F * (xm - prev_x) / (F - prev_F)
                far = pos and math.isfinite(prev_F) and F < prev_F and not (abs(secant - xm) <= tol * span)
                settled = fin and abs(F) <= tol * span and not far
                if up:
                    lo, F_lo = xm, F
                if neg and xm <= hi:
                    hi, F_hi = xm, F
                if not fin:
                    zero = _mn(zero, xm)
                falsi = lo - F_lo * (hi - lo) / (F_hi - F_lo)
                bracketed = math.isfinite(hi) and math.isfinite(F_lo) and math.isfinite(falsi)
                ahead = up and math.isfinite(prev_F) and F < prev_F and math.isfinite(secant) and secant > fm
                if pos:
                    step = secant if ahead else fm
                else:
                    step = 0.5 * (lo + _mn(zero, hi))
                if step >= zero:
                    step = 0.5 * (lo + zero)
                nxt = _mn(_mx(falsi, lo), hi) if bracketed else step
                gone = (not settled) and (not math.isfinite(hi)) and math.isfinite(zero) and (zero - lo <= tol * span0)
                if gone:
                    x1 = math.inf
                if settled or gone:
                    moving = False
                    break
                trial = nxt
                P1 = _pressure(_mn(trial, x_end), P_feed, drop, boost, cum, share, n_st)
                S_b1 = (salt - _salt(dm, J0, J1, Sp0, Sp1, B)) / (Q - dm)
                J1m, Sp1m, a1 = _flux(P1, S_b1, T, A, B, inv_k, _mx(J1, 1e-13), True, 8, coef, tp, s_cap, rtol)
                x1 = x + dm * scale * _lmi(J0, J1m)
                J1, Sp1 = J1m, Sp1m
            if moving and math.isfinite(zero) and not math.isfinite(hi):
                x1 = math.inf
        if full and slope:
            K = dm * scale
            lm = (x1 - x) / K
            if abs(J1 / J0 - 1) < 1e-6:
                L0 = -0.5 * lm * lm
                L1 = L0
            else:
                L0 = (1 / J0 - lm) / (J0 - J1)
                L1 = (lm - 1 / J1) / (J0 - J1)
            d1 = 0.0
            if x1 < x_end:
                d1 = drop / share[_stage(x1, cum, n_st)] if n_st > 1 else drop
            KLa = K * L1 * a1
            y = (y + K * L0 * dJ0 + KLa) / (1 + KLa * d1)
            dJ0 = a1 * (1 - d1 * y)
        trend = _mn((J1 - J0) / dm, 0.0) if math.isfinite(x1) else 0.0
        x = x1
        Q = Q - dm
        salt = salt - _salt(dm, J0, J1, Sp0, Sp1, B)
        J0, Sp0 = J1, Sp1
        if full:
            xs[j + 1, i] = x
            ms[j + 1, i] = r * edges[j + 1]
            cs[j + 1, i] = S_in - salt
    out[i, 0] = x
    out[i, 1] = salt
    out[i, 2] = Q
    out[i, 3] = J0
    out[i, 4] = Sp0
    out[i, 5] = y


@_jit
def march(P_feed, S_in, T, A, B, inv_k, r, scale, drop, boost, cum, share, n_st, edges, full, slope, coef, tp,
          consts, xs, ms, cs, out):
    """Every case's march (see :func:`_one`); the arrays are per case; ``cum`` and ``share`` are tuples padded to
    four and three, ``n_st`` the stages."""
    for i in range(P_feed.size):
        _one(P_feed[i], S_in[i], T[i], A[i], B[i], inv_k[i], r[i], scale[i], drop[i], boost[i], cum, share, n_st,
             edges, full, slope, coef, tp, consts, i, xs, ms, cs, out)


_ALONG_S: dict = {}


def _along_s(table):
    """The table's cell coefficients ordered along sqrt(S) within each temperature column (row j cells_u + i for
    cell i along sqrt(S), j along T; the table keeps i cells_t + j), and the number of cells along sqrt(S): a march
    climbs in salinity at one temperature, so its lookups stay in a few cache lines. The same numbers, so the same
    values."""
    key = id(table)
    if key not in _ALONG_S or _ALONG_S[key][0] is not table:
        cells_u = table.u.size - 1
        coef = np.ascontiguousarray(table._coef.reshape(cells_u, table._cells_t, 4).transpose(1, 0, 2)
                                    .reshape(-1, 4))
        _ALONG_S[key] = (table, coef, cells_u)
    return _ALONG_S[key][1], _ALONG_S[key][2]


def run(P_feed, c, shares, edges, full, slope, consts):
    """The compiled march of the cases of ``c`` at feed pressures ``P_feed``: (x, xs, ms, cs, salt, Q, J0, Sp0, y)
    as the numpy march leaves them (``xs``, ``ms``, ``cs``: steps + 1 x cases, or None without ``full``)."""
    n = P_feed.size
    table = c["pi"]
    coef, cells_u = _along_s(table)
    tp = (float(table._inv_du), float(table._inv_dt), float(table.T_MIN), float(table._fu_max),
          float(table._ft_max), float(cells_u))
    n_st = len(shares)
    cum = tuple(float(v) for v in np.cumsum((0.0,) + tuple(shares))) + (1.0,) * (3 - n_st)
    share = tuple(float(v) for v in shares) + (1.0,) * (3 - n_st)
    rows = edges.size if full else 1
    xs, ms, cs = np.empty((rows, n)), np.empty((rows, n)), np.empty((rows, n))
    out = np.empty((n, 6))
    with np.errstate(divide="ignore", invalid="ignore"):
        inv_k = np.where(np.isinf(c["k"]), 0.0, 1.0 / c["k"])
    f = lambda v: np.ascontiguousarray(v, dtype=float)  # noqa: E731
    march(f(P_feed), f(c["S_in"]), f(c["T"]), f(c["A"]), f(c["B"]), f(inv_k), f(c["r"]),
          f(c["v_p"] / c["area_per_feed"]), f(c["n_elem"] * c["dp_elem"]), f(c["boost"]), cum, share, n_st,
          f(edges), bool(full), bool(slope), coef, tp, tuple(float(v) for v in consts), xs, ms, cs, out)
    if not full:
        xs = ms = cs = None
    return out[:, 0], xs, ms, cs, out[:, 1], out[:, 2], out[:, 3], out[:, 4], out[:, 5]
