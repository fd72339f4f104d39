"""The report: one self-contained ``report.html`` per run (inline CSS and SVG, no script, nothing fetched), built
from the output contract only: the payload ``desal compare --format json`` prints, the run record (``run.json``:
versions, scenario hash, every resolved input with its source), the judgements of any claims
(:func:`compare.claim.judge`) and, optionally, a sweep's run folder (``summary.json`` and ``cases.csv``).

The page is rendered by a Jinja2 template (``templates/report.html.j2``); the figures are drawn by
:mod:`compare.present.svg`. With headless Chromium installed, a screenshot of the first screen (``report.png``) and,
when asked, a PDF of the page are written beside it.
"""

from __future__ import annotations

import json
import math
import subprocess
from pathlib import Path

from . import CAUTION
from .svg import PALETTE, histogram_strips, line_chart, stacked_bars
from .fields import COST_LINES, design_note, share_pct
from .tables import (as_written, bracket_unit, build_up_rows, fixed, fmt_group, fmt_number, scaling_rows,
                     set_on_command_line, share_block, shared_decimals, sweep_kind, with_unit)

TEMPLATES = Path(__file__).parent / "templates"

#: the longer caution of a report: what the one-line CAUTION stands for
CAUTIONS = (
    "Screening estimates for comparing options, not designs: the figures come from simplified models with the "
    "parameters shown above; a real plant's figures depend on its equipment, its water and how it is run.",
    "Reverse osmosis runs at high pressure (up to about 80 bar for seawater): pumps, pipes and vessels store energy "
    "and can fail violently.",
    "Distillation handles steam and hot brine: scalding and pressure hazards.",
    "Forward-osmosis draw solutions are chemicals to be handled safely and kept out of the product.",
    "Drinking water must meet the quality rules where it is supplied (boron, disinfection by-products, "
    "remineralisation, microbial safety); the product salinity here is not a water-quality assessment.",
    "Brine discharge is regulated by permit (salinity, temperature, chemicals, where and how it is released).",
    "Local codes, regulators and licensed engineers decide any real design; nothing in this report replaces them.",
)

KIND_WORDS = {
    "infeasible": "cannot work",
    "out_of_range": "outside validated range",
    "off_target": "misses its target",
    "simplification": "simplified model",
    "clipped": "held to a bound",
    "note": "note",
    "warning": "warning",
}

#: the side-by-side table: (group, label, unit, record field or function of the record, digits)
FIELDS = (
    ("Energy", "recovery (by mass)", "-", "recovery", 3),
    ("Energy", "product salinity", "g/kg", "product_salinity_g_per_kg", 3),
    ("Energy", "brine salinity", "g/kg", "brine_salinity_g_per_kg", 3),
    ("Energy", "electricity", "kWh/m3", "electricity_kwh_per_m3", 3),
    ("Energy", "heat", "kWh_th/m3", "heat_kwh_per_m3", 3),
    ("Energy", "heat taken at", "degC", "heat_temperature_c", 3),
    ("Energy", "work equivalent of heat", "kWh/m3",
     lambda r: (r.get("details") or {}).get("work_equivalent_of_heat_kwh_per_m3") if r["feasible"] else None, 3),
    ("Energy", "work equivalent (electricity + heat's)", "kWh/m3", "work_equivalent_kwh_per_m3", 3),
    ("Distance from the floor", "least work of its own streams", "kWh/m3", "least_work_kwh_per_m3", 3),
    ("Distance from the floor", "work equivalent / least work", "x", lambda r: _ratio(r), 3),
    ("Distance from the floor", "second-law efficiency", "%",
     lambda r: None if r.get("second_law_efficiency") is None else 100 * r["second_law_efficiency"], 3),
    ("Site totals", "electric power", "MW", "power_mw", 3),
    ("Site totals", "heat power", "MW_th", "heat_mw", 3),
    ("Site totals", "annual electricity", "GWh/yr", "annual_electricity_gwh", 3),
    ("Site totals", "annual heat", "GWh_th/yr", "annual_heat_gwh", 3),
    ("Emissions", "CO2 per m3", "kg/m3", "emissions_kg_per_m3", 3),
    ("Emissions", "CO2 per year", "t/yr", "annual_emissions_t", 3),
    ("Cost", "levelized cost of water", "{currency}/m3", "levelized_cost_per_m3", 3),
    *(("Cost", f"of which {_line.label}", "{currency}/m3", (lambda r, _n=_line.name: _cost(r, _n)), 3)
      for _line in COST_LINES),
    ("Cost", "total capital", "{currency}", lambda r: _detail(r, "capital"), 3),
    ("Cost", "capital per m3/day of capacity", "{currency}/(m3/day)", lambda r: _detail(r, "capital_per_m3_day"), 3),
    ("Cost", "operation and maintenance per year (energy apart)", "{currency}/yr",
     lambda r: _detail(r, "annual_om"), 3),
)
#: the levelised cost's lines in the cost figure: capital and the O&M causes in cool colours, energy in warm ones
_LINE_COLOURS = {"capital": PALETTE[0], "fixed_om": PALETTE[4], "labour": PALETTE[5], "membranes": PALETTE[2],
                 "chemicals": PALETTE[6], "brine_disposal": PALETTE[7], "electricity": PALETTE[1], "heat": PALETTE[3]}
