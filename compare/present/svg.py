"""Figures as inline SVG text, drawn here without a plotting library: horizontal stacked bars with marks, line charts
with vertical markers, and histogram strips. Each function returns one ``<svg>`` element (a string) sized by its
``viewBox`` so that it scales to the page; text uses the page's own font (no font is fetched). Colours are the
Okabe-Ito palette, readable by colour-blind readers and distinct in greyscale print by their order and labels.
"""

from __future__ import annotations

import math
from html import escape

import numpy as np

#: Okabe & Ito (2008), "Color universal design": a palette distinguishable with the common colour-vision deficiencies
PALETTE = ("#0072B2", "#E69F00", "#009E73", "#D55E00", "#56B4E9", "#CC79A7", "#F0E442", "#000000")
FONT = 14


def nice_ticks(lo: float, hi: float, n: int = 5) -> list[float]:
    """Round tick values covering [lo, hi] with about ``n`` intervals.

    Examples
    --------
    >>> nice_ticks(0, 12)
    [0.0, 2.5, 5.0, 7.5, 10.0, 12.5]
    """
    if not (math.isfinite(lo) and math.isfinite(hi)) or hi <= lo:
        hi = lo + 1.0
    raw = (hi - lo) / n
    mag = 10.0 ** math.floor(math.log10(raw))
    step = next(m * mag for m in (1, 2, 2.5, 5, 10) if m * mag >= raw)
    start = math.floor(lo / step) * step
    ticks, t = [], start
    while t < hi + step * 0.999:
        ticks.append(round(t, 12))
        t += step
    return ticks


def tick_labels(ticks) -> list[str]:
    """Labels of one axis with the decimals its step needs, the same for every tick ("0.0 2.5 5.0", never
    "0 2.5 5").

    Examples
    --------
    >>> tick_labels([0.0, 2.5, 5.0, 7.5]), tick_labels([0.0, 500.0, 1000.0]), tick_labels([-0.1, 0.0, 0.1])
    (['0.0', '2.5', '5.0', '7.5'], ['0', '500', '1,000'], ['-0.1', '0.0', '0.1'])
    """
    from .tables import fixed
    d = next((d for d in range(7) if all(abs(round(t, d) - t) <= 1e-9 * max(1.0, abs(t)) for t in ticks)), 6)
    return [fixed(t, d) for t in ticks]


def _shared(values) -> list[str]:
    """Figures of one quantity (the bar totals of a chart) with shared decimals."""
    from .tables import fmt_group, fmt_number
    return [fmt_number(x) for x in fmt_group([float(v) for v in values])]


def _fmt(v: float) -> str:
    if v == 0:
        return "0"
    a = abs(v)
    if a >= 1000:
        return f"{v:,.0f}"
    if a >= 10:
        return f"{v:.3g}" if a < 100 else f"{v:.0f}"
    return f"{v:.3g}"


def _text(x, y, s, anchor="start", size=FONT, weight=None, fill="#222", extra="") -> str:
    w = f' font-weight="{weight}"' if weight else ""
    return (f'<text x="{x:.1f}" y="{y:.1f}" text-anchor="{anchor}" font-size="{size}"{w} fill="{fill}"{extra}>'
            f"{escape(str(s))}</text>")


def _svg(width, height, body: list[str], label: str, cls: str) -> str:
    return (f'<svg class="figure {cls}" viewBox="0 0 {width} {height:.0f}" role="img" aria-label="{escape(label)}" '
            f'font-family="inherit">'
            f"<title>{escape(label)}</title>" + "".join(body) + "</svg>")


