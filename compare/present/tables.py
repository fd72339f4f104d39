"""Tables for the terminal (rich) and Markdown."""

from __future__ import annotations

from rich.console import Console
from rich.markup import escape
from rich.table import Table
from rich.text import Text

from . import CAUTION


def fmt_number(v, digits: int = 4) -> str:
    """A number to ``digits`` significant figures; None as an em-dash."""
    if v is None:
        return "—"
    if isinstance(v, bool):
        return "yes" if v else "no"
    if isinstance(v, (int, float)):
        if v != v:
            return "—"
        if v == 0:
            return "0"
        a = abs(v)
        if a >= 10 ** digits or a < 1e-3:
            return f"{v:.{digits - 1}e}"
        return f"{v:.{digits}g}" if a < 1 else f"{v:,.{max(0, digits - len(str(int(a))))}f}"
    return str(v)


def rich_table(title: str, columns: list[str], rows: list[list], caption: str | None = None) -> Table:
    table = Table(title=escape(title), caption=caption and escape(caption), title_justify="left",
                  caption_justify="left")
    for i, c in enumerate(columns):
        table.add_column(escape(c), justify="left" if i == 0 else "right")
    for r in rows:
        table.add_row(*[Text(fmt_number(x)) if not isinstance(x, Text) else x for x in r])
    return table


def markdown_table(columns: list[str], rows: list[list]) -> str:
    head = "| " + " | ".join(columns) + " |"
    sep = "|" + "|".join([" --- "] + [" ---: "] * (len(columns) - 1)) + "|"
    body = ["| " + " | ".join(fmt_number(x) for x in r) + " |" for r in rows]
    return "\n".join([head, sep, *body])


def print_tables(console: Console, tables: list[Table], warnings: list[str]) -> None:
    for t in tables:
        console.print(t)
    for w in warnings:
        console.print(f"[yellow]warning:[/yellow] {escape(w)}", highlight=False)
    console.print(Text(CAUTION, style="dim"))


def markdown_report(title: str, sections: list[tuple[str, list[str], list[list]]], warnings: list[str]) -> str:
    parts = [f"# {title}", ""]
    for heading, columns, rows in sections:
        if heading:
            parts += [f"## {heading}", ""]
        parts += [markdown_table(columns, rows), ""]
    if warnings:
        parts += ["## Warnings", ""] + [f"- {w}" for w in warnings] + [""]
    parts += [f"> {CAUTION}", ""]
    return "\n".join(parts)


# ------------------------------------------------------------------------------------------------ side by side
def _pct(v):
    return None if v is None else f"{100 * v:.1f} %"


COMPARE_ROWS = [
    # group, label, getter(record) -> value
    ("energy", "feasible", lambda r: "yes" if r["feasible"] else "NO"),
    ("energy", "recovery [-]", lambda r: r["recovery"]),
    ("energy", "product salinity [g/kg]", lambda r: r["product_salinity_g_per_kg"]),
    ("energy", "brine salinity [g/kg]", lambda r: r["brine_salinity_g_per_kg"]),
    ("energy", "electricity [kWh/m3]", lambda r: r["electricity_kwh_per_m3"]),
    ("energy", "heat [kWh_th/m3]", lambda r: r["heat_kwh_per_m3"]),
    ("energy", "heat temperature [degC]", lambda r: r["heat_temperature_c"]),
    ("energy", "work equivalent [kWh/m3]", lambda r: r["work_equivalent_kwh_per_m3"]),
    ("energy", "least work, own streams [kWh/m3]", lambda r: r["least_work_kwh_per_m3"]),
    ("energy", "second-law efficiency", lambda r: _pct(r["second_law_efficiency"])),
    ("site totals", "power [MW]", lambda r: r["power_mw"]),
    ("site totals", "heat [MW_th]", lambda r: r["heat_mw"]),
    ("site totals", "electricity [GWh/yr]", lambda r: r["annual_electricity_gwh"]),
    ("site totals", "heat [GWh_th/yr]", lambda r: r["annual_heat_gwh"]),
    ("cost", "levelised cost [{cur}/m3]", lambda r: r["levelized_cost_per_m3"]),
    ("cost", "  capital", lambda r: r["details"]["cost_breakdown_per_m3"]["capital"]),
    ("cost", "  fixed O&M", lambda r: r["details"]["cost_breakdown_per_m3"]["fixed_om"]),
    ("cost", "  electricity", lambda r: r["details"]["cost_breakdown_per_m3"]["electricity"]),
    ("cost", "  heat", lambda r: r["details"]["cost_breakdown_per_m3"]["heat"]),
    ("emissions", "CO2 [kg/m3]", lambda r: r["emissions_kg_per_m3"]),
    ("emissions", "CO2 [t/yr]", lambda r: r["annual_emissions_t"]),
]
_SKIP_DETAILS = {"cost_breakdown_per_m3", "work_equivalent_of_heat_kwh_per_m3", "annual_production_m3"}


