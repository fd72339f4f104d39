"""Tables for the terminal (rich) and Markdown."""

from __future__ import annotations

import numpy as np
from rich.console import Console
from rich.markup import escape
from rich.table import Table
from rich.text import Text

from ..errors import printable
from . import CAUTION
from .fields import share_pct

#: characters with a meaning in Markdown (or HTML inside it), escaped with a backslash in text from input
_MARKDOWN = str.maketrans({c: "\\" + c for c in "\\`*_{}<>#!|~&$"})


def md(text) -> str:
    """Text from input made inert in Markdown: control characters escaped visibly, Markdown and HTML signs
    backslash-escaped (``<script>`` shows as text, ``# x`` starts no heading, ``|`` splits no cell).

    Examples
    --------
    >>> md("[a](u) <b>|# x")
    '[a\\\\](u) \\\\<b\\\\>\\\\|\\\\# x'
    """
    import re
    # a closing bracket that would make a link ("[x](url)", "[x][ref]", "[x]: url") is escaped; plain "[unit]" stays
    return re.sub(r"\](?=[(\[:])", r"\\]", printable(text).translate(_MARKDOWN))


def _md_cell(x) -> str:
    return md(x) if isinstance(x, str) else fmt_number(x)


def fmt_number(v, digits: int = 4) -> str:
    """A number for people: ``digits`` significant figures, thousands separators, whole numbers as integers, no
    exponent for large values; None or NaN as an em-dash."""
    if v is None:
        return "—"
    if isinstance(v, bool):
        return "yes" if v else "no"
    if isinstance(v, int):
        return f"{v:,}"
    if isinstance(v, float):
        if v != v:
            return "—"
        if v == 0:
            return "0"
        a = abs(v)
        if a >= 10 ** (digits - 1) or (v == int(v) and a < 1e15):    # whole numbers (counts) as integers
            return f"{v:,.0f}"
        if a < 1e-4:
            return f"{v:.{digits - 1}e}"
        decimals = max(0, digits - 1 - int(np.floor(np.log10(a))))
        return f"{v:,.{decimals}f}"
    return str(v)


def rich_table(title: str, columns: list[str], rows: list[list], caption: str | None = None) -> Table:
    table = Table(title=escape(printable(title)), caption=caption and escape(printable(caption)),
                  title_justify="left", caption_justify="left")
    cells = [[Text(printable(fmt_number(x))) if not isinstance(x, Text) else x for x in r] for r in rows]
    # the first column holds keys and names a reader copies (into --set, say): on a narrow terminal it folds onto a
    # second line rather than ending in an ellipsis
    for i, c in enumerate(columns):
        table.add_column(escape(printable(c)), justify="left" if i == 0 else "right",
                         overflow="fold" if i == 0 else "ellipsis")
    for r in cells:
        table.add_row(*r)
    return table


def markdown_table(columns: list[str], rows: list[list]) -> str:
    head = "| " + " | ".join(md(c) for c in columns) + " |"
    sep = "|" + "|".join([" --- "] + [" ---: "] * (len(columns) - 1)) + "|"
    body = ["| " + " | ".join(_md_cell(x) for x in r) + " |" for r in rows]
    return "\n".join([head, sep, *body])


def print_tables(console: Console, tables: list[Table], warnings: list[str]) -> None:
    for t in tables:
        console.print(t)
    for w in warnings:
        console.print(f"[yellow]warning:[/yellow] {escape(printable(w))}", highlight=False)
    console.print(Text(CAUTION, style="dim"))


def markdown_report(title: str, sections: list[tuple[str, list[str], list[list]]], warnings: list[str]) -> str:
    parts = [f"# {md(title)}", ""]
    for heading, columns, rows in sections:
        if heading:
            parts += [f"## {md(heading)}", ""]
        parts += [markdown_table(columns, rows), ""]
    if warnings:
        parts += ["## Warnings", ""] + [f"- {md(w)}" for w in warnings] + [""]
    parts += [f"> {CAUTION}", ""]
    return "\n".join(parts)


