"""Scenario files: TOML with quantities as strings with units, validated, defaulted (each default with its source),
overridable with dotted keys, and converted to SI.

Every problem in a file is reported at once, one line each, as ``FILE: section.key: expected ..., got ...``; the CLI
exits 2 and writes nothing. Unknown keys are errors with the closest valid key suggested.
"""

from __future__ import annotations

import re

import difflib
import hashlib
import tomllib
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np

from .errors import InputError, InputErrors
from .schema import AT_LIMIT, OPTIONAL, Spec, efficiency, parse_value
from .spec import specs_of
from .thermo.activity import MODELS, WATERS
from .units import CURRENCIES

FEED_TEMPERATURE = "the feed temperature"
ION_TOTAL = "(the total of feed.ions)"
BY_ANTISCALANT = "(by scaling.antiscalant)"


def _scaling_section() -> dict[str, Spec]:
    si = 'a saturation index (log10 of the saturation ratio) such as 0.3'
    return {
        "enabled": Spec("flag", True, "tool default: scaling is checked for every ion composition (feed.water = "
                        "\"ions\")"),
        "antiscalant": Spec("flag", True, "common practice: antiscalant dosing is usual in RO and MED plants; it "
                            "chooses the default limits"),
        "above_limit": Spec("choice", "infeasible", "tool default: a recovery above the scaling limit cannot run "
                            "(\"warning\": it is flagged, e.g. when further scale control is assumed)",
                            choices=("infeasible", "warning")),
        "calcite_si": Spec("fraction", BY_ANTISCALANT, "", expect=si, lo=-5.0, hi=5.0),
        "gypsum_si": Spec("fraction", BY_ANTISCALANT, "", expect=si, lo=-5.0, hi=5.0),
        "barite_si": Spec("fraction", BY_ANTISCALANT, "", expect=si, lo=-5.0, hi=5.0),
        "celestite_si": Spec("fraction", BY_ANTISCALANT, "", expect=si, lo=-5.0, hi=5.0),
        "silica": Spec("quantity", BY_ANTISCALANT, "", "kg/m^3",
                       'a silica (SiO2) concentration in the concentrate such as "150 mg/L"', lo=0.0, lo_open=True),
    }


#: scaling keys -> mineral names of :mod:`compare.thermo.scaling`
SCALING_KEYS = {"calcite_si": "Calcite", "gypsum_si": "Gypsum", "barite_si": "Barite", "celestite_si": "Celestite",
                "silica": "silica"}

SITE_SECTIONS: dict[str, dict[str, Spec]] = {
    "site": {
        "capacity": Spec("quantity", None, "required", "m^3/s", 'a product flow such as "40000 m^3/day" or "10 MGD"',
                         lo=0.0, lo_open=True),
        "availability": Spec("fraction", "0.95", "common practice: typical plant availability (no source)",
                             expect='an availability in (0, 1], e.g. 0.95 or "95 %"', lo=0.0, hi=1.0, lo_open=True),
    },
    "feed": {
        "water": Spec("choice", "seawater", "tool default: seawater of Reference Composition", choices=WATERS),
        "salinity": Spec("salinity", ION_TOTAL, "required, except for an ion composition (then the ions' total)",
                         expect="a salinity above zero", lo=0.0, lo_open=True),
        "temperature": Spec("temperatures", None, "required",
                            expect='a temperature between 0 and 100 degC such as "25 degC"',
                            lo=273.15, hi=373.15),
        "ions": Spec("table", OPTIONAL, "tool default: none; needed when water = \"ions\"",
                     expect='a table of ion concentrations such as { Na = "10.8 g/kg", Cl = "19.4 g/kg", pH = 8.1 }'),
        "charge_balance_limit": Spec("fraction", "5 %", "from memory: the usual acceptance of a water analysis, "
                                     "cations and anions within 5 % of their sum (Standard Methods, section 1030 E)",
                                     expect='a fraction in (0, 1) such as "5 %"', lo=0.0, hi=1.0, lo_open=True,
                                     hi_open=True),
        "ions_total_tolerance": Spec("fraction", "10 %", "common practice: the ions' total within 10 % of a given "
                                     "salinity", expect='a fraction in (0, 1) such as "10 %"', lo=0.0, hi=1.0,
                                     lo_open=True, hi_open=True),
        "model": Spec("choice", OPTIONAL, "tool default: the model the water implies (teos10, pitzer-nacl, phreeqc)",
                      choices=tuple(MODELS)),
    },
    "product": {
        "salinity": Spec("salinity", "0.5 g/kg", "common practice: a common drinking-water TDS target of about 500 mg/L",
                         expect="a product salinity of zero or more", lo=0.0),
    },
    "energy": {
        "electricity_price": Spec("money", "0.08 USD/kWh", "common practice: an illustrative industrial tariff; give your own",
                                  "1/J", 'a price per energy such as "0.08 USD/kWh"', lo=0.0),
        "electricity_emissions": Spec("quantity", "0.45 kg/kWh",
                                      "from memory: world-average grid intensity, about 0.45 kg CO2/kWh",
                                      "kg/J", 'an emission factor such as "0.45 kg/kWh"', lo=0.0),
        "heat_price": Spec("money", "0.02 USD/kWh", "common practice: an illustrative price of low-pressure steam or waste heat; give your own",
                           "1/J", 'a price per energy such as "0.02 USD/kWh"', lo=0.0),
        "heat_emissions": Spec("quantity", "0.2 kg/kWh",
                               "from memory: natural-gas boiler, about 0.18 kg CO2/kWh of fuel at 90 % efficiency",
                               "kg/J", 'an emission factor such as "0.2 kg/kWh"', lo=0.0),
        "heat_temperature": Spec("temperature", "110 degC",
                                 "common practice: low-pressure steam available at an industrial site",
                                 expect='a temperature between 0 and 400 degC such as "110 degC"', lo=273.15,
                                 hi=673.15),
        "heat_to_work": Spec("choice", "exergy", "exergy of heat at its temperature, Q (1 - T0/T) (Bejan 2016, Advanced Engineering Thermodynamics)",
                             choices=("exergy", "lost_work")),
        "dead_state_temperature": Spec("temperature", FEED_TEMPERATURE, "tool default: the feed temperature of each period",
                                       expect='a temperature such as "25 degC"', lo=173.15, hi=373.15),
        "condenser_temperature": Spec("temperature", "40 degC",
                                      "common practice: steam-turbine condenser (used by heat_to_work = \"lost_work\")",
                                      expect='a temperature such as "40 degC"', lo=273.15, hi=373.15),
        "turbine_efficiency": efficiency("0.85", "common practice: isentropic efficiency of a steam turbine's last stages"),
    },
    "scaling": _scaling_section(),
    "finance": {
        "currency": Spec("choice", "USD", "tool default: US dollars", choices=CURRENCIES),
        "discount_rate": Spec("fraction", "0.07", "common practice: a real discount rate for water infrastructure",
                              expect='a discount rate in [0, 1), e.g. 0.07 or "7 %"', lo=0.0, hi=1.0, hi_open=True),
        "lifetime": Spec("quantity", "25 year", "common practice: desalination plant economic life", "year",
                         'a lifetime such as "25 year"', lo=0.0, lo_open=True),
    },
}

