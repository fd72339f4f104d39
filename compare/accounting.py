"""Accounting: the work equivalent of heat, second-law efficiency, site totals, emissions and the levelised cost
of water. Pure and vectorised, SI in and out.

References
----------
Bejan, A. (2016), Advanced Engineering Thermodynamics, 4th ed., Wiley: exergy of heat at constant temperature,
Q (1 - T0/T).
Mistry, K. H. et al. (2011), Entropy 13, 1829-1864: second-law efficiency of desalination as least work over the
work equivalent of the energy used.
Newnan, D. G., Eschenbach, T. G. and Lavelle, J. P., Engineering Economic Analysis: capital recovery factor
(A/P, i, n) = i (1 + i)^n / ((1 + i)^n - 1).
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from . import costing
from .flags import Flag, infeasible_mask, reduce_cases
from .tech.base import Feed, Performance
from .thermo.floor import least_work
from .thermo.model import ActivityModel, range_flags

SECONDS_PER_YEAR = 365.0 * 86400.0
DAYS_IN_MONTH = np.array([31, 28.25, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31], dtype=float)


def month_weights(n_months: int) -> np.ndarray:
    """Share of the year's production in each period: [1] for one period, days/365.25 for twelve months."""
    if n_months == 1:
        return np.array([1.0])
    if n_months == 12:
        return DAYS_IN_MONTH / DAYS_IN_MONTH.sum()
    raise ValueError("expected 1 or 12 periods")


def exergy_factor(T_heat, T0):
    """Carnot factor 1 - T0/T_heat [-] of heat at T_heat [K] with dead state T0 [K]; zero for heat at or below T0.

    Examples
    --------
    >>> round(float(exergy_factor(343.15, 298.15)), 4)   # library: 1 - 298.15/343.15 = 0.1311 (70 degC heat, T0 = 25 degC)
    0.1311
    """
    T_heat = np.asarray(T_heat, dtype=float)
    return np.where(T_heat > T0, 1.0 - np.asarray(T0, dtype=float) / T_heat, 0.0)


def lost_work_factor(T_heat, T_condenser, turbine_efficiency):
    """Turbine work lost per unit of heat when saturated steam at T_heat [K] is extracted to supply heat [-].

    Without the extraction the steam would expand to the condenser at T_condenser; with it, the steam condenses at
    T_heat and its condensate returns to the cycle at T_heat, which saves feed-water heating. The work lost is the
    steam's exergy less the returned condensate's, relative to the condenser, times the turbine's efficiency eta:
    eta [h_fg(T_heat) - T_c s_fg(T_heat)] = eta h_fg (1 - T_c / T_heat). Per unit of heat (h_fg) this is
    eta (1 - T_c/T_heat): a Carnot factor on the condenser temperature rather than the dead state. The tests check
    the bracket against steam tables (iapws) term by term.
    """
    T_heat = np.asarray(T_heat, dtype=float)
    Tc = np.asarray(T_condenser, dtype=float)
    return np.where(T_heat > Tc, np.asarray(turbine_efficiency, dtype=float) * (1.0 - Tc / T_heat), 0.0)