COST_PARTS = tuple((f.name, f.label, _LINE_COLOURS.get(f.name, PALETTE[7])) for f in COST_LINES)
SITE_KEYS = ("site.capacity", "site.availability", "feed.water", "feed.salinity", "feed.temperature", "feed.model",
             "product.salinity", "energy.electricity_price", "energy.electricity_emissions", "energy.heat_price",
             "energy.heat_emissions", "energy.heat_temperature", "energy.heat_to_work", "finance.currency",
             "finance.discount_rate", "finance.lifetime")


def _num(v):
    if v is None or isinstance(v, bool):
        return None
    try:
        v = float(v)
    except (TypeError, ValueError):
        return None
    return v if math.isfinite(v) else None


def _ratio(r):
    we, lw = _num(r.get("work_equivalent_kwh_per_m3")), _num(r.get("least_work_kwh_per_m3"))
    return we / lw if we is not None and lw else None


def _cost(r, part):
    if not r["feasible"]:
        return None
    return _num(((r.get("details") or {}).get("cost_breakdown_per_m3") or {}).get(part))


def _detail(r, name):
    if not r["feasible"]:
        return None
    return _num((r.get("details") or {}).get(name))


def cost_build_up(recs: list[dict]) -> list[dict]:
    """The capital by item and the O&M by cause, technologies as columns, each item under its cause."""
    from ..costing import CAPITAL_ITEMS, OM_ITEMS
    currency = recs[0]["currency"] if recs else ""
    out = []
    for key, items, title, unit in (
            ("capital_breakdown", CAPITAL_ITEMS, "Capital by item", currency),
            ("om_breakdown_per_m3", OM_ITEMS, "Operation and maintenance by cause, per m3 of product",
             f"{currency}/m3")):
        rows = build_up_rows(recs, key, items)
        if rows:
            # one unit, parts of one total: the figures share their decimals down and across, as in the terminal
            shown = share_block([[row[0]] + [None if v == "" else v for v in row[1:]] for row in rows])
            out.append({"title": title, "unit": unit,
                        "rows": [{"label": row[0].strip().rstrip(":"), "cause": not row[0].startswith(" "),
                                  "values": ["" if v == "" else _dash(x) for v, x in zip(row[1:], s[1:])]}
                                 for row, s in zip(rows, shown)]})
    return out


def scaling_table(recs: list[dict]) -> list[dict]:
    """The scaling check of the concentrate as the terminal shows it (:func:`compare.present.tables.scaling_rows`):
    rows of label and one cell per technology, or [] when the feed's ions are not known."""
    scaled = [(r.get("details") or {}).get("scaling") for r in recs]
    if not any(scaled):
        return []
    rows = scaling_rows(scaled)
    return [{"label": row[0], "values": [_dash(v) for v in row[1:]]} for row in rows]


def _get(r, field):
    v = field(r) if callable(field) else r.get(field)
    if not r["feasible"] and not callable(field) and field not in ("recovery", "least_work_kwh_per_m3"):
        return None          # an infeasible record has no design figures (null in the contract)
    return _num(v)


def fmt(v, digits: int = 4, whole: bool = True) -> str:
    """A figure for the page: thousands grouped from 10,000 up, else ``digits`` significant figures; None as a
    dash. A whole number shows as an integer only when ``whole`` (its column is all whole numbers)."""
    v = _num(v)
    if v is None:
        return "—"
    if abs(v) >= 1e4:
        return fixed(v, 0)
    return fmt_number(v, digits, whole=whole)


def _dash(x) -> str:
    """A cell already formatted (text) as it is; a number as :func:`fmt` shows it; nothing as a dash."""
    return x if isinstance(x, str) else fmt(x)


