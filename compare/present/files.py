"""Serialisers (JSON, CSV) and atomic file writes. Results are never overwritten."""

from __future__ import annotations

import csv
import io
import json
import math
import os
import re
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


_NUMERIC = re.compile(r"^[-+]?(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?$")


def csv_cell(value):
    """A CSV cell that a spreadsheet will not run: text starting with ``=``, ``+``, ``-``, ``@`` (or a tab or
    carriage return) gets a leading apostrophe, so it shows as text; numbers, and text that is a plain number, are
    kept as they are.

    Examples
    --------
    >>> csv_cell("=HYPERLINK(1)"), csv_cell("-2.5"), csv_cell(-2.5)
    ("'=HYPERLINK(1)", '-2.5', -2.5)
    """
    if isinstance(value, str) and value[:1] in ("=", "+", "-", "@", "\t", "\r") and not _NUMERIC.match(value):
        return "'" + value
    return value


def to_csv(rows: list[dict]) -> str:
    """CSV text, one row per dict, columns in first-seen order; text cells neutralised (:func:`csv_cell`)."""
    flat = [flatten(r) for r in rows]
    columns: list[str] = []
    for r in flat:
        for k in r:
            if k not in columns:
                columns.append(k)
    buf = io.StringIO()
    writer = csv.DictWriter(buf, fieldnames=[csv_cell(c) for c in columns], lineterminator="\n")
    writer.writeheader()
    for r in flat:
        writer.writerow({csv_cell(k): ("" if r.get(k) is None else csv_cell(r.get(k))) for k in columns})
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


#: the hidden temporary name of a run folder being written: .<stamp>-<slug>.<pid>.<random>
_TEMPORARY = re.compile(r"^\.\d{8}-\d{6}-[a-z0-9-]+\.(?:(\d+)\.)?[A-Za-z0-9_]+$")


def _mode(directory: bool) -> int:
    mask = os.umask(0)
    os.umask(mask)
    return (0o777 if directory else 0o666) & ~mask


def _alive(pid: int) -> bool:
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except (PermissionError, OverflowError, ValueError):
        return True
    return True


def clean_leftovers(parent: Path, max_age: float = 3600.0) -> list[Path]:
    """Remove hidden temporary run folders under ``parent`` left by a run that was killed: those whose writing
    process no longer exists (or, in the older form without a process id, older than ``max_age`` seconds).
    Returns what was removed."""
    import shutil
    import time

    removed = []
    try:
        entries = list(os.scandir(parent))
    except OSError:
        return removed
    for entry in entries:
        m = _TEMPORARY.match(entry.name)
        if not m or not entry.is_dir(follow_symlinks=False):
            continue
        try:
            stale = not _alive(int(m.group(1))) if m.group(1) else \
                time.time() - entry.stat(follow_symlinks=False).st_mtime > max_age
        except OSError:
            continue
        if stale:
            shutil.rmtree(entry.path, ignore_errors=True)
            removed.append(Path(entry.path))
    return removed


def check_parent(text: str | None, option: str = "--out") -> Path:
    """The folder under which run folders are created (``--out``, default ``results``), checked before any work:
    one-line :class:`~compare.errors.InputError` for an empty name, a file, a dangling link, an existing run folder
    (a run would nest inside it), or a folder that cannot be written (permissions, a read-only file system). The
    path is normalised first (``a/../b`` is ``b``, so no empty ``a`` is left behind). Nothing is created."""
    from ..errors import InputError, printable

    if text is None:
        text = "results"
    shown = printable(text)
    if not text.strip():
        raise InputError(f'{option}: expected a folder, got "{shown}"')
    if "\0" in text or any(not c.isprintable() for c in text):
        raise InputError(f'{option}: expected a folder name without control characters, got "{shown}"')
    path = Path(os.path.normpath(text))
    probe = path
    while True:
        if probe.is_symlink() and not probe.exists():
            raise InputError(f'{option}: expected a folder, got "{shown}" ({probe} is a link to nothing)')
        if probe.exists():
            break
        if probe.parent == probe:
            break
        probe = probe.parent
    if not probe.is_dir():
        raise InputError(f'{option}: expected a folder, got "{shown}" ({probe} is a file)')
    for folder in (probe.resolve(), *probe.resolve().parents):
        if (folder / "run.json").is_file():
            raise InputError(f'{option}: expected a folder that holds run folders, got "{shown}" ({folder} is a run '
                             "folder itself; give its parent)")
    try:
        tmp = tempfile.mkdtemp(prefix=".desal-probe.", dir=probe)
        os.rmdir(tmp)
    except OSError as exc:
        raise InputError(f'{option}: expected a folder that can be written, got "{shown}" ({probe}: '
                         f"{exc.strerror})") from None
    return path


