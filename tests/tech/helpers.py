"""Shared helpers of the technology tests: a technology's parameters from its own defaults, with overrides."""

import numpy as np

from compare.schema import OPTIONAL, parse_value


def params(module, **over) -> dict:
    """The technology's parameters in SI: raw scenario texts parsed by their specs, arrays and choices as given,
    optional keys as None."""
    out = {}
    for k, spec in module.PARAMETERS.items():
        raw = over.get(k, spec.default)
        if isinstance(raw, np.ndarray) or spec.kind in ("choice", "flag"):
            out[k] = raw
        elif raw == OPTIONAL:
            out[k] = None
        else:
            out[k] = parse_value(spec, raw, k)
    return out
