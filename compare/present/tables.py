"""Tables for the terminal (rich) and Markdown."""

from __future__ import annotations

from dataclasses import dataclass

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


def as_written(v) -> str:
    """A scenario value echoed as a TOML file writes it: booleans ``true``/``false``, lists and tables joined with
    commas, anything else as its text (None as nothing).

    Examples
    --------
    >>> as_written(True), as_written([False, "25 degC"]), as_written({"low": 0.7, "on": True})
    ('true', 'false, 25 degC', 'low = 0.7, on = true')
    """
    if v is None:
        return ""
    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, (list, tuple)):
        return ", ".join(as_written(x) for x in v)
    if isinstance(v, dict):
        return ", ".join(f"{k} = {as_written(x)}" for k, x in v.items())
    return str(v)


def fixed(v: float, decimals: int) -> str:
    """``v`` with ``decimals`` decimals and thousands separators; a value that rounds to zero reads 0 whatever its
    sign ("0.00", never "-0.00"). Every figure the tool prints with a set number of decimals goes through here.

    Examples
    --------
    >>> fixed(-0.004, 2), fixed(1234.5, 1), fixed(-1.25, 1)
    ('0.00', '1,234.5', '-1.2')
    """
    text = f"{v:,.{decimals}f}"
    return text[1:] if text.startswith("-") and not any(c in "123456789" for c in text) else text


def _sig_decimals(v: float, digits: int) -> int | None:
    """The decimals that show ``v`` with ``digits`` significant figures (None: too small, shown with an exponent)."""
    a = abs(v)
    if a >= 10 ** (digits - 1):
        return 0
    if a < 1e-4:
        return None
    return max(0, digits - 1 - int(np.floor(np.log10(a))))


def _finite_float(x) -> bool:
    return isinstance(x, float) and x == x and abs(x) != float("inf")


def fmt_number(v, digits: int = 4, whole: bool = True) -> str:
    """A number for people: ``digits`` significant figures, thousands separators, no exponent for large values;
    None or NaN as an em-dash. A whole float prints as an integer when ``whole`` (a column all of whole numbers),
    else with the decimals of its significant figures (70 -> "70.00" beside 70.56); ints (counts) always as ints.
    Negative zero after rounding reads "0"."""
    if v is None:
        return "—"
    if isinstance(v, bool):
        return "yes" if v else "no"
    if isinstance(v, (int, np.integer)):
        return f"{int(v):,}"
    if isinstance(v, (float, np.floating)):
        v = float(v)
        if v != v:
            return "—"
        if v == 0 and whole:
            return "0"
        if abs(v) == float("inf"):
            return str(v)
        if whole and v == int(v) and abs(v) < 1e15:
            return fixed(v, 0)
        d = digits - 1 if v == 0 else _sig_decimals(v, digits)
        if d is None:
            return f"{v:.{digits - 1}e}"
        return fixed(v, d)
    return str(v)


def shared_decimals(values, digits: int = 4) -> int | None:
    """The decimals a group of figures of one quantity shares (a column, or a row of technologies): those of the
    largest, raised so that none shows fewer than ``digits - 1`` significant figures; 0 when every figure is whole
    (ints, counts); None when a figure is so small that it needs an exponent (each then keeps its own form).

    Examples
    --------
    >>> shared_decimals([50.0, 58.333, 70.0, 87.5, 116.67]), shared_decimals([3.33, 10.58, 4.041])
    (1, 2)
    >>> shared_decimals([0.07264, 0.1285]), shared_decimals([3.0, 12]), shared_decimals([1e-6, 2.0])
    (4, 0, None)
    """
    nums = [float(v) for v in values if _finite_float(v) or isinstance(v, (np.floating,))]
    nums = [v for v in nums if v == v and abs(v) != float("inf") and v != int(v)]
    if not nums:
        return 0
    ds = [_sig_decimals(v, digits) for v in nums]
    if None in ds:
        return None
    return max(min(ds), max(ds) - 1)


