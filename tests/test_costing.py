"""The cost build-up: capital from each design's equipment, O&M from its causes (compare/costing.py), through the
pipeline."""

import tomllib
from pathlib import Path

import numpy as np
import pytest

from compare import costing, pipeline
from compare.errors import InputErrors
from compare.present.records import records
from compare.scenario import resolve

DEMOS = Path(__file__).resolve().parent.parent / "scenarios"
DAY = 86400.0


def site(capacity="100000 m^3/day", salinity="35 g/kg", temperature="25 degC", only=None, **sections):
    """A fictional seawater site with only the technologies in ``only`` enabled."""
    data = {"name": "Cost Cove (fictional)", "site": {"capacity": capacity},
            "feed": {"salinity": salinity, "temperature": temperature}}
    for tech in ("ro", "med", "fo"):
        data[tech] = {"enabled": only is None or tech in only}
    for sec, body in sections.items():
        data.setdefault(sec, {}).update(body)
    return resolve(data, label="test")


def alder_point(temperature="14 degC"):
    """The Alder Point demo (EUR, 0.11 EUR/kWh) at one temperature near its year's middle, RO only."""
    data = tomllib.loads((DEMOS / "alder-point.toml").read_text())
    data.pop("claim", None)
    data["feed"]["temperature"] = temperature
    data["med"]["enabled"] = False
    data["fo"]["enabled"] = False
    return resolve(data, label="alder-point")


def gull_harbour(temperature="33 degC", **ro):
    """The Gull Harbour demo (warm seawater, 41 g/kg, USD) at one temperature, RO only."""
    data = tomllib.loads((DEMOS / "gull-harbour.toml").read_text())
    data.pop("claim", None)
    data["feed"]["temperature"] = temperature
    data["med"] = {"enabled": False}
    data["fo"] = {"enabled": False}
    data["ro"].update(ro)
    return resolve(data, label="gull-harbour")


def test_ro_cost_against_recovery_trades_energy_against_membranes():
    # The Gull Harbour demo (fictional) in its warmest month (33 degC, the month that sizes the membrane), whose
    # designer holds the lead element to 27 L/m2/h (ro.max_lead_flux). A grid of recovery through the pipeline:
    # - low side: the specific energy falls as recovery rises: less feed is pumped per m3 of product, so less brine
    #   goes through the exchanger's losses, its mixing and its booster;
    # - high side: the lead element's flux rises with recovery (the flux profile along the vessel grows more skewed
    #   as the outlet's osmotic pressure rises); once it reaches the limit the design lowers its average flux, so
    #   the membrane area and its cost (elements, vessels, replacement) rise with recovery;
    # and the levelised cost has its minimum inside the grid (at 54 % the lowered design reaches the thermodynamic
    # restriction: part of the added membrane produces almost nothing, and a note says so). Without the limit the
    # cost falls to the grid's end (cheap electricity: the feed-side savings outweigh the energy's rise), so here the
    # membranes make the optimum.
    r = np.array([0.20, 0.24, 0.28, 0.32, 0.36, 0.40, 0.44, 0.47, 0.50, 0.52, 0.54])
    ro = pipeline.evaluate(gull_harbour(), {"ro.recovery": r}).technologies[0]
    assert ro.feasible.all()
    assert np.all(np.diff(ro.electricity[:3]) < 0)                       # energy falls on the low side
    lowered = np.asarray(next(f for f in ro.flags if f.code == "flux_lowered").mask)
    assert not lowered[:8].any() and lowered[8:].all()                   # the limit binds from 50 %
    membranes = ro.capital_items["membranes"] + ro.capital_items["pressure_vessels"]
    np.testing.assert_allclose(membranes[:8], membranes[0], rtol=1e-12)  # the design flux stands: one area
    assert np.all(np.diff(membranes[7:]) > 0)                            # then membranes rise with recovery
    assert np.all(np.diff(ro.cost_membranes[7:]) > 0)
    assert membranes[-1] > 1.3 * membranes[0]
    lcow = ro.levelized_cost
    best = int(np.argmin(lcow))
    assert 0 < best < r.size - 1, lcow                                   # an interior minimum
    assert lcow[-1] > lcow[best] + 0.01
    free = pipeline.evaluate(gull_harbour(max_lead_flux="1000 L/m^2/h"), {"ro.recovery": r}).technologies[0]
    assert free.feasible.all() and np.all(np.diff(free.levelized_cost) < 0), free.levelized_cost
    np.testing.assert_allclose(free.levelized_cost[:8], lcow[:8], rtol=1e-12)