def capital_recovery_factor(rate, years):
    """Capital recovery factor (A/P, i, n) [1/year]: i (1+i)^n / ((1+i)^n - 1); 1/n at i = 0.

    Examples
    --------
    >>> round(float(capital_recovery_factor(0.10, 5)), 5)   # memory: compound-interest tables, (A/P, 10 %, 5)
    0.2638
    """
    i = np.asarray(rate, dtype=float)
    n = np.asarray(years, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        g = (1 + i) ** n
        crf = np.where(i > 0, i * g / (g - 1), 1.0 / n)
    return crf


def levelized_cost(capital, fixed_om_share, annual_production, crf, electricity, electricity_price, heat, heat_price):
    """Levelised cost of water [currency/m^3] and its parts.

    Parameters
    ----------
    capital : total capital cost [currency]
    fixed_om_share : fixed operation and maintenance as a share of capital per year [1/year]
    annual_production : [m^3/year]
    crf : capital recovery factor [1/year]
    electricity, heat : specific energy [J/m^3]
    electricity_price, heat_price : [currency/J]
    """
    cap = capital * crf / annual_production
    om = capital * fixed_om_share / annual_production
    el = electricity * electricity_price
    ht = heat * heat_price
    return {"total": cap + om + el + ht, "capital": cap, "fixed_om": om, "electricity": el, "heat": ht}



# ------------------------------------------------------------------------------------------------- site accounts
@dataclass(frozen=True)
class Site:
    """What the accounting needs of the site, in SI. ``grid`` arrays are (N cases, M periods), ``case`` arrays (N,).

    Attributes
    ----------
    weights : (M,) share of the year's production in each period [-]
    heat_temperature : grid, temperature of the heat the site supplies [K]
    dead_state : grid, dead-state temperature T0 [K]
    heat_to_work : "exergy" | "lost_work"
    condenser_temperature, turbine_efficiency : grid, for "lost_work" [K], [-]
    product_target : grid, target product salinity [kg/kg]
    capacity : case, product flow [m^3/s]
    annual_production : case [m^3/year]
    crf : case, capital recovery factor [1/year]
    electricity_price, heat_price : case [currency/J]
    electricity_emissions, heat_emissions : case [kg/J]
    """

    weights: np.ndarray
    heat_temperature: np.ndarray
    dead_state: np.ndarray
    heat_to_work: str
    condenser_temperature: np.ndarray
    turbine_efficiency: np.ndarray
    product_target: np.ndarray
    capacity: np.ndarray
    annual_production: np.ndarray
    crf: np.ndarray
    electricity_price: np.ndarray
    heat_price: np.ndarray
    electricity_emissions: np.ndarray
    heat_emissions: np.ndarray


#: the figures of :class:`Accounts` that need a working design: NaN where a case is infeasible
DESIGN_DEPENDENT = ("electricity", "heat", "work_equivalent", "second_law_efficiency", "power", "heat_power",
                    "annual_electricity", "annual_heat", "emissions", "annual_emissions", "levelized_cost",
                    "cost_capital", "cost_fixed_om", "cost_electricity", "cost_heat", "work_equivalent_of_heat",
                    "capital", "cost_labour", "cost_membranes", "cost_chemicals", "cost_brine_disposal", "annual_om",
                    "specific_capital")


@dataclass(frozen=True)
class Accounts:
    """One technology's figures per case (N,), SI: energies [J/m^3], powers [W], annual energy [J/year], emissions
    [kg/m^3] and [kg/year], costs [currency/m^3], temperatures [K], salinities [kg/kg]. Design-dependent figures
    (:data:`DESIGN_DEPENDENT`) are NaN where the case is infeasible. ``details`` are the technology's own figures
    (SI, per case); ``flags`` hold (N,) masks."""

    technology: str
    feasible: np.ndarray
    recovery: np.ndarray
    product_salinity: np.ndarray
    brine_salinity: np.ndarray
    electricity: np.ndarray
    heat: np.ndarray
    heat_temperature: np.ndarray
    work_equivalent: np.ndarray
    work_equivalent_of_heat: np.ndarray
    least_work: np.ndarray
    second_law_efficiency: np.ndarray
    power: np.ndarray
    heat_power: np.ndarray
    annual_electricity: np.ndarray
    annual_heat: np.ndarray
    emissions: np.ndarray
    annual_emissions: np.ndarray
    levelized_cost: np.ndarray
    cost_capital: np.ndarray
    cost_fixed_om: np.ndarray
    cost_electricity: np.ndarray
    cost_heat: np.ndarray
    capital: np.ndarray
    annual_production: np.ndarray
    cost_labour: np.ndarray = None
    cost_membranes: np.ndarray = None
    cost_chemicals: np.ndarray = None
    cost_brine_disposal: np.ndarray = None
    annual_om: np.ndarray = None           # operation and maintenance per year [currency/year], energy excluded
    specific_capital: np.ndarray = None    # capital per unit of capacity [currency s/m^3]
    capital_items: dict = field(default_factory=dict)   # item -> (N,) [currency] (costing.CAPITAL_ITEMS)
    om_items: dict = field(default_factory=dict)        # item -> (N,) [currency/year] (costing.OM_ITEMS)
    details: dict = field(default_factory=dict)
    flags: tuple = ()
    intake_flow: np.ndarray | None = None       # water taken in [m^3/s] (MED: with its cooling water)
    brine_flow: np.ndarray | None = None        # brine sent back [m^3/s]
    brine_temperature: np.ndarray | None = None  # [K]
    scaling: object = None                      # compare.concentrate.Scaling per case, for an ion composition


def work_equivalent_factor(T_heat, site: Site):
    """Work per unit of heat taken at T_heat [K] under the site's heat-to-work rule [-] (grid)."""
    if site.heat_to_work == "exergy":
        return exergy_factor(T_heat, site.dead_state)
    return lost_work_factor(T_heat, site.condenser_temperature, site.turbine_efficiency)


def account(name: str, perf: Performance, model: ActivityModel, feed: Feed, site: Site, capital_cost,
            fixed_om, costs: costing.Costs | None = None, roles: dict | None = None,
            scaling=None, flows: Flows | None = None, described: dict | None = None) -> Accounts:
    """The accounts of one technology's :class:`Performance` on N cases by M periods.

    Adds the checks every technology gets: heat colder than the technology needs makes it infeasible (code
    ``heat_temperature``); a product above the target is ``off_target``; a brine outside the activity model's
    validated range is ``out_of_range`` (unless the technology flagged its brine itself). Per-m^3 figures are
    production-weighted over the periods; a case is feasible when every period is. A technology's details span the
    periods as its detail table says (``described``: name -> :class:`~compare.tech.base.Detail`; sizes the largest
    period, operating figures the weighted mean, the default for a detail not described).

    Parameters
    ----------
    capital_cost : case or scalar, capital per unit of capacity [currency day/m^3] (money per m^3/day)
    fixed_om : case or scalar, fixed O&M as a share of capital per year [1/year]
    costs : the capital and O&M build-up (:func:`compare.costing.build`); when given, it replaces ``capital_cost``
        and ``fixed_om`` and its O&M causes become lines of the levelised cost
    roles : the technology's concentrate roles (``Technology.concentrate``): where its brine temperature and intake
        per product are among its details
    scaling : the grid (N, M) :class:`compare.concentrate.Scaling` of an ion composition, reduced here to cases
    flows : the plant's :class:`Flows` (:func:`plant_flows`, the same the cost build-up priced); computed when None
    described : the technology's detail table (``Technology.details``)
    """
    n, M = site.capacity.size, site.weights.size
    shape = (n, M)

    def grid(x):
        return np.broadcast_to(np.asarray(x, dtype=float), shape)

    def per_case(x):
        return np.sum(grid(x) * site.weights, axis=1)

    e, q, Th = grid(perf.electricity), grid(perf.heat), grid(perf.heat_temperature)
    r, Sp, Sb = grid(perf.recovery), grid(perf.product_salinity), grid(perf.brine_salinity)
    T, S_f = grid(feed.temperature), grid(feed.salinity)
    uses_heat = q > 0
    Th_used = np.where(uses_heat, Th, 1000.0)
    phi = work_equivalent_factor(Th_used, site)
    work_heat = np.where(uses_heat, q * phi, 0.0)
    T0 = grid(site.dead_state)
    lw = least_work(model, S_f, T, np.clip(r, 0.0, 0.999), np.minimum(Sp, S_f * 0.999), model.water,
                    dead_state=T0 if np.any(T0 != T) else None)
    # second-law efficiency always against exergy at the dead state (the least work's own reference), whatever
    # rule values the heat for the work equivalent: the turbine's lost work can be less than the heat's exergy
    exergy_heat = work_heat if site.heat_to_work == "exergy" else \
        np.where(uses_heat, q * exergy_factor(Th_used, T0), 0.0)
    flags = list(perf.flags)
    worthless = uses_heat & (phi <= 0.0)
    if worthless.any():
        flags.append(Flag("note", "heat_no_work_value", "heat_temperature", name,
                          f"{name.upper()}: its heat is no warmer than the "
                          + ("dead state" if site.heat_to_work == "exergy" else "turbine's condenser")
                          + " and is counted as worth no work", worthless))
    if site.heat_to_work != "exergy" and uses_heat.any():
        flags.append(Flag("note", "efficiency_basis", "second_law_efficiency", name,
                          f"{name.upper()}: second-law efficiency values heat by its exergy at the dead state; the "
                          "work equivalent shown is the turbine's lost work", uses_heat))
    too_cold = uses_heat & (Th > site.heat_temperature + 1e-9)
    if too_cold.any():
        flags.append(Flag("infeasible", "heat_temperature", "heat_temperature", name,
                          f"{name.upper()}: needs heat hotter than the site supplies", too_cold))
    off = Sp > site.product_target * (1 + 1e-9)
    if off.any():
        flags.append(Flag("off_target", "product_salinity", "product_salinity", name,
                          f"{name.upper()}: product salinity above the target", off))
    if not any(f.code == "brine_salinity" for f in flags):
        feed_bad = ~model.validity.salinity_ok(S_f)
        flags += [f.with_mask(f.where(shape) & ~feed_bad) for f in range_flags(model, np.nan_to_num(Sb), T,
                                                                               f"{name.upper()} brine", "brine")
                  if f.code == "brine_salinity"]
    flags = reduce_cases(flags, shape, axis=1)
    feasible = ~infeasible_mask(flags, (n,))

    e_y, q_y, wq_y, lw_y = per_case(e), per_case(q), per_case(work_heat), per_case(lw)
    we_y = e_y + wq_y
    ex_y = e_y + per_case(exergy_heat)
    if costs is None:
        capital = np.broadcast_to(np.asarray(capital_cost, dtype=float), (n,)) * site.capacity * 86400.0
        om_share = np.broadcast_to(np.asarray(fixed_om, dtype=float), (n,))
        costs = costing.Costs({"given": capital}, {"maintenance": capital * om_share}, built=False)
    capital = costs.total_capital
    lines = costing.cost_lines(costs, site.annual_production, site.crf)
    cost = {**lines, "electricity": e_y * site.electricity_price, "heat": q_y * site.heat_price}
    cost["total"] = sum(cost.values())
    emissions = e_y * site.electricity_emissions + q_y * site.heat_emissions
    with np.errstate(invalid="ignore", divide="ignore"):
        design = {
            "electricity": e_y, "heat": q_y, "work_equivalent": we_y, "work_equivalent_of_heat": wq_y,
            "second_law_efficiency": lw_y / ex_y, "power": e_y * site.capacity, "heat_power": q_y * site.capacity,
            "annual_electricity": e_y * site.annual_production, "annual_heat": q_y * site.annual_production,
            "emissions": emissions, "annual_emissions": emissions * site.annual_production,
            "levelized_cost": cost["total"], "cost_capital": cost["capital"], "cost_fixed_om": cost["fixed_om"],
            "cost_electricity": cost["electricity"], "cost_heat": cost["heat"], "capital": capital,
            "cost_labour": cost["labour"], "cost_membranes": cost["membranes"], "cost_chemicals": cost["chemicals"],
            "cost_brine_disposal": cost["brine_disposal"], "annual_om": costs.total_annual,
            "specific_capital": capital / site.capacity,
        }
        heat_T = np.where(uses_heat.any(axis=1), np.where(uses_heat, Th, -np.inf).max(axis=1), np.nan)
    design = {k: np.where(feasible, v, np.nan) for k, v in design.items()}
    items = {"capital_items": {k: np.where(feasible, v, np.nan) for k, v in costs.capital.items()},
             "om_items": {k: np.where(feasible, v, np.nan) for k, v in costs.annual.items()}}
    described = described or {}
    details = {k: (described[k].over(grid(v), site.weights) if k in described else per_case(v))
               for k, v in perf.details.items()}
    if flows is None:
        flows = plant_flows(perf, feed, site, roles or {}, shape, model.water)
    if scaling is not None:
        from .concentrate import per_case as scaling_per_case
        scaling = scaling_per_case(scaling)
    return Accounts(technology=name, feasible=feasible, recovery=per_case(r), product_salinity=per_case(Sp),
                    brine_salinity=per_case(Sb), heat_temperature=heat_T, least_work=lw_y,
                    annual_production=np.asarray(site.annual_production, dtype=float), details=details,
                    flags=tuple(flags), intake_flow=per_case(flows.intake), brine_flow=per_case(flows.brine),
                    brine_temperature=per_case(flows.brine_temperature), scaling=scaling, **design, **items)


@dataclass(frozen=True)
class Flows:
    """The water a plant takes in and sends back, on the grid (N cases x M periods): ``intake`` (all water drawn,
    MED's cooling water included), ``feed`` (the process feed, part of the intake), ``brine`` [m^3/s], and the
    brine's temperature [K]. The cost build-up prices these same flows."""

    intake: np.ndarray
    feed: np.ndarray
    brine: np.ndarray
    brine_temperature: np.ndarray


def plant_flows(perf: Performance, feed: Feed, site: Site, roles: dict, shape, water: str) -> Flows:
    """The :class:`Flows` of a technology's design on the grid: the product flow over the recovery (by mass,
    through the densities of product, feed and brine); a technology that draws more than its process feed (MED's
    cooling water) names its intake per kg of product among its details (role ``intake_per_product``)."""
    from .concentrate import BRINE_TEMPERATURE, INTAKE, site_flows
    from .thermo.brine import density

    def grid(x):
        return np.broadcast_to(np.asarray(x, dtype=float), shape)

    T = grid(feed.temperature)
    T_b = grid(perf.details[roles[BRINE_TEMPERATURE]]) if BRINE_TEMPERATURE in roles else T
    T_b = np.where(np.isfinite(T_b), T_b, T)
    S_f, r = grid(feed.salinity), grid(perf.recovery)
    S_b = grid(perf.brine_salinity)
    with np.errstate(invalid="ignore", divide="ignore"):
        S_b = np.where(np.isfinite(S_b), S_b, S_f / (1 - r))
    rho_p = density(np.zeros(shape), T, water)
    rho_f = density(S_f, T, water)
    rho_b = density(np.clip(S_b, 0.0, 0.3), T_b, water)
    per_product = grid(perf.details[roles[INTAKE]]) if INTAKE in roles else None
    if per_product is not None:
        per_product = np.where(np.isfinite(per_product), per_product, 1.0 / r)
    intake, process_feed, brine = site_flows(grid(site.capacity[:, None]), r, rho_p, rho_f, rho_b, per_product)
    return Flows(intake, process_feed, brine, T_b)
