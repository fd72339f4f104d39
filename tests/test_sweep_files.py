"""What a sweep's own files and screens say: the keys set on the command line, how the cases were made, units and
grid values as given, feasibility break-evens in the figure, shared decimals, Sobol intervals within [0, 1] and the
Saltelli blocks in the cases, share intervals that hold their estimate, sampling ranges in the scenario's units, and
the tornado's notes."""

import json

import numpy as np
import pytest

from compare import sweep as sw
from compare.cli import main
from tests.test_sweep import _scenario_file

GULL = "scenarios/gull-harbour.toml"


def _folder(out):
    (folder,) = list(out.iterdir())
    return folder


def test_grid_files_record_the_keys_set_on_the_command_line(toy, tmp_path, capsys):
    path = _scenario_file(tmp_path)
    out = tmp_path / "runs"
    assert main(["sweep", str(path), "--set", "energy.heat_price=0 USD/kWh", "--vary",
                 "energy.electricity_price=0.05 USD/kWh:0.25 USD/kWh:9", "--out", str(out), "--quiet"]) == 0
    shown = capsys.readouterr().out
    assert "at energy.heat_price = 0 USD/kWh (--set)" in " ".join(shown.split())
    folder = _folder(out)
    assert folder.name.endswith("-sweep-grid")
    summary = json.loads((folder / "summary.json").read_text())
    assert summary["overrides"] == {"energy.heat_price": "0 USD/kWh"}
    report = (folder / "report.md").read_text().splitlines()
    assert report[2] == "Set on the command line, so every figure below holds only at: energy.heat\\_price = 0 " \
                        "USD/kWh (--set)."
    # grid.csv: every column with its unit, as the cases file names them, and the grid's values as given
    grid = (folder / "grid.csv").read_text().splitlines()
    assert grid[0].split(",")[:3] == ["energy.electricity_price [USD/kWh]", "toy.levelized_cost_per_m3 [USD/m3]",
                                      "toy.work_equivalent_kwh_per_m3 [kWh/m3]"]
    assert [row.split(",")[0] for row in grid[1:]] == ["0.05", "0.075", "0.1", "0.125", "0.15", "0.175", "0.2",
                                                       "0.225", "0.25"]
    assert summary["grid"][0]["values"] == [0.05, 0.075, 0.1, 0.125, 0.15, 0.175, 0.2, 0.225, 0.25]


def test_no_overrides_no_note_and_latin_hypercube_named(toy, tmp_path, capsys):
    path = _scenario_file(tmp_path, '[uncertainty]\n"toy.efficiency" = { low = "0.7", high = "0.95" }\n')
    out = tmp_path / "runs"
    assert main(["sweep", str(path), "--samples", "200", "--lhs", "--out", str(out), "--quiet"]) == 0
    shown = " ".join(capsys.readouterr().out.split())
    assert "200 cases (Latin hypercube samples)" in shown and "--set" not in shown
    folder = _folder(out)
    assert folder.name.endswith("-sweep-lhs")
    assert json.loads((folder / "summary.json").read_text())["overrides"] == {}
    assert "200 cases (Latin hypercube samples)" in (folder / "report.md").read_text()
    assert main(["sweep", str(path), "--samples", "200", "--no-save", "--quiet"]) == 0
    assert "200 cases (Monte Carlo samples)" in " ".join(capsys.readouterr().out.split())


def test_tidy_grid_values_and_a_point_equals_its_set_value(toy):
    from tests.test_sweep import scenario
    s = scenario()
    axis = sw.parse_vary("energy.electricity_price=0.05 USD/kWh:0.25 USD/kWh:9", s)
    assert axis.display.tolist() == [0.05, 0.075, 0.1, 0.125, 0.15, 0.175, 0.2, 0.225, 0.25]
    set_value = scenario(overrides=["energy.electricity_price=0.075 USD/kWh"]).get("energy.electricity_price")
    assert axis.values[1] == pytest.approx(set_value, rel=1e-15)
    axis = sw.parse_vary("feed.temperature=15 degC:35 degC:3", s)
    assert axis.display.tolist() == [15.0, 25.0, 35.0]
    assert sw.parse_vary("toy.recovery=0.35:0.75:9", s).display.tolist() == [0.35, 0.4, 0.45, 0.5, 0.55, 0.6, 0.65,
                                                                             0.7, 0.75]