def compare_sections(payload: dict) -> list[tuple[str, list[str], list[list]]]:
    """(heading, columns, rows) per group of the side-by-side comparison: technologies as columns."""
    recs = payload["results"]
    cur = recs[0]["currency"] if recs else ""
    techs = [r["technology"] for r in recs]
    fl = payload["floor"]
    sections = [("floor", ["feed", "value"], [
        ["model", fl["model"]],
        ["salinity [g/kg]", fl["feed_salinity_g_per_kg"]],
        ["temperature [degC]", fl["feed_temperature_c"]],
        ["water activity [-]", f"{fl['water_activity']:.6f}"],
        ["osmotic pressure [bar]", fl["osmotic_pressure_bar"]],
        ["least work, zero recovery [kWh/m3]", fl["least_work_kwh_per_m3_zero_recovery"]],
    ])]
    if not recs:
        return sections
    groups: dict[str, list[list]] = {}
    for group, label, get in COMPARE_ROWS:
        groups.setdefault(group, []).append([label.format(cur=cur)] + [get(r) for r in recs])
    detail_keys: list[str] = []
    for r in recs:
        for k in r["details"]:
            if k not in _SKIP_DETAILS and k not in detail_keys:
                detail_keys.append(k)
    groups["design figures"] = [[k] + [r["details"].get(k) for r in recs] for k in detail_keys]
    for g, rows in groups.items():
        if rows:
            sections.append((g, [g] + techs, rows))
    return sections


def print_compare(console: Console, payload: dict) -> None:
    title = f"{payload['scenario']}"
    tables = []
    for heading, columns, rows in compare_sections(payload):
        tables.append(rich_table(title if heading == "floor" else "", columns, rows))
    print_tables(console, tables, payload["warnings"])


def markdown_compare(payload: dict) -> str:
    return markdown_report(payload["scenario"], [(h.capitalize(), c, r) for h, c, r in compare_sections(payload)],
                           payload["warnings"])


# ------------------------------------------------------------------------------------------------ sweeps
SWEEP_METRICS = {"work_equivalent_kwh_per_m3": "work equivalent", "electricity_kwh_per_m3": "electricity",
                 "heat_kwh_per_m3": "heat", "levelized_cost_per_m3": "levelised cost", "emissions_kg_per_m3": "CO2",
                 "second_law_efficiency": "second-law efficiency"}


def _band(row: dict) -> str:
    if not row["n"]:
        return "-"
    return f"{fmt_number(row['p50'])} ({fmt_number(row['p10'])}-{fmt_number(row['p90'])})"


def sweep_sections(body: dict) -> list[tuple[str, list[str], list[list]]]:
    """The sweep summary as (heading, columns, rows) sections: percentiles, first places, break-even points."""
    techs = list(dict.fromkeys(r["technology"] for r in body["summary"] if r["technology"] != "floor"))
    by = {(r["technology"], r["metric"]): r for r in body["summary"]}
    rows = [["feasible share"] + [f"{by[(t, 'electricity_kwh_per_m3')]['feasible_share']:.0%}" for t in techs]]
    for m, label in SWEEP_METRICS.items():
        unit = by[(techs[0], m)]["unit"] if techs else ""
        rows.append([f"{label} [{unit}]"] + [_band(by[(t, m)]) for t in techs])
    fl = by.get(("floor", "least_work_kwh_per_m3_zero_recovery"))
    if fl:
        rows.append(["floor: least work, zero recovery [kWh/m3]"] + [_band(fl)] * len(techs))
    out = [(f"{body['scenario']}: {body['cases']} cases ({body['mode']}); p50 (p10-p90) over feasible cases",
            ["metric"] + techs, rows)]
    share_cols = techs + ["none feasible"]
    out.append(("share of cases ranked first", ["criterion"] + share_cols,
                [[r["criterion"]] + [f"{r['first_share'].get(t, 0):.0%}" for t in share_cols]
                 for r in body["ranking"]]))
    changes = [c for r in body["ranking"] for c in r.get("changes", [])]
    if body["mode"] == "grid":
        rows = []
        for c in changes:
            at = ", ".join(f"{k}={v:g}" for k, v in c["at"].items())
            where = (f"{fmt_number(c['value'])} {c['unit']}" if c["kind"] == "crossing"
                     else f"between {fmt_number(c['between'][0])} and {fmt_number(c['between'][1])} {c['unit']} "
                          "(feasibility)")
            rows.append([c["criterion"], f"{c['from'] or 'none'} -> {c['to'] or 'none'}", f"{c['key']} = {where}",
                         at or "-"])
        out.append(("where first place changes along the grid", ["criterion", "change", "at", "other keys"],
                    rows or [["-", "no change along the grid", "-", "-"]]))
    return out


def sweep_tables(console: Console, body: dict) -> None:
    tables = [rich_table(h, c, r) for h, c, r in sweep_sections(body)]
    print_tables(console, tables, body.get("warnings", []))


def sweep_markdown(body: dict) -> str:
    return markdown_report(f"Sweep: {body['scenario']}", sweep_sections(body), body.get("warnings", []))
