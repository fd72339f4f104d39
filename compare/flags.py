"""Flags: what a result says about itself, as data.

A :class:`Flag` is raised by a thermodynamic function, a technology or the accounting, and carries a per-case mask.
The pipeline merges them, every output shows them (``flags`` as objects, ``warnings`` as their messages), and
``--strict`` refuses by kind. No code matches a flag's message: ``kind`` and ``code`` are what programs read.

Kinds
-----
``out_of_range``
    a model used outside its validated range (the value is computed by extrapolation inside the model's reach).
``infeasible``
    the design cannot work; ``code`` says why (``max_pressure``, ``driving_force``, ``scaling``,
    ``heat_temperature`` ...). An infeasible case has no energy, cost or emission figures.
``off_target``
    the product misses its target.
``simplification``
    a model meant for comparison only.
``clipped``
    a sampled value held to a bound.
``note``
    anything else worth saying (a design at a limit, an approximation used).
"""

from __future__ import annotations

from dataclasses import dataclass, field, replace

import numpy as np

KINDS = ("out_of_range", "infeasible", "off_target", "simplification", "clipped", "note")


@dataclass(frozen=True, eq=False)
class Flag:
    """One thing a result says about itself, for the cases where ``mask`` holds.

    Attributes
    ----------
    kind : one of :data:`KINDS`
    code : a short machine-readable reason, e.g. ``max_pressure`` or ``brine_salinity``
    quantity : the quantity concerned, e.g. ``brine_salinity`` or ``feed_temperature`` ("" when none)
    model : the model or technology that raised it, e.g. ``teos10`` or ``ro``
    message : one sentence for people; never matched by code
    mask : bool array (per case; broadcasts to the case shape) or a bool for every case
    """

    kind: str
    code: str
    quantity: str
    model: str
    message: str
    mask: np.ndarray | bool = field(default=True, repr=False)

    def __post_init__(self):
        if self.kind not in KINDS:
            raise ValueError(f"unknown flag kind {self.kind!r}; expected one of {KINDS}")

    def where(self, shape) -> np.ndarray:
        """The mask as a bool array of ``shape``."""
        return np.broadcast_to(np.asarray(self.mask, dtype=bool), shape)

    def any(self) -> bool:
        return bool(np.any(self.mask))

    def with_mask(self, mask) -> "Flag":
        return replace(self, mask=mask)

    def within(self, model: str, prefix: str) -> "Flag":
        """The same flag raised by a part of another model (FO's RO regenerator): its model and message say so."""
        return replace(self, model=f"{model}/{self.model}", message=f"{prefix}{self.message}")

    def record(self) -> dict:
        """The output form: ``{kind, code, quantity, model, message}``."""
        return {"kind": self.kind, "code": self.code, "quantity": self.quantity, "model": self.model,
                "message": self.message}


def infeasible_mask(flags, shape) -> np.ndarray:
    """True where any ``infeasible`` flag holds."""
    bad = np.zeros(shape, dtype=bool)
    for f in flags:
        if f.kind == "infeasible":
            bad = bad | f.where(shape)
    return bad


def reduce_cases(flags, shape, axis) -> list[Flag]:
    """The flags with their masks reduced by ``any`` over ``axis`` of ``shape`` (periods of a case); flags that hold
    nowhere are dropped."""
    out = []
    for f in flags:
        m = f.where(shape).any(axis=axis)
        if m.any():
            out.append(f.with_mask(m))
    return out


def at(flags, i) -> list[Flag]:
    """The flags that hold for case ``i`` of 1-d masks."""
    return [f for f in flags if bool(np.asarray(f.mask, dtype=bool).reshape(-1)[i]
                                      if np.ndim(f.mask) else f.mask)]


def strict_text(message: str) -> str:
    """An out-of-range message as ``--strict`` refuses it: not extrapolated, refused."""
    for tail in ("; the value is extrapolated", "; extrapolated"):
        message = message.replace(tail, "")
    return f"{message}; refused (--strict)"
