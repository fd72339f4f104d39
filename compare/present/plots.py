"""Plots (matplotlib, Agg backend, imported only when asked): sweep grids, Monte Carlo distributions, and the energy of
one comparison as stacked bars. Each figure is written as PNG and SVG into the run folder."""

from __future__ import annotations

from pathlib import Path

import numpy as np

from . import CAUTION


def _plt():
    try:
        import matplotlib
    except ImportError:
        from ..errors import InputError
        raise InputError("--plot: expected matplotlib to be installed (pip install '.[plot]'), got none") from None
    matplotlib.use("Agg")
    import matplotlib.pyplot as plt
    return plt


def available() -> None:
    """Raise the one-line input error when matplotlib is missing (checked before any work is done)."""
    _plt()


def _save(fig, folder, stem: str) -> list[str]:
    names = []
    for ext in ("png", "svg"):
        name = f"{stem}.{ext}"
        fig.savefig(Path(folder.file(name)), dpi=120, bbox_inches="tight")
        names.append(name)
    return names


def _caption(fig) -> None:
    fig.text(0.01, 0.005, CAUTION, fontsize=6, color="0.4", wrap=True, va="bottom")


PANELS = (("work_equivalent", "work equivalent [kWh/m3]"), ("lcow", "levelised cost [{currency}/m3]"),
          ("second_law_efficiency", "second-law efficiency [-]"), ("emissions", "CO2 [kg/m3]"))


def grid_figure(sr, folder) -> list[str]:
    """Each headline metric against the first varied key, a line per technology (and per combination of the other
    keys, up to four), with the floor drawn on the energy panel."""
    plt = _plt()
    ax0 = sr.axes[0]
    shape = tuple(a.values.size for a in sr.axes)
    rests = list(np.ndindex(*shape[1:]))[:4]
    fig, axes = plt.subplots(2, 2, figsize=(10, 7.5))
    styles = ["-", "--", "-.", ":"]
    for (metric, label), ax in zip(PANELS, axes.ravel()):
        for j, rest in enumerate(rests):
            tail = ", ".join(f"{a.key}={a.display[i]:g} {a.unit}" for a, i in zip(sr.axes[1:], rest))
            for k, t in enumerate(sr.technologies):
                y = sr.metrics[t][metric].reshape(shape)[(slice(None),) + rest]
                ax.plot(ax0.display, y, styles[j % 4], color=f"C{k}", marker="o", ms=3,
                        label=f"{t}{' (' + tail + ')' if tail else ''}")
            if metric == "work_equivalent":
                fl = sr.floor.reshape(shape)[(slice(None),) + rest]
                ax.plot(ax0.display, fl, styles[j % 4], color="k", lw=1.5,
                        label=f"floor (least work, zero recovery){' (' + tail + ')' if tail else ''}")
        ax.set_xlabel(f"{ax0.key} [{ax0.unit}]")
        ax.set_ylabel(label.format(currency=sr.scenario.currency))
        ax.grid(alpha=0.3)
    axes[0, 0].legend(fontsize=7)
    fig.suptitle(f"{sr.scenario.name}: sweep of {ax0.key} ({sr.n} cases)")
    _caption(fig)
    names = _save(fig, folder, "sweep")
    plt.close(fig)
    return names


def samples_figure(sr, folder) -> list[str]:
    """Distributions of the headline metrics over the samples, one histogram per technology (feasible samples)."""
    plt = _plt()
    fig, axes = plt.subplots(2, 2, figsize=(10, 7.5))
    for (metric, label), ax in zip(PANELS, axes.ravel()):
        for k, t in enumerate(sr.technologies):
            y = sr.metrics[t][metric]
            y = y[np.isfinite(y)]
            if y.size:
                ax.hist(y, bins=40, alpha=0.5, color=f"C{k}", label=f"{t} ({y.size} feasible)")
        if metric == "work_equivalent":
            ax.axvline(float(np.nanmedian(sr.floor)), color="k", lw=1.5, label="floor (median)")
        ax.set_xlabel(label.format(currency=sr.scenario.currency))
        ax.set_ylabel("samples")
        ax.grid(alpha=0.3)
    axes[0, 0].legend(fontsize=7)
    fig.suptitle(f"{sr.scenario.name}: {sr.n} samples" + (" (Latin hypercube)" if sr.lhs else ""))
    _caption(fig)
    names = _save(fig, folder, "distributions")
    plt.close(fig)
    return names


def compare_figure(payloads: list[dict], folder) -> list[str]:
    """Stacked bars per technology: electricity and the work equivalent of heat, with the least work of its own
    streams and the floor of the feed marked."""
    plt = _plt()
    fig, axes = plt.subplots(1, len(payloads), figsize=(4 + 2.5 * max(1, len(payloads)), 5), squeeze=False)
    for p, ax in zip(payloads, axes.ravel()):
        recs = p["results"]
        names = [r["technology"] for r in recs]
        x = np.arange(len(recs))
        e = np.array([r["electricity_kwh_per_m3"] for r in recs], dtype=float)
        we = np.array([r["work_equivalent_kwh_per_m3"] for r in recs], dtype=float) - e
        lw = np.array([r["least_work_kwh_per_m3"] for r in recs], dtype=float)
        ax.bar(x, e, color="C0", label="electricity")
        ax.bar(x, we, bottom=e, color="C1", label="work equivalent of heat")
        ax.scatter(x, lw, color="k", marker="_", s=400, zorder=3, label="least work, own streams")
        ax.axhline(p["floor"]["least_work_kwh_per_m3_zero_recovery"], color="k", ls=":", lw=1,
                   label="floor, zero recovery")
        for i, r in enumerate(recs):
            if not r["feasible"]:
                ax.text(i, 0, "infeasible", rotation=90, ha="center", va="bottom", fontsize=8, color="C3")
        ax.set_xticks(x, names)
        ax.set_ylabel("kWh/m3 of product")
        ax.set_title(p["scenario"], fontsize=10)
        ax.grid(axis="y", alpha=0.3)
    axes.ravel()[0].legend(fontsize=7)
    _caption(fig)
    names = _save(fig, folder, "energy")
    plt.close(fig)
    return names