# the site-wide cost keys ([plant], [brine]) live beside the cost build-up
from .costing import SITE_SECTIONS as _COST_SECTIONS  # noqa: E402

SITE_SECTIONS.update(_COST_SECTIONS)

_GSD = Spec("fraction", None, "", expect="a geometric standard deviation above 1, e.g. 1.2", lo=1.0, lo_open=True)
_TEMPERATURE_SPREAD = Spec("quantity", None, "", "K", 'a temperature difference above zero such as "2 K"', lo=0.0,
                           lo_open=True)
DISTRIBUTIONS = {"triangular": ("low", "mode", "high"), "uniform": ("low", "high"), "normal": ("mean", "sd"),
                 "lognormal": ("median", "gsd")}


@dataclass(frozen=True)
class Scenario:
    """A resolved scenario: SI values per section and key, each with its source and the text it came from."""

    name: str
    path: str | None
    sha256: str | None
    values: dict[str, dict[str, Any]]
    sources: dict[str, str]
    texts: dict[str, Any]
    overrides: tuple[str, ...] = ()
    uncertainty: dict = field(default_factory=dict)
    claims: tuple = ()      # the [claim] entries, each a dict from parse_claims
    correlation: dict = field(default_factory=dict)   # {(key_a, key_b): rank correlation}, key_a < key_b

    @property
    def currency(self) -> str:
        return self.values["finance"]["currency"]

    @property
    def technologies(self) -> list[str]:
        from .tech.base import TECHNOLOGIES
        return [n for n in TECHNOLOGIES if self.values.get(n, {}).get("enabled", False)]

    def get(self, dotted: str):
        section, key = dotted.split(".", 1)
        return self.values[section][key]


def sections() -> dict[str, dict[str, Spec]]:
    """Every section's specs: the site's and each registered technology's."""
    from .tech import load_builtin
    from .tech.base import COMMON_PARAMETERS, TECHNOLOGIES

    load_builtin()
    out = dict(SITE_SECTIONS)
    for name, tech in TECHNOLOGIES.items():
        out[name] = {**COMMON_PARAMETERS, **specs_of(tech.parameters)}
    return out


def nearest(word: str, options) -> str:
    """A hint naming the closest of ``options`` to ``word`` ("did you mean ...?"), or an empty string."""
    m = difflib.get_close_matches(word, list(options), n=1, cutoff=0.5)
    return f" (did you mean {m[0]!r}?)" if m else ""


def parse_override(text: str) -> tuple[str, str, str]:
    """``"ro.recovery=0.5"`` -> ``("ro", "recovery", "0.5")``."""
    if "=" not in text or "." not in text.split("=", 1)[0]:
        raise InputError(f'--set: expected section.key=value such as "ro.recovery=0.5", got "{text}"')
    key, value = text.split("=", 1)
    section, name = key.strip().split(".", 1)
    return section, name, value.strip()


