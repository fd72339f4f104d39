"""Headless Chromium, when it is installed: a screenshot of a page's first screen, the page printed to PDF, its DOM
after loading and the console messages it logged. Nothing here is needed to write a report; it only adds to it."""

from __future__ import annotations

import shutil
import subprocess
import tempfile
from pathlib import Path

NAMES = ("chromium", "chromium-browser")
INSTALL_HINT = "Debian or Ubuntu: apt-get install chromium"
WINDOW = (1200, 900)


def find() -> str | None:
    """The path of a Chromium executable on PATH, or None."""
    for name in NAMES:
        path = shutil.which(name)
        if path:
            return path
    return None


def _run(page: Path, *flags: str, timeout: float = 120) -> subprocess.CompletedProcess:
    exe = find()
    if exe is None:
        raise FileNotFoundError(f"headless Chromium is not installed ({INSTALL_HINT})")
    with tempfile.TemporaryDirectory(prefix="desal-chromium-") as profile:
        cmd = [exe, "--headless", "--no-sandbox", "--disable-gpu", "--no-first-run", "--disable-extensions",
               "--hide-scrollbars", f"--user-data-dir={profile}", *flags, Path(page).resolve().as_uri()]
        return subprocess.run(cmd, capture_output=True, text=True, timeout=timeout, check=False)


def screenshot(page: Path, png: Path, window=WINDOW) -> Path:
    """A PNG of the first screen of ``page`` (``window`` pixels)."""
    proc = _run(page, f"--screenshot={Path(png).resolve()}", f"--window-size={window[0]},{window[1]}")
    if not Path(png).exists():
        raise RuntimeError(f"chromium made no screenshot (exit {proc.returncode}): {proc.stderr.strip()[-300:]}")
    return Path(png)


def print_pdf(page: Path, pdf: Path) -> Path:
    """``page`` printed to PDF (A4 by the page's own print styles), without the browser's headers and footers."""
    proc = _run(page, f"--print-to-pdf={Path(pdf).resolve()}", "--no-pdf-header-footer")
    if not Path(pdf).exists():
        raise RuntimeError(f"chromium made no PDF (exit {proc.returncode}): {proc.stderr.strip()[-300:]}")
    return Path(pdf)


def load(page: Path) -> tuple[str, list[str]]:
    """The DOM of ``page`` after loading, and the console messages it logged (one line each)."""
    proc = _run(page, "--dump-dom", "--enable-logging=stderr", "--v=0")
    console = [line for line in proc.stderr.splitlines() if ":CONSOLE" in line]
    return proc.stdout, console
