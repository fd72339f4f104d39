"""The water activity model contract (:class:`ActivityModel`), its validity range (:class:`Validity`), the error
type of the thermodynamic core, and out-of-range flags.

Kept apart from the registry of models (:mod:`compare.thermo.activity`) so that model modules with their own data
(:mod:`compare.thermo.phreeqc`) depend on this contract only, and the registry imports them, never the reverse.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Callable

import numpy as np

from ..flags import Flag
from .constants import M_W, R, T0_C


class ModelError(ValueError):
    """A model asked for something it cannot do (an unknown model, a water it does not describe, a value beyond
    its reach). The layer that knows which key or option the value came from turns it into an input error."""


@dataclass(frozen=True)
class Validity:
    """The range over which a model was validated against its source."""

    salinity_max: float       # [kg/kg]
    temperature_min: float    # [K]
    temperature_max: float    # [K]
    note: str = ""
    #: the reach: beyond these the model cannot compute at all (input there is refused, not flagged)
    salinity_reach: float | None = None       # [kg/kg]; default: salinity_max
    temperature_reach: tuple | None = None    # ([K], [K]); default: the validated range

    @property
    def max_salinity(self) -> float:
        """The highest salinity the model computes [kg/kg] (validated or extrapolated)."""
        return self.salinity_reach if self.salinity_reach is not None else self.salinity_max

    @property
    def temperature_limits(self) -> tuple:
        """The temperatures [K] the model computes at all."""
        return self.temperature_reach or (self.temperature_min, self.temperature_max)

    def salinity_ok(self, S):
        S = np.asarray(S, dtype=float)
        return (S >= 0) & (S <= self.salinity_max * (1 + 1e-12))

    def temperature_ok(self, T):
        T = np.asarray(T, dtype=float)
        return (T >= self.temperature_min - 1e-9) & (T <= self.temperature_max + 1e-9)

    def describe(self) -> str:
        text = (f"0-{self.salinity_max * 1e3:.4g} g/kg, {self.temperature_min - T0_C:g}-"
                f"{self.temperature_max - T0_C:g} degC")
        return f"{text} ({self.note})" if self.note else text


@dataclass(frozen=True)
class ActivityModel:
    """A water activity model bound to one kind of water. Functions take S [kg/kg] and T [K] arrays that broadcast."""

    name: str
    title: str
    water: str
    simplification: bool
    validity: Validity
    reference: str
    ln_aw: Callable
    gibbs: Callable
    particle_molar_mass: float     # [kg/mol] mean molar mass of solute particles
    extra: dict = field(default_factory=dict, compare=False)

    def mu_w(self, S, T):
        """Chemical potential of water relative to pure water [J/kg of water]."""
        return R * np.asarray(T, dtype=float) * self.ln_aw(S, T) / M_W

    def osmotic_coefficient(self, S, T):
        """Practical osmotic coefficient phi = -ln a_w / (M_w m_sum), m_sum the particle molality [-]."""
        S = np.asarray(S, dtype=float)
        m_sum = S / ((1 - S) * self.particle_molar_mass)
        return -self.ln_aw(S, T) / (M_W * m_sum)

    def dgibbs_dS(self, S, T):
        """dg/dS = mu_salt - mu_water [J/kg], from g and mu_w (S > 0)."""
        S = np.asarray(S, dtype=float)
        return (self.gibbs(S, T) - self.mu_w(S, T)) / S


def range_flags(model: ActivityModel, S, T, what: str = "feed", quantity: str | None = None) -> list[Flag]:
    """``out_of_range`` flags where salinity S [kg/kg] or temperature T [K] of ``what`` (``feed``, ``MED brine``
    ...) falls outside the model's validated range (the model still computes there, by extrapolation). Codes are
    ``<quantity>_salinity`` and ``<quantity>_temperature`` (``quantity`` defaults to ``what``)."""
    quantity = quantity or what
    v = model.validity
    out = []
    one = np.size(S) == 1 and np.size(T) == 1           # a single case: the message gives the value
    s_bad = ~v.salinity_ok(S)
    if np.any(s_bad):
        value = f" {float(np.ravel(S)[0]) * 1e3:.4g} g/kg" if one else ""
        out.append(Flag("out_of_range", f"{quantity}_salinity", f"{quantity}_salinity", model.name,
                        f"{what} salinity{value} is outside the validated range of model {model.name} "
                        f"({v.describe()}); the value is extrapolated", s_bad))
    t_bad = ~v.temperature_ok(T)
    if np.any(t_bad):
        value = f" {float(np.ravel(T)[0]) - T0_C:.4g} degC" if one else ""
        out.append(Flag("out_of_range", f"{quantity}_temperature", f"{quantity}_temperature", model.name,
                        f"{what} temperature{value} is outside the validated range of model {model.name} "
                        f"({v.describe()}); the value is extrapolated", t_bad))
    return out


def simplification_flag(model: ActivityModel) -> list[Flag]:
    """A ``simplification`` flag for a model meant for comparison only (none otherwise)."""
    if not model.simplification:
        return []
    return [Flag("simplification", "activity_model", "water_activity", model.name,
                 f"model {model.name} is a simplification for comparison only, not a property model for design")]
