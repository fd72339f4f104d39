"""Parsing scenario values by their :class:`~compare.spec.Spec` into SI (pint lives here and in the presenters).

A :class:`Spec` is plain data (:mod:`compare.spec`). The site sections live in :mod:`compare.scenario`; each
technology declares its own section as a parameter record class beside its model, so adding a technology never
touches the scenario loader.
"""

from __future__ import annotations


import numpy as np

from .errors import InputError
from .units import (SALINITY_EXPECT, currency_of, parse_quantity, parse_salinity, parse_temperature, registry)


from .spec import OPTIONAL, Spec, build, efficiency_spec, specs_of  # noqa: F401


def check_bounds(spec: Spec, value: float, where: str, raw) -> None:
    """One-line error when ``value`` (SI) is outside the spec's bounds; ``raw`` is what the user wrote."""
    if not np.isfinite(value):
        raise InputError(f"{where}: expected {spec.expect} (a finite number), got {_show(raw)}")
    lo_bad = spec.lo is not None and (value <= spec.lo if spec.lo_open else value < spec.lo)
    hi_bad = spec.hi is not None and (value >= spec.hi if spec.hi_open else value > spec.hi)
    if lo_bad or hi_bad:
        why = ""
        if lo_bad and spec.lo == 0:
            why = " (it must be above zero)" if spec.lo_open else " (it must not be negative)"
        raise InputError(f"{where}: expected {spec.expect}, got {_show(raw)}{why}")


def _show(raw) -> str:
    if isinstance(raw, int) and not isinstance(raw, bool) and abs(raw) >= 10 ** 30:
        return f"an integer of about {int(abs(raw).bit_length() * 0.30103)} digits"
    text = f'"{raw}"' if isinstance(raw, str) else repr(raw)
    return text if len(text) <= 120 else text[:117] + "..."


#: largest integer a count may be written as before its own bounds are checked
MAX_COUNT = 10 ** 9


def _count(raw) -> int | None:
    """An integer from an int, an integral float or its text; None if it is not one (or not below MAX_COUNT)."""
    if isinstance(raw, bool):
        return None
    if isinstance(raw, int):
        return raw if abs(raw) < MAX_COUNT else None
    if isinstance(raw, str):
        if len(raw) > 30:
            return None
        try:
            raw = float(raw)
        except ValueError:
            return None
    if isinstance(raw, float) and np.isfinite(raw) and raw.is_integer() and abs(raw) < MAX_COUNT:
        return int(raw)
    return None


#: a recovery (or MED brine salinity) written "max": the design at the scaling limit of an ion composition
AT_LIMIT = "max"


