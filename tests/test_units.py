import pytest

from compare.errors import InputError
from compare.units import currency_of, parse_quantity, parse_salinity, parse_temperature, to_si


def test_offset_temperatures():
    assert parse_temperature("25 degC", where="x") == pytest.approx(298.15)
    assert parse_temperature("77 degF", where="x") == pytest.approx(298.15)
    assert parse_temperature("298.15 K", where="x") == pytest.approx(298.15)


def test_trade_units():
    # MGD = 1e6 US gallons (3.785411784 L each) per day
    assert to_si("1 MGD", "m^3/day", where="x", expect="a flow") == pytest.approx(3785.411784)
    assert to_si("40000 m3/day", "m^3/s", where="x", expect="a flow") == pytest.approx(40000 / 86400)
    assert parse_salinity("35 ppt", where="x") == ("fraction", pytest.approx(0.035))
    assert parse_salinity("35 g/kg", where="x") == ("fraction", pytest.approx(0.035))
    assert parse_salinity("3.5 %", where="x") == ("fraction", pytest.approx(0.035))
    assert parse_salinity("35000 ppm", where="x") == ("fraction", pytest.approx(0.035))
    kind, c = parse_salinity("36000 mg/L", where="x")
    assert kind == "concentration" and c == pytest.approx(36.0)


def test_currencies_are_their_own_dimension():
    q = parse_quantity("0.09 USD/kWh", where="x", expect="a price")
    assert currency_of(q) == "USD"
    with pytest.raises(Exception):
        q.to("EUR/kWh")


def test_errors_name_the_expected_dimension():
    with pytest.raises(InputError, match=r'^--salinity: expected a salinity such as "35 g/kg".*got "35 m"'):
        parse_salinity("35 m", where="--salinity")
    with pytest.raises(InputError, match="expected a temperature"):
        parse_temperature("25", where="--temperature")
    with pytest.raises(InputError, match="zero or more"):
        parse_salinity("-1 g/kg", where="--salinity")
    with pytest.raises(InputError, match="unknown unit"):
        parse_quantity("3 furlongz", where="x", expect="a length")


def test_registry_survives_a_broken_definitions_cache(monkeypatch, tmp_path):
    # pint's cached definitions hold absolute paths of the installation that wrote them; a cache written by a
    # virtual environment since removed made every build fail. The folder is per installation, and a cache that
    # still fails is left aside.
    import pint

    from compare import units
    monkeypatch.setenv("DESAL_COMPARE_CACHE", str(tmp_path))
    assert units._pint_cache().startswith(str(tmp_path / "pint-"))
    real = pint.UnitRegistry
    calls = []

    def flaky(*args, cache_folder=None, **kw):
        calls.append(cache_folder)
        if cache_folder is not None:
            raise FileNotFoundError("a definitions file of a removed installation")
        return real(*args, cache_folder=None, **kw)
    monkeypatch.setattr(pint, "UnitRegistry", flaky)
    ureg = units.registry.__wrapped__()          # a fresh build; the process's own registry is left alone
    assert ureg("1 MGD").to("m^3/day").magnitude == pytest.approx(3785.411784)
    assert calls[0] is not None and calls[-1] is None
