"""The technology contract: inputs (:class:`Feed` plus the technology's own parameters) and the
:class:`Performance` record, and the registry that maps a name to a technology.

A technology is a pure, vectorised function ``evaluate(feed, params) -> Performance``. ``feed`` holds arrays that
broadcast to the case shape (N cases, or 12 months, or N x 12), ``params`` is the technology's parameter record (a
frozen dataclass), each field a float or an array of that shape (already in SI), a choice, or None. The pipeline never branches on a technology's name:
it calls every registered, enabled technology the same way.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any, Callable, NamedTuple

import numpy as np

from ..flags import infeasible_mask
from ..spec import Spec, specs_of
from ..thermo.model import ActivityModel


class Feed(NamedTuple):
    """The site's water, shared by every technology. SI units; arrays broadcast to the case shape."""

    model: ActivityModel          # the feed's water activity model
    water: str                    # seawater | nacl | ions
    salinity: np.ndarray          # feed mass fraction [kg/kg]
    temperature: np.ndarray       # feed temperature [K]
    product_salinity: np.ndarray  # target product salinity [kg/kg]
    heat_temperature: np.ndarray  # temperature of the heat the site can supply [K]
    capacity: np.ndarray          # product flow of the plant [m^3/s]


@dataclass(frozen=True)
class Performance:
    """What a technology returns, per case. Energies per m^3 of product; SI throughout.

    Attributes
    ----------
    electricity : array [J/m^3]
    heat : array [J/m^3] (thermal; zero for a purely electrical process)
    heat_temperature : array [K] temperature at which the heat is taken (NaN when no heat)
    recovery : array [-] mass recovery of the technology's own streams
    product_salinity : array [kg/kg]
    brine_salinity : array [kg/kg]
    flags : tuple of :class:`compare.flags.Flag`; a case is infeasible where an ``infeasible`` flag holds
    details : dict name -> array of the technology's own design figures, in SI; each name is described (label,
        display unit) in the technology's ``details`` table of its registration
    """

    electricity: np.ndarray
    heat: np.ndarray
    heat_temperature: np.ndarray
    recovery: np.ndarray
    product_salinity: np.ndarray
    brine_salinity: np.ndarray
    flags: tuple = ()
    details: dict = field(default_factory=dict)

    @property
    def feasible(self) -> np.ndarray:
        return ~infeasible_mask(self.flags, np.shape(self.electricity))


#: how a design figure spans the periods (months) of a run, for :attr:`Detail.over_periods`
OVER_PERIODS = {
    "mean": "production-weighted mean over the periods",
    "max": "largest period",
    "min": "smallest period",
}


@dataclass(frozen=True)
class Detail:
    """How a design figure of a technology is shown: a label in words, the display unit (one of
    :data:`compare.present.fields.UNITS`; ``count`` for whole numbers) and how it spans the periods of a run
    (twelve months of feed temperature) when there are several:

    - ``"mean"`` (the default): the production-weighted mean, for operating figures (pressures, salinities,
      temperatures, energy per m^3, fluxes at the operating point), which add up over the year as the energy does;
    - ``"max"``: the largest period, for what the plant is built for: areas, counts, installed sizes (the cost
      build-up, :mod:`compare.costing`, prices such a figure on its largest period, so the figure shown is the one
      priced) and a figure judged against an upper limit in every period (RO's lead element flux);
    - ``"min"``: the smallest period, for a margin or share whose binding period is its lowest.
    """

    label: str
    unit: str
    over_periods: str = "mean"

    def __post_init__(self):
        if self.over_periods not in OVER_PERIODS:
            raise ValueError(f"Detail {self.label!r}: over_periods must be one of {sorted(OVER_PERIODS)}, "
                             f"got {self.over_periods!r}")

    def over(self, grid, weights) -> np.ndarray:
        """The figure per case (N,) from its values on the grid (N cases x M periods) and the periods' shares of
        the year's production (M,). NaN in any period gives NaN."""
        grid = np.asarray(grid, dtype=float)
        if self.over_periods == "max":
            return grid.max(axis=1)
        if self.over_periods == "min":
            return grid.min(axis=1)
        return np.sum(grid * weights, axis=1)


@dataclass(frozen=True)
class Technology:
    """A registered technology: its evaluation function, its parameter record class (the scenario section's keys
    come from its fields) and how its design figures are shown."""

    name: str
    title: str
    evaluate: Callable[[Feed, Any], Performance]
    parameters: type
    validity: str
    reference: str
    details: dict = field(default_factory=dict)      # detail name -> Detail
    #: where the concentrate is judged (:mod:`compare.concentrate`): role -> detail name. Roles:
    #: ``wall_salinity`` (brine at the membrane wall [kg/kg]), ``hottest_brine_temperature`` and ``brine_temperature``
    #: (the brine leaving) [K], ``intake_per_product`` (water drawn per kg of product, when more than the feed)
    concentrate: dict = field(default_factory=dict)


TECHNOLOGIES: dict[str, Technology] = {}

#: keys every technology section has, besides its own (cost keys are read by the accounting layer)
COMMON_PARAMETERS = {
    "enabled": Spec("flag", True, "tool default: every registered technology is compared"),
}


def register(tech: Technology) -> Technology:
    """Add a technology to the registry (a later registration of the same name replaces it)."""
    missing = {"capital_cost", "fixed_om"} - set(specs_of(tech.parameters))
    if missing:
        raise ValueError(f"technology {tech.name} lacks parameters {sorted(missing)}")
    TECHNOLOGIES[tech.name] = tech
    return tech


def take(arrays: dict, idx) -> dict:
    """The cases ``idx`` of a dict of per-case (N,) arrays; scalars and other values pass through. For models that
    solve a subset of cases (those still iterating, or one structural group)."""
    return {key: (v[idx] if isinstance(v, np.ndarray) and v.ndim == 1 else v) for key, v in arrays.items()}


def unregister(name: str) -> None:
    TECHNOLOGIES.pop(name, None)


def case_shape(feed: Feed, params) -> tuple:
    """The case shape: the broadcast of the feed's arrays and every numeric parameter (sub-records included)."""
    import dataclasses

    shapes = [np.shape(feed.salinity), np.shape(feed.temperature), np.shape(feed.capacity)]

    def walk(rec):
        for f in dataclasses.fields(rec):
            v = getattr(rec, f.name)
            if dataclasses.is_dataclass(v):
                walk(v)
            elif isinstance(v, (np.ndarray, float, int)) and not isinstance(v, (bool, np.bool_)):
                shapes.append(np.shape(v))
    walk(params)
    return np.broadcast_shapes(*shapes)