def fmt_row(values, digits: int = 4) -> list[str]:
    """Figures of one quantity (a row of technologies, a column) with the decimals they share; None as a dash."""
    nums = [_num(v) for v in values]
    d = shared_decimals([v for v in nums if v is not None], digits)
    return ["—" if v is None else fmt(v, digits, whole=False) if d is None else fixed(v, d) for v in nums]


def _show(v) -> str:
    """A scenario value as its TOML file writes it (``true``, not ``True``)."""
    return as_written(v)


# ------------------------------------------------------------------------------------------------------ flags
def record_flags(rec: dict) -> list[dict]:
    """A record's flags: its ``flags`` objects, or (an older payload) its warnings read as flags."""
    if rec.get("flags") is not None:
        return list(rec["flags"])
    out = []
    for w in rec.get("warnings", []):
        if w.startswith("infeasible: "):
            out.append({"kind": "infeasible", "code": "", "quantity": "", "model": rec["technology"],
                        "message": w[len("infeasible: "):]})
        else:
            out.append({"kind": "warning", "code": "", "quantity": "", "model": rec["technology"], "message": w})
    return out


def floor_flags(payload: dict) -> list[dict]:
    """The floor's flags: ``floor.flags``, or the payload's warnings that no technology raised."""
    fl = payload["floor"]
    if fl.get("flags") is not None:
        return list(fl["flags"])
    techs = [r["technology"] for r in payload["results"]]
    own = [w for w in payload.get("warnings", []) if not any(w.startswith(f"{t}: ") for t in techs)]
    return [{"kind": "warning", "code": "", "quantity": "", "model": fl.get("model", ""), "message": w} for w in own]


def _sentence(text: str) -> str:
    """One sentence: a capital first letter (unless it starts with a key such as ``ro.recovery``) and a stop."""
    text = text.strip()
    if not text:
        return text
    first = text.split(" ", 1)[0]
    head = text if ("." in first.rstrip(".:,") or "_" in first) else text[0].upper() + text[1:]
    return head + ("" if text.endswith(".") else ".")


# ------------------------------------------------------------------------------------------------------ sweeps
def read_sweep(folder) -> dict:
    """A sweep run folder (``summary.json``, the cases as ``cases/`` Parquet parts or ``cases.csv``, ``run.json``) as
    plain data for the report."""
    from ..errors import InputError

    folder = Path(folder)
    summary_path = folder / "summary.json"
    parts = folder / "cases"
    if not summary_path.is_file() or not ((folder / "cases.csv").is_file() or parts.is_dir()):
        raise InputError(f'--sweep: expected a sweep run folder holding summary.json and its cases (cases/ or '
                         f'cases.csv), got "{folder}"')
    try:
        summary = json.loads(summary_path.read_text(encoding="utf-8"))
        run = json.loads((folder / "run.json").read_text(encoding="utf-8")) if (folder / "run.json").is_file() \
            else {}
    except (OSError, ValueError) as exc:
        raise InputError(f'--sweep: expected readable JSON in "{folder}", got {exc}') from None
    import pandas as pd
    wanted = ["case", "technology", "feasible", "levelized_cost_per_m3", "work_equivalent_kwh_per_m3",
              "emissions_kg_per_m3", "floor_least_work_kwh_per_m3"]
    axes = summary.get("grid") or []
    columns = [f"{a['key']} [{a['unit']}]" for a in axes]
    try:
        if parts.is_dir():
            import pyarrow.parquet as pq
            names = pq.read_schema(sorted(parts.glob("part-*.parquet"))[0]).names
            cases = pd.read_parquet(parts, columns=[c for c in names if c in wanted or c in columns])
        else:
            cases = pd.read_csv(folder / "cases.csv", usecols=lambda c: c in wanted or c in columns)
    except (OSError, ValueError, IndexError, ImportError) as exc:
        raise InputError(f'--sweep: expected readable cases in "{folder}", got {type(exc).__name__}: '
                         f'{str(exc).splitlines()[0] if str(exc) else ""}') from None
    if (summary.get("sensitivity") or {}).get("method") == "sobol" and "case" in cases:
        cases = cases[cases["case"] < summary.get("cases", 0)]     # the A and B blocks: the plain samples
    return {"folder": str(folder), "summary": summary, "run": run, "cases": cases, "columns": columns}


