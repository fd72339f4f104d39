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
        {"kind": "boiling-point elevation", "name": "activity", "applies_to": "every water activity model",
         "validity": "that of the activity model", "reference": "T - T_sat(a_w p_sat(T)), IAPWS-95 saturation line; "
                                                                "checked against Sharqawy et al. 2010 eq. 36"},
        {"kind": "brine enthalpy", "name": "teos10", "applies_to": "seawater (others by equal salinity, flagged)",
         "validity": "0-120 g/kg, 0-80 degC", "reference": "TEOS-10 (gsw.enthalpy_t_exact)"},
    ]
    from .tech import load_builtin
    from .tech.base import TECHNOLOGIES
    load_builtin()
    for name, tech in TECHNOLOGIES.items():
        out.append({"kind": "technology", "name": name, "applies_to": "all waters", "validity": tech.validity,
                    "reference": tech.reference})
    return out
