"""Pure water tables against CoolProp itself and the independent iapws package."""

import numpy as np
import pytest

from compare.thermo import water


def test_tables_against_coolprop_itself():
    # library: CoolProp (IAPWS-95), off-grid points; the table's interpolation error is bounded at 1e-6 relative.
    from CoolProp.CoolProp import PropsSI
    rng = np.random.default_rng(7)
    T = np.sort(rng.uniform(274.0, 520.0, 50))
    assert water.liquid_density(T) == pytest.approx(water.coolprop_liquid_density(T), rel=1e-6)
    assert water.saturation_pressure(T) == pytest.approx(PropsSI("P", "T", T, "Q", 0, "Water"), rel=1e-6)
    hfg = PropsSI("H", "T", T, "Q", 1, "Water") - PropsSI("H", "T", T, "Q", 0, "Water")
    assert water.latent_heat(T) == pytest.approx(hfg, rel=1e-6)
    assert water.liquid_heat_capacity(T) == pytest.approx(PropsSI("C", "T", T, "Q", 0, "Water"), rel=1e-6)
    p = PropsSI("P", "T", T, "Q", 0, "Water")
    assert water.saturation_temperature(p) == pytest.approx(T, abs=1e-5)


@pytest.mark.parametrize("t_c,h_fg", [(40.0, 2405.98), (70.0, 2333.03), (100.0, 2256.40)])
def test_latent_heat_against_iapws_package(t_c, h_fg):
    # library: the iapws package (IAPWS-95, independent of CoolProp) within 0.05 %; the figures (kJ/kg) computed with it (library).
    from iapws import IAPWS95
    T = t_c + 273.15
    ref = IAPWS95(T=T, x=1).h - IAPWS95(T=T, x=0).h      # kJ/kg
    assert water.latent_heat(T) / 1e3 == pytest.approx(ref, rel=5e-4)
    assert water.latent_heat(T) / 1e3 == pytest.approx(h_fg, abs=0.02)