def _slug(text: str) -> str:
    s = re.sub(r"[^A-Za-z0-9]+", "-", text).strip("-").lower()
    return s[:40] or "run"


#: temporary run folders this process has made and neither committed nor discarded
_OPEN: set = set()


class _SigtermHeld:
    """SIGTERM held back (delivered on leaving) while a temporary folder is made and registered, so that a
    termination never falls between the two (main thread on POSIX; elsewhere a no-op)."""

    def __enter__(self):
        import signal
        import threading
        self.held = hasattr(signal, "pthread_sigmask") and threading.current_thread() is threading.main_thread()
        if self.held:
            signal.pthread_sigmask(signal.SIG_BLOCK, {signal.SIGTERM})

    def __exit__(self, *exc):
        if self.held:
            import signal
            signal.pthread_sigmask(signal.SIG_UNBLOCK, {signal.SIGTERM})
        return False


def discard_open() -> None:
    """Remove every temporary run folder this process still has open (on the way out after SIGTERM, wherever the
    signal fell)."""
    import shutil
    for tmp in list(_OPEN):
        shutil.rmtree(tmp, ignore_errors=True)
        _OPEN.discard(tmp)


class RunFolder:
    """A run folder being written: files go into a hidden temporary folder that is renamed into place by
    :meth:`commit`, so a run folder is either absent or whole. An existing folder is never reused (a numeric suffix
    is added); :meth:`discard` (or leaving a ``with`` block by an exception) removes the temporary folder, and
    :func:`discard_open` every one still open."""

    def __init__(self, parent: Path, label: str):
        import datetime as _dt

        self.parent = Path(os.path.normpath(parent))
        self.parent.mkdir(parents=True, exist_ok=True)
        clean_leftovers(self.parent)
        stamp = _dt.datetime.now().strftime("%Y%m%d-%H%M%S")
        self.base = f"{stamp}-{_slug(label)}"
        with _SigtermHeld():
            self.tmp = Path(tempfile.mkdtemp(prefix=f".{self.base}.{os.getpid()}.", dir=self.parent))
            _OPEN.add(self.tmp)
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
        # one mode for every file of a run (mkstemp makes private files, streams and libraries use the umask)
        for root, dirs, files in os.walk(self.tmp):
            for name in files:
                os.chmod(os.path.join(root, name), _mode(False))
            for name in dirs:
                os.chmod(os.path.join(root, name), _mode(True))
        for k in range(1000):
            target = self.parent / (self.base if k == 0 else f"{self.base}-{k + 1}")
            if target.exists():
                continue
            try:
                with _SigtermHeld():
                    os.rename(self.tmp, target)  # a non-empty folder of that name makes this fail: never overwritten
                    _OPEN.discard(self.tmp)
            except OSError:
                if target.exists():
                    continue
                raise
            os.chmod(target, _mode(True))     # mkdtemp made it private; a run folder is as readable as any
            self.path = target
            return target
        raise FileExistsError(f"no free run folder name under {self.parent}")

    def discard(self) -> None:
        import shutil
        shutil.rmtree(self.tmp, ignore_errors=True)
        _OPEN.discard(self.tmp)

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