def fmt_group(values, digits: int = 4) -> list:
    """The figures of one quantity with shared decimals (:func:`shared_decimals`); anything that is not a float
    (text, ints, None) is left as it is for :func:`fmt_number`."""
    d = shared_decimals(values, digits)
    out = []
    for v in values:
        if isinstance(v, (float, np.floating)) and not isinstance(v, bool) and v == v and abs(v) != float("inf"):
            out.append(fmt_number(float(v), digits, whole=False) if d is None else fixed(float(v), d))
        else:
            out.append(v)
    return out


@dataclass(frozen=True)
class Layout:
    """How a table's figures are laid out. ``share``: ``"column"`` (each column is one quantity: its figures
    share decimals), ``"row"`` (each row after the first column is one quantity, technologies as columns) or
    ``"mixed"`` (a column of different quantities: each figure its own significant figures, and a whole number
    without decimals only when its whole column is whole). ``text``: columns of words (left-aligned, wrapped at
    spaces); ``keys``: columns of scenario keys or names a reader copies (left-aligned, never wrapped). Other columns
    hold figures (right-aligned). The first column is always text (or keys)."""

    share: str = "column"
    text: tuple = ()
    keys: tuple = ()

    def align(self, i: int) -> str:
        return "left" if i == 0 or i in self.text or i in self.keys else "right"


def _plain(x) -> bool:
    return isinstance(x, (int, float, np.integer, np.floating)) and not isinstance(x, bool)


def format_cells(rows: list[list], layout: Layout = Layout()) -> list[list]:
    """Every number of ``rows`` as text by the ``layout``'s sharing rule; text (and rich Text) stays."""
    rows = [list(r) for r in rows]
    if not rows:
        return rows
    width = max(len(r) for r in rows)
    if layout.share == "row":
        rows = [r[:1] + fmt_group(r[1:]) for r in rows]
    else:
        for j in range(width):
            col = [r[j] for r in rows if j < len(r)]
            if layout.share == "column":
                shown = fmt_group(col)
            else:
                whole = all(float(v) == int(v) for v in col if _plain(v) and np.isfinite(float(v)))
                shown = [fmt_number(v, whole=whole) if _plain(v) else v for v in col]
            it = iter(shown)
            for r in rows:
                if j < len(r):
                    r[j] = next(it)
    return [[x if isinstance(x, (str, Text)) else fmt_number(x) for x in r] for r in rows]


class _WordTable(Table):
    """A rich table whose columns of words are, where the width allows, at least as wide as their longest word: rich
    narrows the widest columns evenly, which cuts a word in two in a column that one more character would keep
    whole; the width is moved over from columns that have it to spare."""

    def __init__(self, *args, **kwargs):
        super().__init__(*args, **kwargs)
        self.words: dict[int, int] = {}

    def _calculate_column_widths(self, console, options):
        widths = super()._calculate_column_widths(console, options)
        if not self.words:
            return widths
        need = [self.words.get(i, 0) + self._get_padding_width(i) if self.words.get(i) else 0
                for i in range(len(widths))]
        for i, n in enumerate(need):
            while widths[i] < n:
                spare = [j for j in range(len(widths)) if j != i and not self.columns[j].no_wrap
                         and widths[j] > max(need[j], 4 + self._get_padding_width(j))]
                if not spare:
                    break
                j = max(spare, key=lambda k: widths[k] - need[k])
                widths[j] -= 1
                widths[i] += 1
        return widths


def rich_table(title: str, columns: list[str], rows: list[list], caption: str | None = None,
               layout: Layout = Layout()) -> Table:
    table = _WordTable(title=escape(printable(title)), caption=caption and escape(printable(caption)),
                  title_justify="left", caption_justify="left")
    cells = [[Text(printable(x)) if not isinstance(x, Text) else x for x in r] for r in format_cells(rows, layout)]
    # keys and names a reader copies (into --set, say) are never broken; text wraps at spaces (a word longer than
    # its column folds rather than ending in an ellipsis); figures are right-aligned
    for i, c in enumerate(columns):
        if i in layout.keys:
            table.add_column(escape(printable(c)), justify="left", no_wrap=True)
        else:
            # a column of words is at least as wide as its longest word (up to 16), so a narrow terminal wraps it
            # at spaces rather than cutting a word
            words = [len(w) for r in cells if i < len(r) for w in r[i].plain.split()] if i in layout.text else []
            table.words[i] = min(max(words, default=0), 16)
            table.add_column(escape(printable(c)), justify=layout.align(i), overflow="fold")
    for r in cells:
        table.add_row(*r)
    return table


