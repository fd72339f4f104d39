"""How figures read: the figures of one quantity share their decimals, text columns are left-aligned and keep their
words and keys whole, no empty unit, no "-0.00", whole sentences, scenario values as TOML writes them."""

import json
import re
from pathlib import Path

import pytest

from compare import sweep as sw
from compare.cli import main
from compare.present import browser
from compare.present import tables as T

ROOT = Path(__file__).resolve().parents[1]
GULL = str(ROOT / "scenarios" / "gull-harbour.toml")
NUMBER = re.compile(r"^-?[\d,]+(\.\d+)?$")


def decimals(text: str) -> int:
    return len(text.split(".")[1]) if "." in text else 0


def markdown_rows(text: str, first: str) -> list[list[str]]:
    """The body rows of the Markdown table whose header starts with ``first``."""
    lines = text.splitlines()
    start = next(i for i, line in enumerate(lines) if line.startswith(f"| {first} |"))
    rows = []
    for line in lines[start + 2:]:
        if not line.startswith("|"):
            break
        rows.append([c.strip() for c in line.strip("|").split("|")])
    return rows


def shares_decimals(cells) -> bool:
    nums = [c for c in cells if NUMBER.match(c)]
    return len({decimals(c) for c in nums}) <= 1


# ------------------------------------------------------------------------------------------------ decimals
def test_a_group_of_one_quantity_shares_its_decimals():
    assert T.fmt_group([50.0, 58.333, 70.0, 87.5, 116.667]) == ["50.0", "58.3", "70.0", "87.5", "116.7"]
    assert T.fmt_group([70.56, 70.0, 63.03]) == ["70.56", "70.00", "63.03"]
    assert T.fmt_group([3.0, 12.0, None, "yes"]) == ["3", "12", None, "yes"]          # all whole: integers
    assert T.fmt_group([4332, 0.5]) == [4332, "0.5000"]                               # counts stay ints
    # a column of different quantities: each its own figures, but no bare integer beside decimals
    assert T.format_cells([["a", 70.0], ["b", 66.004], ["c", 619]], T.Layout("mixed")) == [
        ["a", "70.00"], ["b", "66.00"], ["c", "619"]]
    assert T.format_cells([["a", 70.0], ["b", 3.0]], T.Layout("mixed")) == [["a", "70"], ["b", "3"]]
    # technologies as columns: the row is the quantity
    assert T.format_cells([["brine", 70.56, 70.0, 63.03]], T.Layout("row")) == [["brine", "70.56", "70.00", "63.03"]]


def test_floor_recovery_column_shares_decimals(capsys):
    assert main(["floor", "--salinity", "35 g/kg", "--temperature", "25 degC", "--recovery", "0.3:0.7:5",
                 "--format", "markdown"]) == 0
    out = capsys.readouterr().out
    rows = markdown_rows(out, "recovery")
    assert len(rows) == 5
    for j in range(4):
        assert shares_decimals([r[j] for r in rows]), [r[j] for r in rows]
    assert [r[1] for r in rows][2] == "70.0"                       # 70 g/kg beside 116.7, not "70"
    assert "[-]" not in out                                         # no empty unit in a heading
    feed = dict(markdown_rows(out, "feed"))
    assert feed["feed salinity [g/kg]"] == "35.00" and feed["temperature [degC]"] == "25.00"


@pytest.fixture(scope="module")
def compare_markdown():
    import contextlib
    import io
    buf = io.StringIO()
    with contextlib.redirect_stdout(buf):
        assert main(["compare", GULL, "--no-save", "--format", "markdown"]) == 0
    return buf.getvalue()


@pytest.mark.parametrize("section", ["energy", "site totals", "emissions", "cost",
                                     "operation and maintenance by cause [USD/m3]"])
def test_compare_rows_share_decimals(compare_markdown, section):
    rows = markdown_rows(compare_markdown, section)
    assert rows
    for r in rows:
        assert shares_decimals(r[1:]), r


