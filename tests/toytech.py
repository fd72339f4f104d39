"""A small technology for pipeline tests, defined here until the real ones land.

Electricity a / efficiency plus the brine's osmotic pressure, heat at a set temperature; recovery and product salinity as parameters. The numbers
are invented for the tests; nothing here is a model of a real process.
"""

import numpy as np

from dataclasses import dataclass
from typing import Any

from compare.spec import efficiency, param
from compare.flags import Flag
from compare.tech.base import Detail, Performance, Technology


@dataclass(frozen=True)
class ToyParameters:
    """Parameters of the [section] in SI; each field's metadata holds its key's spec (unit, default, source)."""

    recovery: Any = param("fraction", "0.4", "test", expect="a recovery in (0, 1)", lo=0.0, hi=1.0, lo_open=True,
                     hi_open=True, role="recovery")
    electricity: Any = param("quantity", "2 kWh/m^3", "test", "J/m^3", "an energy per volume", lo=0.0)
    heat: Any = param("quantity", "0 kWh/m^3", "test", "J/m^3", "an energy per volume", lo=0.0)
    heat_temperature: Any = param("temperature", "70 degC", "test", expect="a temperature", lo=273.15, hi=673.15)
    efficiency: Any = efficiency("0.9", "test")
    capital_cost: Any = param("money", "1000 USD/(m^3/day)", "test", "day/m^3", "a cost per capacity", lo=0.0)
    fixed_om: Any = param("fraction", "0.03", "test", expect="a share per year", lo=0.0, hi=1.0)


def evaluate(feed, p):
    shape = np.broadcast_shapes(np.shape(feed.salinity), np.shape(p.recovery), np.shape(p.electricity))
    r = np.broadcast_to(p.recovery, shape)
    S_p = np.broadcast_to(feed.product_salinity * 0.5, shape)
    S_b = (feed.salinity - r * S_p) / (1 - r)
    # the brine's osmotic pressure bounds the least work from above, so the toy never beats the floor
    from compare.thermo.floor import osmotic_pressure
    pi_b = osmotic_pressure(feed.model.ln_aw(S_b, feed.temperature), feed.temperature)
    e = np.broadcast_to(p.electricity / p.efficiency + 1.05 * pi_b, shape)
    q = np.broadcast_to(p.heat, shape)
    Th = np.where(q > 0, p.heat_temperature, np.nan)
    return Performance(e, q, np.broadcast_to(Th, shape), r, S_p, S_b,
                       flags=(Flag("infeasible", "toy_recovery", "recovery", "toy", "toy recovery above 0.9", r > 0.9),
                              Flag("note", "toy_salinity", "feed_salinity", "toy",
                                   "toy warning: salinity above 50 g/kg",
                                   np.broadcast_to(feed.salinity > 0.05, shape))),
                       details={"toy_figure": np.broadcast_to(10.0e5 + feed.salinity * 1e7, shape)})


TOY = Technology("toy", "a test technology", evaluate, ToyParameters, "tests only", "none (invented for tests)",
                 {"toy_figure": Detail("toy figure", "bar")})