# ------------------------------------------------------------------------------------------------ side by side
def _pct(v):
    return None if v is None else f"{100 * v:.1f} %"


def _shown(f, v):
    return _pct(v) if f.fmt == "percent" else v


def compare_sections(payload: dict) -> list[tuple[str, list[str], list[list]]]:
    """(heading, columns, rows) per group of the side-by-side comparison (technologies as columns), then one section
    of design figures per technology, in words with units. Infeasible technologies show a dash for every figure
    that needs a working design, and their reasons."""
    from ..present.fields import COST_LINES, COST_TOTALS, FLOOR_FIELDS, RECORD_FIELDS, design_note, detail_label, label
    from ..present.records import detail_table
    from .fields import record_name

    recs = payload["results"]
    cur = recs[0]["currency"] if recs else ""
    techs = [r["technology"] for r in recs]
    fl = payload["floor"]
    floor_rows = [["activity model", fl["model"]]]
    for f in FLOOR_FIELDS:
        v = fl.get(f.name)
        floor_rows.append([label(f), f"{v:.6f}" if f.name == "water_activity" and v is not None else v])
    sections = [("floor", ["feed", "value"], floor_rows)]
    if not recs:
        return sections
    groups: dict[str, list[list]] = {"energy": [["feasible"] + ["yes" if r["feasible"] else "NO" for r in recs]]}
    for f in RECORD_FIELDS:
        groups.setdefault(f.group, []).append([label(f, cur)] + [_shown(f, r[f.name]) for r in recs])
        if f.name == "levelized_cost_per_m3":
            for line in COST_LINES:
                groups["cost"].append([f"  {line.label}"] + [r["details"]["cost_breakdown_per_m3"][line.name]
                                                            for r in recs])
            for total in COST_TOTALS:
                groups["cost"].append([label(total, cur)] + [r["details"].get(total.name) for r in recs])
    groups.update(build_up_sections(recs, cur))
    reasons = [[r["technology"], "; ".join(x["message"] for x in r.get("flags", []) if x["kind"] == "infeasible")]
               for r in recs if not r["feasible"]]
    scaled = [r["details"].get("scaling") for r in recs]
    if any(scaled):
        groups["scaling"] = scaling_rows(scaled)
    for g, rows in groups.items():
        sections.append((g, [g] + techs, rows))
    if reasons:
        sections.append(("why infeasible", ["technology", "reason"], reasons))
    periods = payload.get("periods", 1)
    note = design_note(periods)
    for r in recs:
        desc = detail_table(r["technology"])
        rows = []
        for key, d in desc.items():
            name = record_name(key, d.unit)
            if name in r["details"] and r["details"][name] is not None:
                rows.append([detail_label(d, periods), r["details"][name]])
        if rows:
            sections.append((f"{r['technology']}: design figures" + (f" ({note})" if note else ""),
                             ["figure", "value"], rows))
    return sections


def build_up_rows(recs: list[dict], key: str, items: dict) -> list[list]:
    """Rows of a cost build-up (``details[key]``: item -> value) with technologies as columns, grouped by cause: a
    row naming the cause, then its items; items no technology has a figure for are left out."""
    rows: list[list] = []
    causes = dict.fromkeys(item.cause for item in items.values())
    for cause in causes:
        names = [n for n, item in items.items() if item.cause == cause
                 and any((r["details"].get(key) or {}).get(n) is not None for r in recs)]
        if not names:
            continue
        rows.append([f"{cause}:"] + [""] * len(recs))
        for n in names:
            rows.append([f"  {items[n].label}"] + [(r["details"].get(key) or {}).get(n) for r in recs])
    return rows


def build_up_sections(recs: list[dict], currency: str) -> dict:
    """The capital by item [currency] and the O&M by cause [currency/m3], as table groups."""
    from ..costing import CAPITAL_ITEMS, OM_ITEMS
    out = {}
    cap = build_up_rows(recs, "capital_breakdown", CAPITAL_ITEMS)
    if cap:
        out[f"capital by item [{currency}]"] = cap
    om = build_up_rows(recs, "om_breakdown_per_m3", OM_ITEMS)
    if om:
        out[f"operation and maintenance by cause [{currency}/m3]"] = om
    return out