def test_ro_cost_against_recovery_has_an_interior_minimum():
    # A grid of recovery through the pipeline at a seawater demo site. Two trends make the optimum: per m3 of
    # product, the costs that follow the feed (intake, pretreatment, energy recovery, brine works, chemicals) fall as
    # recovery rises (less water taken per m3), while electricity rises (the feed pressure must exceed the brine's
    # rising osmotic pressure). The membrane area, set by capacity over the design flux, does not change with recovery.
    s = alder_point()
    r = np.linspace(0.30, 0.62, 9)
    ro = pipeline.evaluate(s, {"ro.recovery": r}).technologies[0]
    assert ro.feasible.all()
    lcow = ro.levelized_cost
    best = int(np.argmin(lcow))
    assert 0 < best < r.size - 1, lcow                       # an interior minimum
    assert lcow[best] < lcow[0] - 0.05 and lcow[best] < lcow[-1] - 0.005
    feed_side = ro.cost_capital + ro.cost_chemicals + ro.cost_brine_disposal
    assert np.all(np.diff(feed_side) < 0)                    # feed-side costs fall with recovery
    assert np.all(np.diff(ro.cost_electricity[2:]) > 0)      # electricity rises (above 38 %)
    assert np.all(np.diff(ro.electricity[2:]) > 0)
    # the optimum sits where the two slopes balance: electricity's rise overtakes the feed side's fall
    assert np.diff(ro.cost_electricity)[-1] > -np.diff(feed_side)[-1]
    assert np.diff(ro.cost_electricity)[0] < -np.diff(feed_side)[0]
    np.testing.assert_allclose(ro.capital_items["membranes"], ro.capital_items["membranes"][0], rtol=1e-12)


def test_ro_flux_trades_membranes_against_energy():
    # Along the design flux, membrane cost falls (area = capacity / flux) and electricity rises (more driving
    # pressure): the classic trade, with its optimum inside the grid. Halving the flux doubles the area, so the
    # membrane capital and its replacement double exactly (identity).
    s = alder_point()
    flux = np.array([7.0, 10.0, 14.0, 18.0, 22.0]) / 3.6e6       # L/m2/h -> m/s
    ro = pipeline.evaluate(s, {"ro.flux": flux}).technologies[0]
    assert ro.feasible.all()
    membranes = ro.capital_items["membranes"]
    assert np.all(np.diff(membranes) < 0) and np.all(np.diff(ro.electricity) > 0)
    assert 0 < int(np.argmin(ro.levelized_cost)) < flux.size - 1, ro.levelized_cost
    assert membranes[0] / membranes[2] == pytest.approx(2.0, rel=1e-12)
    replacement = ro.om_items["membrane_replacement"]
    assert replacement[0] / replacement[2] == pytest.approx(2.0, rel=1e-12)
    # the vessels follow the element count (rounded up to whole vessels)
    vessels = ro.capital_items["pressure_vessels"]
    assert vessels[0] / vessels[2] == pytest.approx(2.0, rel=2e-3)