def _resolve_order(specs: dict[str, Spec]) -> list[str]:
    first = [k for k in ("currency", "water", "temperature") if k in specs]
    return first + [k for k in specs if k not in first]


def resolve(data: dict, *, label: str, path: str | None = None, sha256: str | None = None,
            overrides: list[str] | tuple[str, ...] = ()) -> Scenario:
    """Validate a parsed scenario dict, apply ``overrides``, fill defaults, convert to SI.

    Raises :class:`InputErrors` with every problem found, each line prefixed with ``label``.
    """
    refused: list[tuple] = []
    text_lines = text_errors(data, label, found=refused)
    if text_lines:
        # go on without the refused text, so that the file's other problems are reported too, each key once
        data = _without(data, refused)
        try:
            resolve(data, label=label, path=path, sha256=sha256, overrides=overrides)
            rest = []
        except InputError as exc:
            rest = list(getattr(exc, "messages", [str(exc)]))
        said = [".".join(map(str, keys)) for keys, _ in refused]
        raise InputErrors(text_lines + [e for e in rest if not _about(e, label, said)])
    errors: list[str] = []
    specs = sections()
    data = {k: (dict(v) if isinstance(v, dict) else v) for k, v in data.items()}
    # a sub-table such as [fo.regenerator] becomes dotted keys of its section ("regenerator.max_pressure") where the
    # section declares such keys
    for sec, body in data.items():
        if isinstance(body, dict) and sec in specs:
            for key in [k for k in body if any(name.startswith(f"{k}.") for name in specs[sec])]:
                table = body.pop(key)
                if not isinstance(table, dict):
                    errors.append(f"{label}: {sec}.{key}: expected a table [{sec}.{key}] of its keys, got {table!r}")
                    continue
                for sub, v in table.items():
                    body[f"{key}.{sub}"] = v
    sources: dict[str, str] = {}
    texts: dict[str, Any] = {}

    # overrides land in the raw data first, so that they go through the same validation
    seen: dict[str, str] = {}
    for text in overrides:
        try:
            sec, key, value = parse_override(text)
        except InputError as exc:
            errors.append(str(exc))
            continue
        dotted = f"{sec}.{key}"
        if dotted in seen:
            errors.append(f"--set: {dotted} is set twice (\"{seen[dotted]}\" and \"{text}\")")
            continue
        seen[dotted] = text
        if sec not in specs:
            errors.append(f"--set {dotted}: unknown section {sec!r}{nearest(sec, specs)}")
            continue
        if key not in specs[sec]:
            errors.append(f"--set {dotted}: unknown key {key!r} in [{sec}]{nearest(key, specs[sec])}")
            continue
        data.setdefault(sec, {})
        if not isinstance(data[sec], dict):
            errors.append(f"--set {dotted}: [{sec}] is not a table in the file")
            continue
        data[sec][key] = value
        sources[dotted] = "--set"

    name = data.pop("name", None)
    if name is not None and not isinstance(name, str):
        errors.append(f"{label}: name: expected a string, got {name!r}")
        name = None
    uncertainty_raw = data.pop("uncertainty", {})
    claims_raw = data.pop("claim", None)
    correlation_raw = data.pop("correlation", None)

    for sec, body in data.items():
        if sec not in specs:
            hint = nearest(sec, specs) or (f" (the sections are {', '.join(f'[{k}]' for k in specs)}, "
                                           "[uncertainty], [correlation] and [claim])")
            errors.append(f"{label}: [{sec}]: expected a known section, got an unknown one{hint}")
        elif not isinstance(body, dict):
            errors.append(f"{label}: {sec}: expected a table [{sec}], got {body!r}")

    values: dict[str, dict[str, Any]] = {}
    slips: set[str] = set()      # keys an unknown key was probably meant as: their absence is the same slip
    ctx = {"currency": "USD", "temperature": 298.15, "water": "seawater"}
    first = ["finance", "feed", "site", "product", "energy"]
    order = first + [s for s in specs if s not in first]
    for sec in order:
        body = data.get(sec, {})
        if not isinstance(body, dict):
            body = {}
        for key in body:
            if key not in specs[sec]:
                errors.append(f"{label}: {sec}.{key}: unknown key{nearest(key, specs[sec])}")
                slips.update(f"{sec}.{k}" for k in difflib.get_close_matches(key, list(specs[sec]), n=1, cutoff=0.5))
        values[sec] = {}
        for key in _resolve_order(specs[sec]):
            spec = specs[sec][key]
            dotted = f"{sec}.{key}"
            where = f"{label}: {dotted}" if sources.get(dotted) != "--set" else f"--set {dotted}"
            if key in body:
                raw = body[key]
                sources.setdefault(dotted, "file")
            elif spec.required:
                errors.append(f"{label}: {dotted}: required, expected {spec.expect}")
                continue
            else:
                raw = spec.default
                sources[dotted] = f"default ({spec.source})"
            texts[dotted] = raw
            if raw == OPTIONAL:
                values[sec][key] = None
                continue
            if raw == FEED_TEMPERATURE:
                values[sec][key] = ctx["temperature"]
                continue
            if raw in (ION_TOTAL, BY_ANTISCALANT):       # filled in below, once their inputs are known
                values[sec][key] = None
                continue
            try:
                if spec.kind == "money" and key not in body and not raw.split()[1].startswith(ctx["currency"]):
                    raise InputError(f"{where}: the default ({raw}) is in another currency; give a value in "
                                     f"{ctx['currency']}")
                v = parse_value(spec, raw, where, **ctx)
            except InputError as exc:
                errors.append(str(exc))
                continue
            values[sec][key] = v
            if dotted == "finance.currency":
                ctx["currency"] = v
            elif dotted == "feed.water":
                ctx["water"] = v
            elif dotted == "feed.temperature":
                ctx["temperature"] = float(np.mean(v))

    _feed_ions(values, sources, label, errors)
    _scaling_limits(values, sources)
    for dotted, raw in list(texts.items()):       # computed defaults show their value
        sec, key = dotted.split(".", 1)
        if raw in (ION_TOTAL, BY_ANTISCALANT) and values.get(sec, {}).get(key) is not None:
            v = values[sec][key]
            texts[dotted] = (f"{v * 1e3:.4g} g/kg" if key == "salinity" else f"{v * 1e3:.4g} mg/L"
                             if key == "silica" else f"{v:g}")
    _cross_checks(values, label, errors)
    _at_limit_checks(values, sources, label, errors)
    if not errors:
        errors += reach_errors(values, lambda dotted: (f"--set {dotted}" if sources.get(dotted) == "--set"
                                                       else f"{label}: {dotted}"), texts)
    uncertainty = _uncertainty(uncertainty_raw, specs, label, errors, ctx, data)
    correlation = {}
    if correlation_raw is not None:
        from .uncertainty import parse_correlation
        correlation = parse_correlation(correlation_raw, list(uncertainty_raw) if isinstance(uncertainty_raw, dict)
                                        else [], label, errors)
    claims = parse_claims(claims_raw, label, errors, technologies=[s for s in specs if s not in SITE_SECTIONS]) \
        if claims_raw is not None else ()
    errors = [e for e in errors if not any(e.startswith(f"{label}: {d}: required") for d in slips)]
    if errors:
        raise InputErrors(errors)
    if not name:
        name = Path(path).stem if path else "scenario"
    return Scenario(name, path, sha256, values, sources, texts, tuple(overrides), uncertainty, claims, correlation)