def test_share_intervals_hold_their_estimate_at_zero_and_one():
    for n in (1, 7, 50, 200, 2000, 12345):
        assert sw.wilson(0, n)[0] == 0.0 and sw.wilson(n, n)[1] == 1.0
        for k in (0, 1, n // 2, n - 1, n):
            lo, hi = sw.wilson(k, n)
            assert 0.0 <= lo <= k / n <= hi <= 1.0


@pytest.fixture(scope="module")
def recovery_grid():
    """RO, MED and FO on Gull Harbour with RO infeasible between the last two recoveries."""
    from compare.scenario import load
    s = load(GULL)
    axis = sw.parse_vary("ro.recovery=0.35,0.55,0.6", s)
    return sw.run(s, sw.grid([axis]), mode="grid", axes=[axis])


def test_feasibility_break_even_is_shaded_in_the_figure(recovery_grid, monkeypatch, tmp_path):
    pytest.importorskip("matplotlib")
    from compare.present import plots
    changes = sw.break_even(recovery_grid, "cost")
    assert [c["kind"] for c in changes] == ["feasibility"] and changes[0]["between"] == [0.55, 0.6]
    figures = []
    monkeypatch.setattr(plots, "_save", lambda fig, folder, stem: figures.append(fig) or [])
    plots.grid_figure(recovery_grid, None)
    cost = figures[0].axes[0]
    spans = [p for p in cost.patches if p.get_x() == pytest.approx(0.55) and p.get_width() == pytest.approx(0.05)]
    assert len(spans) == 1
    words = " ".join(t.get_text() for t in cost.texts)
    assert "RO to MED between 0.550 and 0.600" in words and "RO feasible at 0.550, not at 0.600" in words
    # the note sits in headroom above the data, so that it hides no line (MED and FO run near the top)
    fig = figures[0]
    fig.canvas.draw()
    note = next(t for t in cost.texts if "RO to MED" in t.get_text()).get_window_extent()
    highest = max(np.nanmax(line.get_ydata()) for line in cost.lines if len(line.get_ydata()))
    assert cost.transData.transform((0.0, highest))[1] < note.y0


def test_grid_costs_share_their_decimals_across_technologies(recovery_grid):
    from compare.present.tables import format_cells, sweep_sections
    body = sw.payload(recovery_grid)
    heading, columns, rows, layout = next(s for s in sweep_sections(body) if s[0] == "each grid point")
    cells = format_cells(rows, layout)
    costs = [c for r in cells for c, name in zip(r, columns) if name.endswith("cost [USD/m3]") and c != "—"]
    assert len(costs) == 8 and len({len(c.split(".")[1]) for c in costs}) == 1


def test_sobol_indices_shown_within_zero_and_one_raw_kept():
    # y = x1 alone: x1's indices are 1 and x2's 0, so the estimator's intervals pass both bounds by sampling error
    from types import SimpleNamespace

    from compare import sensitivity as se
    from scipy.stats import qmc
    n, d = 64, 2
    base = qmc.Sobol(d=2 * d, scramble=True, seed=1).random_base2(6)
    A, B = base[:, :d], base[:, d:]
    blocks = [A, B] + [np.where(np.arange(d) == i, B, A) for i in range(d)]
    y = np.concatenate([b[:, 0] + 1e-3 * b[:, 1] ** 2 for b in blocks])
    sr = SimpleNamespace(technologies=["x"], feasible={"x": np.ones(y.size, bool)},
                         metrics={"x": {m: y for m in ("lcow", "work_equivalent", "emissions")}})
    rows = [r for r in se.sobol_rows(sr, ["a", "b"], n, seed=2) if r["metric"] == "levelized_cost_per_m3"]
    raw = [v for r in rows for v in r["raw"].values()]
    assert max(raw) > 1 and min(raw) < 0                       # the estimator's own figures pass the bounds
    for r in rows:
        assert 0.0 <= r["first_low"] <= r["first_high"] <= 1.0 and 0.0 <= r["total_low"] <= r["total_high"] <= 1.0
        assert 0.0 <= r["first"] <= 1.0 and 0.0 <= r["total"] <= 1.0
    shown = [{f: r[f] for f in se.INDEX_FIELDS} for r in rows]
    assert "-0.0" not in json.dumps(shown) and rows[0]["total_high"] == 1.0


def test_sobol_cases_name_their_block(toy, tmp_path, capsys):
    from tests.test_sensitivity import _write
    assert main(["sweep", str(_write(tmp_path)), "--samples", "16", "--sensitivity", "sobol", "--format", "csv",
                 "--no-save", "--quiet"]) == 0
    import io

    import pandas as pd
    cases = pd.read_csv(io.StringIO(capsys.readouterr().out))
    blocks = cases.groupby("sobol_block")["case"].agg(["min", "max"])
    assert blocks.loc["A"].tolist() == [0, 15] and blocks.loc["B"].tolist() == [16, 31]
    assert blocks.loc["AB:energy.electricity_price"].tolist() == [32, 47]
    assert blocks.loc["AB:toy.efficiency"].tolist() == [48, 63]


def test_sampling_ranges_in_the_scenarios_units(toy):
    from tests.test_sweep import scenario
    s = scenario(uncertainty={
        "energy.electricity_price": {"low": "0.05 USD/kWh", "mode": "0.07 USD/kWh", "high": "0.11 USD/kWh"},
        "toy.capital_cost": {"median": "900 USD/(m^3/day)", "gsd": "1.3"},
        "feed.temperature": {"mean": "25 degC", "sd": "2 K"}})
    body = sw.payload(sw.run(s, sw.sampler(s, 200, seed=1), mode="samples", seed=1))
    shown = body["sampling"]["distributions"]
    assert shown["energy.electricity_price"] == {"distribution": "triangular", "unit": "USD/kWh", "low": 0.05,
                                                 "mode": 0.07, "high": 0.11}
    assert shown["toy.capital_cost"] == {"distribution": "lognormal", "unit": "USD/(m^3/day)", "median": 900.0,
                                         "gsd": 1.3}
    assert shown["feed.temperature"] == {"distribution": "normal", "unit": "degC", "mean": 25.0, "sd": 2.0}


def test_tornado_says_correlations_are_not_applied_and_gives_the_median_cost(toy, tmp_path, capsys):
    from tests.test_sensitivity import _write
    path = _write(tmp_path, '[correlation]\n"toy.efficiency" = { "energy.electricity_price" = 0.5 }\n')
    assert main(["sweep", str(path), "--samples", "200", "--sensitivity", "tornado", "--format", "markdown",
                 "--no-save", "--quiet"]) == 0
    text = capsys.readouterr().out
    assert "rank correlations ([correlation]) are not applied here" in text
    header = next(line for line in text.splitlines() if line.startswith("| technology | key (p10 to p90)"))
    assert "cost, every key at its median" in header
    row = next(line for line in text.splitlines() if line.startswith("| toy | toy.efficiency"))
    base, low, high = (float(x) for x in row.split("|")[3:6])
    assert low > base > high                                   # cost falls as the efficiency rises
    assert main(["sweep", str(_write(tmp_path)), "--samples", "200", "--sensitivity", "tornado", "--format",
                 "markdown", "--no-save", "--quiet"]) == 0
    assert "not applied" not in capsys.readouterr().out


def test_a_termination_right_after_the_folder_is_made_leaves_nothing(toy, tmp_path, monkeypatch, capsys):
    # SIGTERM can land after the temporary run folder exists but before the command's own cleanup covers it
    from compare import cli
    from compare.present import files
    made = files.RunFolder.__init__

    def then_terminated(self, *args, **kw):
        made(self, *args, **kw)
        raise cli.Terminated()
    monkeypatch.setattr(files.RunFolder, "__init__", then_terminated)
    out = tmp_path / "runs"
    assert main(["sweep", str(_scenario_file(tmp_path)), "--vary", "toy.recovery=0.3:0.6:3", "--out", str(out),
                 "--quiet"]) == 143
    assert capsys.readouterr().err.strip() == "terminated (SIGTERM): nothing saved"
    assert list(out.iterdir()) == []


def test_figure_titles_name_the_keys_set_on_the_command_line(toy, monkeypatch):
    pytest.importorskip("matplotlib")
    from compare.present import plots
    from tests.test_sweep import scenario
    s = scenario(overrides=["energy.heat_price=0 USD/kWh"])
    axis = sw.parse_vary("toy.recovery=0.3:0.6:3", s)
    figures = []
    monkeypatch.setattr(plots, "_save", lambda fig, folder, stem: figures.append(fig) or [])
    plots.grid_figure(sw.run(s, sw.grid([axis]), mode="grid", axes=[axis]), None)
    assert figures[0]._suptitle.get_text().endswith("\nat energy.heat_price = 0 USD/kWh (--set)")
    assert plots.held(scenario()) == ""