def test_med_capital_follows_its_effects():
    # More effects share the same temperature range in smaller steps, so each needs more surface: the evaporator's
    # capital rises with every added effect, while the heat per m3 falls. The intake pulls the other way: the down
    # condenser takes the last effect's vapour, about 1/N of the product, so the seawater drawn to cool it (through
    # the same intake, priced on all the water drawn) falls with every added effect. With few effects that saving
    # outweighs the added surface and the plant's capital falls; from its minimum (7 effects here, regression) it
    # rises with every added effect.
    s = site(only=("med",))
    effects = np.arange(4, 15)
    med = pipeline.evaluate(s, {"med.effects": effects}).technologies[0]
    assert med.feasible.all()
    assert np.all(np.diff(med.capital_items["evaporator"]) > 0)
    assert np.all(np.diff(med.heat) < 0)
    assert np.all(np.diff(med.intake_flow) < 0) and np.all(np.diff(med.capital_items["intake"]) < 0)
    # the evaporator outgrows the intake's saving: above the minimum the added surface costs more than it saves
    best = int(np.argmin(med.capital))
    assert effects[best] == 7, med.capital
    assert np.all(np.diff(med.capital[:best + 1]) < 0) and np.all(np.diff(med.capital[best:]) > 0)
    evap, intake = np.diff(med.capital_items["evaporator"]), np.diff(med.capital_items["intake"])
    assert np.all(evap[best:] > -intake[best:]) and np.all(evap[:best] < -intake[:best])


def test_default_build_up_lands_in_the_published_range():
    # memory: reviews of desalination costs (e.g. Ghaffour, Missimer and Amy 2013, Desalination 309, 197-207) put
    # the capital of large seawater plants at about 900-2,500 USD per m3/day for RO and 900-2,000 (up to about
    # 2,500 for small units) for MED; loose bands around those, at 100,000 m3/day, 35 g/kg and 25 degC.
    s = site(only=("ro", "med"))
    recs = {r["technology"]: r for r in records(pipeline.evaluate(s))}
    ro = recs["ro"]["details"]["capital_per_m3_day"]
    med = recs["med"]["details"]["capital_per_m3_day"]
    assert 800 <= ro <= 2000, ro
    assert 900 <= med <= 2500, med
    # economies of scale: a tenth of the size costs more per m3/day, but less than ten times as much in total
    small = {r["technology"]: r for r in records(pipeline.evaluate(site(capacity="10000 m^3/day", only=("ro",))))}
    assert small["ro"]["details"]["capital_per_m3_day"] > ro
    assert small["ro"]["details"]["capital"] < recs["ro"]["details"]["capital"]


def test_given_capital_cost_replaces_the_build_up_exactly():
    built = pipeline.evaluate(site(only=("ro",))).technologies[0]
    s = site(only=("ro",), ro={"capital_cost": "1234 USD/(m^3/day)"})
    ro = pipeline.evaluate(s).technologies[0]
    assert ro.capital[0] == pytest.approx(1234 * 100000, rel=1e-12)
    assert set(ro.capital_items) == {"given"}
    rec = records(pipeline.evaluate(s))[0]
    assert rec["details"]["capital_per_m3_day"] == pytest.approx(1234, rel=1e-12)
    # O&M still follows the design: the membranes are replaced whatever the capital figure
    assert ro.om_items["membrane_replacement"][0] == built.om_items["membrane_replacement"][0]
    assert ro.om_items["maintenance"][0] == pytest.approx(0.02 * 1234 * 100000, rel=1e-12)


def test_breakdowns_add_up_for_every_technology():
    recs = records(pipeline.evaluate(site(capacity="50000 m^3/day")))
    for rec in recs:
        d = rec["details"]
        assert rec["feasible"], rec["technology"]
        assert sum(d["cost_breakdown_per_m3"].values()) == pytest.approx(rec["levelized_cost_per_m3"], rel=1e-12)
        assert sum(d["capital_breakdown"].values()) == pytest.approx(d["capital"], rel=1e-12)
        production = d["annual_production_m3"]
        assert sum(d["om_breakdown_per_m3"].values()) * production == pytest.approx(d["annual_om"], rel=1e-12)
        assert set(d["capital_breakdown"]) <= set(costing.CAPITAL_ITEMS)
        assert set(d["om_breakdown_per_m3"]) <= set(costing.OM_ITEMS)
        assert d["capital_breakdown"]["indirect"] == pytest.approx(
            0.35 * (d["capital"] - d["capital_breakdown"]["indirect"]), rel=1e-12)
    fo = next(r for r in recs if r["technology"] == "fo")
    # FO's membrane: the design's area at the default price
    assert fo["details"]["capital_breakdown"]["membranes"] == pytest.approx(40 * fo["details"]["fo_membrane_area_m2"],
                                                                            rel=1e-12)


