"""Parameter specifications as plain data: what a scenario key accepts, its default and the default's source.

A technology declares its parameters as a frozen dataclass whose fields are made by :func:`param`; each field's
metadata holds its :class:`Spec`. The scenario layer derives the section's keys from those fields
(:func:`specs_of`) and builds the record with SI values (:func:`build`), so a technology's module imports neither
pint nor the scenario loader. A field made by :func:`table` holds a nested parameter record: a sub-table of the
section (``[fo.regenerator]``), whose keys are named with dots (``regenerator.max_pressure``).
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass, field
from typing import Any, Callable

#: default of a key that may stay unset: the technology receives None for it
OPTIONAL = "(none)"


@dataclass(frozen=True)
class Spec:
    """One scenario key.

    kind: ``quantity`` (converted to ``unit``), ``fraction`` (dimensionless, may be written with %), ``count``
    (integer), ``flag`` (true/false), ``choice``, ``salinity``, ``nacl_concentration`` (a molality of NaCl or a mass
    fraction, as a mass fraction), ``temperature``, ``temperatures`` (one value or twelve monthly values),
    ``money`` (currency times ``unit``), ``table`` (a TOML table, checked by the consumer).
    ``lo``/``hi`` bound the SI value (``lo_open``/``hi_open`` exclude the bound). ``role`` marks a key the
    scenario checks across sections: ``recovery`` (the technology's mass recovery) or ``brine_salinity``.
    """

    kind: str
    default: Any
    source: str
    unit: str | None = None
    expect: str = ""
    lo: float | None = None
    hi: float | None = None
    lo_open: bool = False
    hi_open: bool = False
    choices: tuple = ()
    help: str = ""
    role: str | None = None

    @property
    def required(self) -> bool:
        return self.default is None


def param(kind: str, default, source: str, unit: str | None = None, expect: str = "", **kw):
    """A dataclass field of a parameter record, its :class:`Spec` in the metadata."""
    return field(metadata={"spec": Spec(kind, default, source, unit, expect, **kw)})


def efficiency(default, source, what="an efficiency"):
    """A fraction in (0, 1]."""
    return param("fraction", default, source, expect=f"{what} in (0, 1], e.g. 0.85 or \"85 %\"", lo=0.0, hi=1.0,
                 lo_open=True)


def efficiency_spec(default, source, what="an efficiency") -> Spec:
    """The :class:`Spec` of :func:`efficiency`, for site sections that are not records."""
    return efficiency(default, source, what).metadata["spec"]


def table(cls):
    """A field holding a nested parameter record (a sub-table of the section)."""
    return field(metadata={"table": cls})


def specs_of(cls, prefix: str = "") -> dict[str, Spec]:
    """Every key of a parameter record class, sub-tables as dotted names, in declaration order."""
    out: dict[str, Spec] = {}
    for f in dataclasses.fields(cls):
        if "table" in f.metadata:
            out.update(specs_of(f.metadata["table"], f"{prefix}{f.name}."))
        else:
            out[f"{prefix}{f.name}"] = f.metadata["spec"]
    return out


def build(cls, get: Callable[[str], Any], prefix: str = ""):
    """A parameter record of ``cls`` with each key's value from ``get(dotted_name)`` (sub-tables recursively)."""
    kw = {}
    for f in dataclasses.fields(cls):
        if "table" in f.metadata:
            kw[f.name] = build(f.metadata["table"], get, f"{prefix}{f.name}.")
        else:
            kw[f.name] = get(f"{prefix}{f.name}")
    return cls(**kw)


def values(record) -> dict[str, Any]:
    """The record's top-level values by name (sub-records stay records)."""
    return {f.name: getattr(record, f.name) for f in dataclasses.fields(record)}


def subrecord(cls, name: str, fields_from, drop=(), change=None, extra=(), source_prefix=""):
    """A parameter record class made from another's fields (``fields_from``), less ``drop``, with the specs in
    ``change`` (name -> dict of Spec fields to replace) and ``extra`` fields (name, field) added."""
    change = change or {}
    specs = []
    for f in dataclasses.fields(fields_from):
        if f.name in drop:
            continue
        spec = f.metadata["spec"]
        if f.name in change:
            spec = dataclasses.replace(spec, **change[f.name])
        if source_prefix:
            spec = dataclasses.replace(spec, source=f"{source_prefix}{spec.source}")
        specs.append((f.name, Any, field(metadata={"spec": spec})))
    specs += [(n, Any, fl) for n, fl in extra]
    made = dataclasses.make_dataclass(name, specs, frozen=True)
    made.__module__ = cls
    return made
