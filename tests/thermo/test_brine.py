import numpy as np
import pytest

from compare.thermo import brine


def test_seawater_density_matches_mitsw_at_the_switch():
    # library: CoolProp INCOMP::MITSW (Sharqawy et al. 2010, stated accuracy 0.1 %) vs TEOS-10 where both hold.
    from CoolProp.CoolProp import PropsSI
    for S, t in [(0.035, 25.0), (0.042, 40.0), (0.01, 10.0)]:
        ref = PropsSI("D", "T", t + 273.15, "P", 1e6, f"INCOMP::MITSW[{S}]")
        assert brine.seawater_density(S, t + 273.15) == pytest.approx(ref, rel=1e-3)


def test_density_beyond_gsw_range_uses_mitsw():
    from CoolProp.CoolProp import PropsSI
    ref = PropsSI("D", "T", 343.15, "P", 1e6, "INCOMP::MITSW[0.1]")
    assert brine.seawater_density(0.1, 343.15) == pytest.approx(ref, rel=1e-5)


def test_nacl_density_against_coolprop_mna():
    # library: CoolProp INCOMP::MNA inside its range.
    from CoolProp.CoolProp import PropsSI
    ref = PropsSI("D", "T", 298.15, "P", 1e6, "INCOMP::MNA[0.1]")
    assert brine.nacl_density(0.1, 298.15) == pytest.approx(ref, rel=1e-5)


@pytest.mark.parametrize("water", ["seawater", "nacl"])
def test_concentration_round_trip(water):
    S = np.array([0.001, 0.035, 0.1])
    c = brine.concentration_from_mass_fraction(S, 300.0, water)
    assert brine.mass_fraction_from_concentration(c, 300.0, water) == pytest.approx(S, rel=1e-10)
