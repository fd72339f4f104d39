"""Shared helpers of the technology tests."""

from compare.schema import parse_defaults


def params(module, **over) -> dict:
    """The technology's parameters in SI from its defaults, with overrides (see :func:`parse_defaults`)."""
    return parse_defaults(module.PARAMETERS, **over)
