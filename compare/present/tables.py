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