def _cross_checks(values, label, errors):
    feed = values.get("feed", {})
    product = values.get("product", {})
    S_f, S_p = feed.get("salinity"), product.get("salinity")
    if S_f is not None and S_p is not None and S_p >= S_f:
        errors.append(f"{label}: product.salinity: expected a product salinity below the feed salinity "
                      f"({S_f * 1e3:.4g} g/kg), got {S_p * 1e3:.4g} g/kg")
    water = feed.get("water")
    if water == "ions" and not feed.get("ions"):
        errors.append(f'{label}: feed.ions: required when feed.water = "ions", expected a table such as '
                      '{ Na = "10.8 g/kg", Cl = "19.4 g/kg" }')
    if water and water != "ions" and feed.get("ions"):
        errors.append(f'{label}: feed.ions: only used when feed.water = "ions", got water = "{water}"')
    model = feed.get("model")
    if model and water:
        from .thermo.activity import get_model
        if water == "ions":
            if model not in ("phreeqc", "ideal", "vant-hoff"):
                errors.append(f'{label}: feed.model: expected phreeqc, ideal or vant-hoff for water = "ions", '
                              f"got {model!r}")
        elif model == "phreeqc":
            errors.append(f'{label}: feed.model: phreeqc needs feed.water = "ions", got water = "{water}"')
        else:
            try:
                get_model(model, water)
            except ValueError as exc:
                errors.append(f"{label}: feed.model: {exc}")


def _at_limit_checks(values, sources, label, errors):
    """A recovery or brine salinity written "max" needs an ion composition with its scaling checked."""
    feed, sc = values.get("feed", {}), values.get("scaling", {})
    for sec, body in values.items():
        for key, v in (body or {}).items():
            if isinstance(v, str) and v == AT_LIMIT and values.get(sec, {}).get("enabled", True) and \
                    (feed.get("water") != "ions" or not sc.get("enabled", True)):
                where = f"--set {sec}.{key}" if sources.get(f"{sec}.{key}") == "--set" else f"{label}: {sec}.{key}"
                errors.append(f'{where}: "max" designs at the scaling limit, which needs an ion '
                              f'composition (feed.water = "ions") with scaling.enabled = true, got water = '
                              f'"{feed.get("water")}"' + ("" if sc.get("enabled", True) else
                                                          " and scaling.enabled = false"))