def sweep_figures(sweep: dict) -> list[dict]:
    """A grid sweep: cost and energy along the first varied key with the break-even points; samples: distributions
    of cost and energy per technology."""
    import numpy as np

    s, cases = sweep["summary"], sweep["cases"]
    currency = next((r.get("unit", "").split("/")[0] for r in s.get("summary", [])
                     if r.get("metric") == "levelized_cost_per_m3"), "")
    techs = list(dict.fromkeys(cases["technology"]))
    colour = {t: PALETTE[i % len(PALETTE)] for i, t in enumerate(techs)}
    figures = []
    metrics = (("levelized_cost_per_m3", f"levelized cost [{currency}/m3]", "cost"),
               ("work_equivalent_kwh_per_m3", "work equivalent [kWh/m3]", "energy"))
    if s.get("mode") == "grid" and sweep["columns"]:
        axis = s["grid"][0]
        col = sweep["columns"][0]
        sub = cases
        held = []
        for a, c in zip(s["grid"][1:], sweep["columns"][1:]):       # other keys held at their first value
            sub = sub[np.isclose(sub[c], a["values"][0])]
            held.append(with_unit(f"{a['key']} = {fmt_number(a['values'][0])}", a["unit"]))
        for metric, ylabel, criterion in metrics:
            series = []
            x = None
            for t in techs:
                rows = sub[sub["technology"] == t].sort_values(col)
                x = rows[col].to_numpy(dtype=float)
                y = np.where(rows["feasible"].astype(bool), rows[metric].to_numpy(dtype=float), np.nan)
                series.append((t.upper(), colour[t], y))
            changes = next((r.get("changes", []) for r in s.get("ranking", []) if r.get("criterion") == criterion),
                           [])
            vlines = [(c["value"], f"{c['from'].upper()} to {c['to'].upper()} at {fmt_number(c['value'])}")
                      for c in changes if c.get("kind") == "crossing" and not c.get("at")
                      and c.get("value") is not None]
            hline = None
            if metric == "work_equivalent_kwh_per_m3" and "floor_least_work_kwh_per_m3" in sub:
                hline = (float(sub["floor_least_work_kwh_per_m3"].iloc[0]), "floor, zero recovery")
            title = f"{ylabel.split(' [')[0].capitalize()} along {axis['key']}"
            svg = line_chart(x, series, xlabel=bracket_unit(axis["key"], axis["unit"]), ylabel=ylabel,
                             label=title, vlines=vlines, hline=hline, cls=f"sweep-{criterion}")
            note = ("First place changes where the dotted lines are (break-even). " if vlines else
                    "First place changes where a technology stops or starts being feasible (listed below). "
                    if changes else "First place does not change along this grid. ")
            if held:
                note += "Other varied keys held at: " + "; ".join(held) + "."
            figures.append({"title": title, "svg": svg, "note": note})
    else:
        for metric, xlabel, criterion in metrics:
            groups = []
            for t in techs:
                rows = cases[(cases["technology"] == t) & cases["feasible"].astype(bool)]
                groups.append((t.upper(), colour[t], rows[metric].to_numpy(dtype=float)))
            title = f"Distribution of {xlabel.split(' [')[0]} over {s.get('cases')} samples"
            figures.append({"title": title, "svg": histogram_strips(groups, xlabel=xlabel, label=title,
                                                                    cls=f"sweep-{criterion}"),
                            "note": "Feasible samples only; the share of samples each technology ranks first is "
                                    "in the table below."})
    return figures


def _axis_unit(summary: dict, key: str) -> str:
    return next((a.get("unit", "") for a in summary.get("grid") or [] if a.get("key") == key), "")


def _currency(run: dict) -> str:
    sc = (run.get("scenarios") or [{}])[0]
    return str((sc.get("inputs") or {}).get("finance.currency", {}).get("value") or "")


def sweep_mismatch(sweep: dict, run: dict) -> str | None:
    """One sentence when the sweep was run on another scenario than the report's (another name, or the same name
    from a different file), naming both and their currencies when these differ; None when they match."""
    mine = (run.get("scenarios") or [{}])[0]
    theirs = (sweep["run"].get("scenarios") or [{}])[0]
    name, other = mine.get("name") or "", theirs.get("name") or sweep["summary"].get("scenario") or ""
    cur, other_cur = _currency(run), _currency(sweep["run"])
    money = (f"; its costs are in {other_cur}, this report's in {cur}" if cur and other_cur and cur != other_cur
             else "")
    if other and name and other != name:
        return (f"the sweep is of another scenario, {other}, not this report's {name}{money}: its figures are not "
                "this site's")
    if theirs.get("sha256") and mine.get("sha256") and theirs["sha256"] != mine["sha256"]:
        return (f"the sweep's scenario file differs from this report's (sha256 {theirs['sha256'][:16]}, not "
                f"{mine['sha256'][:16]}){money}: its figures may not be this scenario's")
    return None