def markdown_table(columns: list[str], rows: list[list], layout: Layout = Layout()) -> str:
    head = "| " + " | ".join(md(c) for c in columns) + " |"
    sep = "|" + "|".join(" --- " if layout.align(i) == "left" else " ---: " for i in range(len(columns))) + "|"
    body = ["| " + " | ".join(md(str(x)) for x in r) + " |" for r in format_cells(rows, layout)]
    return "\n".join([head, sep, *body])


def print_tables(console: Console, tables: list[Table], warnings: list[str]) -> None:
    for t in tables:
        console.print(t)
    for w in warnings:
        console.print(f"[yellow]warning:[/yellow] {escape(printable(w))}", highlight=False)
    console.print(Text(CAUTION, style="dim"))


def markdown_report(title: str, sections: list[tuple[str, list[str], list[list]]], warnings: list[str],
                    preface: list[str] = ()) -> str:
    parts = [f"# {md(title)}", ""]
    for line in preface:
        parts += [md(line), ""]
    for heading, columns, rows, *layout in sections:
        if heading:
            parts += [f"## {md(heading)}", ""]
        parts += [markdown_table(columns, rows, *layout), ""]
    if warnings:
        parts += ["## Warnings", ""] + [f"- {md(w)}" for w in warnings] + [""]
    parts += [f"> {CAUTION}", ""]
    return "\n".join(parts)


# ------------------------------------------------------------------------------------------------ side by side
def _pct(v):
    """A fraction as a percentage figure (the row's label carries the unit, [%])."""
    return None if v is None else fixed(100 * v, 1)


def _shown(f, v):
    return _pct(v) if f.fmt == "percent" else v


def compare_sections(payload: dict) -> list[tuple[str, list[str], list[list], Layout]]:
    """(heading, columns, rows, layout) per group of the side-by-side comparison (technologies as columns), then
    one section of design figures per technology, in words with units. Infeasible technologies show a dash for
    every figure that needs a working design, and their reasons."""
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
    sections = [("floor", ["feed", "value"], floor_rows, Layout("mixed"))]
    if not recs:
        return sections
    groups: dict[str, list[list]] = {"energy": [["feasible"] + ["yes" if r["feasible"] else "NO" for r in recs]]}
    for f in RECORD_FIELDS:
        groups.setdefault(f.group, []).append([label(f, cur)] + [_shown(f, r[f.name]) for r in recs])
        if f.name == "levelized_cost_per_m3":
            lines = [[f"  {line.label}"] + [r["details"]["cost_breakdown_per_m3"][line.name] for r in recs]
                     for line in COST_LINES]
            # the cost of water and its parts share their decimals, so that the parts visibly add up to it
            groups["cost"][-1:] = share_block([groups["cost"][-1]] + lines)
            for total in COST_TOTALS:
                groups["cost"].append([label(total, cur)] + [r["details"].get(total.name) for r in recs])
    groups.update(build_up_sections(recs, cur))
    reasons = [[r["technology"], "; ".join(x["message"] for x in r.get("flags", []) if x["kind"] == "infeasible")]
               for r in recs if not r["feasible"]]
    scaled = [r["details"].get("scaling") for r in recs]
    if any(scaled):
        groups["scaling"] = scaling_rows(scaled)
    for g, rows in groups.items():
        sections.append((g, [g] + techs, rows, Layout("row")))
    if reasons:
        sections.append(("why infeasible", ["technology", "reason"], reasons, Layout("mixed", text=(1,))))
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
            sections.append((f"{r['technology'].upper()}: design figures" + (f" ({note})" if note else ""),
                             ["figure", "value"], rows, Layout("mixed")))
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


def share_block(rows: list[list], digits: int = 3) -> list[list]:
    """Rows of one quantity in one unit (a total and its parts, a build-up): every figure after the first column
    with the decimals they all share (:func:`shared_decimals`), as text; other cells as they are."""
    shown = iter(fmt_group([v for row in rows for v in row[1:]], digits))
    return [row[:1] + [next(shown) for _ in row[1:]] for row in rows]


