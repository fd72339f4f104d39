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


def write_atomic(path: Path, text: str) -> Path:
    """Write ``text`` to ``path`` through a temporary file and a rename; refuses to replace an existing file."""
    path = Path(path)
    if path.exists():
        raise FileExistsError(f"{path} exists; results are never overwritten")
    path.parent.mkdir(parents=True, exist_ok=True)
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=path.parent)
    try:
        with os.fdopen(fd, "w", encoding="utf-8", newline="") as fh:
            fh.write(text)
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


def write_run(parent: Path, label: str, files: dict[str, str]) -> Path:
    """Write ``files`` (name -> text) into a new run folder under ``parent``, atomically; returns the folder.

    The files go into a hidden temporary folder that is renamed into place when complete, so a run folder is either
    absent or whole. An existing folder is never reused: a numeric suffix is added.
    """
    import datetime as _dt

    parent = Path(parent)
    parent.mkdir(parents=True, exist_ok=True)
    stamp = _dt.datetime.now().strftime("%Y%m%d-%H%M%S")
    base = f"{stamp}-{_slug(label)}"
    tmp = Path(tempfile.mkdtemp(prefix=f".{base}.", dir=parent))
    try:
        for name, text in files.items():
            write_atomic(tmp / name, text)
        for k in range(1000):
            target = parent / (base if k == 0 else f"{base}-{k + 1}")
            if target.exists():
                continue
            try:
                os.rename(tmp, target)      # a non-empty folder of that name makes this fail: never overwritten
            except OSError:
                if target.exists():
                    continue
                raise
            return target
        raise FileExistsError(f"no free run folder name under {parent}")
    except BaseException:
        import shutil
        shutil.rmtree(tmp, ignore_errors=True)
        raise