def scaling_rows(scaled: list) -> list[list]:
    """Rows of the scaling block (technologies as columns): the limiting mineral, the highest recovery, where the
    concentrate was judged, and each limited mineral's figure against its limit."""
    from .fields import SCALING_FIELDS, unit_label

    def get(sc, key):
        return None if sc is None else sc.get(key)

    rows = [["limiting mineral"] + [get(sc, "limiting_mineral") or ("none in the table" if sc else None)
                                    for sc in scaled]]
    for f in SCALING_FIELDS:
        if f.name == "silica_mg_per_l":
            rows.append([f"{unit_label(f.label, f.unit)} (limit)"] + [
                None if sc is None or sc[f.name] is None else
                f"{fmt_number(sc[f.name], 3)} ({fmt_number(sc['limits'].get('silica'), 3)})" for sc in scaled])
            continue
        rows.append([unit_label(f.label, f.unit, fmt=f.fmt)] + [_shown(f, get(sc, f.name)) for sc in scaled])
    rows.append(["recovery above the limit"] + [None if sc is None else ("YES" if sc["above_limit"] else "no")
                                                for sc in scaled])
    minerals = next(sc["limits"] for sc in scaled if sc)
    for m in minerals:
        if m == "silica":
            continue
        rows.append([f"saturation index, {m.lower()} (limit)"] +
                    [None if sc is None else f"{fmt_number(sc['saturation_index'].get(m), 3)} "
                     f"({fmt_number(sc['limits'][m], 3)})" for sc in scaled])
    return rows


def print_compare(console: Console, payload: dict) -> None:
    title = f"{payload['scenario']}"
    tables = []
    for heading, columns, rows in compare_sections(payload):
        if heading == "floor":
            tables.append(rich_table(title, columns, rows))
        elif columns[0] in ("figure", "technology"):
            tables.append(rich_table(heading, columns, rows))
        else:
            tables.append(rich_table("", columns, rows))
    print_tables(console, tables, payload["warnings"])


def markdown_compare(payload: dict) -> str:
    return markdown_report(payload["scenario"], [(h[:1].upper() + h[1:], c, r)
                                                 for h, c, r in compare_sections(payload)], payload["warnings"])


# ------------------------------------------------------------------------------------------------ sweeps
SWEEP_METRICS = {"work_equivalent_kwh_per_m3": "work equivalent", "electricity_kwh_per_m3": "electricity",
                 "heat_kwh_per_m3": "heat", "levelized_cost_per_m3": "levelized cost", "emissions_kg_per_m3": "CO2",
                 "second_law_efficiency": "second-law efficiency"}


def _figure(row: dict, v) -> str:
    """A summary figure as the compare table shows it: a dimensionless efficiency as a percentage."""
    if row.get("unit") in ("-", "") and row.get("metric") == "second_law_efficiency" and v is not None:
        return f"{100 * v:.1f} %"
    return fmt_number(v)


def _band(row: dict) -> str:
    if not row["n"]:
        return "-"
    return f"{_figure(row, row['p50'])} ({_figure(row, row['p10'])}-{_figure(row, row['p90'])})"


def _range(row: dict) -> str:
    if not row["n"]:
        return "-"
    if row["min"] == row["max"]:
        return _figure(row, row["min"])
    return f"{_figure(row, row['min'])} to {_figure(row, row['max'])}"


#: grid points shown in the terminal table; a wider grid is in grid.csv of the run folder
GRID_ROWS = 30


def _key_unit(body: dict) -> dict:
    return {g["key"]: g["unit"] for g in body.get("grid", [])}


