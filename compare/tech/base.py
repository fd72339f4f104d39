"""The technology contract: inputs (:class:`Feed` plus the technology's own parameters) and the
:class:`Performance` record, and the registry that maps a name to a technology.

A technology is a pure, vectorised function ``evaluate(feed, params) -> Performance``. ``feed`` holds arrays that
broadcast to the case shape (N cases, or 12 months, or N x 12), ``params`` maps each key of the technology's scenario
section to a float or an array of that shape (already in SI). The pipeline never branches on a technology's name:
it calls every registered, enabled technology the same way.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Callable, NamedTuple

import numpy as np

from ..schema import Spec
from ..thermo.activity import ActivityModel


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
    """What a technology returns, per case. Energies per m^3 of product.

    Attributes
    ----------
    electricity : array [J/m^3]
    heat : array [J/m^3] (thermal; zero for a purely electrical process)
    heat_temperature : array [K] temperature at which the heat is taken (NaN when no heat)
    recovery : array [-] mass recovery of the technology's own streams
    product_salinity : array [kg/kg]
    brine_salinity : array [kg/kg]
    infeasible : dict reason -> bool array; a case is infeasible where any reason holds
    flags : dict warning -> bool array; flagged but feasible (out of a correlation's range, target missed ...)
    details : dict name -> array; the technology's own design figures (units in the name)
    """

    electricity: np.ndarray
    heat: np.ndarray
    heat_temperature: np.ndarray
    recovery: np.ndarray
    product_salinity: np.ndarray
    brine_salinity: np.ndarray
    infeasible: dict = field(default_factory=dict)
    flags: dict = field(default_factory=dict)
    details: dict = field(default_factory=dict)

    @property
    def feasible(self) -> np.ndarray:
        shape = np.shape(self.electricity)
        bad = np.zeros(shape, dtype=bool)
        for mask in self.infeasible.values():
            bad = bad | np.broadcast_to(np.asarray(mask, dtype=bool), shape)
        return ~bad


@dataclass(frozen=True)
class Technology:
    """A registered technology: its evaluation function and its scenario section."""

    name: str
    title: str
    evaluate: Callable[[Feed, dict], Performance]
    parameters: dict[str, Spec]
    validity: str
    reference: str


TECHNOLOGIES: dict[str, Technology] = {}

#: keys every technology section has, besides its own (cost keys are read by the accounting layer)
COMMON_PARAMETERS = {
    "enabled": Spec("flag", True, "every registered technology is compared"),
}


def register(tech: Technology) -> Technology:
    """Add a technology to the registry (a later registration of the same name replaces it)."""
    missing = {"capital_cost", "fixed_om"} - set(tech.parameters)
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