def _legend(items, x0, y, width) -> tuple[list[str], float]:
    """Legend swatches in rows that wrap at ``width``; returns the elements and the y below them."""
    out, x = [], x0
    for label, colour, kind in items:
        w = 26 + 6.9 * len(label) + 12
        if x + w > x0 + width and x > x0:
            x, y = x0, y + 22
        if kind == "box":
            out.append(f'<rect x="{x:.1f}" y="{y - 11:.1f}" width="16" height="12" fill="{colour}"/>')
        elif kind == "tick":
            out.append(f'<line x1="{x + 8:.1f}" y1="{y - 14:.1f}" x2="{x + 8:.1f}" y2="{y + 3:.1f}" '
                       f'stroke="{colour}" stroke-width="3"/>')
        else:
            out.append(f'<line x1="{x:.1f}" y1="{y - 5:.1f}" x2="{x + 16:.1f}" y2="{y - 5:.1f}" stroke="{colour}" '
                       f'stroke-width="2" stroke-dasharray="{"5 3" if kind == "dash" else "none"}"/>')
        out.append(_text(x + 22, y, label, size=FONT - 1))
        x += w
    return out, y + 14


def stacked_bars(rows, parts, *, unit: str, label: str, marks=None, line=None, width: int = 480,
                 cls: str = "bars") -> str:
    """Horizontal stacked bars, one row per item, its label above the bar and its total after it.

    rows : list of (label, values per part or None when the item has no figures, note shown when None)
    parts : list of (part name, colour)
    marks : optional (legend label, list of values or None per row): a black tick across each bar
    line : optional (legend label, value): a dashed vertical line across every row
    """
    pad_l, pad_r, top = 14, 70, 8
    legend = [(name, colour, "box") for name, colour in parts]
    if marks:
        legend.append((marks[0], "#000", "tick"))
    if line:
        legend.append((line[0], "#444", "dash"))
    body, y = _legend(legend, pad_l, top + 14, width - 2 * pad_l)
    totals = [sum(v for v in vals if v is not None and math.isfinite(v)) for _, vals, _ in rows if vals]
    extra = [v for v in (marks[1] if marks else []) if v is not None] + ([line[1]] if line else [])
    hi = max(totals + extra + [1e-12])
    ticks = nice_ticks(0.0, hi)
    span = ticks[-1]
    plot_w = width - pad_l - pad_r
    sx = lambda v: pad_l + plot_w * v / span  # noqa: E731
    y += 8
    row_h, bar_h = 48, 20
    y_rows = y
    total_labels = iter(_shared(totals))
    for i, (name, vals, note) in enumerate(rows):
        ty = y + 15
        body.append(_text(pad_l, ty, name, weight="bold"))
        by = ty + 6
        if vals is None:
            body.append(_text(pad_l + 9 * len(name) + 12, ty, note or "no figures", size=FONT - 1, fill="#a00"))
            body.append(f'<rect x="{pad_l}" y="{by:.1f}" width="{plot_w:.1f}" height="{bar_h}" fill="none" '
                        f'stroke="#999" stroke-dasharray="4 3"/>')
        else:
            x = sx(0)
            for (pname, colour), v in zip(parts, vals):
                if v is None or not math.isfinite(v) or v <= 0:
                    continue
                w = sx(v) - sx(0)
                body.append(f'<rect x="{x:.2f}" y="{by:.1f}" width="{max(w, 0.5):.2f}" height="{bar_h}" '
                            f'fill="{colour}"><title>{escape(pname)}: {_fmt(v)} {escape(unit)}</title></rect>')
                x += w
            body.append(_text(x + 5, by + 15, next(total_labels), size=FONT - 1))
        if marks and marks[1][i] is not None:
            mx = sx(marks[1][i])
            body.append(f'<line x1="{mx:.2f}" y1="{by - 5:.1f}" x2="{mx:.2f}" y2="{by + bar_h + 5:.1f}" '
                        f'stroke="#000" stroke-width="3"/>')
        y += row_h
    axis_y = y + 4
    if line:
        lx = sx(line[1])
        body.append(f'<line x1="{lx:.2f}" y1="{y_rows:.1f}" x2="{lx:.2f}" y2="{axis_y:.1f}" stroke="#444" '
                    f'stroke-width="1.5" stroke-dasharray="5 3"/>')
    body.append(f'<line x1="{pad_l}" y1="{axis_y:.1f}" x2="{pad_l + plot_w:.1f}" y2="{axis_y:.1f}" stroke="#444"/>')
    for t, text in zip(ticks, tick_labels(ticks)):
        tx = sx(t)
        body.append(f'<line x1="{tx:.1f}" y1="{axis_y:.1f}" x2="{tx:.1f}" y2="{axis_y + 5:.1f}" stroke="#444"/>')
        body.append(_text(tx, axis_y + 20, text, anchor="middle", size=FONT - 2))
    body.append(_text(pad_l + plot_w, axis_y + 38, unit, anchor="end", size=FONT - 1))
    return _svg(width, axis_y + 46, body, label, cls)