def sweep_sections(body: dict) -> list[tuple[str, list[str], list[list]]]:
    """The sweep summary as (heading, columns, rows) sections. Samples: p50 (p10-p90) per technology and metric,
    the share of samples each ranks first with its 95 % interval, and whether the leaders are told apart. Grids:
    the range across the grid, a row per grid point (up to 30) and the break-even points with their units."""
    techs = list(dict.fromkeys(r["technology"] for r in body["summary"] if r["technology"] != "floor"))
    by = {(r["technology"], r["metric"]): r for r in body["summary"]}
    grid = body["mode"] == "grid"
    cell = _range if grid else _band
    rows = [["feasible share"] + [share_pct(by[(t, 'electricity_kwh_per_m3')]['feasible_share']) for t in techs]]
    for m, label in SWEEP_METRICS.items():
        unit = by[(techs[0], m)]["unit"] if techs else ""
        unit = "%" if m == "second_law_efficiency" and unit in ("-", "") else unit
        rows.append([f"{label} [{unit}]"] + [cell(by[(t, m)]) for t in techs])
    if not grid and techs:
        def p50_ci(row):
            ci = (row.get("ci") or {}).get("p50")
            if not ci:
                return "-"
            return f"{fmt_number(ci[0]) if ci[0] is not None else '?'} to {fmt_number(ci[1]) if ci[1] is not None else '?'}"
        unit = by[(techs[0], "levelized_cost_per_m3")]["unit"]
        rows.append([f"levelized cost p50, its 95 % interval [{unit}]"]
                    + [p50_ci(by[(t, "levelized_cost_per_m3")]) for t in techs])
    fl = by.get(("floor", "least_work_kwh_per_m3_zero_recovery"))
    if fl:
        rows.append(["floor: least work, zero recovery [kWh/m3]"] + [cell(fl)] * len(techs))
    what = ("lowest to highest across the grid points (feasible ones)" if grid
            else "p50 (p10-p90) over feasible samples")
    out = [(f"{body['scenario']}: {body['cases']} cases ({body['mode']}); {what}", ["metric"] + techs, rows)]
    share_cols = techs + ["none feasible"]
    if grid:
        out.append(("share of grid points ranked first", ["criterion"] + share_cols,
                    [[r["criterion"]] + [share_pct(r['first_share'].get(t, 0)) for t in share_cols]
                     for r in body["ranking"]]))
    else:
        def share(r, t):
            ci = r.get("first_share_ci", {}).get(t)
            return share_pct(r["first_share"].get(t, 0)) + (f" ({share_pct(ci[0])}-{share_pct(ci[1])})" if ci else "")
        out.append(("share of samples ranked first (95 % interval)", ["criterion"] + share_cols,
                    [[r["criterion"]] + [share(r, t) for t in share_cols] for r in body["ranking"]]))
        out.append(("how sure the ranking is", ["criterion", "statement"],
                    [[r["criterion"], r["separation"]["statement"]] for r in body["ranking"] if "separation" in r]))
    if grid:
        units = _key_unit(body)
        points = body.get("grid_points") or []
        keys = [g["key"] for g in body["grid"]]
        cost_unit = by[(techs[0], "levelized_cost_per_m3")]["unit"] if techs else ""
        if points and len(points) <= GRID_ROWS:
            cols = [f"{k} [{units[k]}]" for k in keys] + [f"{t} cost [{cost_unit}]" for t in techs] + \
                ["first on cost", "first on energy"]
            rows = [[fmt_number(p[k]) for k in keys] + [fmt_number(p[f"{t}.levelized_cost_per_m3"]) for t in techs]
                    + [p["first_on_cost"] or "none", p["first_on_energy"] or "none"] for p in points]
            out.append(("each grid point", cols, rows))
        else:
            out.append(("each grid point", ["grid points", "where"],
                        [[f"{body['cases']:,}", "grid.csv in the run folder (one row per point; cases.csv has every "
                                                "figure)"]]))
        rows = []
        for r in body["ranking"]:
            for c in r.get("changes", []):
                at = ", ".join(f"{k} = {fmt_number(v)} {units.get(k, '')}".rstrip() for k, v in c["at"].items())
                where = (f"{fmt_number(c['value'])} {c['unit']}" if c["kind"] == "crossing"
                         else f"between {fmt_number(c['between'][0])} and {fmt_number(c['between'][1])} {c['unit']} "
                              "(feasibility)")
                rows.append([c["criterion"], f"{c['from'] or 'none'} -> {c['to'] or 'none'}",
                             f"{c['key']} = {where}", at or "-"])
        out.append(("where first place changes along the grid (break-even)", ["criterion", "change", "at",
                                                                               "other keys"],
                    rows or [["-", "no change along the grid", "-", "-"]]))
    if body.get("sensitivity"):
        out += sensitivity_sections(body["sensitivity"], body)
    return out