def build_up_sections(recs: list[dict], currency: str) -> dict:
    """The capital by item [currency] and the O&M by cause [currency/m3], as table groups; each shares its
    decimals down and across (one unit, parts of one total)."""
    from ..costing import CAPITAL_ITEMS, OM_ITEMS
    out = {}
    cap = build_up_rows(recs, "capital_breakdown", CAPITAL_ITEMS)
    if cap:
        out[f"capital by item [{currency}]"] = share_block(cap)
    om = build_up_rows(recs, "om_breakdown_per_m3", OM_ITEMS)
    if om:
        out[f"operation and maintenance by cause [{currency}/m3]"] = share_block(om)
    return out


def scaling_rows(scaled: list) -> list[list]:
    """Rows of the scaling block (technologies as columns): the limiting mineral, the highest recovery, where the
    concentrate was judged, and each limited mineral's figure against its limit."""
    from .fields import SCALING_FIELDS, unit_label

    def get(sc, key):
        return None if sc is None else sc.get(key)

    rows = [["limiting mineral"] + [get(sc, "limiting_mineral") or ("none in the table" if sc else None)
                                    for sc in scaled]]
    def against_limit(pairs):
        """"figure (limit)" per technology, the figures and limits of the row sharing their decimals."""
        shown = iter(fmt_group([float(x) if x is not None else None for p in pairs if p for x in p], 3))
        out = []
        for p in pairs:
            out.append(None if p is None else f"{fmt_number(next(shown))} ({fmt_number(next(shown))})")
        return out

    # a limited mineral the feed cannot form (silica not given, or its ions not in the feed): a dash under a heading
    # that says so, never a 0 that would read as a measurement
    not_given = next((sc.get("not_given") or [] for sc in scaled if sc), [])
    for f in SCALING_FIELDS:
        if f.name == "silica_mg_per_l" and "silica" in not_given:
            rows.append([f"{f.label}: not given in the feed, not checked"] + [None for _ in scaled])
            continue
        if f.name == "silica_mg_per_l":
            rows.append([f"{unit_label(f.label, f.unit)} (limit)"] + against_limit([
                None if sc is None or sc[f.name] is None else (sc[f.name], sc["limits"].get("silica"))
                for sc in scaled]))
            continue
        rows.append([unit_label(f.label, f.unit, fmt=f.fmt)] + [_shown(f, get(sc, f.name)) for sc in scaled])
    rows.append(["recovery above the limit"] + [None if sc is None else ("YES" if sc["above_limit"] else "no")
                                                for sc in scaled])
    minerals = next(sc["limits"] for sc in scaled if sc)
    for m in minerals:
        if m == "silica":
            continue
        rows.append([f"saturation index, {m.lower()} (limit)"] + against_limit(
            [None if sc is None else (sc["saturation_index"].get(m), sc["limits"][m]) for sc in scaled]))
    for m in not_given:
        if m != "silica":
            rows.append([f"saturation index, {m.lower()}: its ions not given in the feed, not checked"]
                        + [None for _ in scaled])
    return rows


def print_compare(console: Console, payload: dict) -> None:
    title = f"{payload['scenario']}"
    tables = []
    for heading, columns, rows, layout in compare_sections(payload):
        if heading == "floor":
            tables.append(rich_table(title, columns, rows, layout=layout))
        elif columns[0] in ("figure", "technology"):
            tables.append(rich_table(heading, columns, rows, layout=layout))
        else:
            tables.append(rich_table("", columns, rows, layout=layout))
    print_tables(console, tables, payload["warnings"])


def markdown_compare(payload: dict) -> str:
    return markdown_report(payload["scenario"], [(h[:1].upper() + h[1:], c, r, lay)
                                                 for h, c, r, lay in compare_sections(payload)], payload["warnings"])


# ------------------------------------------------------------------------------------------------ sweeps
SWEEP_METRICS = {"work_equivalent_kwh_per_m3": "work equivalent", "electricity_kwh_per_m3": "electricity",
                 "heat_kwh_per_m3": "heat", "levelized_cost_per_m3": "levelized cost", "emissions_kg_per_m3": "CO2",
                 "second_law_efficiency": "second-law efficiency"}


