"""desal report: one self-contained report.html, checked in headless Chromium when it is installed."""

import json
import re
from html.parser import HTMLParser
from pathlib import Path

import pytest

from compare.cli import main
from compare.present import CAUTION, browser
from compare.present.report import CAUTIONS, render

SITE = """name = "Test Shore (fictional)"
[site]
capacity = "20000 m^3/day"
[feed]
salinity = "35 g/kg"
temperature = "25 degC"
[energy]
electricity_price = "0.09 USD/kWh"

[claim]
technology = "ro"
electricity = "2.9 kWh/m^3"
recovery = "45 %"
source = "a fictional vendor sheet"
"""
CLAIMS = """[[claim]]
technology = "med"
electricity = "0.2 kWh/m^3"
heat = "4 kWh/m^3"
heat_temperature = "70 degC"
recovery = 0.5
"""
NO_CHROMIUM = "headless Chromium is not installed (Debian: apt-get install chromium; .ci/run installs it as root)"


class _Dom(HTMLParser):
    """Element counts, the children of each <svg>, and the visible text of a page."""

    def __init__(self):
        super().__init__()
        self.tags, self.svgs, self.text, self.stack, self.urls = {}, [], [], [], []

    def handle_starttag(self, tag, attrs):
        self.tags[tag] = self.tags.get(tag, 0) + 1
        if tag == "svg":
            self.svgs.append({"class": dict(attrs).get("class", ""), "shapes": 0, "texts": 0})
        elif self.svgs and "svg" in self.stack:
            if tag in ("rect", "line", "polyline", "circle", "path"):
                self.svgs[-1]["shapes"] += 1
            elif tag == "text":
                self.svgs[-1]["texts"] += 1
        self.urls += [v for k, v in attrs if k in ("src", "href") and v and not v.startswith("#")]
        if tag not in ("rect", "line", "polyline", "circle", "path", "meta", "wbr", "br"):
            self.stack.append(tag)

    def handle_endtag(self, tag):
        if tag not in self.stack:
            return
        while self.stack:
            if self.stack.pop() == tag:
                break

    def handle_data(self, data):
        if "style" not in self.stack and "title" not in self.stack[-1:]:
            self.text.append(data)

    @property
    def page_text(self):
        return re.sub(r"\s+", " ", "".join(self.text))


@pytest.fixture(scope="module")
def made(tmp_path_factory):
    """A sweep run folder and a report of the same fictional site, with a --set that makes FO infeasible."""
    tmp = tmp_path_factory.mktemp("report")
    scenario = tmp / "site.toml"
    scenario.write_text(SITE)
    (tmp / "claims.toml").write_text(CLAIMS)
    assert main(["sweep", str(scenario), "--vary", "energy.electricity_price=0.05 USD/kWh:0.2 USD/kWh:4", "--set",
                 "fo.enabled=false", "--out", str(tmp / "sweeps"), "--quiet", "--format", "json"]) == 0
    sweep = next((tmp / "sweeps").iterdir())
    assert main(["report", str(scenario), "--set", "fo.recovery=0.6", "--claim-file", str(tmp / "claims.toml"),
                 "--sweep", str(sweep), "--out", str(tmp / "reports"), "--pdf"]) == 0
    return next((tmp / "reports").iterdir())


def test_report_is_one_self_contained_file(made):
    html = (made / "report.html").read_text(encoding="utf-8")
    assert "<script" not in html.lower()
    assert not re.search(r"https?:", html), "the page names a URL"
    assert "@import" not in html and "url(" not in html and "@font-face" not in html
    dom = _Dom()
    dom.feed(html)
    assert dom.urls == [], dom.urls                      # no src or href other than in-page anchors
    assert dom.tags.get("link", 0) == 0 and dom.tags.get("img", 0) == 0
    assert {"results.json", "run.json", "claims.json", "report.html"} <= {p.name for p in made.iterdir()}


def test_report_says_everything_it_must(made):
    dom = _Dom()
    dom.feed((made / "report.html").read_text(encoding="utf-8"))
    text = dom.page_text
    payload = json.loads((made / "results.json").read_text())
    run = json.loads((made / "run.json").read_text())
    for key, item in run["scenarios"][0]["inputs"].items():      # every resolved input and its source
        assert key.split(".")[-1] in text and item["source"] in text, key
    assert "fo.recovery=0.6" in text and "--set" in text          # the override is shown
    assert run["version"] in text and run["scenarios"][0]["sha256"] in text and run["created"] in text
    assert "0.9802" in text or "0.98" in text                     # the feed's water activity (teos10, 35 g/kg)
    assert "least work at zero recovery" in text
    for rec in payload["results"]:
        assert rec["technology"].upper() in text
    assert "cannot work" in text and "FO" in text                 # the infeasible FO, in words
    assert "feed pressure [bar]" in text and "gain output ratio" in text      # design figures by their labels
    assert "below_floor" in text and "a fictional vendor sheet" in text and "within_model" in text
    assert CAUTION in text and all(c in text for c in CAUTIONS)
    assert "RO to MED" in text or "first place" in text.lower()    # the sweep's ranking


