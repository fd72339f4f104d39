"""Design figures over monthly periods: sizes are shown at the month the plant is built and priced for, operating
figures as production-weighted means, and the tables say which is which.

Every check here is a consistency check between two paths of this tool (the monthly run against the same months
run one by one, the shown figure against the cost build-up's own); none is an outside source."""

import tomllib
from pathlib import Path

import numpy as np
import pytest

from compare import costing, pipeline
from compare.accounting import month_weights
from compare.present.records import payload
from compare.present.tables import compare_sections
from compare.scenario import resolve
from compare.tech.base import TECHNOLOGIES, Detail

GULL = Path(__file__).resolve().parent.parent / "scenarios" / "gull-harbour.toml"


@pytest.fixture(scope="module")
def gull():
    """The Gull Harbour demo (fictional; twelve monthly feed temperatures): the monthly run, and the same twelve
    months run one by one (twelve cases of one period each, at each month's temperature)."""
    data = tomllib.loads(GULL.read_text())
    data.pop("uncertainty", None)
    scenario = resolve(data, label="gull-harbour")
    months = np.asarray(scenario.get("feed.temperature"), dtype=float)
    assert months.shape == (12,)
    monthly = pipeline.evaluate(scenario)
    one_by_one = pipeline.evaluate(scenario, {"feed.temperature": months})
    return scenario, months, monthly, one_by_one


def tech(result, name):
    return next(t for t in result.technologies if t.technology == name)


def shown(result, name, field):
    """A design figure as the records show it (display units), case 0."""
    rec = next(r for r in payload(result)["results"] if r["technology"] == name)
    return rec["details"][field]


def test_med_area_shown_is_the_area_priced_and_the_warmest_months_own(gull):
    # consistency: MED's heat-transfer area per kg/s of product, shown for the monthly run, times the product flow
    # is the area the cost build-up prices (its evaporator item over its price per m2), and it is the warmest
    # month's own area, from a run at that month's temperature alone
    scenario, months, monthly, one = gull
    med = tech(monthly, "med")
    assert med.feasible.all() and tech(one, "med").feasible.all()
    specific = shown(monthly, "med", "specific_area_m2_per_kg_s")
    product = float(scenario.get("site.capacity")) * costing.WATER_DENSITY          # [kg/s]
    priced_area = med.capital_items["evaporator"][0] / float(scenario.get("med.heat_transfer_price"))
    assert specific * product == pytest.approx(priced_area, rel=1e-12)
    warmest = int(np.argmax(months))
    per_month = tech(one, "med").details["specific_area"]
    assert specific == pytest.approx(per_month[warmest], rel=1e-12)
    # premise: the months differ enough that the mean would not do (the old figure, 543.8, was the mean)
    mean = float(np.sum(month_weights(12) * per_month))
    assert specific > 1.2 * mean


def test_sizes_and_limits_take_their_binding_month(gull):
    # consistency: RO's membrane area and vessels are those priced; its lead element flux is the month that comes
    # nearest its limit; FO's areas are the largest month's and its osmotic margin the smallest month's
    scenario, months, monthly, one = gull
    ro, ro1 = tech(monthly, "ro"), tech(one, "ro")
    assert not any(f.code == "flux_lowered" for f in ro.flags)   # premise: one design at every month, as one by one
    assert ro.details["lead_flux"][0] == pytest.approx(np.max(ro1.details["lead_flux"]), rel=1e-12)
    assert ro.details["lead_flux"][0] > np.sum(month_weights(12) * ro1.details["lead_flux"]) * 1.02
    assert ro.details["membrane_area"][0] * float(scenario.get("ro.membrane_price")) == pytest.approx(
        ro.capital_items["membranes"][0], rel=1e-12)
    assert ro.details["vessels"][0] * float(scenario.get("ro.vessel_price")) == pytest.approx(
        ro.capital_items["pressure_vessels"][0], rel=1e-12)
    fo, fo1 = tech(monthly, "fo"), tech(one, "fo")
    assert fo.details["fo_membrane_area"][0] == pytest.approx(np.max(fo1.details["fo_membrane_area"]), rel=1e-9)
    assert fo.details["min_osmotic_margin"][0] == pytest.approx(np.min(fo1.details["min_osmotic_margin"]), rel=1e-9)
    assert fo.details["regenerator_membrane_area"][0] == pytest.approx(
        np.max(fo1.details["regenerator_membrane_area"]), rel=1e-9)


def test_operating_figures_stay_the_production_weighted_mean(gull):
    # consistency: RO's feed pressure and MED's gain output ratio are the months' production-weighted means
    _, _, monthly, one = gull
    w = month_weights(12)
    for name, key in (("ro", "feed_pressure"), ("med", "gor"), ("fo", "draw_in")):
        per_month = tech(one, name).details[key]
        assert np.ptp(per_month) > 0                                   # premise: the figure moves over the year
        assert tech(monthly, name).details[key][0] == pytest.approx(np.sum(w * per_month), rel=1e-9)


def test_tables_name_the_month_only_over_periods(gull):
    _, _, monthly, one = gull
    sections = {h: rows for h, _, rows, *_ in compare_sections(payload(monthly))}
    head = next(h for h in sections if h.startswith("MED: design figures"))
    assert "production-weighted means over the 12 months" in head
    labels = [row[0] for row in sections[head]]
    assert "heat-transfer area per kg/s of product (highest monthly value) [m2/(kg/s)]" in labels
    assert "gain output ratio (distillate per kg of steam)" in labels
    ro_rows = next(rows for h, rows in sections.items() if h.startswith("RO: design figures"))
    assert "lead element flux (highest monthly value) [L/m2/h]" in [row[0] for row in ro_rows]
    assert payload(monthly)["periods"] == 12 and payload(one)["periods"] == 1
    single = {h: rows for h, _, rows, *_ in compare_sections(payload(one))}
    assert "MED: design figures" in single
    assert not any("month" in row[0] for rows in single.values() for row in rows)


def test_every_priced_size_is_declared_at_its_largest_period():
    # the details the cost build-up prices on their largest period (compare/costing.py) are declared "max", so the
    # figure shown is the one priced
    priced = {"ro": ("membrane_area", "vessels"), "med": ("specific_area",),
              "fo": ("fo_membrane_area", "regenerator_membrane_area")}
    for name, keys in priced.items():
        for key in keys:
            assert TECHNOLOGIES[name].details[key].over_periods == "max", (name, key)


def test_detail_rule_is_checked_and_applied():
    with pytest.raises(ValueError, match="over_periods"):
        Detail("x", "-", "peak")
    grid = np.array([[1.0, 3.0, np.nan], [1.0, 2.0, 4.0]])
    w = np.array([0.5, 0.25, 0.25])
    np.testing.assert_allclose(Detail("x", "-", "max").over(grid, w), [np.nan, 4.0])
    np.testing.assert_allclose(Detail("x", "-", "min").over(grid, w), [np.nan, 1.0])
    np.testing.assert_allclose(Detail("x", "-").over(grid, w), [np.nan, 2.0])
