"""How sure a sweep is: Wilson intervals on first-place shares, order-statistic intervals on percentiles, the plain
statement when two technologies cannot be told apart; grid summaries per point; the DataFrame and xarray API."""

import json
import re

import numpy as np
import pytest

from compare import sweep as sw
from compare.cli import main
from tests.test_sweep import UNCERTAIN, scenario


def test_wilson_interval():
    # identity: for k = 0 the Wilson upper bound is z^2 / (n + z^2)
    assert sw.wilson(0, 10) == pytest.approx([0.0, 1.959964 ** 2 / (10 + 1.959964 ** 2)])
    # memory: Newcombe (1998), Statistics in Medicine 17, 857-872, example 81/263: Wilson 0.2553 to 0.3662
    assert sw.wilson(81, 263) == pytest.approx([0.2553, 0.3662], abs=6e-4)


def test_percentile_interval_by_order_statistics():
    # memory: the distribution-free 95 % interval of the median of 100 samples is (x_(40), x_(61))
    x = np.arange(1.0, 101.0)
    assert sw.percentile_interval(x, 0.5) == [40.0, 61.0]
    # too few samples to bound the 10th percentile from below
    assert sw.percentile_interval(np.arange(1.0, 11.0), 0.1)[0] is None
    # coverage over repeated samples (regression of the method against its promise, 400 trials)
    rng = np.random.default_rng(0)
    hits = sum(lo <= 0.9 <= hi for lo, hi in (sw.percentile_interval(rng.random(300), 0.9) for _ in range(400)))
    assert hits / 400 >= 0.92


def test_separation_statement():
    close = {"ro": 0.51, "fo": 0.49, "none feasible": 0.0}
    ci = {t: sw.wilson(round(v * 1000), 1000) for t, v in close.items()}
    s = sw.separation(close, ci, 1000, "cost")
    assert not s["separated"] and "cannot separate RO and FO on cost" in s["statement"]
    assert s["samples_needed"] == pytest.approx(1.959964 ** 2 * (2 * 0.4999) ** 2 / 0.02 ** 2, rel=0.01)
    far = {"ro": 0.7, "fo": 0.3, "none feasible": 0.0}
    s = sw.separation(far, {t: sw.wilson(round(v * 1000), 1000) for t, v in far.items()}, 1000, "cost")
    assert s["separated"] and s["statement"].startswith("RO ranks first on cost in 70 %")


def test_samples_summary_carries_intervals(toy):
    s = scenario(uncertainty=UNCERTAIN)
    x, _ = sw.sample_cases(s, 400, seed=1)
    body = sw.payload(sw.run(s, x, mode="samples"))
    row = next(r for r in body["summary"] if r["metric"] == "levelized_cost_per_m3")
    for q in ("p10", "p50", "p90"):
        lo, hi = row["ci"][q]
        assert lo <= row[q] <= hi
    cost = body["ranking"][0]
    assert cost["first_share_ci"]["toy"] == pytest.approx(sw.wilson(400, 400))
    assert "no other technology ranks first" in cost["separation"]["statement"]
    from compare.present.tables import fmt_number, sweep_sections
    rows = {r[0]: r[1] for r in sweep_sections(body)[0][2]}
    lo, hi = row["ci"]["p50"]
    assert rows["levelized cost p50, its 95 % interval [USD/m3]"] == f"{fmt_number(lo)} to {fmt_number(hi)}"
    # the labels carry the unit "[%]": no cell repeats it, and a range reads "a to b" as in the sentences
    eff = next(r for r in body["summary"] if r["metric"] == "second_law_efficiency" and r["technology"] == "toy")
    assert re.fullmatch(r"[\d.]+ \([\d.]+ to [\d.]+\)", rows["second-law efficiency [%]"]), rows
    assert rows["second-law efficiency [%]"].startswith(f"{100 * eff['p50']:.1f} (")
    assert rows["feasible share [%]"] == "100"
    shares = next(s for s in sweep_sections(body) if s[0].startswith("share of samples ranked first [%]"))
    assert shares[2][0][1] == "100 (99 to 100)", shares[2][0]


def test_grid_points_table_file_and_xarray(toy, tmp_path, capsys):
    s = scenario()
    axes = [sw.parse_vary("toy.recovery=0.3:0.6:4", s), sw.parse_vary("energy.electricity_price=0.05 USD/kWh,"
                                                                      "0.1 USD/kWh", s)]
    res = sw.run(s, sw.grid_cases(axes), mode="grid", axes=axes)
    ds = res.to_dataset()
    assert dict(ds.sizes) == {"toy.recovery": 4, "energy.electricity_price": 2, "technology": 1}
    assert ds["energy.electricity_price"].values.tolist() == pytest.approx([0.05, 0.1])
    np.testing.assert_array_equal(ds["levelized_cost_per_m3"].sel(technology="toy").values.ravel(),
                                  res.metrics["toy"]["lcow"])
    frame = res.to_frame()
    assert len(frame) == 8 and {"toy.recovery", "levelized_cost_per_m3", "feasible"} <= set(frame.columns)
    out = tmp_path / "out"
    path = tmp_path / "s.toml"
    path.write_text('name = "Test Bay (fictional)"\n[site]\ncapacity = "20000 m^3/day"\n[feed]\nsalinity = "35 g/kg"\n'
                    'temperature = "25 degC"\n')
    assert main(["sweep", str(path), "--vary", "toy.recovery=0.3:0.6:4", "--vary",
                 "energy.electricity_price=0.05 USD/kWh,0.1 USD/kWh", "--out", str(out), "--quiet"]) == 0
    text = capsys.readouterr().out
    assert "each grid point" in text and "p10" not in text and "lowest to highest" in text
    folder = next(out.iterdir())
    grid = (folder / "grid.csv").read_text().splitlines()
    assert len(grid) == 9 and grid[0].startswith("toy.recovery [-],energy.electricity_price [USD/kWh],toy.levelized_cost_per_m3 [USD/m3]")
    body = json.loads((folder / "summary.json").read_text())
    assert len(body["grid_points"]) == 8