def _is_percent(row: dict) -> bool:
    return row.get("unit") in ("-", "") and row.get("metric") == "second_law_efficiency"


def _figure(row: dict, v, decimals: int | None = None) -> str:
    """A summary figure as the compare table shows it: a dimensionless efficiency as a percentage; others with
    the ``decimals`` their row shares (None: its own significant figures). The row's label carries the unit ("[%]"
    for the efficiency): no cell repeats it."""
    if v is None:
        return "—"
    if _is_percent(row):
        return fixed(100 * v, 1)
    return fmt_number(v) if decimals is None else fixed(v, decimals)


def _row_decimals(rows: list[dict], names: tuple) -> int | None:
    """The decimals a row of summaries (one metric, technologies as columns) shares over the figures ``names``."""
    return shared_decimals([float(r[n]) for r in rows if r.get("n") for n in names if r.get(n) is not None])


def _band(row: dict, decimals: int | None = None) -> str:
    if not row["n"]:
        return "-"
    f = lambda v: _figure(row, v, decimals)  # noqa: E731
    return f"{f(row['p50'])} ({f(row['p10'])} to {f(row['p90'])})"


def _range(row: dict, decimals: int | None = None) -> str:
    if not row["n"]:
        return "-"
    if row["min"] == row["max"]:
        return _figure(row, row["min"], decimals)
    return f"{_figure(row, row['min'], decimals)} to {_figure(row, row['max'], decimals)}"


def with_unit(text: str, unit: str | None) -> str:
    """``text`` followed by its unit; nothing for no unit or a dimensionless one ("-", "", "1")."""
    return text if unit in (None, "", "-", "1", "count") else f"{text} {unit}"


def bracket_unit(text: str, unit: str | None) -> str:
    """``text [unit]``; no brackets for no unit or a dimensionless one."""
    return text if unit in (None, "", "-", "1", "count") else f"{text} [{unit}]"


#: grid points shown in the terminal table; a wider grid is in grid.csv of the run folder
GRID_ROWS = 30


def _key_unit(body: dict) -> dict:
    return {g["key"]: g["unit"] for g in body.get("grid", [])}


def set_on_command_line(body: dict) -> str:
    """The keys a sweep's ``--set`` fixed, as "key = value (--set)" joined by "; " ("" when none): every figure of
    the sweep, its break-even points included, holds only at these values."""
    sets = body.get("overrides") or {}
    return "; ".join(f"{k} = {v}" for k, v in sets.items()) + " (--set)" if sets else ""


def sweep_kind(body: dict) -> str:
    """How a sweep's cases were made, in words: a grid, Monte Carlo or Latin hypercube samples, or the plain
    samples (blocks A and B) of a Sobol design."""
    if body["mode"] == "grid":
        return "grid"
    if (body.get("sensitivity") or {}).get("method") == "sobol":
        return "samples: blocks A and B of the Sobol design"
    return "Latin hypercube samples" if (body.get("sampling") or {}).get("latin_hypercube") else \
        "Monte Carlo samples"


