"""Desalination energy comparator: least work from water activity, then RO, MED and FO energy on one set of
assumptions, with site totals, cost and emissions.

Public API (SI units unless a name says otherwise):

* :func:`floor` - the thermodynamic floor of a feed (water activity, osmotic pressure, least work).
* :func:`compare.thermo.activity.get_model` - a water activity model.
* :func:`compare.scenario.load` - a scenario file, validated and in SI.
* :func:`compare.pipeline.evaluate` - every enabled technology for a scenario (and N varied cases).
* :mod:`compare.sweep` - grids, Monte Carlo samples, summaries, rankings and break-even points; a result's
  ``to_frame()`` (pandas, a row per case and technology) and, for grids, ``to_dataset()`` (xarray, over the grid
  axes and technology; the ``xarray`` extra).
* :mod:`compare.uncertainty` - truncated distributions, rank correlations, shared inputs.
* :mod:`compare.sensitivity` - Sobol indices and tornado of the uncertain keys.
"""

from __future__ import annotations

__version__ = "0.1.0"


def floor(salinity, temperature, recovery=0.5, product_salinity=0.0, water="seawater", model=None) -> dict:
    """The floor record for feed ``salinity`` [kg/kg] at ``temperature`` [K] and mass ``recovery`` [-].

    Returns the same record as ``desal floor --format json``.

    Examples
    --------
    >>> rec = floor(0.035, 298.15, 0.5)
    >>> round(rec["least_work_kwh_per_m3"], 3)
    1.022
    """
    from .present.records import floor_record
    from .thermo.activity import get_model

    return floor_record(get_model(model, water), salinity, temperature, recovery, product_salinity)