def line_chart(x, series, *, xlabel: str, ylabel: str, label: str, vlines=(), hline=None, width: int = 480,
               height: int = 320, cls: str = "lines") -> str:
    """Lines of y against x with markers; ``series`` is a list of (label, colour, y values, NaN where missing);
    ``vlines`` a list of (x, text) markers (break-even points); ``hline`` an optional (y, text) reference line."""
    x = np.asarray(x, dtype=float)
    legend = [(name, colour, "line") for name, colour, _ in series]
    if hline:
        legend.append((hline[1], "#444", "dash"))
    body, top = _legend(legend, 8, 22, width - 16)
    pad_l, pad_r, pad_b = 56, 14, 52
    ys = np.concatenate([np.asarray(y, dtype=float) for _, _, y in series] + ([np.array([hline[0]])] if hline
                                                                             else []))
    ys = ys[np.isfinite(ys)]
    lo, hi = (float(ys.min()), float(ys.max())) if ys.size else (0.0, 1.0)
    yt = nice_ticks(min(lo, 0.0) if lo > 0 and lo < 0.25 * hi else lo, hi, 5)
    xt = nice_ticks(float(x.min()), float(x.max()), 5)
    xt = [t for t in xt if x.min() - 1e-12 <= t <= x.max() + 1e-12] or [float(x.min()), float(x.max())]
    y0, y1 = top + 6, height - pad_b
    x0, x1 = pad_l, width - pad_r
    sx = lambda v: x0 + (x1 - x0) * (v - x.min()) / ((x.max() - x.min()) or 1.0)  # noqa: E731
    sy = lambda v: y1 - (y1 - y0) * (v - yt[0]) / ((yt[-1] - yt[0]) or 1.0)  # noqa: E731
    for t, text in zip(yt, tick_labels(yt)):
        body.append(f'<line x1="{x0}" y1="{sy(t):.1f}" x2="{x1}" y2="{sy(t):.1f}" stroke="#ddd"/>')
        body.append(_text(x0 - 6, sy(t) + 5, text, anchor="end", size=FONT - 2))
    for t, text in zip(xt, tick_labels(xt)):
        body.append(f'<line x1="{sx(t):.1f}" y1="{y1}" x2="{sx(t):.1f}" y2="{y1 + 5}" stroke="#444"/>')
        body.append(_text(sx(t), y1 + 20, text, anchor="middle", size=FONT - 2))
    body.append(f'<line x1="{x0}" y1="{y1}" x2="{x1}" y2="{y1}" stroke="#444"/>')
    body.append(f'<line x1="{x0}" y1="{y0}" x2="{x0}" y2="{y1}" stroke="#444"/>')
    if hline:
        body.append(f'<line x1="{x0}" y1="{sy(hline[0]):.1f}" x2="{x1}" y2="{sy(hline[0]):.1f}" stroke="#444" '
                    'stroke-width="1.5" stroke-dasharray="5 3"/>')
    for name, colour, y in series:
        y = np.asarray(y, dtype=float)
        seg: list[str] = []
        for xi, yi in zip(x, y):
            if math.isfinite(yi):
                seg.append(f"{sx(xi):.1f},{sy(yi):.1f}")
                body.append(f'<circle cx="{sx(xi):.1f}" cy="{sy(yi):.1f}" r="3" fill="{colour}"/>')
            elif seg:
                body.append(f'<polyline points="{" ".join(seg)}" fill="none" stroke="{colour}" stroke-width="2"/>')
                seg = []
        if seg:
            body.append(f'<polyline points="{" ".join(seg)}" fill="none" stroke="{colour}" stroke-width="2">'
                        f"<title>{escape(name)}</title></polyline>")
    for k, (xv, text) in enumerate(vlines):
        body.append(f'<line x1="{sx(xv):.1f}" y1="{y0}" x2="{sx(xv):.1f}" y2="{y1}" stroke="#000" '
                    'stroke-width="1.5" stroke-dasharray="2 3"/>')
        anchor = "end" if sx(xv) > (x0 + x1) / 2 else "start"
        dx = -4 if anchor == "end" else 4
        body.append(_text(sx(xv) + dx, y0 + 14 + 16 * k, text, anchor=anchor, size=FONT - 1))
    body.append(_text((x0 + x1) / 2, height - 12, xlabel, anchor="middle", size=FONT - 1))
    body.append(_text(14, (y0 + y1) / 2, ylabel, anchor="middle", size=FONT - 1,
                      extra=f' transform="rotate(-90 14 {(y0 + y1) / 2:.1f})"'))
    return _svg(width, height, body, label, cls)