def _feed_ions(values, sources, label, errors):
    """An ion composition: parsed into mass fractions (mg/L through the feed's density), its charge balance and its
    total checked, the feed salinity computed from it when not given."""
    from .thermo import phreeqc
    from .thermo.brine import density
    from .units import parse_salinity

    feed = values.get("feed", {})
    water, ions, S_f = feed.get("water"), feed.get("ions"), feed.get("salinity")
    if water != "ions" and "salinity" in feed and S_f is None:
        errors.append(f"{label}: feed.salinity: required, expected a salinity above zero")
    if water != "ions" or not ions:
        return
    needs_phreeqc = feed.get("model") in (None, "phreeqc") or values.get("scaling", {}).get("enabled", True)
    if needs_phreeqc and not phreeqc.available():
        errors.append(f"{label}: feed.water: {phreeqc.MISSING}")
        return
    n_errors = len(errors)
    T = float(np.mean(feed["temperature"])) if feed.get("temperature") is not None else 298.15
    mass, volume, ph = {}, {}, None
    for ion, raw in ions.items():
        where = f"{label}: feed.ions.{ion}"
        if ion.lower() == "ph":
            try:
                ph = float(raw)
            except (TypeError, ValueError):
                ph = None
            if ph is None or isinstance(raw, bool) or not 0.0 < ph < 14.0:
                errors.append(f"{where}: expected a pH between 0 and 14 such as 7.8, got {raw!r}")
                return
            continue
        if ion not in phreeqc.IONS:
            errors.append(f"{where}: unknown ion{nearest(ion, phreeqc.IONS)}; expected one of "
                          f"{', '.join(phreeqc.IONS)} or pH")
            continue
        try:
            kind, value = parse_salinity(raw, where=where)
        except InputError as exc:
            errors.append(str(exc))
            continue
        (volume if kind == "concentration" else mass)[ion] = value
    if len(errors) > n_errors:
        return
    if ph is None and any(k in mass or k in volume for k in phreeqc.NEEDS_PH):
        errors.append(f"{label}: feed.ions.pH: required with HCO3 or CO3 (carbonate speciation), expected a pH "
                      "such as 7.8")
        return
    # mg/L -> mass fraction with the density of the feed (given, or of the ions' own total, by a fixed point)
    S = S_f if S_f is not None else sum(mass.values()) + sum(volume.values()) / 1000.0
    for _ in range(6 if S_f is None else 1):
        rho = float(density(S, T, "ions"))
        fractions = {**mass, **{k: v / rho for k, v in volume.items()}}
        if S_f is None:
            S = sum(fractions.values())
    comp = phreeqc.Composition.of(fractions, ph, T)
    if comp.salinity <= 0:
        errors.append(f"{label}: feed.ions: expected at least one ion with a positive concentration")
        return
    problem = phreeqc.check_charge_balance(comp, feed["charge_balance_limit"])
    if problem is None and S_f is not None:
        problem = phreeqc.check_total(comp, S_f, feed["ions_total_tolerance"])
    if problem:
        errors.append(f"{label}: feed.ions: {problem}")
        return
    if S_f is None:
        feed["salinity"] = comp.salinity
        sources["feed.salinity"] = "computed: the total of feed.ions"
    feed["ions"] = comp


def _scaling_limits(values, sources):
    """Limits left to their default take the value for the antiscalant choice, with its source."""
    from .thermo.scaling import DEFAULT_LIMITS

    sc = values.get("scaling", {})
    dosed = bool(sc.get("antiscalant", True))
    for key, mineral in SCALING_KEYS.items():
        if key in sc and sc[key] is None:
            without, with_, source = DEFAULT_LIMITS[mineral]
            sc[key] = (with_ if dosed else without).value
            sources[f"scaling.{key}"] = (f"default {'with' if dosed else 'without'} antiscalant ({source})")