def sweep_sections(body: dict) -> list[tuple]:
    """The sweep summary as (heading, columns, rows, layout) sections. Samples: p50 (p10 to p90) per technology and
    metric, the share of samples each ranks first with its 95 % interval, and whether the leaders are told apart.
    Grids: the range across the grid, a row per grid point (up to 30) and the break-even points with their units.
    The figures of one metric share their decimals; a dimensionless key shows no unit."""
    techs = list(dict.fromkeys(r["technology"] for r in body["summary"] if r["technology"] != "floor"))
    by = {(r["technology"], r["metric"]): r for r in body["summary"]}
    grid = body["mode"] == "grid"
    cell = _range if grid else _band
    names = ("min", "max") if grid else ("p10", "p50", "p90")
    rows = [["feasible share [%]"] + [share_pct(by[(t, 'electricity_kwh_per_m3')]['feasible_share'], sign=False)
                                       for t in techs]]
    for m, label in SWEEP_METRICS.items():
        unit = by[(techs[0], m)]["unit"] if techs else ""
        unit = "%" if m == "second_law_efficiency" and unit in ("-", "") else unit
        d = _row_decimals([by[(t, m)] for t in techs], names)
        rows.append([f"{label} [{unit}]"] + [cell(by[(t, m)], d) for t in techs])
    if not grid and techs:
        cost_rows = [by[(t, "levelized_cost_per_m3")] for t in techs]
        d = shared_decimals([float(x) for r in cost_rows for x in ((r.get("ci") or {}).get("p50") or [])
                             if x is not None])

        def p50_ci(row):
            ci = (row.get("ci") or {}).get("p50")
            if not ci:
                return "-"
            return " to ".join("?" if x is None else fmt_number(x) if d is None else fixed(x, d) for x in ci)
        unit = by[(techs[0], "levelized_cost_per_m3")]["unit"]
        rows.append([f"levelized cost p50, its 95 % interval [{unit}]"] + [p50_ci(r) for r in cost_rows])
    fl = by.get(("floor", "least_work_kwh_per_m3_zero_recovery"))
    if fl:
        rows.append(["floor: least work, zero recovery [kWh/m3]"] + [cell(fl, _row_decimals([fl], names))] * len(techs))
    what = ("lowest to highest across the grid points (feasible ones)" if grid
            else "p50 (p10 to p90) over feasible samples")
    held = set_on_command_line(body)
    out = [(f"{body['scenario']}{', at ' + held if held else ''}: {body['cases']:,} cases ({sweep_kind(body)}); {what}",
            ["metric"] + techs, rows, Layout("row"))]
    share_cols = techs + ["none feasible"]
    if grid:
        out.append(("share of grid points ranked first [%]", ["criterion"] + share_cols,
                    [[r["criterion"]] + [share_pct(r['first_share'].get(t, 0), sign=False) for t in share_cols]
                     for r in body["ranking"]]))
    else:
        def share(r, t):
            ci = r.get("first_share_ci", {}).get(t)
            pct = lambda x: share_pct(x, sign=False)  # noqa: E731
            return pct(r["first_share"].get(t, 0)) + (f" ({pct(ci[0])} to {pct(ci[1])})" if ci else "")
        out.append(("share of samples ranked first [%] (95 % interval)", ["criterion"] + share_cols,
                    [[r["criterion"]] + [share(r, t) for t in share_cols] for r in body["ranking"]]))
        out.append(("how sure the ranking is", ["criterion", "statement"],
                    [[r["criterion"], r["separation"]["statement"]] for r in body["ranking"] if "separation" in r],
                    Layout(text=(1,))))
    if grid:
        units = _key_unit(body)
        points = body.get("grid_points") or []
        keys = [g["key"] for g in body["grid"]]
        cost_unit = by[(techs[0], "levelized_cost_per_m3")]["unit"] if techs else ""
        if points and len(points) <= GRID_ROWS:
            cols = [bracket_unit(k, units[k]) for k in keys] + [f"{t} cost [{cost_unit}]" for t in techs] + \
                ["first on cost", "first on energy"]
            # the technologies' costs are one quantity in one unit: every cost column shows the same decimals
            costs = iter(fmt_group([p[f"{t}.levelized_cost_per_m3"] for p in points for t in techs]))
            rows = [[p[k] for k in keys] + [next(costs) for _ in techs]
                    + [p["first_on_cost"] or "none", p["first_on_energy"] or "none"] for p in points]
            n = len(keys) + len(techs)
            out.append(("each grid point", cols, rows, Layout(text=(n, n + 1))))
        else:
            out.append(("each grid point", ["grid points", "where"],
                        [[f"{body['cases']:,}", "grid.csv in the run folder (one row per point; cases.csv has every "
                                                "figure)"]], Layout(text=(1,))))
        rows = []
        for r in body["ranking"]:
            for c in r.get("changes", []):
                at = ", ".join(with_unit(f"{k} = {fmt_number(v)}", units.get(k)) for k, v in c["at"].items())
                if c["kind"] == "crossing":
                    where = with_unit(fmt_number(c["value"]), c["unit"])
                else:
                    lo, hi = fmt_group([float(x) for x in c["between"]])
                    where = with_unit(f"between {lo} and {hi}", c["unit"]) + " (feasibility)"
                rows.append([c["criterion"], f"{c['from'] or 'none'} -> {c['to'] or 'none'}",
                             f"{c['key']} = {where}", at or "-"])
        out.append(("where first place changes along the grid (break-even)" + (f", at {held}" if held else ""),
                    ["criterion", "change", "at", "other keys"],
                    rows or [["-", "no change along the grid", "-", "-"]], Layout(text=(1, 2, 3))))
    if body.get("sensitivity"):
        out += sensitivity_sections(body["sensitivity"], body)
    return out


