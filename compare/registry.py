"""The catalogue behind ``desal models``: property models and registered technologies, with validity and sources."""

from __future__ import annotations


def model_catalogue() -> list[dict]:
    from .thermo.activity import MODEL_SUMMARY

    out = []
    for name, (applies, validity, reference) in MODEL_SUMMARY.items():
        out.append({"kind": "water activity", "name": name, "applies_to": applies, "validity": validity,
                    "reference": reference})
    out += [
        {"kind": "pure water", "name": "iapws95", "applies_to": "water and steam",
         "validity": "0.01-250 degC (table from CoolProp)", "reference": "Wagner & Pruss 2002 (IAPWS-95) via CoolProp"},
        {"kind": "density", "name": "seawater", "applies_to": "seawater, ions",
         "validity": "gsw to 42 g/kg and 40 degC; MITSW to 120 g/kg and 120 degC",
         "reference": "TEOS-10 (gsw); Sharqawy et al. 2010 via CoolProp INCOMP::MITSW"},
        {"kind": "density", "name": "nacl", "applies_to": "nacl",
         "validity": "0-230 g/kg, 0-40 degC; scaled by water expansion above",
         "reference": "CoolProp INCOMP::MNA"},
    ]
    try:
        from .tech.base import TECHNOLOGIES
    except ImportError:
        TECHNOLOGIES = {}
    for name, tech in TECHNOLOGIES.items():
        out.append({"kind": "technology", "name": name, "applies_to": "all waters", "validity": tech.validity,
                    "reference": tech.reference})
    return out