def sweep_context(sweep: dict, mismatch: str | None = None) -> dict:
    """The sweep section as plain data: how its cases were made and the keys set on the command line in the words
    of the terminal and Markdown (``tables.sweep_kind``, ``tables.set_on_command_line``), and ``mismatch``, the
    sentence of ``sweep_mismatch`` the caller computed once (None: the same scenario)."""
    s = sweep["summary"]
    shares = []
    for r in s.get("ranking", []):
        ci = r.get("first_share_ci") or {}

        def share(k, v):
            # 100 % or 0 % only when exactly so, as the sentence below states them (a 99.8 % bound never reads 100)
            name = k.upper() if k != "none feasible" else k
            lo_hi = ci.get(k)
            return f"{name} {share_pct(v)}" + (f" ({share_pct(lo_hi[0])} to {share_pct(lo_hi[1])})" if lo_hi else "")
        statement = (r.get("separation") or {}).get("statement")
        shares.append({"criterion": r["criterion"],
                       "shares": ", ".join(share(k, v) for k, v in r.get("first_share", {}).items() if v),
                       "statement": _sentence(statement) if statement else ""})
    changes = []
    for r in s.get("ranking", []):
        for c in r.get("changes", []):
            where = (with_unit(fmt_number(c["value"]), c.get("unit")) if c.get("kind") == "crossing"
                     and c.get("value") is not None else "")
            at = ", ".join(with_unit(f"{k} = {fmt_number(v)}", c.get("units", {}).get(k) or _axis_unit(s, k))
                           for k, v in (c.get("at") or {}).items())
            if c.get("kind") != "crossing" and len(c.get("between") or []) == 2:
                lo, hi = fmt_group([float(x) for x in c["between"]])
                where = with_unit(f"{lo} and {hi}", c.get("unit"))
            changes.append({**c, "where": where, "at": at})
    flags = [dict(f) for f in s.get("flags") or []]
    if not flags:
        flags = [{"kind": "warning", "message": w if isinstance(w, str) else w.get("message", str(w))}
                 for w in s.get("warnings", [])]
    for f in flags:
        f["words"] = KIND_WORDS.get(f.get("kind"), f.get("kind", ""))
        f["sentence"] = _sentence(f.get("message", "") + (f" (in {f['cases']} of {s.get('cases')} cases)"
                                                          if f.get("cases") else ""))
    sc = (sweep["run"].get("scenarios") or [{}])[0]
    return {"folder": sweep["folder"], "mode": s.get("mode"), "cases": s.get("cases"), "varied": s.get("varied", []),
            "grid": s.get("grid"), "sampling": s.get("sampling"), "shares": shares, "changes": changes,
            "flags": flags, "figures": sweep_figures(sweep), "scenario": s.get("scenario"),
            "kind": sweep_kind(s), "held": set_on_command_line(s), "sha256": sc.get("sha256"),
            "mismatch": _sentence(mismatch) if mismatch else None}


# ------------------------------------------------------------------------------------------------------ render
def energy_figure(payload: dict, width: int = 400) -> str:
    recs = payload["results"]
    rows = []
    for r in recs:
        e = _get(r, "electricity_kwh_per_m3")
        q = _get(r, "work_equivalent_kwh_per_m3")
        rows.append((r["technology"].upper(), None if e is None else [e, (q or e) - e], "infeasible here"))
    marks = ("least work, own streams", [_num(r.get("least_work_kwh_per_m3")) for r in recs])
    line = ("floor (zero recovery)", _num(payload["floor"].get("least_work_kwh_per_m3_zero_recovery")))
    return stacked_bars(rows, [("electricity", PALETTE[0]), ("work equivalent of heat", PALETTE[1])],
                        unit="kWh/m3 of product (work equivalent)", marks=marks,
                        line=line if line[1] is not None else None,
                        label="Energy of each technology against the thermodynamic floor", cls="energy",
                        width=width)


def cost_figure(payload: dict) -> str:
    recs = payload["results"]
    currency = recs[0]["currency"] if recs else ""
    rows = []
    for r in recs:
        parts = [_cost(r, k) for k, _, _ in COST_PARTS]
        rows.append((r["technology"].upper(), None if all(p is None for p in parts) else parts, "infeasible here"))
    return stacked_bars(rows, [(label, colour) for _, label, colour in COST_PARTS], unit=f"{currency}/m3 of product",
                        label="Levelized cost of water and its parts", cls="cost")


