"""The one field table: how every figure leaves the SI world. Name in the records, label in words, display unit,
scale and format. The terminal table, JSON, CSV, Markdown and the sweep frames all convert through it; nothing else
converts SI to report units.

A display unit (:data:`UNITS`) gives the factor and offset from SI and the suffix of record names
(``feed_pressure`` in Pa is ``feed_pressure_bar`` in bar). A technology's design figures are described by its
registration (``Technology.details``: name -> label and display unit), so adding a technology needs no change here.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

J_PER_KWH = 3.6e6


@dataclass(frozen=True)
class Unit:
    """A display unit: value = SI x scale + offset; ``suffix`` ends record names ("" for none)."""

    scale: float
    suffix: str
    offset: float = 0.0
    integer: bool = False


UNITS: dict[str, Unit] = {
    "-": Unit(1.0, ""),
    "count": Unit(1.0, "", integer=True),
    "kWh/m3": Unit(1 / J_PER_KWH, "kwh_per_m3"),
    "kWh_th/m3": Unit(1 / J_PER_KWH, "kwh_th_per_m3"),
    "bar": Unit(1e-5, "bar"),
    "g/kg": Unit(1e3, "g_per_kg"),
    "degC": Unit(1.0, "c", offset=-273.15),
    "K": Unit(1.0, "k"),
    "m2": Unit(1.0, "m2"),
    "L/m2/h": Unit(1e3 * 3600.0, "lmh"),
    "g/m2/h": Unit(1e3 * 3600.0, "g_per_m2_h"),
    "mol/kg": Unit(1.0, "mol_per_kg"),
    "kg/kg": Unit(1.0, ""),
    "kg/m3": Unit(1.0, "kg_per_m3"),
    "kJ/kg": Unit(1e-3, "kj_per_kg"),
    "m2/(kg/s)": Unit(1.0, "m2_per_kg_s"),
    "MW": Unit(1e-6, "mw"),
    "MW_th": Unit(1e-6, "mw"),
    "GWh/yr": Unit(1 / (J_PER_KWH * 1e6), "gwh"),
    "GWh_th/yr": Unit(1 / (J_PER_KWH * 1e6), "gwh"),
    "t/yr": Unit(1e-3, "t"),
    "m3/yr": Unit(1.0, "m3"),
    "m3/day": Unit(86400.0, "m3_per_day"),
    "mg/L": Unit(1e3, "mg_per_l"),
    "{currency}": Unit(1.0, ""),
    "{currency}/m3": Unit(1.0, "per_m3"),
    "{currency}/yr": Unit(1.0, ""),
    "{currency}/(m3/day)": Unit(1 / 86400.0, ""),
}


def convert(value, unit: str):
    """SI value(s) in the display ``unit`` (NaN stays NaN)."""
    u = UNITS[unit]
    return np.asarray(value, dtype=float) * u.scale + u.offset


def record_name(name: str, unit: str) -> str:
    """The record name of a figure: ``feed_pressure`` in bar -> ``feed_pressure_bar``."""
    suffix = UNITS[unit].suffix
    return f"{name}_{suffix}" if suffix and not name.endswith(suffix) else name


@dataclass(frozen=True)
class Field:
    """A headline figure of a record: the :class:`~compare.accounting.Accounts` attribute it reads, its record name,
    label in words, display unit, table group, and table format (``percent`` shows a fraction as a percentage)."""

    attr: str
    name: str
    label: str
    unit: str
    group: str
    fmt: str = ""


#: the contract's headline figures, in table order
RECORD_FIELDS: tuple[Field, ...] = (
    Field("recovery", "recovery", "recovery (mass)", "-", "energy"),
    Field("product_salinity", "product_salinity_g_per_kg", "product salinity", "g/kg", "energy"),
    Field("brine_salinity", "brine_salinity_g_per_kg", "brine salinity", "g/kg", "energy"),
    Field("electricity", "electricity_kwh_per_m3", "electricity", "kWh/m3", "energy"),
    Field("heat", "heat_kwh_per_m3", "heat", "kWh_th/m3", "energy"),
    Field("heat_temperature", "heat_temperature_c", "heat temperature", "degC", "energy"),
    Field("work_equivalent", "work_equivalent_kwh_per_m3", "work equivalent",
          "kWh/m3", "energy"),
    Field("least_work", "least_work_kwh_per_m3", "least work of its own streams", "kWh/m3", "energy"),
    Field("second_law_efficiency", "second_law_efficiency", "second-law efficiency", "-", "energy", "percent"),
    Field("power", "power_mw", "electric power", "MW", "site totals"),
    Field("heat_power", "heat_mw", "heat", "MW_th", "site totals"),
    Field("annual_electricity", "annual_electricity_gwh", "electricity per year", "GWh/yr", "site totals"),
    Field("annual_heat", "annual_heat_gwh", "heat per year", "GWh_th/yr", "site totals"),
    Field("intake_flow", "intake_m3_per_day", "water taken in", "m3/day", "site totals"),
    Field("brine_flow", "brine_m3_per_day", "brine sent back", "m3/day", "site totals"),
    Field("brine_temperature", "brine_temperature_c", "brine temperature", "degC", "site totals"),
    Field("emissions", "emissions_kg_per_m3", "CO2 per m3", "kg/m3", "emissions"),
    Field("annual_emissions", "annual_emissions_t", "CO2 per year", "t/yr", "emissions"),
    Field("levelized_cost", "levelized_cost_per_m3", "levelized cost of water", "{currency}/m3", "cost"),
)

#: the lines of the levelized cost, in record ``details.cost_breakdown_per_m3``
COST_LINES: tuple[Field, ...] = (
    Field("cost_capital", "capital", "capital recovery", "{currency}/m3", "cost"),
    Field("cost_fixed_om", "fixed_om", "maintenance and insurance", "{currency}/m3", "cost"),
    Field("cost_labour", "labour", "operating staff", "{currency}/m3", "cost"),
    Field("cost_membranes", "membranes", "membrane replacement", "{currency}/m3", "cost"),
    Field("cost_chemicals", "chemicals", "chemicals (and draw make-up)", "{currency}/m3", "cost"),
    Field("cost_brine_disposal", "brine_disposal", "brine disposal", "{currency}/m3", "cost"),
    Field("cost_electricity", "electricity", "electricity", "{currency}/m3", "cost"),
    Field("cost_heat", "heat", "heat", "{currency}/m3", "cost"),
)

#: the cost totals shown under the levelised cost (record ``details``)
COST_TOTALS: tuple[Field, ...] = (
    Field("capital", "capital", "total capital", "{currency}", "cost"),
    Field("specific_capital", "capital_per_m3_day", "capital per unit of capacity", "{currency}/(m3/day)", "cost"),
    Field("annual_om", "annual_om", "operation and maintenance per year (energy excluded)", "{currency}/yr",
          "cost"),
)

#: site figures of every record's details
SITE_DETAILS: tuple[Field, ...] = (
    Field("work_equivalent_of_heat", "work_equivalent_of_heat_kwh_per_m3", "work equivalent of the heat",
          "kWh/m3", "energy"),
    Field("annual_production", "annual_production_m3", "production per year", "m3/yr", "site totals"),
    *COST_TOTALS,
)

#: the scaling figures of a record's ``details.scaling`` (an ion composition): attribute of
#: :class:`compare.concentrate.Scaling`, name, label, unit
SCALING_FIELDS: tuple[Field, ...] = (
    Field("max_recovery", "max_recovery", "highest recovery under the scaling limits", "-", "scaling", "percent"),
    Field("concentration_factor", "concentration_factor", "concentrate salinity over the feed's", "-", "scaling"),
    Field("temperature", "temperature_c", "temperature of the limiting state", "degC", "scaling"),
    Field("silica", "silica_mg_per_l", "silica (SiO2) in the concentrate", "mg/L", "scaling"),
)

#: the floor of the feed (``floor`` of a compare record; the ``desal floor`` record adds recovery-dependent ones)
FLOOR_FIELDS: tuple[Field, ...] = (
    Field("water_activity", "water_activity", "water activity", "-", "floor"),
    Field("osmotic_pressure", "osmotic_pressure_bar", "osmotic pressure", "bar", "floor"),
    Field("least_work_zero_recovery", "least_work_kwh_per_m3_zero_recovery", "least work, zero recovery",
          "kWh/m3", "floor"),
    Field("salinity", "feed_salinity_g_per_kg", "feed salinity", "g/kg", "floor"),
    Field("temperature", "feed_temperature_c", "feed temperature", "degC", "floor"),
)


def label(f: Field, currency: str = "") -> str:
    """``"electricity [kWh/m3]"``; no unit for plain numbers and percentages."""
    return unit_label(f.label, f.unit, currency, f.fmt)


def unit_label(text: str, unit: str, currency: str = "", fmt: str = "") -> str:
    """``text [unit]``; no brackets for plain numbers and counts, ``[%]`` for percentages."""
    if fmt == "percent":
        return f"{text} [%]"
    if unit in ("-", "count"):
        return text
    return f"{text} [{unit.replace('{currency}', currency)}]"


#: words a design figure's label gains in a run with several periods (months) when it is not their weighted mean
#: (:attr:`compare.tech.base.Detail.over_periods`)
PERIOD_WORDS = {"max": "highest monthly value", "min": "lowest monthly value"}


def detail_label(d, periods: int = 1) -> str:
    """A technology's design figure (:class:`~compare.tech.base.Detail`) in words with its unit. In a run over
    several periods a figure taken at its highest or lowest month says so, ``membrane area (highest monthly value)
    [m2]``;
    the others are production-weighted means (:func:`design_note`)."""
    text = d.label
    if periods > 1 and d.over_periods in PERIOD_WORDS:
        text = f"{text} ({PERIOD_WORDS[d.over_periods]})"
    return unit_label(text, d.unit)


def design_note(periods: int = 1) -> str:
    """What the design figures of a run over several periods are, for their heading ("" for one period)."""
    if periods <= 1:
        return ""
    return f"production-weighted means over the {periods} months unless marked highest or lowest monthly value"


def value(x, unit: str):
    """One SI value as a plain Python number in ``unit`` (None for NaN or inf; an int for counts)."""
    v = float(convert(x, unit))
    if not np.isfinite(v):
        return None
    return int(round(v)) if UNITS[unit].integer else v


def share_pct(x: float, sign: bool = True) -> str:
    """A share as a percentage that reads 100 % or 0 % only when it is exactly that (99.8 %, not 100 %). With the
    sign as a running sentence writes it ("99.8 %"); without it ("99.8") for a table column whose label carries the
    unit ("[%]")."""
    x = float(x)
    if abs(x - round(x)) < 1e-9:                  # 0 and 1 as such, whatever rounding the interval took
        x = float(round(x))
    if 0.0 < x < 0.005 or 0.995 <= x < 1.0:
        text = f"{min(max(100 * x, 0.1), 99.9):.1f}"
    else:
        text = f"{100 * x:.0f}"
    return f"{text} %" if sign else text
