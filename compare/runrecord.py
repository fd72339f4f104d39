"""The run record stored beside every saved result: tool and library versions, scenario hash, resolved inputs."""

from __future__ import annotations

import datetime as _dt
import platform
from importlib import metadata

from . import __version__

LIBRARIES = ("numpy", "scipy", "CoolProp", "pint", "pandas", "rich", "gsw", "phreeqpython", "matplotlib")


def library_versions() -> dict[str, str | None]:
    out = {}
    for lib in LIBRARIES:
        try:
            out[lib] = metadata.version(lib)
        except metadata.PackageNotFoundError:
            out[lib] = None
    return out


def run_record(scenarios, command: list[str]) -> dict:
    return {
        "tool": "desal-compare",
        "version": __version__,
        "created": _dt.datetime.now(_dt.timezone.utc).isoformat(timespec="seconds"),
        "command": command,
        "python": platform.python_version(),
        "libraries": library_versions(),
        "scenarios": [
            {"name": s.name, "path": s.path, "sha256": s.sha256, "overrides": list(s.overrides),
             "inputs": {k: {"value": s.texts.get(k), "source": s.sources.get(k)} for k in sorted(s.texts)}}
            for s in scenarios
        ],
    }