def _interval(row: dict, name: str) -> str:
    if row.get(name) is None:
        return "-"
    return f"{row[name]:.2f} ({row[name + '_low']:.2f} to {row[name + '_high']:.2f})"


def sensitivity_sections(sens: dict, body: dict) -> list[tuple[str, list[str], list[list]]]:
    """Sobol indices of the levelized cost per technology and key, and the key with the largest total index for
    every metric; or the tornado of the levelized cost (each key at its p10 and p90, the others at medians)."""
    cost_unit = next((r["unit"] for r in body["summary"] if r["metric"] == "levelized_cost_per_m3"), "")
    if sens["method"] == "sobol":
        rows = [[r["technology"], r["key"], _interval(r, "first"), _interval(r, "total"), r["samples"]]
                for r in sens["rows"] if r["metric"] == "levelized_cost_per_m3"]
        out = [(f"Sobol indices of the levelized cost, 95 % intervals ({sens['base_samples']} base samples, "
                f"{sens['evaluations']} evaluations)", ["technology", "key", "first order", "total", "rows used"],
                rows)]
        top = []
        for (t, m) in dict.fromkeys((r["technology"], r["metric"]) for r in sens["rows"]):
            rs = [r for r in sens["rows"] if r["technology"] == t and r["metric"] == m and r["total"] is not None]
            if rs:
                best = max(rs, key=lambda r: r["total"])
                top.append([t, {**SWEEP_METRICS, "feasible": "feasibility"}.get(m, m), best["key"], _interval(best, "total")])
            else:
                top.append([t, {**SWEEP_METRICS, "feasible": "feasibility"}.get(m, m), "-", "no variation (or too few feasible rows)"])
        out.append(("the key with the largest total Sobol index", ["technology", "metric", "key", "total index"], top))
        return out
    rows = []
    order = list(dict.fromkeys(r["technology"] for r in sens["rows"]))
    for r in sorted((r for r in sens["rows"] if r["metric"] == "levelized_cost_per_m3"),
                    key=lambda r: (order.index(r["technology"]), -abs((r["at_high"] or 0) - (r["at_low"] or 0)))):
        swing = None if r["at_low"] is None or r["at_high"] is None else r["at_high"] - r["at_low"]
        if swing == 0:
            continue                # a key with no effect on this technology
        rows.append([r["technology"], f"{r['key']} {fmt_number(r['low'])} to {fmt_number(r['high'])} "
                     f"{'' if r['unit'] == '-' else r['unit']}".rstrip(),
                     fmt_number(r["at_low"]), fmt_number(r["at_high"]), fmt_number(swing)])
    return [(f"tornado: levelized cost [{cost_unit}] with each key at its p10 and p90, the others at their medians "
             "(keys with no effect left out)",
             ["technology", "key (p10 to p90)", "cost at p10", "cost at p90", "swing"], rows)]


def sweep_tables(console: Console, body: dict) -> None:
    tables = [rich_table(h, c, r) for h, c, r in sweep_sections(body)]
    print_tables(console, tables, body.get("warnings", []))


def sweep_markdown(body: dict) -> str:
    return markdown_report(f"Sweep: {body['scenario']}", sweep_sections(body), body.get("warnings", []))