def test_brine_disposal_by_method():
    # identity: per m3 of product, disposal costs its price per m3 of brine times the brine per product, the plant's
    # own brine flow (the one the record shows as brine sent back: product mass (1 - r)/r at the brine's density);
    # ponds are built by area, so their capital is linear in the brine flow (no economy of scale).
    base = pipeline.evaluate(site(only=("ro",))).technologies[0]
    pond = pipeline.evaluate(site(only=("ro",), brine={"disposal": "evaporation_pond"})).technologies[0]
    Q = 100000 / DAY
    brine_per_product = base.brine_flow[0] / Q
    assert brine_per_product == pytest.approx((1 - 0.45) / 0.45, rel=0.06)      # denser than the product
    assert pond.cost_brine_disposal[0] - base.cost_brine_disposal[0] == pytest.approx((0.3 - 0.01) * brine_per_product,
                                                                                      rel=1e-9)
    assert pond.capital_items["brine_disposal"][0] == pytest.approx(5000 * base.brine_flow[0] * DAY, rel=1e-9)
    assert pond.levelized_cost[0] > base.levelized_cost[0] + 1.0


def test_infeasible_cases_have_no_cost_figures():
    s = site(only=("ro",), salinity="70 g/kg")
    rec = records(pipeline.evaluate(s))[0]
    assert not rec["feasible"]
    assert all(v is None for v in rec["details"]["capital_breakdown"].values())
    assert rec["details"]["annual_om"] is None and rec["details"]["capital_per_m3_day"] is None


def test_another_currency_needs_every_price():
    data = tomllib.loads((DEMOS / "alder-point.toml").read_text())
    del data["plant"]["pump_price"]
    del data["ro"]["membrane_price"]
    with pytest.raises(InputErrors) as err:
        resolve(data, label="alder-point.toml")
    text = str(err.value)
    assert "plant.pump_price: the default (600 USD/kW) is in another currency; give a value in EUR" in text
    assert "ro.membrane_price" in text


def test_scaled_cost_follows_its_exponent():
    # identity: the unit price holds at the reference size; doubling the size multiplies the cost by 2^n
    assert costing.scaled(600.0, 1e6, 1e6, 0.7) == pytest.approx(600.0 * 1e6)
    assert costing.scaled(600.0, 2e6, 1e6, 0.7) / costing.scaled(600.0, 1e6, 1e6, 0.7) == pytest.approx(2 ** 0.7)
    assert costing.scaled(600.0, 0.0, 1e6, 0.7) == 0.0
    np.testing.assert_allclose(costing.scaled(np.array([1.0, 2.0]), np.array([1.0, 4.0]), 1.0, 0.5), [1.0, 4.0])


def test_report_and_table_show_the_build_up_by_cause():
    from compare.present.records import payload
    from compare.present.report import context, render
    from compare.present.tables import markdown_compare

    p = payload(pipeline.evaluate(site(only=("ro",))))
    md = markdown_compare(p)
    # each cause is a row of its own, its items indented under it
    assert "## Capital by item [USD]" in md and "| membranes: |  |\n|   membrane elements |" in md
    assert "| total capital [USD] |" in md and "| operation and maintenance per year (energy excluded) [USD/yr] |" in md
    ctx = context(p, {})
    capital = ctx["cost_tables"][0]
    causes = [row["label"] for row in capital["rows"] if row["cause"]]
    assert causes[:2] == ["membranes", "pressure"] and "water in and out" in causes
    html = render(p, {})
    assert "What the cost is made of" in html and "energy-recovery devices" in html
