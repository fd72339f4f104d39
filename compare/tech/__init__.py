"""Technologies. Each module registers itself in :data:`compare.tech.base.TECHNOLOGIES` on import."""

from .base import TECHNOLOGIES, Feed, Performance, Technology, register  # noqa: F401


def load_builtin() -> None:
    """Import the built-in technology modules so that they register (idempotent)."""
    import importlib

    for name in BUILTIN:
        importlib.import_module(f"{__name__}.{name}")


BUILTIN: tuple[str, ...] = ("ro", "med", "fo")
