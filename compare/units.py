"""The one pint registry and the parsing helpers used at the edges (scenario loading, CLI options, presenters).

Inside the models everything is SI floats or numpy arrays; pint never reaches ``thermo/`` or ``tech/``.

Units of the trade defined here:

* currencies are base dimensions of their own (``USD``, ``EUR`` ...), so a price in one currency can never be converted
  silently into another;
* ``MGD``: US million gallons per day; ``m3``: cubic metre; ``ppt``: parts per thousand (pint's own ``ppt`` is parts per
  trillion, which no water engineer means); ``kWh_th`` is an alias of ``kWh`` used to label heat.
"""

from __future__ import annotations

import functools
import math
import re
import sys
from pathlib import Path

from .errors import InputError


def _import_pint():
    """pint, imported without its optional dask support: pint imports dask (about 0.1 s) whenever it is installed,
    to recognise dask arrays, which this tool never gives it. A ``None`` entry in ``sys.modules`` makes dask look
    absent while pint is imported and is removed afterwards, so ``--scheduler`` imports dask as usual."""
    if "dask" in sys.modules:
        import pint
        return pint
    sys.modules["dask"] = None
    try:
        import pint
    finally:
        if sys.modules.get("dask", 0) is None:
            del sys.modules["dask"]
    return pint


pint = _import_pint()

CURRENCIES = ("USD", "EUR", "GBP", "JPY", "CNY", "INR", "AUD", "CAD", "CHF", "ZAR", "SAR", "AED", "BRL", "MXN", "CLP")

_NUMBER = re.compile(r"^\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*(.*?)\s*$")

#: limits on a quantity as written, checked before pint sees it (pint evaluates its unit expressions: a chained
#: power such as ``9**9**9**9`` would run for ever)
MAX_TEXT = 120              # characters
MAX_NESTING = 4             # depth of parentheses in the unit
MAX_EXPONENT = 12           # largest power of a unit, |n|
_UNIT_CHARS = re.compile(r"^[A-Za-z_\u00b5\u03bc\u00b0\u03a9 0-9.*/^()%+-]*$")
_POWER = re.compile(r"(\*\*|\^)\s*([-+]?\s*(?:\d+\.?\d*|\.\d+))\s*(\*\*|\^)?")
_DIGITS = re.compile(r"\d[\d.eE+-]*")


def _pint_cache() -> str | None:
    """pint's cache of parsed definitions: a sub-folder of the cache folder per pint installation (its version and
    location), because pint's cached entries hold the absolute paths of its definition files, so that an entry
    written by another installation (another virtual environment, since removed) is never read."""
    from .cache import folder
    where = folder()
    if where is None:
        return None
    import hashlib
    tag = f"{pint.__version__}:{Path(pint.__file__).resolve().parent}"
    return str(where / f"pint-{hashlib.sha256(tag.encode()).hexdigest()[:16]}")


@functools.lru_cache(maxsize=1)
def registry() -> pint.UnitRegistry:
    """The project's unit registry (built once; pint keeps its parsed definitions in the cache folder, which makes
    later builds about ten times faster; an unreadable cache only costs time)."""
    options = dict(autoconvert_offset_to_baseunit=True, on_redefinition="ignore")
    try:
        ureg = pint.UnitRegistry(cache_folder=_pint_cache(), **options)
    except Exception:                                  # noqa: BLE001 - a stale or broken cache: parse afresh
        ureg = pint.UnitRegistry(cache_folder=None, **options)
    for code in CURRENCIES:
        ureg.define(f"{code} = [currency_{code}]")
    ureg.define("MGD = 1e6 * gallon / day")
    ureg.define("m3 = meter ** 3")
    ureg.define("kWh_th = kilowatt_hour")
    ureg.define("MWh_th = megawatt_hour")
    ureg.define("ppt = 1e-3 = parts_per_thousand")
    ureg.define("ppm = 1e-6 = parts_per_million")
    ureg.define("tCO2 = metric_ton")
    ureg.define("kgCO2 = kilogram")
    ureg.define("gCO2 = gram")
    return ureg