def reach_errors(values: dict, where, texts: dict, varied: dict | None = None) -> list[str]:
    """One line per value beyond what the tool can compute at all: a feed salinity or temperature beyond the
    activity model's reach, or a technology's recovery (or brine limit) that leaves no liquid brine within it.
    ``values`` are the scenario's SI values (section -> key -> value), ``varied`` optional arrays of case values
    (dotted key -> array) that replace them; ``where(dotted)`` names the key as the user gave it, ``texts`` what
    was written."""
    from .tech.base import TECHNOLOGIES
    from .thermo.activity import model_validity
    from .thermo.constants import T0_C

    varied = varied or {}
    feed = values.get("feed", {})

    def get(dotted):
        if dotted in varied:
            return np.asarray(varied[dotted], dtype=float)
        sec, key = dotted.split(".", 1)
        return values.get(sec, {}).get(key)

    def shown(dotted, v):
        if dotted in varied:
            return f"{v:.6g} (a varied value)"
        t = texts.get(dotted)
        return f'"{t}"' if isinstance(t, str) else repr(t)

    water = feed.get("water")
    if water is None or feed.get("salinity") is None or feed.get("temperature") is None:
        return []
    v = model_validity(feed.get("model"), water)
    s_max = v.max_salinity
    t_lo, t_hi = v.temperature_limits
    out = []
    S_f = np.asarray(get("feed.salinity"), dtype=float)
    if np.any(S_f > s_max):
        worst = float(np.max(S_f))
        out.append(f"{where('feed.salinity')}: expected a salinity within the reach of the {water} activity model "
                   f"(up to {s_max * 1e3:.4g} g/kg), got {shown('feed.salinity', worst * 1e3)}"
                   + ("" if "feed.salinity" in varied or str(texts.get("feed.salinity", "")).endswith("g/kg")
                      else f" ({worst * 1e3:.4g} g/kg)"))
        return out
    T = np.asarray(get("feed.temperature"), dtype=float)
    if np.any((T < t_lo - 1e-9) | (T > t_hi + 1e-9)):
        worst = float(T.ravel()[np.argmax(np.abs(T.ravel() - 0.5 * (t_lo + t_hi)))])
        out.append(f"{where('feed.temperature')}: expected a temperature within the reach of the {water} activity "
                   f"model ({t_lo - T0_C:g}-{t_hi - T0_C:g} degC), got {worst - T0_C:.4g} degC")
    s_fmax = float(np.max(S_f))
    for name, tech in TECHNOLOGIES.items():
        if not values.get(name, {}).get("enabled", False):
            continue
        for key, spec in specs_of(tech.parameters).items():
            dotted = f"{name}.{key}"
            val = get(dotted)
            if val is None or spec.role is None or (isinstance(val, str) and val == AT_LIMIT):
                continue
            val = np.asarray(val, dtype=float)
            if spec.role == "recovery":
                with np.errstate(divide="ignore"):
                    S_b = S_f / (1 - val)
                bad = S_b > s_max
                if np.any(bad):
                    worst = float(np.max(np.where(bad, val, -np.inf)))
                    out.append(f"{where(dotted)}: expected a recovery that leaves a liquid brine within the reach "
                               f"of the activity model (brine up to {s_max * 1e3:.4g} g/kg, so a recovery up to "
                               f"{1 - s_fmax / s_max:.3g} for this feed), got {shown(dotted, worst)} (brine "
                               f"{float(np.max(S_b)) * 1e3:.4g} g/kg)")
            elif spec.role == "brine_salinity" and np.any(val > s_max):
                out.append(f"{where(dotted)}: expected a brine salinity within the reach of the activity model (up "
                           f"to {s_max * 1e3:.4g} g/kg), got {shown(dotted, float(np.max(val)) * 1e3)}")
    return out


def _raw_of(data: dict, sec: str, key: str):
    body = data.get(sec)
    return body.get(key) if isinstance(body, dict) else None


def _uncertainty(raw, specs, label, errors, ctx, raw_values=None) -> dict:
    if not isinstance(raw, dict):
        errors.append(f"{label}: uncertainty: expected a table [uncertainty], got {raw!r}")
        return {}
    out = {}
    for dotted, dist in raw.items():
        where = f"{label}: uncertainty.{dotted}"
        if "." not in dotted or dotted.split(".", 1)[0] not in specs or dotted.split(".", 1)[1] not in \
                specs[dotted.split(".", 1)[0]]:
            errors.append(f'{where}: expected a "section.key" of the scenario, got {dotted!r}')
            continue
        sec, key = dotted.split(".", 1)
        spec = specs[sec][key]
        if spec.kind in ("choice", "flag", "table", "text"):
            errors.append(f"{where}: expected a numeric key, got {dotted!r} (a {spec.kind} cannot be sampled)")
            continue
        given = _raw_of(raw_values or {}, sec, key)
        if spec.kind == "temperatures" and isinstance(given, list) and len(given) > 1:
            errors.append(f"{where}: expected a key with one value, got {dotted!r} given as {len(given)} monthly "
                          "values (make it one temperature to sample it)")
            continue
        if not isinstance(dist, dict):
            errors.append(f'{where}: expected {{ low = "...", mode = "...", high = "..." }} or another '
                          f"distribution, got {dist!r}")
            continue
        kinds = [k for k, fields in DISTRIBUTIONS.items() if set(dist) == set(fields)]
        if not kinds:
            forms = "; ".join("{" + ", ".join(f) + "}" for f in DISTRIBUTIONS.values())
            errors.append(f"{where}: expected the fields of one distribution ({forms}), got {{{', '.join(dist)}}}")
            continue
        kind = kinds[0]
        try:
            if kind == "lognormal":
                gsd = parse_value(_GSD, dist["gsd"], f"{where}.gsd")
                params = {"median": parse_value(spec, dist["median"], f"{where}.median", **ctx), "gsd": gsd}
            elif kind == "normal":
                mean = parse_value(spec, dist["mean"], f"{where}.mean", **ctx)
                # a spread is a difference: a temperature's is in K, others keep their kind without bounds
                sd_spec = _TEMPERATURE_SPREAD if spec.kind in ("temperature", "temperatures") else \
                    Spec(spec.kind, None, "", spec.unit, "a standard deviation above zero in the unit of the key",
                         lo=0.0, lo_open=True)
                sd = dist["sd"]
                if sd_spec is _TEMPERATURE_SPREAD and isinstance(sd, str):
                    # a spread of temperatures is a difference: "1 degC" is 1 K, not 274.15 K
                    sd = re.sub(r"(?<!delta_)\b(deg[CF])\b", r"delta_\1", sd)
                try:
                    params = {"mean": mean, "sd": parse_value(sd_spec, sd, f"{where}.sd", **ctx)}
                except InputError as exc:           # the message shows the value as written
                    raise InputError(str(exc).replace(str(sd), str(dist["sd"]))) from None
            else:
                params = {f: parse_value(spec, dist[f], f"{where}.{f}", **ctx) for f in DISTRIBUTIONS[kind]}
        except InputError as exc:
            errors.append(str(exc))
            continue
        # a feed temperature parses as an array of its periods; a distribution's parameter is one number
        many = [k for k, v in params.items() if np.size(v) > 1]
        if many:
            errors.append(f"{where}.{many[0]}: expected one value (a distribution's parameter), got "
                          f"{np.size(params[many[0]])} values")
            continue
        params = {k: float(np.asarray(v).reshape(-1)[0]) for k, v in params.items()}
        if kind == "triangular" and not params["low"] <= params["mode"] <= params["high"]:
            errors.append(f"{where}: expected low <= mode <= high, got {_inline_table(dist)}")
            continue
        if kind == "uniform" and not params["low"] < params["high"]:
            errors.append(f"{where}: expected low < high, got {_inline_table(dist)}")
            continue
        out[dotted] = {"distribution": kind, **params}
    return out


