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

import numpy as np

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
    >>> round(float(exergy_factor(343.15, 298.15)), 4)   # CHECKS.md: 0.1311 for 70 degC heat at T0 = 25 degC
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