def unit_problem(unit: str) -> str | None:
    """Why a unit expression is refused before pint sees it (None when it is acceptable): characters outside
    letters, digits, spaces and ``. * / ^ ( ) % + -``; unbalanced or deeper than :data:`MAX_NESTING` parentheses; a
    power that is not a plain number of at most :data:`MAX_EXPONENT`, or a chained power.

    Examples
    --------
    >>> unit_problem("USD/(m^3/day)") is None
    True
    >>> unit_problem("9**9**9**9 m^3/day")
    'a chained power'
    """
    if not _UNIT_CHARS.match(unit):
        bad = next(c for c in unit if not _UNIT_CHARS.match(c))
        return f"the character {bad!r} in a unit"
    depth = 0
    for c in unit:
        depth += (c == "(") - (c == ")")
        if depth < 0:
            return "a closing parenthesis without its opening one"
        if depth > MAX_NESTING:
            return f"parentheses nested deeper than {MAX_NESTING}"
    if depth:
        return "an opening parenthesis without its closing one"
    for m in _POWER.finditer(unit):
        if m.group(3):
            return "a chained power"
        if abs(float(m.group(2).replace(" ", ""))) > MAX_EXPONENT:
            return f"a power above {MAX_EXPONENT}"
    if re.search(r"(\*\*|\^)\s*(?![-+]?\s*[\d.])", unit):
        return "a power that is not a plain number"
    if any(len(d) > 15 for d in _DIGITS.findall(unit)):
        return "a number of more than 15 characters in a unit"
    return None


def text_problem(text: str) -> str | None:
    """Why a value's text is refused whatever its kind (None when acceptable): control or format characters (escape
    sequences, line breaks, direction overrides) anywhere; for quantities see :func:`parse_quantity`."""
    import unicodedata
    for c in text:
        if unicodedata.category(c) in ("Cc", "Cf", "Zl", "Zp"):
            return f"a control character ({c!r})"
    return None


def parse_quantity(text, *, where: str, expect: str, dimension: str | None = None) -> pint.Quantity:
    """Parse ``"25 degC"``, ``"40000 m^3/day"`` or a bare number into a pint Quantity.

    Parameters
    ----------
    text : str or float
        The value as written by the user.
    where : str
        What names the value in an error message (``"--salinity"`` or ``"scenarios/x.toml: feed.salinity"``).
    expect : str
        What the value should look like, for the error message (``'a temperature such as "25 degC"'``).
    dimension : str, optional
        A pint dimensionality string such as ``"[temperature]"`` the value must have.
    """
    ureg = registry()
    if isinstance(text, bool):
        raise InputError(f"{where}: expected {expect}, got {text!r}")
    if isinstance(text, (int, float)):
        try:
            number = float(text)
        except OverflowError:
            number = math.inf
        if not math.isfinite(number):
            raise InputError(f"{where}: expected {expect} (a finite number), got {text!r}")
        q = ureg.Quantity(number, "")
    elif isinstance(text, str):
        if len(text) > MAX_TEXT:
            raise InputError(f'{where}: expected {expect}, got a text of {len(text)} characters (at most '
                             f'{MAX_TEXT})')
        problem = text_problem(text) or ("a comment sign (#)" if "#" in text else None)
        if problem:
            raise InputError(f'{where}: expected {expect}, got "{text}" ({problem})')
        m = _NUMBER.match(text)
        if not m:
            raise InputError(f'{where}: expected {expect}, got "{text}"')
        number, unit = m.group(1), m.group(2)
        if not math.isfinite(float(number)):
            raise InputError(f'{where}: expected {expect} (a finite number), got "{text}"')
        if unit == "%":
            unit = "percent"
        problem = unit_problem(unit)
        if problem:
            raise InputError(f'{where}: expected {expect}, got "{text}" ({problem})')
        try:
            q = ureg.Quantity(float(number), unit or "")
        except ZeroDivisionError:
            raise InputError(f'{where}: expected {expect}, got "{text}" (a division by zero)') from None
        except Exception as exc:        # noqa: BLE001 - any failure of pint's parser is bad input
            detail = str(exc).splitlines()[0][:80] if str(exc) else type(exc).__name__
            raise InputError(f'{where}: expected {expect}, got "{text}" (unknown unit: {detail})') from None
        if not math.isfinite(float(q.magnitude)):
            raise InputError(f'{where}: expected {expect} (a finite number), got "{text}"')
    else:
        raise InputError(f"{where}: expected {expect}, got {_shown(text)}")
    if dimension is not None and q.dimensionality != ureg.get_dimensionality(dimension):
        raise InputError(f'{where}: expected {expect}, got "{text}" ({_mismatch(q, dimension)})')
    return q


