"""Tables derived from a property library, built once and kept on disk in the user's cache folder.

A table is a few numpy arrays computed from a library (CoolProp) on a fixed grid. Building one needs the library,
whose import alone costs about two seconds; reading it back costs milliseconds. :func:`arrays` returns the arrays
from the cache when a file with the same key is there, else builds them, writes them atomically (a temporary file
renamed into place, so a reader never sees half a table and two processes building at once both succeed) and
returns them. The key holds everything the arrays depend on: the library's version (read from its installed
metadata, without importing it), the grid and the table's own format number; a change of any gives a new file.

The folder is ``$DESAL_COMPARE_CACHE`` when set, else the platform's user cache folder (``platformdirs``; on Linux
``$XDG_CACHE_HOME/desal-compare`` or ``~/.cache/desal-compare``). ``DESAL_COMPARE_CACHE=off`` builds in memory
only. A folder that cannot be written is not an error: the table is then built in every process.
"""

from __future__ import annotations

import hashlib
import json
import os
import tempfile
from importlib import metadata
from pathlib import Path
from typing import Callable

import numpy as np

ENV = "DESAL_COMPARE_CACHE"


def folder() -> Path | None:
    """The cache folder (not created here), or None when caching is off."""
    env = os.environ.get(ENV)
    if env:
        return None if env.lower() == "off" else Path(env)
    try:
        import platformdirs
        return Path(platformdirs.user_cache_dir("desal-compare", appauthor=False))
    except ImportError:                                            # pragma: no cover - platformdirs is a dependency
        base = os.environ.get("XDG_CACHE_HOME") or str(Path.home() / ".cache")
        return Path(base) / "desal-compare"


def library_version(name: str) -> str:
    """An installed library's version from its metadata (no import)."""
    try:
        return metadata.version(name)
    except metadata.PackageNotFoundError:
        return "absent"


def _path(name: str, key: dict) -> tuple[Path | None, str]:
    text = json.dumps(key, sort_keys=True, default=repr)
    d = folder()
    digest = hashlib.sha256(text.encode()).hexdigest()[:20]
    return (None if d is None else d / f"{name}-{digest}.npz"), text


def arrays(name: str, key: dict, build: Callable[[], dict]) -> dict[str, np.ndarray]:
    """The arrays of table ``name`` for ``key`` (JSON-able: library version, grid, format), from the cache or from
    ``build()`` (then stored)."""
    path, text = _path(name, key)
    if path is not None and path.is_file():
        try:
            with np.load(path, allow_pickle=False) as z:
                if str(z["__key__"]) == text:
                    return {k: z[k] for k in z.files if k != "__key__"}
        except (OSError, ValueError, KeyError, EOFError):
            pass                              # unreadable or foreign: rebuild and replace it
    data = {k: np.asarray(v) for k, v in build().items()}
    if path is not None:
        _store(path, text, data)
    return data


def _store(path: Path, text: str, data: dict) -> None:
    try:
        path.parent.mkdir(parents=True, exist_ok=True)
        fd, tmp = tempfile.mkstemp(prefix=f".{path.stem}-", suffix=".npz", dir=path.parent)
        try:
            with os.fdopen(fd, "wb") as f:
                np.savez(f, __key__=np.array(text), **data)
            os.replace(tmp, path)
        except BaseException:
            Path(tmp).unlink(missing_ok=True)
            raise
    except OSError:
        pass                                  # a read-only or full cache folder only costs time


__all__ = ["arrays", "folder", "library_version", "ENV"]