def test_the_cost_of_water_and_its_parts_share_decimals(compare_markdown, tmp_path, monkeypatch):
    # the parts of the levelized cost are read against the total: one block of decimals, in the terminal's
    # Markdown and in the report
    rows = markdown_rows(compare_markdown, "cost")
    start = next(i for i, r in enumerate(rows) if r[0].startswith("levelized cost of water"))
    end = next(i for i, r in enumerate(rows) if r[0].startswith("total capital"))
    block = rows[start:end]
    assert len(block) >= 8                                      # the total and its causes
    assert shares_decimals([c for r in block for c in r[1:]]), block
    monkeypatch.setattr(browser, "find", lambda: None)
    assert main(["report", GULL, "--out", str(tmp_path)]) == 0
    html = next(tmp_path.iterdir()).joinpath("report.html").read_text(encoding="utf-8")
    cells = []
    for row in re.findall(r"<tr[^>]*>(.*?)</tr>", html, flags=re.S):
        found = re.findall(r'<td class="num">([^<]*)</td>', row)
        if ("levelized cost of water" in row or "of which" in row) and len(found) == 3:    # the side-by-side table
            cells += found
    assert len(cells) >= 24 and shares_decimals(cells), cells


def test_compare_design_figures_show_no_bare_integer_beside_decimals(compare_markdown):
    rows = markdown_rows(compare_markdown, "figure")           # the first technology's design figures (RO)
    values = [r[1] for r in rows]
    floats = [v for v in values if NUMBER.match(v) and "." in v]
    assert floats
    elements = next(r[1] for r in rows if r[0].startswith("elements"))
    assert NUMBER.match(elements) and "." not in elements                           # a count stays an integer
    med = compare_markdown.split("## MED: design figures")[1]
    med_rows = dict(markdown_rows(med, "figure"))
    assert med_rows["heating steam temperature [degC]"] == "70.00"                  # not "70" beside "66.00"


# ------------------------------------------------------------------------------------------------ narrow tables
def test_check_and_models_at_80_columns(capsys, monkeypatch):
    monkeypatch.setenv("COLUMNS", "80")
    assert main(["check", GULL, "--format", "json"]) == 0
    keys = list(json.loads(capsys.readouterr().out)["inputs"])
    assert main(["check", GULL]) == 0
    out = capsys.readouterr().out
    lines = out.splitlines()
    assert max(len(line) for line in lines) <= 80 and "…" not in out
    first_cells = [line.split("│")[1] for line in lines if line.startswith("│")]
    for k in keys:                                                  # every key whole on one line
        assert any(c.strip() == k for c in first_cells), k
    row = next(line for line in lines if line.startswith("│ feed.water "))
    assert row.split("│")[2].startswith(" seawater ")               # text left-aligned
    assert "True" not in out and re.search(r"│ fo\.enabled +│ true ", out)
    assert main(["models"]) == 0
    out = capsys.readouterr().out
    assert max(len(line) for line in out.splitlines()) <= 80 and "…" not in out
    assert "simplification" in out and "pitzer-nacl" in out           # words and names whole
    assert re.search(r"│ water +│ teos10 +│ seawater ", out)           # text columns left-aligned


def test_markdown_aligns_text_left_and_figures_right():
    text = T.markdown_table(["key", "value", "why", "n"], [["a.b", "1 bar", "because", 2.5]],
                          T.Layout("mixed", text=(1, 2), keys=(0,)))
    assert text.splitlines()[1] == "| --- | --- | --- | ---: |"


# ------------------------------------------------------------------------------------------------ units, zeros
def test_break_even_on_a_unitless_key_has_no_stray_dash(capsys, tmp_path, monkeypatch):
    assert main(["sweep", GULL, "--vary", "ro.recovery=0.4:0.7:7", "--out", str(tmp_path / "sweep"), "--quiet",
                 "--format", "markdown"]) == 0
    out = capsys.readouterr().out
    rows = markdown_rows(out, "criterion | change")
    ats = [r[2] for r in rows]
    assert any("(feasibility)" in a for a in ats), ats
    for a in ats:
        assert " - (" not in a and not a.rstrip().endswith(" -"), a
        assert re.search(r"between 0\.\d{4} and 0\.\d{4} \(feasibility\)", a), a
    assert "| ro.recovery |" in out                                  # the grid column heading without "[-]"
    monkeypatch.setattr(browser, "find", lambda: None)
    assert main(["report", GULL, "--sweep", str(next((tmp_path / "sweep").iterdir())), "--out",
                 str(tmp_path / "report")]) == 0
    html = next((tmp_path / "report").iterdir()).joinpath("report.html").read_text(encoding="utf-8")
    assert re.search(r"between grid values of ro\.recovery, 0\.\d{4} and 0\.\d{4} \(feasibility", html)
    assert "ro.recovery [-]" not in html and "ro.recovery [" not in html
    assert T.with_unit("x = 0.5", "-") == "x = 0.5" and T.with_unit("x = 5", "bar") == "x = 5 bar"