def _interval(row: dict, name: str) -> str:
    if row.get(name) is None:
        return "-"
    return f"{fixed(row[name], 2)} ({fixed(row[name + '_low'], 2)} to {fixed(row[name + '_high'], 2)})"


def sensitivity_sections(sens: dict, body: dict) -> list[tuple]:
    """Sobol indices of the levelized cost per technology and key, and the key with the largest total index for
    every metric; or the tornado of the levelized cost (each key at its p10 and p90, the others at medians)."""
    cost_unit = next((r["unit"] for r in body["summary"] if r["metric"] == "levelized_cost_per_m3"), "")
    if sens["method"] == "sobol":
        rows = [[r["technology"], r["key"], _interval(r, "first"), _interval(r, "total"), r["samples"]]
                for r in sens["rows"] if r["metric"] == "levelized_cost_per_m3"]
        out = [(f"Sobol indices of the levelized cost, 95 % intervals ({sens['base_samples']} base samples, "
                f"{sens['evaluations']} evaluations); shown within [0, 1]: the estimator's interval can pass the "
                "bounds by sampling error (summary.json keeps each row's raw figures)",
                ["technology", "key", "first order", "total", "rows used"],
                rows, Layout(keys=(1,)))]
        top = []
        for (t, m) in dict.fromkeys((r["technology"], r["metric"]) for r in sens["rows"]):
            rs = [r for r in sens["rows"] if r["technology"] == t and r["metric"] == m and r["total"] is not None]
            if rs:
                best = max(rs, key=lambda r: r["total"])
                top.append([t, {**SWEEP_METRICS, "feasible": "feasibility"}.get(m, m), best["key"], _interval(best, "total")])
            else:
                top.append([t, {**SWEEP_METRICS, "feasible": "feasibility"}.get(m, m), "-", "no variation (or too few feasible rows)"])
        out.append(("the key with the largest total Sobol index", ["technology", "metric", "key", "total index"], top,
                    Layout(text=(1,), keys=(2,))))
        return out
    rows = []
    order = list(dict.fromkeys(r["technology"] for r in sens["rows"]))
    for r in sorted((r for r in sens["rows"] if r["metric"] == "levelized_cost_per_m3"),
                    key=lambda r: (order.index(r["technology"]), -abs((r["at_high"] or 0) - (r["at_low"] or 0)))):
        swing = None if r["at_low"] is None or r["at_high"] is None else r["at_high"] - r["at_low"]
        if swing == 0:
            continue                # a key with no effect on this technology
        lo, hi = fmt_group([r["low"], r["high"]])
        rows.append([r["technology"], with_unit(f"{r['key']} {lo} to {hi}", r["unit"]),
                     r["base"], r["at_low"], r["at_high"], swing])
    # every figure is a cost in one unit: they share their decimals
    shown = iter(fmt_group([v for row in rows for v in row[2:]]))
    rows = [row[:2] + [next(shown) for _ in row[2:]] for row in rows]
    note = f"; {sens['note']}" if sens.get("note") else ""
    return [(f"tornado: levelized cost [{cost_unit}] with each key at its p10 and p90, the others at their medians "
             f"(keys with no effect left out){note}",
             ["technology", "key (p10 to p90)", "cost, every key at its median", "cost at p10", "cost at p90",
              "swing"], rows, Layout(text=(1,)))]


def sweep_tables(console: Console, body: dict) -> None:
    tables = [rich_table(h, c, r, None, *lay) for h, c, r, *lay in sweep_sections(body)]
    print_tables(console, tables, body.get("warnings", []))


def sweep_markdown(body: dict) -> str:
    at = set_on_command_line(body)
    preface = [f"Set on the command line, so every figure below holds only at: {at}."] if at else []
    return markdown_report(f"Sweep: {body['scenario']}", sweep_sections(body), body.get("warnings", []), preface)