def test_figures_are_drawn(made):
    dom = _Dom()
    dom.feed((made / "report.html").read_text(encoding="utf-8"))
    classes = [s["class"] for s in dom.svgs]
    assert any("energy" in c for c in classes) and any("cost" in c for c in classes)
    assert sum("sweep" in c for c in classes) == 2
    for s in dom.svgs:
        assert s["shapes"] >= 5 and s["texts"] >= 3, s


@pytest.mark.skipif(browser.find() is None, reason=NO_CHROMIUM)
def test_report_in_headless_chromium(made):
    """The page as Chromium loads it: no console message, every figure drawn, the text there, a screenshot kept."""
    dom_text, console = browser.load(made / "report.html")
    assert console == [], console
    dom = _Dom()
    dom.feed(dom_text)
    assert dom.tags.get("script", 0) == 0
    assert len(dom.svgs) == 4 and all(s["shapes"] >= 5 for s in dom.svgs)
    assert "Test Shore (fictional)" in dom.page_text and CAUTION in dom.page_text
    png = (made / "report.png").read_bytes()
    assert png[:8] == b"\x89PNG\r\n\x1a\n" and len(png) > 20_000
    width, height = int.from_bytes(png[16:20], "big"), int.from_bytes(png[20:24], "big")
    assert (width, height) == browser.WINDOW
    assert (made / "report.pdf").read_bytes()[:5] == b"%PDF-"


def test_without_chromium_the_report_is_still_written(tmp_path, monkeypatch, capsys):
    monkeypatch.setattr(browser, "find", lambda: None)
    scenario = tmp_path / "site.toml"
    scenario.write_text(SITE.split("[claim]")[0] + "[fo]\nenabled = false\n[med]\nenabled = false\n")
    assert main(["report", str(scenario), "--out", str(tmp_path / "r"), "--pdf"]) == 0
    err = capsys.readouterr().err
    assert "Chromium is not installed" in err and "no report.pdf" in err
    folder = next((tmp_path / "r").iterdir())
    assert (folder / "report.html").is_file() and not (folder / "report.png").exists()


def test_report_reads_flags_when_the_payload_has_them(made):
    """A payload with ``flags`` objects (and an infeasible record with null figures) is shown from its flags."""
    payload = json.loads((made / "results.json").read_text())
    run = json.loads((made / "run.json").read_text())
    fo = next(r for r in payload["results"] if r["technology"] == "fo")
    for k in ("electricity_kwh_per_m3", "work_equivalent_kwh_per_m3", "levelized_cost_per_m3", "power_mw"):
        fo[k] = None
    fo["flags"] = [{"kind": "infeasible", "code": "driving_force", "quantity": "draw_concentration", "model": "fo",
                    "message": "the draw is too weak for this recovery"}]
    payload["floor"]["flags"] = [{"kind": "out_of_range", "code": "salinity", "quantity": "feed_salinity",
                                  "model": "teos10", "message": "feed salinity outside teos10's range"}]
    html = render(payload, run)
    assert "The draw is too weak for this recovery." in html and "Feed salinity outside teos10" in html
    assert "outside validated range</span>" in html and "infeasible here" in html


def test_bad_sweep_folder_is_one_line(tmp_path, capsys):
    scenario = tmp_path / "site.toml"
    scenario.write_text(SITE)
    assert main(["report", str(scenario), "--sweep", str(tmp_path), "--out", str(tmp_path / "r")]) == 2
    assert "--sweep: expected a sweep run folder" in capsys.readouterr().err
    assert not (tmp_path / "r").exists()


def test_template_ships_with_the_package():
    from importlib import resources
    assert resources.files("compare.present").joinpath("templates/report.html.j2").is_file()
    text = (Path(__file__).resolve().parents[1] / "pyproject.toml").read_text()
    assert "templates/*.j2" in text and "jinja2" in text


def test_first_screen_shows_what_each_claim_said_in_the_terminal_words(tmp_path):
    # a thermal bid is shown as claimed (electricity, and heat at its temperature), then the work equivalent judged;
    # the verdict reads as the terminal's, and a claim within 5 % of the best-practice design says it sits there
    from compare.claim import judge
    from compare.present.claims import VERDICT_WORDS
    from compare.present.report import _glance

    scenario = tmp_path / "site.toml"
    scenario.write_text(SITE)
    kwh = 3.6e6
    ro = {"technology": "ro", "electricity": 3.0 * kwh, "heat": 0.0, "heat_temperature": None, "recovery": 0.45,
          "scope": "plant", "source": "t"}
    best = judge(str(scenario), ro)["within_model_kwh_per_m3"][0]
    near = judge(str(scenario), {**ro, "electricity": 1.01 * best * kwh})
    med = judge(str(scenario), {**ro, "technology": "med", "electricity": 1.5 * kwh, "heat": 60.0 * kwh,
                                "heat_temperature": 343.15, "recovery": 0.4})
    assert near["verdict"] == med["verdict"] == "within_model" and med["position"] is None
    line = next(x for x in _glance({"results": [], "floor": {}}, [near, med]) if x.startswith("Claims:"))
    work = f"{med['claim']['work_equivalent_kwh_per_m3']:.3g}"
    assert f"MED 1.50 kWh/m3 + 60 kWh_th/m3 at 70 degC, judged on its work equivalent {work} kWh/m3" in line
    assert "ordinary" not in line and line.count(VERDICT_WORDS["within_model"]) == 2
    assert "at its best-practice end" in line and line.count("best-practice end") == 1


