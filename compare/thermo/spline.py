"""Cubic splines evaluated from stored coefficients, so that reading a cached table needs neither the library it
came from nor ``scipy.interpolate`` (whose import alone costs about a third of a second).

The coefficients are computed once with ``scipy.interpolate.CubicSpline`` (not-a-knot ends) when a table is built
and kept with it (:mod:`compare.thermo.cache`); evaluation here is the same piecewise polynomial, so it agrees with
CubicSpline (1-D) to rounding, inside the grid and in extrapolation (the end pieces continue). In 2-D it is the
tensor product of the same splines, equal to ``RectBivariateSpline(kx=3, ky=3, s=0)`` to rounding (checked in the
tests); ``RegularGridInterpolator(method="cubic")``, used before, solves for its coefficients iteratively and
differs from it by about 2e-5 relative.
"""

from __future__ import annotations

import numpy as np


def coefficients_1d(x: np.ndarray, y: np.ndarray) -> np.ndarray:
    """(n-1, 4) coefficients of the not-a-knot cubic spline through (x, y): piece i is
    ``((c0 d + c1) d + c2) d + c3`` with d = t - x[i]."""
    from scipy.interpolate import CubicSpline
    return np.ascontiguousarray(CubicSpline(x, y).c.T)


def coefficients_2d(x: np.ndarray, y: np.ndarray, z: np.ndarray) -> np.ndarray:
    """((nx-1)(ny-1), 16) coefficients of the tensor-product not-a-knot cubic spline through z (nx, ny); cell
    (i, j) is row i (ny-1) + j, holding c[a, b] (a: power 3-a of dx, b: power 3-b of dy) row-major."""
    from scipy.interpolate import CubicSpline
    cy = CubicSpline(y, z, axis=1).c              # (4, ny-1, nx): along y, per x node
    cxy = CubicSpline(x, cy, axis=2).c            # (4, nx-1, 4, ny-1): along x, of each y coefficient
    return np.ascontiguousarray(cxy.transpose(1, 3, 0, 2).reshape(-1, 16))


def _cell(knots: np.ndarray, t: np.ndarray, uniform: bool):
    n = knots.size
    if uniform:
        f = (t - knots[0]) * ((n - 1) / (knots[-1] - knots[0]))
        i = np.fmin(np.fmax(f, 0.0), n - 2).astype(np.intp)
    else:
        i = np.clip(np.searchsorted(knots, t, side="right") - 1, 0, n - 2)
    return i, t - knots[i]


class Spline1D:
    """A cubic spline from its knots and :func:`coefficients_1d`; ``uniform`` knots are located by arithmetic."""

    def __init__(self, knots: np.ndarray, coef: np.ndarray):
        self.knots = np.asarray(knots, dtype=float)
        self.coef = np.ascontiguousarray(coef, dtype=float)
        h = np.diff(self.knots)
        self.uniform = bool(np.allclose(h, h[0], rtol=1e-12, atol=0))

    def __call__(self, t):
        t = np.asarray(t, dtype=float)
        flat = t.reshape(-1)
        i, d = _cell(self.knots, flat, self.uniform)
        c = self.coef[i]
        v = ((c[:, 0] * d + c[:, 1]) * d + c[:, 2]) * d + c[:, 3]
        return v.reshape(t.shape) if t.ndim else v[0]


class Spline2D:
    """A tensor-product cubic spline on a regular grid from :func:`coefficients_2d`."""

    def __init__(self, x: np.ndarray, y: np.ndarray, coef: np.ndarray):
        self.x = np.asarray(x, dtype=float)
        self.y = np.asarray(y, dtype=float)
        self.coef = np.ascontiguousarray(coef, dtype=float)
        self.grid = (self.x, self.y)

    def __call__(self, xi, yi):
        xi, yi = np.broadcast_arrays(np.asarray(xi, dtype=float), np.asarray(yi, dtype=float))
        shape = xi.shape
        i, dx = _cell(self.x, xi.reshape(-1), True)
        j, dy = _cell(self.y, yi.reshape(-1), True)
        c = self.coef[i * (self.y.size - 1) + j].reshape(-1, 4, 4)
        along_y = ((c[:, :, 0] * dy[:, None] + c[:, :, 1]) * dy[:, None] + c[:, :, 2]) * dy[:, None] + c[:, :, 3]
        v = ((along_y[:, 0] * dx + along_y[:, 1]) * dx + along_y[:, 2]) * dx + along_y[:, 3]
        return v.reshape(shape)


__all__ = ["coefficients_1d", "coefficients_2d", "Spline1D", "Spline2D"]