def parse_value(spec: Spec, raw, where: str, *, currency: str = "USD", temperature: float = 298.15,
                water: str = "seawater"):
    """Parse one raw TOML value (or ``--set`` text) by its spec into SI. Raises one-line :class:`InputError`."""
    from .thermo.brine import mass_fraction_from_concentration

    k = spec.kind
    if spec.role is not None and isinstance(raw, str) and raw.strip().lower() == AT_LIMIT:
        return AT_LIMIT            # a recovery or brine salinity at the scaling limit (compare.concentrate)
    if k == "flag":
        if isinstance(raw, bool):
            return raw
        if isinstance(raw, str) and raw.lower() in ("true", "false", "yes", "no", "on", "off"):
            return raw.lower() in ("true", "yes", "on")
        raise InputError(f"{where}: expected true or false, got {_show(raw)}")
    if k == "choice":
        if raw not in spec.choices:
            raise InputError(f"{where}: expected one of {', '.join(map(repr, spec.choices))}, got {_show(raw)}")
        return raw
    if k == "count":
        v = _count(raw)
        if v is None:
            raise InputError(f"{where}: expected {spec.expect}, got {_show(raw)}")
        check_bounds(spec, v, where, raw)
        return v
    if k == "table":
        if not isinstance(raw, dict):
            raise InputError(f"{where}: expected {spec.expect}, got {_show(raw)}")
        return raw
    if k == "temperature":
        v = parse_temperature(raw, where=where)
        check_bounds(spec, v, where, raw)
        return v
    if k == "temperatures":
        if isinstance(raw, list):
            if len(raw) not in (1, 12):
                raise InputError(f"{where}: expected one temperature or twelve monthly values, got a list of "
                                 f"{len(raw)}")
            vals = [parse_temperature(x, where=f"{where}[{i}]") for i, x in enumerate(raw)]
            for i, (v, x) in enumerate(zip(vals, raw)):
                check_bounds(spec, v, f"{where}[{i}]", x)
            return np.array(vals)
        v = parse_temperature(raw, where=where)
        check_bounds(spec, v, where, raw)
        return np.array([v])
    if k == "salinity":
        kind, v = parse_salinity(raw, where=where)
        if kind == "concentration":
            v = float(mass_fraction_from_concentration(v, temperature, water))
        check_bounds(spec, v, where, raw)
        return v
    if k == "nacl_concentration":
        # a molality of NaCl ("1.5 mol/kg", per kg of water) or a mass fraction ("80 g/kg"), as a mass fraction
        from .thermo.constants import M_NACL
        if isinstance(raw, bool) or not isinstance(raw, str):
            raise InputError(f"{where}: expected {spec.expect}, got {_show(raw)} (give the unit)")
        q = parse_quantity(raw, where=where, expect=spec.expect)
        if q.dimensionality == registry().get_dimensionality("[substance]/[mass]"):
            m = float(q.to("mol/kg").magnitude)
            if m < 0:
                raise InputError(f"{where}: expected {spec.expect}, got {_show(raw)}")
            v = m * M_NACL / (1 + m * M_NACL)
        elif q.dimensionless and str(q.units) != "dimensionless":
            v = float(q.to("").magnitude)
        else:
            raise InputError(f"{where}: expected {spec.expect}, got {_show(raw)}")
        check_bounds(spec, v, where, raw)
        return v
    if k == "fraction":
        if isinstance(raw, bool):
            raise InputError(f"{where}: expected {spec.expect}, got {_show(raw)}")
        q = parse_quantity(raw, where=where, expect=spec.expect)
        if not q.dimensionless:
            raise InputError(f"{where}: expected {spec.expect}, got {_show(raw)}")
        v = float(q.to("").magnitude)
        check_bounds(spec, v, where, raw)
        return v
    if k in ("quantity", "money"):
        if isinstance(raw, bool) or not isinstance(raw, (str, int, float)):
            raise InputError(f"{where}: expected {spec.expect}, got {_show(raw)}")
        q = parse_quantity(raw, where=where, expect=spec.expect)
        ureg = registry()
        unit = spec.unit
        if k == "money":
            cur = currency_of(q)
            if cur is None:
                raise InputError(f"{where}: expected {spec.expect}, got {_show(raw)} (no currency)")
            if cur != currency:
                raise InputError(f"{where}: expected a price in the scenario currency {currency}, got {_show(raw)}")
            unit = f"{currency} * {spec.unit}" if spec.unit else currency
        target = ureg.Unit(unit) if unit else ureg.Unit("")
        if q.dimensionality != target.dimensionality:
            raise InputError(f"{where}: expected {spec.expect}, got {_show(raw)}")
        v = float(q.to(target).magnitude)
        check_bounds(spec, v, where, raw)
        return v
    raise AssertionError(f"unknown spec kind {k}")  # pragma: no cover


efficiency = efficiency_spec

__all__ = ["Spec", "parse_value", "efficiency", "SALINITY_EXPECT", "parse_defaults"]


def parse_defaults(cls, **over):
    """A technology's parameter record (of class ``cls``) in SI from its specs' defaults, with ``over`` (raw texts,
    or arrays and choices as they are; sub-table keys with ``__`` for the dot, ``regenerator__flux``) in their place;
    keys whose default is :data:`OPTIONAL` give None. For tests and benchmarks that call a technology without a
    scenario file."""
    over = {k.replace("__", "."): v for k, v in over.items()}
    out = {}
    for key, spec in specs_of(cls).items():
        raw = over.get(key, spec.default)
        if isinstance(raw, np.ndarray) or spec.kind in ("choice", "flag"):
            out[key] = raw
        elif isinstance(raw, str) and raw == OPTIONAL:
            out[key] = None
        else:
            out[key] = parse_value(spec, raw, key)
    return build(cls, out.__getitem__)