def design_items(rec: dict, periods: int = 1) -> list[tuple[str, str]]:
    """A record's design figures as (label [unit], value): those its technology describes (the presenters' field
    table), in its order, then any other figure under its record name; figures left out (null) are skipped. Over
    several periods, a figure taken at its highest or lowest monthly value says so in its label."""
    from .fields import SITE_DETAILS, detail_label, record_name, unit_label
    from .records import detail_table

    details = {k: v for k, v in (rec.get("details") or {}).items() if not isinstance(v, dict)}
    shown = {f.name for f in SITE_DETAILS if f.name != "capital"} | {"cost_breakdown_per_m3"}
    currency = rec.get("currency", "")
    items = []
    capital = next((f for f in SITE_DETAILS if f.name == "capital"), None)
    for f in ([capital] if capital else []):
        if _num(details.get(f.name)) is not None:
            items.append((unit_label(f.label, f.unit, currency), details[f.name]))
        shown.add(f.name)
    for key, d in detail_table(rec["technology"]).items():
        name = record_name(key, d.unit)
        shown.add(name)
        if _num(details.get(name)) is not None:
            items.append((detail_label(d, periods), details[name]))
    for k, v in details.items():
        if k not in shown and v is not None:
            items.append((k, v if _num(v) is not None else _show(v)))
    # a column of different figures: each its own significant figures, a whole number as an integer only when
    # every figure is whole (counts are ints and stay so)
    whole = all(float(v) == int(v) for _, v in items if isinstance(v, (int, float)) and _num(v) is not None)
    return [(k, v if isinstance(v, str) else fmt(v, whole=whole or isinstance(v, int))) for k, v in items]


def _glance(payload: dict, judgements=()) -> list[str]:
    recs = [r for r in payload["results"] if r["feasible"]]
    out = []
    fl = payload["floor"]
    lw0 = _num(fl.get("least_work_kwh_per_m3_zero_recovery"))
    if lw0 is not None:
        out.append(f"The thermodynamic floor of this feed is {fmt_number(lw0, 3)} kWh/m3 (least work at zero "
                   "recovery); each technology's own floor rises with its recovery (the black ticks).")
    for label, field, unit in (("energy (work equivalent)", "work_equivalent_kwh_per_m3", "kWh/m3"),
                               ("levelized cost", "levelized_cost_per_m3", "{currency}/m3"),
                               ("CO2", "emissions_kg_per_m3", "kg/m3")):
        ranked = sorted((r for r in recs if _num(r.get(field)) is not None), key=lambda r: r[field])
        if ranked:
            unit_ = unit.format(currency=ranked[0]["currency"])
            shown = fmt_row([r[field] for r in ranked])          # one quantity: shared decimals
            rest = "; ".join(f"{r['technology'].upper()} {x}" for r, x in zip(ranked[1:], shown[1:]))
            out.append(f"Lowest {label}: {ranked[0]['technology'].upper()}, {shown[0]} "
                       f"{unit_}" + (f" (then {rest})." if rest else "."))
    bad = [r["technology"].upper() for r in payload["results"] if not r["feasible"]]
    if bad:
        out.append(f"Cannot work here as specified: {', '.join(bad)} (reasons under Flags).")
    if judgements:
        # what each claim said, then the work equivalent judged and the verdict in the terminal's words
        from .claims import claimed, verdict_words

        def one(j):
            c = j["claim"]
            judged = (f", judged on its work equivalent {fmt_number(c['work_equivalent_kwh_per_m3'], 3)} kWh/m3"
                      if c["heat_kwh_per_m3"] else "")
            return f"{c['technology'].upper()} {claimed(j)}{judged}: {j['verdict']} ({verdict_words(j)})"
        out.append("Claims: " + "; ".join(one(j) for j in judgements) + ".")
    return out


def _readable(text: str) -> str:
    """A value as written, for a sentence: a long plain number gets thousands separators, m^3 reads m3
    ("100000 m^3/day" -> "100,000 m3/day")."""
    import re
    text = text.replace("m^3", "m3")
    return re.sub(r"^(\d{5,})(?=\s|$)", lambda m: f"{int(m.group(1)):,}", text)