def _inline_table(d: dict) -> str:
    """A distribution's table as its TOML file writes it: ``{ low = "20 degC", high = "30 degC" }``."""
    return "{ " + ", ".join(f"{k} = {v!r}".replace("'", '"') if isinstance(v, str) else f"{k} = {v}"
                            for k, v in d.items()) + " }"


#: the largest scenario file read [bytes]; a scenario is a few kilobytes
MAX_FILE_BYTES = 1 << 20


def read_input_file(path: str | Path, what: str = "scenario file") -> bytes:
    """The bytes of a small regular file: refuses a folder, a FIFO, a device (``/dev/zero``) or a file above
    :data:`MAX_FILE_BYTES` with one line, without blocking or reading it whole."""
    import os
    import stat

    label = str(path)
    try:
        fd = os.open(path, os.O_RDONLY | getattr(os, "O_NONBLOCK", 0))
    except OSError as exc:
        raise InputError(f"{label}: cannot read the {what}: {exc.strerror}") from None
    except ValueError:                         # an embedded NUL in the name
        raise InputError(f"{label}: cannot read the {what}: not a valid file name") from None
    try:
        st = os.fstat(fd)
        if not stat.S_ISREG(st.st_mode):
            kind = "a folder" if stat.S_ISDIR(st.st_mode) else "not a regular file"
            raise InputError(f"{label}: expected a {what} (a regular file), got {kind}")
        if st.st_size > MAX_FILE_BYTES:
            raise InputError(f"{label}: expected a {what} of at most {MAX_FILE_BYTES // 1024} KiB, got "
                             f"{st.st_size / 1024:.0f} KiB")
        chunks, size = [], 0
        while size <= MAX_FILE_BYTES:
            try:
                chunk = os.read(fd, 65536)
            except OSError as exc:
                raise InputError(f"{label}: cannot read the {what}: {exc.strerror}") from None
            if not chunk:
                break
            chunks.append(chunk)
            size += len(chunk)
        if size > MAX_FILE_BYTES:
            raise InputError(f"{label}: expected a {what} of at most {MAX_FILE_BYTES // 1024} KiB, got more")
        return b"".join(chunks)
    finally:
        os.close(fd)


def parse_toml(raw: bytes, label: str) -> dict:
    """TOML text into a dict, every failure of the parser as one line."""
    try:
        return tomllib.loads(raw.decode("utf-8"))
    except UnicodeDecodeError:
        raise InputError(f"{label}: expected a UTF-8 TOML file, got undecodable bytes") from None
    except tomllib.TOMLDecodeError as exc:
        raise InputError(f"{label}: TOML syntax: {exc}") from None
    except RecursionError:
        raise InputError(f"{label}: TOML syntax: arrays or tables nested too deeply") from None
    except ValueError as exc:                  # e.g. an integer of more than 4300 digits
        raise InputError(f"{label}: TOML syntax: {str(exc).split(';')[0]}") from None


def load(path: str | Path, overrides: list[str] | tuple[str, ...] = ()) -> Scenario:
    """Read, validate and resolve the scenario file at ``path``."""
    label = str(path)
    raw = read_input_file(path)
    data = parse_toml(raw, label)
    return resolve(data, label=label, path=str(path), sha256=hashlib.sha256(raw).hexdigest(), overrides=overrides)


def _without(data: dict, refused: list[tuple]) -> dict:
    """A copy of ``data`` without each refused entry (the entry holding refused text, or the refused key)."""
    import copy

    data = copy.deepcopy(data)
    for keys, _ in refused:
        node = data
        for k in keys[:-1]:
            if not isinstance(node.get(k), dict):
                break
            node = node[k]
        else:
            node.pop(keys[-1], None)
            continue
        node.pop(k, None)
    return data