def test_negative_zero_reads_zero():
    assert T.fixed(-0.004, 2) == "0.00" and T.fixed(-0.0, 0) == "0" and T.fixed(-0.006, 2) == "-0.01"
    sens = {"method": "sobol", "base_samples": 8, "evaluations": 32,
            "rows": [{"technology": "ro", "metric": "levelized_cost_per_m3", "key": "energy.heat_price",
                      "first": -0.001, "first_low": -0.004, "first_high": 0.002, "total": -0.0,
                      "total_low": -0.0031, "total_high": 0.001, "samples": 8}]}
    body = {"summary": [{"metric": "levelized_cost_per_m3", "unit": "USD/m3"}]}
    text = json.dumps([s[:3] for s in T.sensitivity_sections(sens, body)])
    assert "-0.00" not in text and "0.00 (0.00 to 0.00)" in text


def test_the_ranking_sentence_is_whole():
    s = sw.separation({"ro": 1.0, "med": 0.0, "none feasible": 0.0},
                      {"ro": (0.97, 1.0), "med": (0.0, 0.03), "none feasible": (0.0, 0.03)}, 100, "cost")
    assert s["statement"].endswith("no other technology ranks first in any sample")


# ------------------------------------------------------------------------------------------------ as written
def test_scenario_values_read_as_toml_writes_them(tmp_path, capsys, monkeypatch):
    assert T.as_written(True) == "true" and T.as_written([False, 1]) == "false, 1"
    assert main(["check", GULL, "--format", "markdown"]) == 0
    md = capsys.readouterr().out
    assert "| fo.enabled | true |" in md and "True" not in md
    assert main(["check", GULL, "--format", "csv"]) == 0
    csv = capsys.readouterr().out
    assert ",fo.enabled,true," in csv and "True" not in csv
    monkeypatch.setattr(browser, "find", lambda: None)
    assert main(["report", GULL, "--out", str(tmp_path)]) == 0
    html = next(tmp_path.iterdir()).joinpath("report.html").read_text(encoding="utf-8")
    assert re.search(r'fo\.<wbr>enabled</td><td>true</td>', html)
    assert ">True<" not in html and ">False<" not in html
    # the side-by-side table of the report: each row of figures shares its decimals
    for row in re.findall(r"<tr[^>]*>(.*?)</tr>", html, flags=re.S):
        cells = re.findall(r'<td class="num">([^<]*)</td>', row)
        if len(cells) == 3:
            assert shares_decimals(cells), cells


def test_build_ups_share_decimals_down_and_across(compare_markdown, tmp_path, monkeypatch):
    # a build-up is one unit and the parts of one total: every figure of the O&M by cause shares its decimals
    # (terminal's Markdown and the report alike), and the capital by item is whole currency
    om = markdown_rows(compare_markdown, "operation and maintenance by cause [USD/m3]")
    assert len(om) >= 8 and shares_decimals([c for r in om for c in r[1:]]), om
    cap = markdown_rows(compare_markdown, "capital by item [USD]")
    assert all("." not in c for r in cap for c in r[1:] if NUMBER.match(c)), cap
    monkeypatch.setattr(browser, "find", lambda: None)
    assert main(["report", GULL, "--out", str(tmp_path)]) == 0
    html = next(tmp_path.iterdir()).joinpath("report.html").read_text(encoding="utf-8")
    part = html.split("Operation and maintenance by cause")[1].split("</table>")[0]
    cells = re.findall(r'<td class="num">([^<]*)</td>', part)
    assert len([c for c in cells if NUMBER.match(c)]) >= 12 and shares_decimals(cells), cells


def test_percentages_carry_their_unit_once(compare_markdown):
    row = next(r for r in markdown_rows(compare_markdown, "energy") if r[0].startswith("second-law efficiency"))
    assert row[0] == "second-law efficiency [%]" and all(NUMBER.match(c) for c in row[1:]), row


def test_report_records_the_command_as_given(tmp_path, monkeypatch):
    # the run record's command runs again as it stands (it read "desal report report ..." before)
    monkeypatch.setattr(browser, "find", lambda: None)
    assert main(["report", GULL, "--out", str(tmp_path)]) == 0
    run = json.loads(next(tmp_path.iterdir()).joinpath("run.json").read_text(encoding="utf-8"))
    assert run["command"] == ["desal", "report", GULL, "--out", str(tmp_path)]
