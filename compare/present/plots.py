"""Plots (matplotlib, Agg backend, imported only when asked): sweep grids with their break-even points, Monte Carlo
distributions as overlaid cumulative curves, sensitivity (tornado or Sobol indices), and one comparison's energy and
cost stacks. Each figure is written as PNG and SVG into the run folder.

Figures are meant to be put on a slide as they are: labels in words with units (from :mod:`compare.present.fields`),
one colour per technology in every figure, shared axes where panels compare the same quantity, and the cautions in
small print at the foot.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

from . import CAUTION
from .fields import RECORD_FIELDS, unit_label

_BY_NAME = {f.name: f for f in RECORD_FIELDS}
#: sweep metric -> record field name
_PANEL_FIELDS = (("lcow", "levelized_cost_per_m3"), ("work_equivalent", "work_equivalent_kwh_per_m3"),
                 ("emissions", "emissions_kg_per_m3"), ("second_law_efficiency", "second_law_efficiency"))
#: a fixed colour per technology, so that RO is the same colour in every figure
_COLOURS = {"ro": "#1f77b4", "med": "#d62728", "fo": "#2ca02c"}
_SPARE = ("#9467bd", "#8c564b", "#e377c2", "#7f7f7f", "#bcbd22", "#17becf")


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
    fig.text(0.01, -0.02, CAUTION, fontsize=6, color="0.4", wrap=True, va="top")


def colour(tech: str, order: list) -> str:
    """The colour of a technology: fixed for the built-in ones, then a spare by registry order."""
    if tech in _COLOURS:
        return _COLOURS[tech]
    others = [t for t in order if t not in _COLOURS]
    return _SPARE[others.index(tech) % len(_SPARE)] if tech in others else "0.3"


def metric_label(name: str, currency: str) -> str:
    """A record metric in words with its unit: ``levelized cost of water [USD/m3]``; efficiency in %."""
    if name == "feasible":
        return "feasible design"
    f = _BY_NAME[name]
    return unit_label(f.label, f.unit, currency, f.fmt)


def key_label(key: str, unit: str = "", technology: str | None = None) -> str:
    """A scenario key in words with its unit: ``energy.electricity_price`` -> ``electricity price [USD/kWh]``;
    a technology's key names the technology (``RO pump efficiency``), and says when it reaches ``technology`` as a
    shared input (FO's regenerator drawing RO's pump efficiency)."""
    from ..tech import load_builtin
    from ..tech.base import TECHNOLOGIES
    from ..uncertainty import SHARED
    load_builtin()
    sec, name = key.split(".", 1)
    words = name.replace(".", " ").replace("_", " ")
    if sec in TECHNOLOGIES:
        words = f"{sec.upper()} {words}"
    if technology and sec != technology and any(t.startswith(f"{technology}.") and s == key
                                                for t, s in SHARED.items()):
        words += f" (shared by {technology.upper()})"
    return f"{words} [{unit}]" if unit and unit != "-" else words


def held(scenario) -> str:
    """A figure title's last line naming the keys set on the command line, which every figure holds at ("" when
    none)."""
    from ..sweep import overrides
    sets = overrides(scenario)
    return "\nat " + "; ".join(f"{k} = {v}" for k, v in sets.items()) + " (--set)" if sets else ""


def _scale(name: str) -> float:
    return 100.0 if _BY_NAME.get(name) is not None and _BY_NAME[name].fmt == "percent" else 1.0


# ------------------------------------------------------------------------------------------------ grids
def grid_figure(sr, folder) -> list[str]:
    """Levelized cost, work equivalent, emissions and second-law efficiency against the first varied key, a line
    per technology (colour) and per combination of the other keys (line style, up to four), panels sharing the x
    axis; the floor on the work-equivalent panel; where first place changes on cost, energy or emissions, a dotted
    vertical line labelled with the break-even value in the key's unit (and the other keys' values)."""
    from matplotlib.lines import Line2D

    from ..sweep import break_even
    from .tables import fmt_group, fmt_number, with_unit
    plt = _plt()
    ax0 = sr.axes[0]
    shape = tuple(a.values.size for a in sr.axes)
    rests = list(np.ndindex(*shape[1:]))[:4]
    cur = sr.scenario.currency
    fig, axes = plt.subplots(2, 2, figsize=(11, 7.5), sharex=True)
    styles = ["-", "--", "-.", ":"]
    crit_of = {"lcow": "cost", "work_equivalent": "energy", "emissions": "emissions"}

    def tail(rest):
        return ", ".join(f"{key_label(a.key)} {a.display[i]:g} {a.unit}".rstrip(" -")
                         for a, i in zip(sr.axes[1:], rest))
    for (metric, name), ax in zip(_PANEL_FIELDS, axes.ravel()):
        k = _scale(name)
        for j, rest in enumerate(rests):
            for t in sr.technologies:
                y = sr.metrics[t][metric].reshape(shape)[(slice(None),) + rest] * k
                ax.plot(ax0.display, y, styles[j % 4], color=colour(t, sr.technologies), marker="o", ms=3, lw=1.8)
            if metric == "work_equivalent":
                fl = sr.floor.reshape(shape)[(slice(None),) + rest]
                ax.plot(ax0.display, fl, styles[j % 4], color="k", lw=1.2)
        if metric in crit_of:
            shown, spans = 0, set()
            for c in break_even(sr, crit_of[metric]):
                j = next((j for j, rest in enumerate(rests)
                          if all(np.isclose(c["at"].get(a.key, np.nan), a.display[i])
                                 for a, i in zip(sr.axes[1:], rest))), None)
                if j is None:
                    continue
                where = f"\n({tail(rests[j])})" if len(rests) > 1 else ""
                change = f"{(c['from'] or 'none').upper()} to {(c['to'] or 'none').upper()}"
                if c["kind"] == "crossing":
                    x = c["value"]
                    ax.axvline(x, color="0.25", ls=":", lw=1.3)
                    text = f"{change}\nat {with_unit(fmt_number(c['value'], 3), c['unit'])}{where}"
                else:
                    # first place changes because a technology becomes feasible or infeasible somewhere between two
                    # grid points: the span between them, shaded
                    lo, hi = c["between"]
                    if (lo, hi) not in spans:              # once per span, whatever the other keys
                        ax.axvspan(lo, hi, color="0.5", alpha=0.18, lw=0)
                        spans.add((lo, hi))
                    x = hi
                    a, b = fmt_group([float(lo), float(hi)], 3)
                    text = (f"{change} between {with_unit(f'{a} and {b}', c['unit'])}:\n"
                            f"{_feasibility_words(sr, metric, c, rests[j], a, b)}{where}")
                right = x > 0.6 * ax0.display.max() + 0.4 * ax0.display.min()
                if right and c["kind"] != "crossing":
                    x = c["between"][0]
                ax.annotate(text, (x, 1.0),
                            xycoords=("data", "axes fraction"), xytext=(-3 if right else 3, -3 - 40 * shown),
                            textcoords="offset points", fontsize=7.5, va="top", ha="right" if right else "left",
                            color="0.2", bbox={"boxstyle": "round,pad=0.2", "fc": "white", "ec": "none",
                                               "alpha": 0.85})
                shown += 1
        ax.set_ylabel(metric_label(name, cur))
        ax.grid(alpha=0.3)
        ax.set_ylim(bottom=0)
        if shown:
            # headroom above the data for the break-even notes, so that they cover no line
            top = ax.get_ylim()[1]
            ax.set_ylim(top=top * (1 + 0.16 * shown))
    for ax in axes[1]:
        ax.set_xlabel(key_label(ax0.key, ax0.unit))
    # one legend: colours are technologies, line styles the other keys' values
    handles = [Line2D([], [], color=colour(t, sr.technologies), marker="o", ms=3, lw=1.8, label=t.upper())
               for t in sr.technologies]
    handles.append(Line2D([], [], color="k", lw=1.2, label="least work of the feed (zero recovery)"))
    if len(rests) > 1:
        handles += [Line2D([], [], color="0.4", ls=styles[j % 4], lw=1.5, label=tail(rest))
                    for j, rest in enumerate(rests)]
    fig.legend(handles=handles, loc="lower center", ncol=min(4, len(handles)), fontsize=8, frameon=False,
               bbox_to_anchor=(0.5, 0.0))
    more = "" if len(rests) == int(np.prod(shape[1:])) else f"; first {len(rests)} combinations of the other keys"
    fig.suptitle(f"{sr.scenario.name}: cost and energy against {key_label(ax0.key)} ({sr.n} cases{more})"
                 + held(sr.scenario))
    fig.tight_layout(rect=(0, 0.07, 1, 1))
    _caption(fig)
    names = _save(fig, folder, "sweep")
    plt.close(fig)
    return names


def _feasibility_words(sr, metric: str, change: dict, rest: tuple, lo: str, hi: str) -> str:
    """Why first place changes between two grid points (shown ``lo`` and ``hi``): which technology stops (or starts)
    being feasible."""
    shape = tuple(a.values.size for a in sr.axes)
    i = int(np.argmin(np.abs(sr.axes[0].display - change["between"][0])))
    ok = {t: np.isfinite(sr.metrics[t][metric].reshape(shape)[(slice(None),) + rest]) for t in sr.technologies}
    a, b = change["from"], change["to"]
    if a is not None and ok[a][i] and not ok[a][min(i + 1, shape[0] - 1)]:
        return f"{a.upper()} feasible at {lo}, not at {hi}"
    if b is not None and not ok[b][i] and ok[b][min(i + 1, shape[0] - 1)]:
        return f"{b.upper()} infeasible at {lo}, feasible at {hi}"
    return "a technology's feasibility changes"


# ------------------------------------------------------------------------------------------------ samples
def samples_figure(sr, folder) -> list[str]:
    """Cumulative distributions of the headline metrics over the feasible samples, overlaid per technology (a value
    that does not vary is a vertical step, and hides nothing), with the median marked; the share of samples in which
    each technology is feasible in the legend."""
    plt = _plt()
    cur = sr.scenario.currency
    fig, axes = plt.subplots(2, 2, figsize=(11, 7.5), sharey=True)
    for (metric, name), ax in zip(_PANEL_FIELDS, axes.ravel()):
        k = _scale(name)
        for t in sr.technologies:
            y = sr.metrics[t][metric]
            y = np.sort(y[np.isfinite(y)]) * k
            c = colour(t, sr.technologies)
            if y.size:
                p = np.arange(1, y.size + 1) / sr.n          # share of all samples (infeasible ones never count)
                ax.step(np.concatenate([[y[0]], y]), np.concatenate([[0.0], p]), where="post", color=c, lw=1.8,
                        label=f"{t.upper()} (feasible in {y.size / sr.n:.0%} of samples)")
                med = float(np.median(y))
                ax.plot([med], [np.searchsorted(y, med, side="right") / sr.n], "o", color=c, ms=5)
            else:
                ax.plot([], [], color=c, label=f"{t.upper()} (never feasible)")
        if metric == "work_equivalent":
            fl = np.sort(sr.floor[np.isfinite(sr.floor)])
            ax.step(fl, np.arange(1, fl.size + 1) / fl.size, where="post", color="k", lw=1.2,
                    label="least work of the feed (zero recovery)")
        values = np.concatenate([sr.metrics[t][metric][np.isfinite(sr.metrics[t][metric])] * k
                                 for t in sr.technologies] + ([sr.floor] if metric == "work_equivalent" else []))
        log = values.size and values.min() > 0 and values.max() / values.min() > 10
        if log:            # technologies an order of magnitude apart: a log axis keeps the small ones readable
            from matplotlib import ticker
            ax.set_xscale("log")
            ax.xaxis.set_major_locator(ticker.LogLocator(subs=(1.0, 2.0, 5.0)))
            ax.xaxis.set_major_formatter(ticker.FuncFormatter(lambda v, _: f"{v:g}"))
            ax.xaxis.set_minor_formatter(ticker.NullFormatter())
        ax.set_xlabel(metric_label(name, cur) + (" (log scale)" if log else ""))
        ax.grid(alpha=0.3, which="both" if log else "major")
        ax.set_ylim(0, 1.02)
    for ax in axes[:, 0]:
        ax.set_ylabel("share of samples at or below")
    handles, labels = axes[0, 1].get_legend_handles_labels()
    fig.legend(handles, labels, loc="lower center", ncol=min(4, len(labels)), fontsize=8, frameon=False,
               bbox_to_anchor=(0.5, 0.0))
    fig.suptitle(f"{sr.scenario.name}: distributions over {sr.n} samples"
                 + (" (Latin hypercube)" if sr.lhs else "") + "; dots mark medians" + held(sr.scenario))
    fig.tight_layout(rect=(0, 0.06, 1, 1))
    _caption(fig)
    names = _save(fig, folder, "distributions")
    plt.close(fig)
    return names


# ------------------------------------------------------------------------------------------------ sensitivity
def sensitivity_figure(sens: dict, scenario, folder) -> list[str]:
    """The tornado of the levelized cost (``tornado.png``) or its Sobol indices with their 95 % intervals
    (``sobol.png``), one panel per technology."""
    return (tornado_figure if sens["method"] == "tornado" else sobol_figure)(sens, scenario, folder)


def _key_words(sens: dict, key: str, rows: list) -> str:
    r = next((r for r in rows if r["key"] == key), None)
    if r is None or "low" not in r:
        return key_label(key)
    words = key_label(key, technology=r["technology"])
    from .tables import fmt_group, with_unit
    lo, hi = fmt_group([r["low"], r["high"]], 3)
    return f"{words}\n" + with_unit(f"{lo} to {hi}", r["unit"])


def tornado_figure(sens: dict, scenario, folder, metric: str = "levelized_cost_per_m3") -> list[str]:
    """Per technology, the metric with each key at its p10 and p90 (the others at their medians) as bars from the
    all-medians value, keys sorted by the swing, panels sharing the metric axis."""
    plt = _plt()
    techs = list(dict.fromkeys(r["technology"] for r in sens["rows"]))
    rows = [r for r in sens["rows"] if r["metric"] == metric]
    kept = {t: [r for r in rows if r["technology"] == t and r["at_low"] != r["at_high"]] for t in techs}
    heights = [max(1, len(kept[t])) for t in techs]          # keys with no effect on a technology are left out
    fig, axes = plt.subplots(len(techs), 1, figsize=(9, 1.5 + 0.6 * sum(heights) + 0.5 * len(techs)),
                             sharex=True, squeeze=False, gridspec_kw={"height_ratios": heights})
    for t, ax in zip(techs, axes[:, 0]):
        rs = list(kept[t])
        rs.sort(key=lambda r: abs((r["at_high"] or 0) - (r["at_low"] or 0)))
        base = next((r["base"] for r in rs if r["base"] is not None), None)
        if base is None:
            ax.text(0.5, 0.5, f"{t.upper()}: infeasible at the medians", transform=ax.transAxes, ha="center")
            ax.set_yticks([])
            continue
        y = np.arange(len(rs))
        lo = np.array([np.nan if r["at_low"] is None else r["at_low"] for r in rs])
        hi = np.array([np.nan if r["at_high"] is None else r["at_high"] for r in rs])
        ax.barh(y, lo - base, left=base, color="#4c72b0", height=0.6, label="key at its 10th percentile")
        ax.barh(y, hi - base, left=base, color="#dd8452", height=0.6, label="key at its 90th percentile")
        for yi, a, b in zip(y, lo, hi):
            if not (np.isfinite(a) and np.isfinite(b)):
                ax.text(base, yi, " infeasible at one end", va="center", fontsize=7, color="C3")
        ax.axvline(base, color="k", lw=1)
        ax.set_yticks(y, [_key_words(sens, r["key"], rs) for r in rs], fontsize=8)
        ax.set_title(f"{t.upper()}: {base:.3g} {scenario.currency}/m3 with every key at its median", fontsize=10,
                     loc="left")
        ax.grid(axis="x", alpha=0.3)
    axes[0, 0].legend(fontsize=8, loc="lower right")
    axes[-1, 0].set_xlabel(metric_label(metric, scenario.currency))
    fig.suptitle(f"{scenario.name}: what moves the {metric_label(metric, scenario.currency).split(' [')[0]}\n"
                 "(each key at its 10th and 90th percentile, the others at their medians; keys with no effect left "
                 "out)" + (f"\n{sens['note']}" if sens.get("note") else "") + held(scenario), fontsize=11)
    fig.tight_layout()
    _caption(fig)
    names = _save(fig, folder, "tornado")
    plt.close(fig)
    return names


def sobol_figure(sens: dict, scenario, folder, metric: str = "levelized_cost_per_m3") -> list[str]:
    """Per technology, the first-order and total Sobol indices of the metric for every key, with 95 % intervals,
    on one 0-1 axis shared by the panels."""
    plt = _plt()
    techs = list(dict.fromkeys(r["technology"] for r in sens["rows"]))
    rows = {t: {r["key"]: r for r in sens["rows"] if r["technology"] == t and r["metric"] == metric} for t in techs}

    def matters(r):        # a key whose total index or its interval's upper end reaches 1 %
        return r["total"] is not None and max(r["total"], r["total_high"] or 0) >= 0.01
    kept = {t: [k for k in sens["keys"] if matters(rows[t][k])] for t in techs}
    heights = [max(1, len(kept[t])) for t in techs]
    fig, axes = plt.subplots(len(techs), 1, figsize=(9, 1.5 + 0.55 * sum(heights) + 0.5 * len(techs)),
                             sharex=True, squeeze=False, gridspec_kw={"height_ratios": heights})
    for t, ax in zip(techs, axes[:, 0]):
        rs = rows[t]
        order = sorted(kept[t], key=lambda k: rs[k]["total"])
        y = np.arange(len(order))
        for off, which, c, lab in ((0.18, "total", "#4c72b0", "total (with interactions)"),
                                   (-0.18, "first", "#8fb0d9", "first order (alone)")):
            v = np.array([np.nan if rs[k][which] is None else rs[k][which] for k in order])
            lo = np.array([np.nan if rs[k][which + "_low"] is None else rs[k][which + "_low"] for k in order])
            hi = np.array([np.nan if rs[k][which + "_high"] is None else rs[k][which + "_high"] for k in order])
            ax.barh(y + off, np.clip(v, 0, None), height=0.34, color=c, label=lab)
            ax.errorbar(v, y + off, xerr=[np.clip(v - lo, 0, None), np.clip(hi - v, 0, None)], fmt="none",
                        ecolor="k", elinewidth=1, capsize=2)
        ax.set_yticks(y, [key_label(k, technology=t) for k in order], fontsize=8)
        n = next(iter(rs.values()))["samples"] if rs else 0
        ax.set_title(f"{t.upper()} ({n} base rows used)" if n else f"{t.upper()}: no variation or too few feasible "
                     "rows", fontsize=10, loc="left")
        ax.grid(axis="x", alpha=0.3)
        ax.set_xlim(-0.02, 1.05)
        ax.axvline(1.0, color="0.6", lw=0.8)
    axes[0, 0].legend(fontsize=8, loc="lower right")
    words = metric_label(metric, scenario.currency).split(" [")[0]
    axes[-1, 0].set_xlabel(f"share of the variance of the {words} (bars: estimate; whiskers: 95 % interval, "
                                f"shown within 0 to 1)")
    fig.suptitle(f"{scenario.name}: which uncertain inputs drive the {words}\n(Sobol indices, "
                 f"{sens['base_samples']} base samples; keys below 1 % left out)" + held(scenario), fontsize=11)
    fig.tight_layout()
    _caption(fig)
    names = _save(fig, folder, "sobol")
    plt.close(fig)
    return names


# ------------------------------------------------------------------------------------------------ compare
def compare_figure(payloads: list[dict], folder) -> list[str]:
    """Per scenario, two panels: stacked bars per technology of electricity and the work equivalent of heat, with
    the least work of its own streams and the feed's floor marked; and the levelized cost stacked by its lines
    (capital, the operation and maintenance causes, electricity, heat). Energy panels share their axis, cost panels
    theirs."""
    plt = _plt()
    from .fields import COST_LINES
    n = max(1, len(payloads))
    fig, axes = plt.subplots(2, n, figsize=(3 + 3.2 * n, 8), squeeze=False)
    # electricity and heat keep their energy-panel colours in the cost stack
    greys = iter(("0.25", "0.4", "0.55", "0.7", "0.82", "0.9"))
    cost_colours = [{"electricity": "#4c72b0", "heat": "#dd8452"}.get(f.name) or next(greys) for f in COST_LINES]
    currencies = []
    for p, (ax, cx) in zip(payloads, zip(axes[0], axes[1])):
        recs = p["results"]
        names = [r["technology"].upper() for r in recs]
        x = np.arange(len(recs))
        e = np.array([np.nan if r["electricity_kwh_per_m3"] is None else r["electricity_kwh_per_m3"] for r in recs])
        we = np.array([np.nan if r["work_equivalent_kwh_per_m3"] is None else r["work_equivalent_kwh_per_m3"]
                       for r in recs]) - e
        lw = np.array([np.nan if r["least_work_kwh_per_m3"] is None else r["least_work_kwh_per_m3"] for r in recs])
        ax.bar(x, e, color="#4c72b0", label="electricity")
        ax.bar(x, we, bottom=e, color="#dd8452", label="work equivalent of heat")
        ax.scatter(x, lw, color="k", marker="_", s=400, zorder=3, label="least work of its own streams")
        ax.axhline(p["floor"]["least_work_kwh_per_m3_zero_recovery"], color="k", ls=":", lw=1,
                   label="least work of the feed (zero recovery)")
        bottom = np.zeros(len(recs))
        currency = recs[0]["currency"] if recs else ""
        currencies.append(currency)
        for f, c in zip(COST_LINES, cost_colours):
            v = np.array([np.nan if (r["details"].get("cost_breakdown_per_m3") or {}).get(f.name) is None
                          else r["details"]["cost_breakdown_per_m3"][f.name] for r in recs])
            cx.bar(x, np.nan_to_num(v), bottom=bottom, color=c, label=f.label)
            bottom = bottom + np.nan_to_num(v)
        for i, r in enumerate(recs):
            if not r["feasible"]:
                for a in (ax, cx):
                    a.text(i, 0, "infeasible", rotation=90, ha="center", va="bottom", fontsize=8, color="C3")
            else:
                cx.text(i, bottom[i], f"{bottom[i]:.2f}", ha="center", va="bottom", fontsize=8)
        for a in (ax, cx):
            a.set_xticks(x, names)
            a.grid(axis="y", alpha=0.3)
        ax.set_title(p["scenario"], fontsize=10)
    # shared axes: energy across scenarios; cost too when every scenario prices in one currency
    top = max(a.get_ylim()[1] for a in axes[0])
    for a in axes[0]:
        a.set_ylim(0, top)
    axes[0, 0].set_ylabel("energy per m3 of product [kWh/m3]")
    if len(set(currencies)) <= 1:
        top = max(a.get_ylim()[1] for a in axes[1])
        for a in axes[1]:
            a.set_ylim(0, top)
        axes[1, 0].set_ylabel(f"levelized cost of water [{currencies[0] if currencies else ''}/m3]")
    else:
        for a, cur in zip(axes[1], currencies):
            a.set_ylabel(f"levelized cost of water [{cur}/m3]")
    axes[0, -1].legend(fontsize=7, loc="upper left", bbox_to_anchor=(1.0, 1.0))
    axes[1, -1].legend(fontsize=7, loc="upper left", bbox_to_anchor=(1.0, 1.0))
    fig.tight_layout()
    _caption(fig)
    names = _save(fig, folder, "energy")
    plt.close(fig)
    return names