def test_a_sweep_of_another_scenario_is_said_once_on_stderr_and_atop_the_sweep(tmp_path, monkeypatch, capsys):
    monkeypatch.setattr(browser, "find", lambda: None)
    # a USD site and a sweep of the fictional Alder Point, a EUR scenario
    ours, theirs = tmp_path / "ours.toml", Path(__file__).resolve().parents[1] / "scenarios" / "alder-point.toml"
    ours.write_text(SITE.split("[claim]")[0])
    assert main(["sweep", str(theirs), "--vary", "energy.electricity_price=0.05 EUR/kWh,0.2 EUR/kWh", "--set",
                 "fo.enabled=false", "--out", str(tmp_path / "sweeps"), "--quiet", "--format", "json"]) == 0
    sweep = next((tmp_path / "sweeps").iterdir())
    capsys.readouterr()
    assert main(["report", str(ours), "--sweep", str(sweep), "--out", str(tmp_path / "r")]) == 0
    warnings = [x for x in capsys.readouterr().err.splitlines() if x.startswith("warning: --sweep:")]
    assert len(warnings) == 1
    assert all(w in warnings[0] for w in ("Alder Point (fictional)", "Test Shore (fictional)", "EUR", "USD"))
    dom = _Dom()
    dom.feed((next((tmp_path / "r").iterdir()) / "report.html").read_text(encoding="utf-8"))
    section = dom.page_text.split("Sweep Another scenario. ", 1)        # at the top of the section, under its heading
    assert len(section) == 2 and section[1].startswith("The sweep is of another scenario, Alder Point (fictional)")
    # how the cases were made and the keys set on the command line, in the words of the terminal and Markdown
    assert "(grid, varying energy.electricity_price), at fo.enabled = false (--set)." in dom.page_text
    # the same scenario's sweep raises nothing
    assert main(["sweep", str(ours), "--vary", "energy.electricity_price=0.05 USD/kWh,0.2 USD/kWh", "--set",
                 "fo.enabled=false", "--out", str(tmp_path / "own"), "--quiet", "--format", "json"]) == 0
    capsys.readouterr()
    assert main(["report", str(ours), "--sweep", str(next((tmp_path / "own").iterdir())), "--out",
                 str(tmp_path / "r2")]) == 0
    assert "warning: --sweep" not in capsys.readouterr().err


def test_the_sweep_section_names_latin_hypercube_samples_as_the_terminal_does(tmp_path, monkeypatch):
    monkeypatch.setattr(browser, "find", lambda: None)
    from compare.present.tables import sweep_kind
    scenario = Path(__file__).resolve().parents[1] / "scenarios" / "gull-harbour.toml"
    assert main(["sweep", str(scenario), "--samples", "40", "--lhs", "--set", "fo.enabled=false", "--out",
                 str(tmp_path / "s"), "--quiet", "--format", "json"]) == 0
    sweep = next((tmp_path / "s").iterdir())
    assert sweep_kind(json.loads((sweep / "summary.json").read_text())) == "Latin hypercube samples"
    assert main(["report", str(scenario), "--set", "fo.enabled=false", "--sweep", str(sweep), "--out",
                 str(tmp_path / "r")]) == 0
    dom = _Dom()
    dom.feed((next((tmp_path / "r").iterdir()) / "report.html").read_text(encoding="utf-8"))
    assert "Monte Carlo" not in dom.page_text
    assert "(Latin hypercube samples, varying " in dom.page_text
    assert ", at fo.enabled = false (--set)." in dom.page_text


def test_share_intervals_never_round_a_bound_below_100_to_100(tmp_path):
    # 2000 samples all ranking RO first: the Wilson 95 % interval (Wilson 1927, J. Am. Stat. Assoc. 22, 209) is
    # 99.8 % to 100 %, which the table must print as the sentence beneath it does
    from compare.present.report import read_sweep, sweep_context
    scenario = Path(__file__).resolve().parents[1] / "scenarios" / "gull-harbour.toml"
    assert main(["sweep", str(scenario), "--samples", "2000", "--out", str(tmp_path), "--quiet", "--format",
                 "json"]) == 0
    ctx = sweep_context(read_sweep(next(p for p in tmp_path.iterdir() if p.is_dir())))
    cost = next(s for s in ctx["shares"] if s["criterion"] == "cost")
    assert cost["shares"].startswith("RO 100 % (99.8 % to 100 %)"), cost["shares"]
    assert "(99.8 % to 100 %)" in cost["statement"]
