"""Claims as tables (rich, Markdown) and CSV rows. They only read the judgements of :func:`compare.claim.judge`."""

from __future__ import annotations

from . import CAUTION
from .tables import Layout, as_written, fmt_number

#: the keys a design sets: key, value as written, why
PARAMETERS = Layout("mixed", text=(1, 2), keys=(0,))

VERDICT_WORDS = {
    "invalid": "invalid as stated: its heat cannot drive the process",
    "below_floor": "impossible: below the least work of its own streams",
    "no_model_design": "not judged against a design: this tool has no feasible design here to compare with",
    "below_model": "below this tool's best-practice design: extraordinary, needs evidence",
    "within_model": "within what this technology needs here",
    "above_model": "above what this technology needs here",
}


#: the verdicts' colours in the terminal
STYLES = {"invalid": "bold red", "below_floor": "bold red", "no_model_design": "bold cyan",
          "below_model": "bold yellow", "within_model": "bold green", "above_model": "bold magenta"}


#: an invalid claim of a technology that takes no heat: its heat is not what drives it
INVALID_NOT_THERMAL = "invalid as stated: its heat has no work value here"


def verdict_words(j: dict) -> str:
    """The verdict in words, with where a ``within_model`` claim sits when that matters (its best-practice end)."""
    words = VERDICT_WORDS[j["verdict"]]
    if j["verdict"] == "invalid" and not j["claim"].get("thermal", True):
        words = INVALID_NOT_THERMAL
    return f"{words}, {j['position']}" if j.get("position") else words


def claimed(j: dict) -> str:
    """What the claim said, as claimed: electricity, and heat at its temperature where given."""
    c = j["claim"]
    heat = (f" + {fmt_number(c['heat_kwh_per_m3'], 3)} kWh_th/m3 at {fmt_number(c['heat_temperature_c'], 3)} degC"
            if c["heat_kwh_per_m3"] else "")
    return f"{fmt_number(c['electricity_kwh_per_m3'], 3)} kWh/m3{heat}"


def title(j: dict) -> str:
    c = j["claim"]
    heat = (f" + {fmt_number(c['heat_kwh_per_m3'], 3)} kWh_th/m3 at {fmt_number(c['heat_temperature_c'], 3)} degC"
            if c["heat_kwh_per_m3"] else "")
    src = f" ({c['source']})" if c.get("source") else ""
    return (f"{c['technology'].upper()} claim{src}: {fmt_number(c['electricity_kwh_per_m3'], 3)} kWh/m3 electricity"
            f"{heat} at recovery {fmt_number(c['recovery'], 3)}, {c['scope']} scope")


def figure_heading(j: dict) -> str:
    """The heading of the figures' column: an invalid claim is not judged against them, and says so."""
    if j["verdict"] == "invalid":
        return "not judged (invalid claim): work equivalent"
    return "compared (work equivalent)"


def figure_rows(j: dict) -> list[list]:
    """The figures a verdict compared, in kWh/m3 of work equivalent."""
    return [[row["figure"], row["kwh_per_m3"]] for row in j["compared"]]


def parameter_rows(j: dict, design: str = "best_practice") -> list[list]:
    """The keys a design sets (best practice: changed from the scenario's design), each with its reason."""
    return [[k, v["value"] if isinstance(v["value"], (int, float)) and not isinstance(v["value"], bool)
             else as_written(v["value"]), v["why"]] for k, v in j[design]["parameters"].items()]


def notes(j: dict) -> list[str]:
    c, s = j["claim"], j["site"]
    out = [f"Verdict: {j['verdict']} ({verdict_words(j)}). {j['explanation'][0].upper()}"
           f"{j['explanation'][1:]}."]
    if c["heat_kwh_per_m3"] and j["verdict"] == "invalid":
        out.append(f"Heat is valued by its exergy, Q (1 - T0/T_heat) with T0 the feed temperature ("
                   f"{s['dead_state_c']:.1f} degC, production-weighted): heat no warmer than the feed has none"
                   + (", and a thermal process needs heat warmer than its feed all year." if c.get("thermal", True)
                      else "."))
    elif c["heat_kwh_per_m3"]:
        out.append(f"Heat is valued by its exergy: {fmt_number(c['heat_kwh_per_m3'], 3)} kWh_th/m3 x (1 - T0/T_heat) "
                   f"= x {c['exergy_factor']:.4f}, with T0 = {s['dead_state_c']:.1f} degC, {s['dead_state']}.")
    out.append(f"Scope: {c['scope']} ({c['scope_means']}). Recovery {fmt_number(c['recovery'], 3)} from "
               f"{c['recovery_from']}; product at the scenario's target, {fmt_number(s['product_salinity_g_per_kg'], 3)} "
               "g/kg.")
    if j["verdict"] != "invalid":             # an invalid claim is not judged: no band to place it in
        out.append(band(j))
    out += [f"Least work: {w}." for w in j.get("warnings", [])]
    names = {"best_practice": "best-practice design", "scenario_design": "scenario's design"}
    for lim in j.get("binding_limits", []):
        which = "both designs" if len(lim["designs"]) == 2 else f"the {names[lim['designs'][0]]} only"
        out.append(f"Binding limit at this recovery ({which}): {lim['limit']}.")
    for k, label in names.items():
        if not j[k]["feasible"] and not j[k].get("limits"):
            out.append(f"The {label} is infeasible at this recovery: "
                       + "; ".join(j[k]["warnings"] or ["no reason given"]) + ".")
    return out


