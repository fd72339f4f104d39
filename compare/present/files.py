"""Serialisers (JSON, CSV) and atomic file writes. Results are never overwritten."""

from __future__ import annotations

import csv
import io
import json
import math
import os
import tempfile
from pathlib import Path

import numpy as np


def _clean(obj):
    """Plain JSON types: numpy scalars and arrays to Python, NaN and inf to None."""
    if isinstance(obj, dict):
        return {str(k): _clean(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [_clean(v) for v in obj]
    if isinstance(obj, np.ndarray):
        return _clean(obj.tolist())
    if isinstance(obj, (np.bool_, bool)):
        return bool(obj)
    if isinstance(obj, (np.integer,)):
        return int(obj)
    if isinstance(obj, (np.floating, float)):
        v = float(obj)
        return v if math.isfinite(v) else None
    return obj


def to_json(obj) -> str:
    """JSON text of ``obj`` (numpy values converted, non-finite numbers as null)."""
    return json.dumps(_clean(obj), indent=2, ensure_ascii=False) + "\n"


def flatten(record: dict, prefix: str = "") -> dict:
    """Nested dicts become dotted keys; lists of scalars are joined with '; '."""
    out = {}
    for k, v in record.items():
        key = f"{prefix}{k}"
        if isinstance(v, dict):
            out.update(flatten(v, key + "."))
        elif k == "flags" and isinstance(v, (list, tuple)) and all(isinstance(x, dict) for x in v):
            out[key] = "; ".join(f"{x.get('kind')}:{x.get('code')}" for x in v)
        elif isinstance(v, (list, tuple)):
            if all(not isinstance(x, (dict, list, tuple)) for x in v):
                out[key] = "; ".join(str(_clean(x)) for x in v)
            else:
                out[key] = json.dumps(_clean(v))
        else:
            out[key] = _clean(v)
    return out


def to_csv(rows: list[dict]) -> str:
    """CSV text, one row per dict, columns in first-seen order."""
    flat = [flatten(r) for r in rows]
    columns: list[str] = []
    for r in flat:
        for k in r:
            if k not in columns:
                columns.append(k)
    buf = io.StringIO()
    writer = csv.DictWriter(buf, fieldnames=columns, lineterminator="\n")
    writer.writeheader()
    for r in flat:
        writer.writerow({k: ("" if r.get(k) is None else r.get(k)) for k in columns})
    return buf.getvalue()


def write_atomic(path: Path, data: str | bytes) -> Path:
    """Write ``data`` (text or bytes) to ``path`` through a temporary file and a rename; refuses to replace an
    existing file."""
    path = Path(path)
    if path.exists():
        raise FileExistsError(f"{path} exists; results are never overwritten")
    path.parent.mkdir(parents=True, exist_ok=True)
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=path.parent)
    try:
        if isinstance(data, bytes):
            with os.fdopen(fd, "wb") as fh:
                fh.write(data)
                fh.flush()
                os.fsync(fh.fileno())
        else:
            with os.fdopen(fd, "w", encoding="utf-8", newline="") as fh:
                fh.write(data)
                fh.flush()
                os.fsync(fh.fileno())
        os.link(tmp, path)     # fails if path appeared meanwhile: no overwrite even under a race
    finally:
        os.unlink(tmp)
    return path


def _slug(text: str) -> str:
    import re
    s = re.sub(r"[^A-Za-z0-9]+", "-", text).strip("-").lower()
    return s[:40] or "run"


class RunFolder:
    """A run folder being written: files go into a hidden temporary folder that is renamed into place by
    :meth:`commit`, so a run folder is either absent or whole. An existing folder is never reused (a numeric suffix
    is added); :meth:`discard` (or leaving a ``with`` block by an exception) removes the temporary folder."""

    def __init__(self, parent: Path, label: str):
        import datetime as _dt

        self.parent = Path(parent)
        self.parent.mkdir(parents=True, exist_ok=True)
        stamp = _dt.datetime.now().strftime("%Y%m%d-%H%M%S")
        self.base = f"{stamp}-{_slug(label)}"
        self.tmp = Path(tempfile.mkdtemp(prefix=f".{self.base}.", dir=self.parent))
        self.path: Path | None = None

    def write(self, name: str, data: str | bytes) -> Path:
        return write_atomic(self.tmp / name, data)

    def open(self, name: str, mode: str = "w"):
        """A file in the folder to stream into (text mode unless ``"wb"``)."""
        target = self.tmp / name
        if target.exists():
            raise FileExistsError(f"{name} written twice in one run folder")
        return open(target, mode, **({} if "b" in mode else {"encoding": "utf-8", "newline": ""}))

    def file(self, name: str) -> Path:
        """The path a library may write ``name`` to itself (inside the temporary folder)."""
        return self.tmp / name

    def commit(self) -> Path:
        for k in range(1000):
            target = self.parent / (self.base if k == 0 else f"{self.base}-{k + 1}")
            if target.exists():
                continue
            try:
                os.rename(self.tmp, target)      # a non-empty folder of that name makes this fail: never overwritten
            except OSError:
                if target.exists():
                    continue
                raise
            mask = os.umask(0)
            os.umask(mask)
            os.chmod(target, 0o777 & ~mask)     # mkdtemp made it private; a run folder is as readable as any
            self.path = target
            return target
        raise FileExistsError(f"no free run folder name under {self.parent}")

    def discard(self) -> None:
        import shutil
        shutil.rmtree(self.tmp, ignore_errors=True)

    def __enter__(self):
        return self

    def __exit__(self, exc_type, exc, tb):
        if exc_type is not None or self.path is None:
            self.discard()
        return False


def write_run(parent: Path, label: str, files: dict[str, str | bytes]) -> Path:
    """Write ``files`` (name -> text or bytes) into a new run folder under ``parent``, atomically; returns the
    folder (see :class:`RunFolder`)."""
    with RunFolder(parent, label) as folder:
        for name, data in files.items():
            folder.write(name, data)
        return folder.commit()