def _question(payload: dict, inputs: dict, techs: list[str]) -> str:
    v = lambda k: _readable(_show(inputs.get(k, {}).get("value")))  # noqa: E731
    temps = inputs.get("feed.temperature", {}).get("value")
    if isinstance(temps, list) and len(temps) > 1:
        mean = _num(payload["floor"].get("feed_temperature_c"))
        t = "twelve monthly temperatures" + (f" (production-weighted mean {mean:.1f} degC)" if mean is not None
                                              else "")
    else:
        t = _show(temps)
    names = ", ".join(x.upper() for x in techs)
    if not techs:
        return (f"{payload['scenario']}: what is the thermodynamic floor (the least work of separation) of "
                f"{v('feed.water')} of {v('feed.salinity')} at {t}? No technology is enabled, so only the floor is "
                "shown.")
    return (f"{payload['scenario']} needs {v('site.capacity')} of fresh water (product at most "
            f"{v('product.salinity')}) from {v('feed.water')} of {v('feed.salinity')} at {t}. How much electricity "
            f"and heat would {names} use here, how far is each from the thermodynamic floor (the least work of "
            "separation of this feed), and what does that mean in power demand, annual energy, emissions and the "
            f"cost of water, at electricity for {v('energy.electricity_price')} and heat for "
            f"{v('energy.heat_price')}?")


def context(payload: dict, run: dict, judgements=(), sweep: dict | None = None,
            mismatch: str | None = None) -> dict:
    """Everything the template shows, as plain data."""
    sc = (run.get("scenarios") or [{}])[0]
    inputs = sc.get("inputs", {})
    recs = payload["results"]
    currency = recs[0]["currency"] if recs else inputs.get("finance.currency", {}).get("value", "")
    columns = [r["technology"].upper() for r in recs]
    table, group, cost_block = [], None, []
    for grp, label, unit, field, digits in FIELDS:
        values = [_get(r, field) for r in recs]
        if all(v is None or v == 0 for v in values) and unit in ("kWh_th/m3", "degC", "MW_th", "GWh_th/yr"):
            continue     # no technology uses heat: leave its rows out
        table.append({"group": grp if grp != group else "", "label": label,
                      "unit": unit.format(currency=currency),
                      "values": fmt_row(values, digits + 1)})
        if field == "levelized_cost_per_m3" or label.startswith("of which "):
            cost_block.append((table[-1], values))
        group = grp
    # the cost of water and its parts share their decimals, so that the parts visibly add up to it
    shown = iter(fmt_row([v for _, values in cost_block for v in values], 3))
    for row, values in cost_block:
        row["values"] = [next(shown) for _ in values]
    table.insert(0, {"group": "", "label": "feasible", "unit": "",
                     "values": ["yes" if r["feasible"] else "NO" for r in recs]})
    designs = [{"name": r["technology"].upper(), "items": design_items(r, payload.get("periods", 1))} for r in recs]
    flag_groups = []
    ff = floor_flags(payload)
    if ff:
        flag_groups.append({"name": "Floor and feed", "flags": ff})
    seen = {(f.get("kind"), f.get("code"), f.get("message")) for f in ff}
    for r in recs:
        # a record repeats the floor's flags (they hold for every technology): show them once, under the floor
        fl = [f for f in record_flags(r) if (f.get("kind"), f.get("code"), f.get("message")) not in seen]
        if fl:
            flag_groups.append({"name": r["technology"].upper(), "flags": fl})
    for g in flag_groups:
        for f in g["flags"]:
            f["words"] = KIND_WORDS.get(f.get("kind"), f.get("kind", ""))
            message = f.get("message", "")
            if message.upper().startswith(f"{g['name']}: "):      # the group already names the technology
                message = message[len(g["name"]) + 2:]
            f["sentence"] = _sentence(message)
    sections: dict[str, list] = {}
    for key in sorted(inputs):
        sec = key.split(".", 1)[0]
        item = inputs[key]
        sections.setdefault(sec, []).append({"key": key, "value": _show(item.get("value")),
                                             "source": item.get("source", "")})
    site = [{"key": k, "value": _show(inputs[k]["value"]), "source": inputs[k]["source"]}
            for k in SITE_KEYS if k in inputs]
    floor = payload["floor"]
    # a column of different quantities: each its own significant figures, none shown as a bare integer
    floor_rows = [
        ("activity model", floor.get("model"), ""),
        ("feed salinity", fmt(floor.get("feed_salinity_g_per_kg"), 4, whole=False), "g/kg"),
        ("feed temperature (production-weighted)", fmt(floor.get("feed_temperature_c"), 4, whole=False), "degC"),
        ("water activity", f"{floor['water_activity']:.5f}" if _num(floor.get("water_activity")) else "—", ""),
        ("osmotic pressure", fmt(floor.get("osmotic_pressure_bar"), 4, whole=False), "bar"),
        ("least work at zero recovery (the floor)",
         fmt(floor.get("least_work_kwh_per_m3_zero_recovery"), 4, whole=False), "kWh/m3"),
    ]
    floor_rows = [row for row in floor_rows if row[1] not in (None, "—")]
    own = [{"name": r["technology"].upper(), "recovery": x, "least_work": y}
           for r, x, y in zip(recs, fmt_row([r.get("recovery") for r in recs], 3),
                              fmt_row([r.get("least_work_kwh_per_m3") for r in recs], 4))]
    claims = []
    for j in judgements:
        from .claims import figure_heading, figure_rows, notes, title, verdict_words
        rows = figure_rows(j)
        claims.append({"title": title(j), "verdict": j["verdict"], "words": verdict_words(j),
                       "heading": figure_heading(j),
                       "figures": [(f, x if _num(v) is not None else "— (no feasible design)")
                                   for (f, v), x in zip(rows, fmt_row([v for _, v in rows]))],
                       "notes": notes(j)[1:], "explanation": _sentence(j["explanation"]),
                       "parameters": [(k, _show(v["value"]), v["why"])
                                      for k, v in j["best_practice"]["parameters"].items()],
                       "source": j["claim"].get("source", "")})
    return {
        "title": f"{payload['scenario']}: desalination energy screening",
        "scenario": payload["scenario"],
        "question": _question(payload, inputs, [r["technology"] for r in recs]),
        "glance": _glance(payload, judgements),
        "site": site,
        "overrides": sc.get("overrides", []),
        "sections": sections,
        "floor_rows": floor_rows,
        "own_floor": own,
        "columns": columns,
        "table": table,
        "designs": designs,
        "design_note": design_note(payload.get("periods", 1)),
        "energy_svg": energy_figure(payload) if recs else "",
        "cost_svg": cost_figure(payload) if recs else "",
        "cost_tables": cost_build_up(recs),
        "scaling": scaling_table(recs),
        "flag_groups": flag_groups,
        "claims": claims,
        "caution": CAUTION,
        "cautions": CAUTIONS,
        "sweep": sweep_context(sweep, mismatch) if sweep else None,
        "run": {"version": run.get("version"), "created": run.get("created"), "command": " ".join(run.get("command",
                                                                                                          [])),
                "python": run.get("python"), "libraries": run.get("libraries", {}), "path": sc.get("path"),
                "sha256": sc.get("sha256")},
    }