def band(j: dict) -> str:
    """The ``within_model`` band in words: its ends and what each is computed from, or why an end is missing."""
    lo, hi = j["within_model_kwh_per_m3"]
    lo_from, hi_from = j.get("within_model_from") or ("best_practice", "scenario_design")
    names = {"best_practice": "best-practice design", "scenario_design": "scenario's design"}
    margin = f"{j['margin']:g} ({j['margin_source']})"
    if lo is None:
        return ("No within_model band: neither the best-practice nor the scenario's design is feasible at this "
                "recovery (the binding limits follow), so the claim has no design figure to be compared with.")
    text = (f"within_model spans {fmt_number(lo, 3)} to {fmt_number(hi, 3)} kWh/m3: from the {names[lo_from]} to "
            f"the {names[hi_from]} times {margin}")
    if hi_from == "best_practice":
        text += ("; the scenario's design is infeasible at this recovery, so the top is taken from the "
                 "best-practice design")
    elif lo_from == "scenario_design" and j["best_practice"]["work_equivalent_kwh_per_m3"] is None:
        text += "; the best-practice design is infeasible at this recovery"
    return text + "."


def print_claims(console, body: dict) -> None:
    from rich.markup import escape
    from rich.text import Text

    from ..errors import printable
    from .tables import rich_table
    for j in body["claims"]:
        console.print(rich_table(title(j), [figure_heading(j), "kWh/m3"], figure_rows(j)))
        for design, heading in (("best_practice", "best-practice design: keys changed from the scenario's"),
                                ("scenario_design", "scenario's design: keys changed for the scope")):
            if j[design]["parameters"]:
                console.print(rich_table(heading, ["key", "value", "why"], parameter_rows(j, design),
                                         layout=PARAMETERS))
        style = STYLES[j["verdict"]]
        lines = list(notes(j))
        lead = f"Verdict: {j['verdict']}"
        if lines and lines[0].startswith(lead):        # the verdict once, in colour, at the head of its sentence
            console.print(Text("Verdict: ") + Text(j["verdict"], style=style) + Text(printable(lines.pop(0)[len(lead):])))
        else:
            console.print(Text(j["verdict"], style=style))
        for line in lines:
            console.print(escape(printable(line)), highlight=False)
        console.print()
    console.print(Text(CAUTION, style="dim"))


def claims_markdown(body: dict) -> str:
    from .tables import markdown_table, md
    parts = [f"# Claims at {md(body['scenario'])}", ""]
    for j in body["claims"]:
        parts += [f"## {md(title(j))}", "", f"**{md(j['verdict'])}**", "",
                  markdown_table([figure_heading(j), "kWh/m3"], figure_rows(j)), "",
                  "Best-practice design, keys changed from the scenario's:", "",
                  markdown_table(["key", "value", "why"], parameter_rows(j), PARAMETERS), ""]
        if j["scenario_design"]["parameters"]:
            parts += ["Scenario's design, keys changed for the scope:", "",
                      markdown_table(["key", "value", "why"], parameter_rows(j, "scenario_design"), PARAMETERS), ""]
        parts += [f"- {md(line)}" for line in notes(j)] + [""]
    parts += [f"> {CAUTION}", ""]
    return "\n".join(parts)


def claims_csv_rows(body: dict) -> list[dict]:
    rows = []
    for j in body["claims"]:
        c = j["claim"]
        rows.append({"scenario": body["scenario"], "technology": c["technology"], "scope": c["scope"],
                     "source": c["source"], "recovery": c["recovery"],
                     "electricity_kwh_per_m3": c["electricity_kwh_per_m3"], "heat_kwh_per_m3": c["heat_kwh_per_m3"],
                     "heat_temperature_c": c["heat_temperature_c"], "exergy_factor": c["exergy_factor"],
                     "work_equivalent_kwh_per_m3": c["work_equivalent_kwh_per_m3"],
                     "least_work_kwh_per_m3": j["least_work_kwh_per_m3"],
                     "best_practice_kwh_per_m3": j["best_practice"]["work_equivalent_kwh_per_m3"],
                     "scenario_design_kwh_per_m3": j["scenario_design"]["work_equivalent_kwh_per_m3"],
                     "within_model_top_kwh_per_m3": j["within_model_kwh_per_m3"][1], "margin": j["margin"],
                     "verdict": j["verdict"], "explanation": j["explanation"]})
    return rows
