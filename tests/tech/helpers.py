"""Shared helpers of the technology tests."""

from compare.schema import parse_defaults
from compare.tech.base import Technology


def params(module, **over):
    """The technology's parameter record in SI from its defaults, with overrides (see :func:`parse_defaults`)."""
    tech = next(v for v in vars(module).values() if isinstance(v, Technology))
    return parse_defaults(tech.parameters, **over)


def codes(perf, i=0, kind="infeasible") -> set:
    """The codes of the flags of ``kind`` that hold in case ``i`` of a Performance."""
    import numpy as np
    return {f.code for f in perf.flags if f.kind == kind and np.asarray(f.where(np.shape(perf.electricity))).ravel()[i]}


def flag(perf, code):
    """The flag with ``code`` (None if absent)."""
    return next((f for f in perf.flags if f.code == code), None)