def _mismatch(q, wanted: str) -> str:
    """Why a quantity does not fit, in words: its unit as read and, for the usual slips, what to write instead."""
    read = str(q.units) or "no unit"
    hint = ""
    if "kelvin" in wanted or "temperature" in wanted:
        if read in ("coulomb", "farad", "fahrenheit", "celsius") or read.startswith("coulomb"):
            hint = '; write "degC" for Celsius or "degF" for Fahrenheit'
    return f"its unit reads as {read}, which does not convert to {wanted}{hint}"


def _shown(value) -> str:
    """A value of an unexpected type, shortened for an error line."""
    text = repr(value)
    return text if len(text) <= 80 else text[:77] + "..."


def to_si(text, unit: str, *, where: str, expect: str) -> float:
    """Parse and convert to ``unit`` (a unit of the wanted dimension), returning a float."""
    ureg = registry()
    q = parse_quantity(text, where=where, expect=expect)
    target = ureg.Unit(unit)
    if q.dimensionality != target.dimensionality:
        raise InputError(f'{where}: expected {expect}, got "{text}" ({_mismatch(q, unit)})')
    v = float(q.to(target).magnitude)
    if not math.isfinite(v):
        raise InputError(f'{where}: expected {expect} (a finite number), got "{text}"')
    return v


def parse_temperature(text, *, where: str) -> float:
    """Temperature [K] from ``"25 degC"``, ``"77 degF"`` or ``"298.15 K"``; a bare number is refused."""
    expect = 'a temperature such as "25 degC" or "77 degF"'
    if isinstance(text, (int, float)) and not isinstance(text, bool):
        raise InputError(f"{where}: expected {expect}, got {text!r} (give the unit)")
    return to_si(text, "kelvin", where=where, expect=expect)


SALINITY_EXPECT = 'a salinity such as "35 g/kg", "3.5 %" or "36000 mg/L"'


def parse_salinity(text, *, where: str) -> tuple[str, float]:
    """Salinity as ``("fraction", kg/kg)`` or ``("concentration", kg/m^3)``.

    A mass concentration (``mg/L``) needs the solution density to become a mass fraction; the caller converts it with
    :func:`compare.thermo.brine.mass_fraction_from_concentration`. Negative values are refused here.
    """
    ureg = registry()
    if isinstance(text, (int, float)) and not isinstance(text, bool):
        raise InputError(f"{where}: expected {SALINITY_EXPECT}, got {text!r} (give the unit)")
    q = parse_quantity(text, where=where, expect=SALINITY_EXPECT)
    if q.dimensionality == ureg.get_dimensionality("[mass]/[length]**3"):
        kind, value = "concentration", float(q.to("kg/m^3").magnitude)
    elif q.dimensionless and str(q.units) != "dimensionless":
        kind, value = "fraction", float(q.to("").magnitude)
    else:
        raise InputError(f'{where}: expected {SALINITY_EXPECT}, got "{text}"')
    if value < 0:
        raise InputError(f'{where}: expected a salinity of zero or more, got "{text}"')
    return kind, value


def currency_of(q: pint.Quantity) -> str | None:
    """The currency code a quantity carries (``"USD"``), or None."""
    for dim in q.dimensionality:
        if dim.startswith("[currency_"):
            return dim[len("[currency_"):-1]
    return None