def render(payload: dict, run: dict, judgements=(), sweep: dict | None = None, mismatch: str | None = None) -> str:
    """The HTML text of the report."""
    import jinja2

    env = jinja2.Environment(loader=jinja2.FileSystemLoader(str(TEMPLATES)), autoescape=True,
                             undefined=jinja2.StrictUndefined, trim_blocks=True, lstrip_blocks=True)
    Markup = jinja2.utils.markupsafe.Markup
    env.filters["svg"] = Markup
    # dotted keys may break after their dots on a narrow screen
    env.filters["key"] = lambda k: Markup(".<wbr>").join(str(k).split("."))
    return env.get_template("report.html.j2").render(**context(payload, run, judgements, sweep, mismatch))


def write_report(parent: Path, label: str, payload: dict, run: dict, judgements=(), sweep: dict | None = None,
                 pdf: bool = False, mismatch: str | None = None) -> tuple[Path, list[str]]:
    """Write ``report.html`` (with ``results.json``, ``run.json``, ``claims.json`` when there are claims, and with
    Chromium ``report.png`` and, when asked, ``report.pdf``) into a new run folder; returns it and notes to print."""
    from . import browser
    from .files import RunFolder, to_json

    notes = []
    html = render(payload, run, judgements, sweep, mismatch)
    with RunFolder(Path(parent), f"{label}-report") as folder:
        folder.write("report.html", html)
        folder.write("results.json", to_json(payload))
        folder.write("run.json", to_json(run))
        if judgements:
            folder.write("claims.json", to_json({"scenario": payload["scenario"], "claims": list(judgements),
                                                 "notice": CAUTION}))
        page = folder.file("report.html")
        if browser.find() is None:
            notes.append(f"headless Chromium is not installed ({browser.INSTALL_HINT}): no report.png"
                         + (" and no report.pdf (--pdf); report.html is written" if pdf else ""))
        else:
            try:
                browser.screenshot(page, folder.file("report.png"))
            except (OSError, RuntimeError, subprocess.SubprocessError) as exc:
                notes.append(f"the screenshot failed, report.html is written: {exc}")
            if pdf:
                try:
                    browser.print_pdf(page, folder.file("report.pdf"))
                except (OSError, RuntimeError, subprocess.SubprocessError) as exc:
                    notes.append(f"--pdf: printing failed, report.html is written: {exc}")
        return folder.commit(), notes