def histogram_strips(groups, *, xlabel: str, label: str, bins: int = 30, width: int = 480,
                     cls: str = "histograms") -> str:
    """One histogram strip per group on a shared axis, with the p10, p50 and p90 marked; ``groups`` is a list of
    (label, colour, values)."""
    vals = [np.asarray(v, dtype=float) for _, _, v in groups]
    vals = [v[np.isfinite(v)] for v in vals]
    allv = np.concatenate(vals) if vals else np.array([])
    lo, hi = (float(allv.min()), float(allv.max())) if allv.size else (0.0, 1.0)
    if hi <= lo:
        lo, hi = lo - 0.5 * abs(lo or 1), hi + 0.5 * abs(hi or 1)
    ticks = nice_ticks(lo, hi, 5)
    edges = np.linspace(ticks[0], ticks[-1], bins + 1)
    pad_l, pad_r = 8, 14
    x0, x1 = pad_l, width - pad_r
    sx = lambda v: x0 + (x1 - x0) * (v - ticks[0]) / (ticks[-1] - ticks[0])  # noqa: E731
    body, y = [], 8
    strip = 64
    for (name, colour, _), v in zip(groups, vals):
        body.append(_text(x0, y + 15, f"{name} ({v.size} feasible)" if v.size else f"{name}: no feasible case",
                          weight="bold"))
        base = y + 22 + strip - 10
        if v.size:
            counts, _ = np.histogram(v, edges)
            top = counts.max() or 1
            for c, a, b in zip(counts, edges[:-1], edges[1:]):
                if c:
                    h = (strip - 14) * c / top
                    body.append(f'<rect x="{sx(a):.2f}" y="{base - h:.2f}" width="{max(sx(b) - sx(a) - 0.6, 0.5):.2f}" '
                                f'height="{h:.2f}" fill="{colour}"/>')
            p10, p50, p90 = np.percentile(v, [10, 50, 90])
            body.append(f'<line x1="{sx(p10):.1f}" y1="{base + 4:.1f}" x2="{sx(p90):.1f}" y2="{base + 4:.1f}" '
                        'stroke="#000" stroke-width="2"/>')
            body.append(f'<circle cx="{sx(p50):.1f}" cy="{base + 4:.1f}" r="4" fill="#000"/>')
        body.append(f'<line x1="{x0}" y1="{base:.1f}" x2="{x1}" y2="{base:.1f}" stroke="#888"/>')
        y += strip + 22
    axis_y = y + 2
    body.append(f'<line x1="{x0}" y1="{axis_y:.1f}" x2="{x1}" y2="{axis_y:.1f}" stroke="#444"/>')
    for t, text in zip(ticks, tick_labels(ticks)):
        body.append(f'<line x1="{sx(t):.1f}" y1="{axis_y:.1f}" x2="{sx(t):.1f}" y2="{axis_y + 5:.1f}" stroke="#444"/>')
        body.append(_text(sx(t), axis_y + 20, text, anchor="middle", size=FONT - 2))
    body.append(_text(x1, axis_y + 38, f"{xlabel}; bar: p10 to p90, dot: median", anchor="end", size=FONT - 1))
    return _svg(width, axis_y + 46, body, label, cls)
