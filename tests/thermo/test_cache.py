"""Tables built from CoolProp once and kept in the user's cache folder: read back unchanged, rebuilt when damaged or
when CoolProp's version changes, within their bound of CoolProp itself, and commands with a warm cache never import
CoolProp."""

import importlib.util
import os
import subprocess
import sys

import numpy as np
import pytest

from compare import cache
from compare.thermo import water


def test_arrays_are_built_once_then_read_back(tmp_path, monkeypatch):
    monkeypatch.setenv(cache.ENV, str(tmp_path))
    calls = []

    def build():
        calls.append(1)
        return {"x": np.linspace(0, 1, 5), "y": np.arange(3.0)}

    key = {"lib": "1.0", "n": 5, "format": 1}
    a = cache.arrays("demo", key, build)
    b = cache.arrays("demo", key, build)
    assert len(calls) == 1 and all(np.array_equal(a[k], b[k]) for k in a)
    (path,) = tmp_path.glob("demo-*.npz")                    # one file, no temporary left behind
    path.write_bytes(b"not a table")                          # damaged: rebuilt and replaced
    cache.arrays("demo", key, build)
    assert len(calls) == 2
    cache.arrays("demo", {**key, "lib": "2.0"}, build)        # another library version: another file
    assert len(calls) == 3 and len(list(tmp_path.glob("demo-*.npz"))) == 2
    assert not list(tmp_path.glob(".*"))


def test_cache_off_or_unwritable_still_builds(tmp_path, monkeypatch):
    monkeypatch.setenv(cache.ENV, "off")
    assert cache.arrays("demo", {"n": 1}, lambda: {"x": np.ones(2)})["x"].tolist() == [1.0, 1.0]
    blocked = tmp_path / "file"
    blocked.write_text("")
    monkeypatch.setenv(cache.ENV, str(blocked / "sub"))       # a folder that cannot be made
    assert cache.arrays("demo", {"n": 1}, lambda: {"x": np.ones(2)})["x"].size == 2


def test_cached_steam_tables_within_their_bound_of_coolprop(tmp_path, monkeypatch):
    # library: CoolProp IAPWS-95 called directly, between the grid nodes, from a freshly written cache file
    monkeypatch.setenv(cache.ENV, str(tmp_path))
    water._tables.cache_clear()
    try:
        water._tables()
        water._tables.cache_clear()
        water._tables()                                        # read back from the file
        from CoolProp.CoolProp import PropsSI
        T = np.linspace(274.0, 520.0, 97) + 0.0371
        assert water.liquid_density(T) == pytest.approx(water.coolprop_liquid_density(T), rel=1e-6)
        assert water.saturation_pressure(T) == pytest.approx(PropsSI("P", "T", T, "Q", 0, "Water"), rel=1e-6)
        assert water.latent_heat(T) == pytest.approx(PropsSI("H", "T", T, "Q", 1, "Water")
                                                     - PropsSI("H", "T", T, "Q", 0, "Water"), rel=1e-6)
    finally:
        water._tables.cache_clear()


#: libraries a floor or a comparison (seawater or NaCl, warm cache) has no use for: each costs 0.1-2 s to import
HEAVY = ("CoolProp", "scipy.special", "scipy.interpolate", "scipy.stats", "dask", "pandas", "jinja2", "matplotlib",
         "numba", "phreeqpython", "pyarrow", "xarray")


def test_floor_and_compare_with_a_warm_cache_import_no_heavy_library(tmp_path):
    # the floor imports none of them; a comparison only numba where it is installed, for RO's compiled march
    env = {**os.environ, cache.ENV: str(tmp_path)}
    show = f"print(' '.join(m for m in {HEAVY!r} if m in sys.modules) or 'NONE', file=sys.stderr)\n"
    code = ("import sys\nfrom compare.cli import main\n"
            "assert main(['floor', '--salinity', '35 g/kg', '--temperature', '25 degC', '--recovery', '0.5',"
            " '--format', 'json']) == 0\n" + show +
            "assert main(['compare', 'scenarios/dry-creek.toml', '--no-save', '--format', 'json']) == 0\n"
            "assert main(['compare', 'scenarios/gull-harbour.toml', '--no-save']) == 0\n" + show)
    root = os.path.dirname(os.path.dirname(os.path.dirname(os.path.abspath(__file__))))
    runs = [subprocess.run([sys.executable, "-c", code], env=env, cwd=root, capture_output=True, text=True,
                           timeout=300) for _ in range(2)]
    assert all(r.returncode == 0 for r in runs), runs[0].stderr[-2000:]
    lines = runs[1].stderr.strip().splitlines()
    assert lines[-2] == "NONE"
    assert lines[-1] == ("numba" if importlib.util.find_spec("numba") else "NONE")


def test_stored_spline_coefficients_evaluate_as_scipy_splines():
    # library: scipy's CubicSpline (1-D, uniform and scattered knots, with extrapolation) and RectBivariateSpline
    # (2-D tensor product of not-a-knot cubics, s=0), to rounding
    from scipy.interpolate import CubicSpline, RectBivariateSpline

    from compare.thermo import spline
    rng = np.random.default_rng(3)
    for x in (np.linspace(0.0, 5.0, 30), np.sort(rng.uniform(0.0, 5.0, 30))):
        y = np.exp(-x) * np.sin(3 * x)
        t = rng.uniform(-0.5, 5.5, 500)
        np.testing.assert_allclose(spline.Spline1D(x, spline.coefficients_1d(x, y))(t), CubicSpline(x, y)(t),
                                   rtol=0, atol=1e-14)
    x, y = np.linspace(0.0, 0.2, 24), np.linspace(273.15, 313.15, 41)
    z = 1000 + 700 * x[:, None] + 50 * np.sin(30 * x[:, None]) * np.cos(y[None, :] / 7)
    xi, yi = rng.uniform(0.0, 0.2, 500), rng.uniform(273.15, 313.15, 500)
    np.testing.assert_allclose(spline.Spline2D(x, y, spline.coefficients_2d(x, y, z))(xi, yi),
                               RectBivariateSpline(x, y, z, kx=3, ky=3, s=0).ev(xi, yi), rtol=1e-13)
