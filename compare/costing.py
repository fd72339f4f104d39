"""Cost that follows the design: capital built up from the equipment a technology's design describes, and operation
and maintenance from their causes. Pure and vectorised; SI in and out (flows [m^3/s], powers [W], areas [m^2], money
in the scenario's currency), one value per case (N,).

Capital
-------
Each item is a size the design gives (membrane area, pump power, brine flow ...) times a unit price (a scenario key).
Where the trade prices an item with an economy of scale, the unit price holds at a reference size and the cost of
size ``x`` is ``price x_ref (x / x_ref)^n`` (:func:`scaled`), ``n`` the section's scale exponent (the "six-tenths
rule" family: Peters, Timmerhaus & West 2003, Plant Design and Economics for Chemical Engineers, ch. 6; exponents from
memory). References: :data:`REFERENCE_FLOW` for works sized by a flow, :data:`REFERENCE_POWER` for pumps,
:data:`REFERENCE_STEAM` for ejectors. Membranes, pressure vessels, energy-recovery devices and heat-transfer surface
are bought by the unit or the square metre: linear. The direct items add up to the direct capital; indirect costs
(engineering, permits, contingency, owner's costs) are a share of it. A technology's ``capital_cost`` (money per
m^3/day), when given, replaces the whole build-up by that one figure.

Operation and maintenance (per year)
------------------------------------
Maintenance and insurance, the technology's ``fixed_om`` share of the capital; staff, ``plant.labour_cost`` per m^3
at the reference capacity, scaled by (capacity / reference)^(labour exponent - 1) per m^3; membrane replacement,
area x price / life; chemicals per m^3 of feed (FO adds its draw make-up); brine disposal per m^3 of brine at the
price of the site's method (``brine.disposal``). Electricity and heat are priced by the accounting.

The works are priced on the plant's own flows (:func:`compare.accounting.plant_flows`, the figures the records show as
water taken in and brine sent back): the intake on all the water drawn (MED's cooling water, of which its feed is a
part, included: the same screens, pipelines and pumps carry it, at the one price), pretreatment and chemicals on
the process feed, brine works and disposal on the brine. Equipment is sized on the design's largest period (pumps
for the warmest or coldest month, whichever needs more); consumables follow the production-weighted year.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any, Callable

import numpy as np

from .spec import Spec

DAY = 86400.0
REFERENCE_FLOW = 100000.0 / DAY      # [m^3/s] 100,000 m^3/day: the size at which flow-priced works are priced
REFERENCE_POWER = 1.0e6              # [W] 1 MW: the size at which pumps are priced
REFERENCE_STEAM = 1.0                # [kg/s] the size at which ejectors are priced
WATER_DENSITY = 1000.0               # [kg/m^3] product mass to volume for sizing (0.3 % on cost; no more needed)
DISPOSAL_METHODS = ("sea_outfall", "evaporation_pond", "deep_well")
#: disposal works built in repeated units (ponds by area, wells by number) scale linearly; an outfall has economies
DISPOSAL_LINEAR = {"sea_outfall": False, "evaporation_pond": True, "deep_well": True}


def scaled(unit_price, size, reference, exponent):
    """Cost of an item of ``size`` whose ``unit_price`` (money per unit of size) holds at ``reference``:
    ``unit_price x reference x (size / reference)^exponent``; zero for size zero.

    Parameters
    ----------
    unit_price : money per unit of size at the reference size [currency/unit]
    size, reference : the item's size and the reference size [unit]
    exponent : scale exponent [-] (1: no economy of scale)

    Examples
    --------
    >>> round(float(scaled(500.0, 2.0e6, 1.0e6, 0.7) / scaled(500.0, 1.0e6, 1.0e6, 0.7)), 4)  # identity: 2^0.7
    1.6245
    """
    size = np.maximum(np.asarray(size, dtype=float), 0.0)
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.asarray(unit_price, dtype=float) * reference * (size / reference) ** np.asarray(exponent, dtype=float)


# ------------------------------------------------------------------------------------------------ site keys
def _money(default, source, unit, expect):
    return Spec("money", default, source, unit, expect, lo=0.0)


def _exponent(default, source):
    return Spec("fraction", default, source, expect="a scale exponent in (0, 1.5], such as 0.7", lo=0.0, hi=1.5,
                lo_open=True)


PER_FLOW = 'a cost per capacity such as "60 USD/(m^3/day)"'
PER_M3 = 'a cost per volume such as "0.05 USD/m^3"'

#: the site-level sections of the cost keys (merged into the scenario's site sections)
SITE_SECTIONS: dict[str, dict[str, Spec]] = {
    "plant": {
        "intake_cost": _money("60 USD/(m^3/day)", "from memory: open seawater intake with screens, pipelines and the "
                              "return line, about 40-150 USD per m3/day of water taken, at 100,000 m3/day", "s/m^3",
                              PER_FLOW),
        "post_treatment_cost": _money("40 USD/(m^3/day)", "from memory: remineralisation, disinfection and storage, "
                                      "30-80 USD per m3/day of product, at 100,000 m3/day", "s/m^3", PER_FLOW),
        "pump_price": _money("600 USD/kW", "from memory: pumps with motors and drives other than RO's high-pressure "
                             "pumps, 400-900 USD/kW, at 1 MW", "1/W", 'a price per power such as "600 USD/kW"'),
        "works_scale_exponent": _exponent("0.8", "from memory: intake, treatment and civil works, 0.7-0.9"),
        "equipment_scale_exponent": _exponent("0.7", "common practice: the six-tenths rule family for pumps and "
                                              "rotating equipment, 0.6-0.7"),
        "indirect_share": Spec("fraction", "0.35", "common practice: engineering, permits, contingency and owner's "
                               "costs, 25-50 % of the direct capital", expect='a share of the direct capital such as '
                               '0.35 or "35 %"', lo=0.0, hi=2.0),
        "labour_cost": _money("0.04 USD/m^3", "from memory: operating staff of a large plant, 0.02-0.08 USD per m3 "
                              "of product, at 100,000 m3/day", "1/m^3", PER_M3),
        "labour_scale_exponent": _exponent("0.5", "from memory: staff grows about as the square root of capacity"),
    },
    "brine": {
        "disposal": Spec("choice", "sea_outfall", "common practice: coastal plants return brine to the sea",
                         choices=DISPOSAL_METHODS),
        "sea_outfall_capital": _money("60 USD/(m^3/day)", "from memory: pipeline and diffuser outfall, 30-150 USD "
                                      "per m3/day of brine, at 100,000 m3/day", "s/m^3", PER_FLOW),
        "sea_outfall_cost": _money("0.01 USD/m^3", "from memory: pumping and monitoring of a sea outfall, about "
                                   "0.01 USD per m3 of brine", "1/m^3", PER_M3),
        "evaporation_pond_capital": _money("5000 USD/(m^3/day)", "from memory: lined ponds at 10-30 USD/m2 and 1-2 "
                                           "m/yr net evaporation, 2,000-10,000 USD per m3/day of brine", "s/m^3",
                                           PER_FLOW),
        "evaporation_pond_cost": _money("0.3 USD/m^3", "from memory: upkeep and salt removal of evaporation ponds, "
                                        "0.1-1 USD per m3 of brine", "1/m^3", PER_M3),
        "deep_well_capital": _money("1500 USD/(m^3/day)", "from memory: deep injection wells, 500-3000 USD per "
                                    "m3/day of brine", "s/m^3", PER_FLOW),
        "deep_well_cost": _money("0.3 USD/m^3", "from memory: injection pumping and monitoring, 0.2-1 USD per m3 of "
                                 "brine", "1/m^3", PER_M3),
    },
}


@dataclass(frozen=True)
class SiteCosts:
    """The site-level cost keys per case (N,), SI (money in the scenario's currency); ``disposal`` is the method."""

    intake_cost: np.ndarray
    post_treatment_cost: np.ndarray
    pump_price: np.ndarray
    works_exponent: np.ndarray
    equipment_exponent: np.ndarray
    indirect_share: np.ndarray
    labour_cost: np.ndarray
    labour_exponent: np.ndarray
    disposal: str
    disposal_capital: np.ndarray
    disposal_cost: np.ndarray


def site_costs(get: Callable[[str], Any], case: Callable[[Any], np.ndarray]) -> SiteCosts:
    """The :class:`SiteCosts` of a scenario: ``get(dotted)`` gives a key's SI value, ``case`` makes it (N,)."""
    method = get("brine.disposal")
    return SiteCosts(
        intake_cost=case(get("plant.intake_cost")), post_treatment_cost=case(get("plant.post_treatment_cost")),
        pump_price=case(get("plant.pump_price")), works_exponent=case(get("plant.works_scale_exponent")),
        equipment_exponent=case(get("plant.equipment_scale_exponent")),
        indirect_share=case(get("plant.indirect_share")), labour_cost=case(get("plant.labour_cost")),
        labour_exponent=case(get("plant.labour_scale_exponent")), disposal=method,
        disposal_capital=case(get(f"brine.{method}_capital")), disposal_cost=case(get(f"brine.{method}_cost")))


# ------------------------------------------------------------------------------------------------ items
@dataclass(frozen=True)
class Item:
    """A line of the capital or O&M breakdown: label in words, the cause it belongs to and, for O&M, the line of the
    levelised cost it adds to (``details.cost_breakdown_per_m3``)."""

    label: str
    cause: str
    line: str = ""


#: capital items, in the order shown, grouped by cause
CAPITAL_ITEMS: dict[str, Item] = {
    "membranes": Item("membrane elements", "membranes"),
    "pressure_vessels": Item("pressure vessels and racks", "membranes"),
    "high_pressure_pumps": Item("high-pressure and booster pumps", "pressure"),
    "energy_recovery": Item("energy-recovery devices", "pressure"),
    "evaporator": Item("evaporator heat-transfer surface", "heat transfer"),
    "ejector": Item("vapour-compression ejector", "heat transfer"),
    "draw_inventory": Item("draw solution inventory", "draw"),
    "regenerator_membranes": Item("regenerator membrane elements", "draw"),
    "regenerator_vessels": Item("regenerator pressure vessels", "draw"),
    "regenerator_pumps": Item("regenerator high-pressure pumps", "draw"),
    "regenerator_energy_recovery": Item("regenerator energy-recovery devices", "draw"),
    "thermal_regenerator": Item("thermal regenerator", "draw"),
    "other_pumps": Item("other pumps and drives", "pumps"),
    "intake": Item("intake and return lines", "water in and out"),
    "pretreatment": Item("pretreatment", "water in and out"),
    "brine_disposal": Item("brine disposal works", "water in and out"),
    "post_treatment": Item("post-treatment", "water in and out"),
    "indirect": Item("engineering, permits, contingency", "indirect"),
    "given": Item("capital_cost as given", "as given"),
}

#: O&M items per year, each adding to one line of the levelised cost
OM_ITEMS: dict[str, Item] = {
    "maintenance": Item("maintenance and insurance", "upkeep", "fixed_om"),
    "labour": Item("operating staff", "upkeep", "labour"),
    "membrane_replacement": Item("membrane replacement", "consumables", "membranes"),
    "chemicals": Item("chemicals", "consumables", "chemicals"),
    "draw_makeup": Item("draw solute make-up", "consumables", "chemicals"),
    "brine_disposal": Item("brine disposal", "brine", "brine_disposal"),
}


@dataclass(frozen=True)
class Costs:
    """The cost build-up of one technology per case (N,): capital items [currency], O&M items [currency/year],
    ``built`` False where ``capital_cost`` replaced the capital build-up."""

    capital: dict
    annual: dict
    built: bool

    @property
    def total_capital(self) -> np.ndarray:
        return sum(self.capital.values())

    @property
    def total_annual(self) -> np.ndarray:
        return sum(self.annual.values())


class Design:
    """A technology's design seen for costing: its details and parameters per case (N,) and the plant's flows
    (:class:`compare.accounting.Flows`, N x M). ``peak`` is the largest value over the periods (for sizing), ``mean``
    the production-weighted one (for consumables)."""

    def __init__(self, perf, params, capacity, weights, flows):
        self.perf, self.params, self.flows = perf, params, flows
        self.capacity = np.asarray(capacity, dtype=float)
        self.weights = np.asarray(weights, dtype=float)
        self.shape = (self.capacity.size, self.weights.size)

    def grid(self, x):
        return np.broadcast_to(np.asarray(x, dtype=float), self.shape)

    def peak(self, x):
        return self.grid(x).max(axis=1)

    def mean(self, x):
        return np.sum(self.grid(x) * self.weights, axis=1)

    def has(self, name: str) -> bool:
        return name in self.perf.details

    def detail(self, name: str):
        return self.perf.details[name]

    def p(self, dotted: str):
        """A parameter per case (N,) (``regenerator.membrane_price`` reads the sub-record)."""
        v = self.params
        for part in dotted.split("."):
            v = getattr(v, part)
        return np.broadcast_to(np.asarray(v, dtype=float).reshape(-1), self.capacity.shape)


def _membrane_train(d: Design, area, prefix: str, equipment_exponent, power, brine_flow, erd: str,
                    vessels=None):
    """Membranes, vessels, high-pressure pumps and energy recovery of an RO train, and its membrane replacement."""
    key = f"{prefix}." if prefix else ""
    names = {"membranes": "membranes", "pressure_vessels": "pressure_vessels", "high_pressure_pumps":
             "high_pressure_pumps", "energy_recovery": "energy_recovery"}
    if prefix:
        names = {"membranes": "regenerator_membranes", "pressure_vessels": "regenerator_vessels",
                 "high_pressure_pumps": "regenerator_pumps", "energy_recovery": "regenerator_energy_recovery"}
    if vessels is None:
        elements = np.ceil(area / d.p(f"{key}element_area") - 1e-9)
        vessels = np.ceil(elements / d.p(f"{key}elements_per_vessel") - 1e-9)
    price = d.p(f"{key}membrane_price")
    capital = {
        names["membranes"]: area * price,
        names["pressure_vessels"]: vessels * d.p(f"{key}vessel_price"),
        names["high_pressure_pumps"]: scaled(d.p(f"{key}high_pressure_pump_price"), power, REFERENCE_POWER,
                                             equipment_exponent),
        names["energy_recovery"]: (brine_flow * d.p(f"{key}energy_recovery_price")
                                   if erd != "none" else np.zeros_like(area)),
    }
    annual = {"membrane_replacement": area * price / d.p(f"{key}membrane_life")}
    return capital, annual


def ro_equipment(d: Design, site: SiteCosts):
    """RO: membrane area and vessels from the design; pumps by the high-pressure and booster power of the largest
    period; energy recovery by the brine flow [m^3/h]."""
    Q = d.capacity
    area = d.peak(d.detail("membrane_area"))
    power = d.peak((np.asarray(d.detail("high_pressure_pump")) + np.asarray(d.detail("booster"))) * Q[:, None])
    brine = d.peak(d.flows.brine)
    capital, annual = _membrane_train(d, area, "", site.equipment_exponent, power, brine,
                                      d.params.energy_recovery, vessels=d.peak(d.detail("vessels")))
    return capital, annual, power


def med_equipment(d: Design, site: SiteCosts):
    """MED: heat-transfer surface of the effects, preheaters and condenser (the design's specific area times the
    product mass flow); the ejector by its motive steam flow."""
    Q = d.capacity
    m_p = Q * WATER_DENSITY
    capital = {"evaporator": d.peak(d.detail("specific_area")) * m_p * d.p("heat_transfer_price")}
    if d.has("entrainment_ratio"):
        steam = d.peak(d.detail("steam_per_product")) * m_p
        capital["ejector"] = scaled(d.p("ejector_price"), steam, REFERENCE_STEAM, site.equipment_exponent)
    return capital, {}, np.zeros_like(Q)


def fo_equipment(d: Design, site: SiteCosts):
    """FO: exchanger membrane (area x price, replaced over its life); the draw solute held in the loop (draw flow x
    hold-up time x draw salinity x price) and its make-up; the regenerator: an RO train costed with the
    ``[fo.regenerator]`` prices, or a thermal regenerator priced per m^3/day of product."""
    Q = d.capacity
    area = d.peak(d.detail("fo_membrane_area"))
    price = d.p("membrane_price")
    r = np.asarray(d.perf.recovery, dtype=float)
    draw_flow = d.peak(d.detail("draw_flow_ratio") * Q[:, None] * WATER_DENSITY / r)     # [kg/s]
    salt = draw_flow * d.p("draw_holdup") * d.peak(d.detail("draw_in"))                  # [kg]
    capital = {"membranes": area * price, "draw_inventory": salt * d.p("draw_price")}
    annual = {"membrane_replacement": area * price / d.p("membrane_life"),
              "draw_makeup": d.mean(d.detail("draw_makeup")) * d.p("draw_price")}       # per m^3: scaled below
    costed = np.zeros_like(Q)
    if d.has("regenerator_membrane_area"):
        area_r = d.peak(d.detail("regenerator_membrane_area"))
        power = d.peak((np.asarray(d.detail("regenerator_high_pressure_pump"))
                        + np.asarray(d.detail("regenerator_booster"))) * Q[:, None])
        r_reg = np.asarray(d.detail("regenerator_recovery"), dtype=float)
        brine = d.peak(Q[:, None] * (1.0 / r_reg - 1.0))
        cap_r, ann_r = _membrane_train(d, area_r, "regenerator", site.equipment_exponent, power, brine,
                                       d.params.regenerator.energy_recovery)
        capital.update(cap_r)
        annual["membrane_replacement"] = annual["membrane_replacement"] + ann_r["membrane_replacement"]
        costed = power
    else:
        capital["thermal_regenerator"] = scaled(d.p("regenerator.thermal_regenerator_cost"), Q, REFERENCE_FLOW,
                                                site.equipment_exponent)
    return capital, annual, costed


#: technology name -> its equipment costing (capital items, O&M items per year, power of the pumps it costed [W]).
#: A technology without one must be given a ``capital_cost``.
EQUIPMENT: dict[str, Callable] = {"ro": ro_equipment, "med": med_equipment, "fo": fo_equipment}


def _param(params, name, n):
    v = getattr(params, name, None)
    return None if v is None else np.broadcast_to(np.asarray(v, dtype=float).reshape(-1), (n,))


def build(name: str, perf, params, site: SiteCosts, capacity, weights, annual_production, flows) -> Costs:
    """The capital and O&M build-up of technology ``name`` from its :class:`~compare.tech.base.Performance`
    (arrays broadcasting to N cases x M periods) and parameter record.

    Parameters
    ----------
    capacity : (N,) product flow [m^3/s]
    weights : (M,) share of the year's production in each period [-]
    annual_production : (N,) [m^3/year]
    flows : the plant's :class:`compare.accounting.Flows` (N x M) [m^3/s]

    Generic items, for every technology: intake (by all the water drawn), pretreatment (by the process feed, at the
    technology's ``pretreatment_cost``), brine disposal works (by brine), post-treatment (by product), other pumps
    (the plant's electric power less the pumps the technology costed itself), indirect costs; O&M: maintenance,
    staff, chemicals (by feed), brine disposal (by brine).
    """
    Q = np.asarray(capacity, dtype=float)
    n = Q.size
    d = Design(perf, params, Q, weights, flows)
    feed_ratio = np.asarray(flows.feed, dtype=float) / Q[:, None]         # feed per product [-]
    brine_ratio = np.asarray(flows.brine, dtype=float) / Q[:, None]
    given = _param(params, "capital_cost", n)
    capital: dict = {}
    annual: dict = {}
    if given is not None:
        capital["given"] = given * Q * DAY
        extra = EQUIPMENT[name](d, site)[1] if name in EQUIPMENT else {}
    elif name not in EQUIPMENT:
        raise ValueError(f"{name}: no equipment costing; give {name}.capital_cost")
    else:
        equipment, extra, costed = EQUIPMENT[name](d, site)
        capital.update(equipment)
        w_exp = site.works_exponent
        capital["other_pumps"] = scaled(site.pump_price, np.maximum(d.peak(np.asarray(perf.electricity) * Q[:, None])
                                                                    - costed, 0.0), REFERENCE_POWER,
                                        site.equipment_exponent)
        capital["intake"] = scaled(site.intake_cost, d.peak(flows.intake), REFERENCE_FLOW, w_exp)
        pre = _param(params, "pretreatment_cost", n)
        if pre is not None:
            capital["pretreatment"] = scaled(pre, d.peak(flows.feed), REFERENCE_FLOW, w_exp)
        linear = DISPOSAL_LINEAR[site.disposal]
        capital["brine_disposal"] = scaled(site.disposal_capital, d.peak(flows.brine), REFERENCE_FLOW,
                                           1.0 if linear else w_exp)
        capital["post_treatment"] = scaled(site.post_treatment_cost, Q, REFERENCE_FLOW, w_exp)
        capital["indirect"] = site.indirect_share * sum(capital.values())
    total = sum(capital.values())
    fixed = _param(params, "fixed_om", n)
    annual["maintenance"] = total * (fixed if fixed is not None else 0.0)
    annual["labour"] = site.labour_cost * annual_production * (Q / REFERENCE_FLOW) ** (site.labour_exponent - 1.0)
    annual.update({k: v for k, v in extra.items() if k != "draw_makeup"})
    if "draw_makeup" in extra:
        annual["draw_makeup"] = extra["draw_makeup"] * annual_production
    chem = _param(params, "chemicals_cost", n)
    if chem is not None:
        annual["chemicals"] = chem * annual_production * d.mean(feed_ratio)
    annual["brine_disposal"] = site.disposal_cost * annual_production * d.mean(brine_ratio)
    order = list(OM_ITEMS)
    annual = {k: np.broadcast_to(np.asarray(annual[k], dtype=float), (n,)) for k in order if k in annual}
    capital = {k: np.broadcast_to(np.asarray(v, dtype=float), (n,)) for k, v in capital.items()}
    return Costs(capital=capital, annual=annual, built=given is None)


def cost_lines(costs: Costs, annual_production, crf) -> dict:
    """The levelised cost's lines from the build-up [currency/m^3]: ``capital`` (recovered at ``crf``) and one line
    per O&M cause (``fixed_om``, ``labour``, ``membranes``, ``chemicals``, ``brine_disposal``)."""
    lines = {"capital": costs.total_capital * crf / annual_production}
    for line in dict.fromkeys(item.line for item in OM_ITEMS.values()):
        parts = [v for k, v in costs.annual.items() if OM_ITEMS[k].line == line]
        lines[line] = (sum(parts) if parts else 0.0) / annual_production
    return lines