def _about(line: str, label: str, said: list[str]) -> bool:
    """Whether an error ``line`` concerns a key already refused (``said``: dotted key paths), or a required key that
    went missing because it was."""
    head = line[len(label) + 2:] if line.startswith(f"{label}: ") else line.removeprefix("--set ")
    key = head.split(": ", 1)[0]
    return any(p == key or p.startswith(key + ".") or key.startswith(p + ".") for p in said)


def text_errors(data, label: str, where: str = "", found: list | None = None) -> list[str]:
    """One line per key or string value of a parsed file that holds a control character (an escape sequence, a line
    break, a direction override): such text is refused rather than shown. ``found`` collects (key path, whether
    the key itself is at fault) of each."""
    from .units import text_problem

    out: list[str] = []

    stack = [(data, where, ())]
    while stack and len(out) < 100:
        node, path, keys = stack.pop()
        if isinstance(node, dict):
            for k, v in node.items():
                p = f"{path}.{k}" if path else str(k)
                problem = text_problem(str(k))
                if problem:
                    out.append(f"{label}: {p[:80]}: expected a key without control characters, got {problem}")
                    if found is not None:
                        found.append(((*keys, k), True))
                else:
                    stack.append((v, p, (*keys, k)))
        elif isinstance(node, list):
            stack.extend((v, f"{path}[{i}]", keys) for i, v in enumerate(node))
        elif isinstance(node, str):
            problem = text_problem(node)
            if problem:
                out.append(f"{label}: {path[:80]}: expected text without control characters, got {problem}")
                if found is not None:
                    found.append((keys, False))
    return out


# ------------------------------------------------------------------------------------------------------ claims
#: keys of a ``[claim]`` (or each ``[[claim]]``): a figure someone asserts for a technology at this site
CLAIM_KEYS: dict[str, Spec] = {
    "technology": Spec("choice", None, "required", expect="a registered technology such as \"ro\""),
    "electricity": Spec("quantity", None, "required", "J/m^3", 'an electricity per m^3 of product such as '
                        '"3.5 kWh/m^3"', lo=0.0),
    "heat": Spec("quantity", "0 kWh/m^3", "no heat", "J/m^3", 'a heat per m^3 of product such as "60 kWh/m^3"',
                 lo=0.0),
    "heat_temperature": Spec("temperature", OPTIONAL, "needed when heat is above zero",
                             expect='a temperature such as "70 degC"', lo=173.15, hi=1273.15),
    "recovery": Spec("fraction", OPTIONAL, "the recovery of the scenario's design of that technology",
                     expect='a mass recovery in (0, 1), e.g. 0.5 or "50 %"', lo=0.0, hi=1.0, lo_open=True,
                     hi_open=True),
    "scope": Spec("choice", "plant", "whole plant (intake, pre- and post-treatment included)",
                  choices=("plant", "process")),
    "source": Spec("text", "", "who claims it (free text)"),
}


def parse_claims(raw, label: str, errors: list, technologies) -> tuple:
    """``[claim]`` (one table) or ``[[claim]]`` (several) as dicts of SI values, each with ``texts`` (as written).

    Problems are appended to ``errors`` as one line each (``FILE: claim.KEY: expected ..., got ...``).
    """
    tables = [raw] if isinstance(raw, dict) else raw if isinstance(raw, list) else None
    if tables is None or not all(isinstance(t, dict) for t in tables):
        errors.append(f"{label}: claim: expected a table [claim] or tables [[claim]], got {raw!r}")
        return ()
    out = []
    for n, table in enumerate(tables):
        where = f"{label}: claim" if len(tables) == 1 else f"{label}: claim[{n + 1}]"
        for key in table:
            if key not in CLAIM_KEYS:
                errors.append(f"{where}.{key}: unknown key{nearest(key, CLAIM_KEYS)}")
        claim, texts, ok = {}, {}, True
        for key, spec in CLAIM_KEYS.items():
            if key not in table and spec.required:
                errors.append(f"{where}.{key}: required, expected {spec.expect}")
                ok = False
                continue
            raw_value = table.get(key, spec.default)
            texts[key] = raw_value
            try:
                claim[key] = parse_claim_value(key, raw_value, f"{where}.{key}", technologies)
            except InputError as exc:
                errors.append(str(exc))
                ok = False
        if ok and claim["heat"] > 0 and claim["heat_temperature"] is None:
            errors.append(f"{where}.heat_temperature: required when heat is above zero, expected "
                          f"{CLAIM_KEYS['heat_temperature'].expect}")
            ok = False
        if ok:
            out.append({**claim, "texts": texts})
    return tuple(out)


def parse_claim_value(key: str, raw, where: str, technologies):
    """One claim value in SI (None for an unset optional key); ``technologies`` are the registered names."""
    spec = CLAIM_KEYS[key]
    if raw == OPTIONAL:
        return None
    if spec.kind == "text":
        if not isinstance(raw, str):
            raise InputError(f"{where}: expected free text in quotes, got {raw!r}")
        return raw
    if key == "technology":
        if raw not in technologies:
            raise InputError(f"{where}: expected one of {', '.join(map(repr, technologies))}, got {raw!r}")
        return raw
    return parse_value(spec, raw, where)
