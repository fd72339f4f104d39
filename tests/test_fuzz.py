"""Generated broken scenario files and options: whatever is broken, and however many keys at once, the tool answers
with exit status 2, one printable line per problem naming the file and the key, no traceback, and writes nothing,
in every command that reads a scenario (check, compare, sweep, report, claim).

Each generated file starts from a valid scenario and breaks k distinct keys in ways that are wrong by construction
(an unknown key, a non-finite number, a unit of a dimension no key has, a value beyond a key's bounds, a control
character or comment sign inside a value, a list or table where a single value belongs, a choice or flag that is not
one), or breaks the TOML itself. Bounded: a fixed number of examples, no deadline per example.
"""

import json
import os
import string
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from compare.cli import main
from compare.scenario import sections

BASE = {
    "name": "Fuzz Reef (fictional)",
    "site": {"capacity": "25000 m^3/day"},
    "feed": {"salinity": "35 g/kg", "temperature": "24 degC"},
}

#: every scalar key a file can break: (section, key, Spec)
KEYS = [(sec, key, spec) for sec, specs in sections().items() for key, spec in specs.items()
        if spec.kind not in ("table", "temperatures") and not (sec == "feed" and key in ("ions", "water", "model"))]


def _toml_value(v) -> str:
    if isinstance(v, str):
        return json.dumps(v)                       # a TOML basic string (JSON's escapes are TOML's)
    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, float) and v != v:
        return "nan"
    if isinstance(v, float) and v in (float("inf"), float("-inf")):
        return "inf" if v > 0 else "-inf"
    if isinstance(v, list):
        return "[" + ", ".join(_toml_value(x) for x in v) + "]"
    if isinstance(v, dict):
        return "{ " + ", ".join(f"{k} = {_toml_value(x)}" for k, x in v.items()) + " }"
    return repr(v)


def to_toml(data: dict) -> str:
    """A small TOML writer for the generated files: top-level scalars, sections, and dotted keys as sub-tables."""
    lines = [f"{k} = {_toml_value(v)}" for k, v in data.items() if not isinstance(v, dict)]
    for sec, body in data.items():
        if not isinstance(body, dict):
            continue
        subs: dict = {}
        lines.append(f"[{sec}]")
        for key, v in body.items():
            if "." in key:
                head, tail = key.split(".", 1)
                subs.setdefault(head, {})[tail] = v
            else:
                lines.append(f"{key} = {_toml_value(v)}")
        for head, body2 in subs.items():
            lines.append(f"[{sec}.{head}]")
            lines += [f"{k} = {_toml_value(v)}" for k, v in body2.items()]
    return "\n".join(lines) + "\n"


def _default_text(spec) -> str:
    d = spec.default
    return d if isinstance(d, str) and any(ch.isdigit() for ch in d) else "1"


@st.composite
def breakage(draw, spec):
    """A value for ``spec`` that is wrong by construction."""
    kinds = ["nonfinite", "list", "table"]
    if spec.kind in ("quantity", "money", "salinity", "temperature", "nacl_concentration"):
        kinds += ["dimension", "inject"]
    if spec.kind in ("quantity", "fraction", "money", "count") and (spec.lo is not None or spec.hi is not None):
        kinds.append("bounds")
    if spec.kind == "choice":
        kinds = ["choice", "list"]
    if spec.kind == "flag":
        kinds = ["flag", "list"]
    how = draw(st.sampled_from(kinds))
    if how == "nonfinite":
        return draw(st.sampled_from([float("nan"), float("inf"), float("-inf"), "nan", "inf kg", "-inf"]))
    if how == "list":
        return [1, 2]
    if how == "table":
        return {"a": 1}
    if how == "dimension":
        return draw(st.sampled_from(["5 candela", "2 cd/m^2", "7 lumen", "3 mol/candela"]))
    if how == "inject":
        text = _default_text(spec)
        at = draw(st.integers(0, len(text)))
        junk = draw(st.sampled_from(["\x1b[2J", "\n", "#", "\x07", "\u202e", "\r", "\x00"]))
        return text[:at] + junk + text[at:]
    if how == "bounds":
        unit = "" if spec.kind in ("fraction", "count") else f" {spec.unit or ''}"
        if spec.kind == "money":
            unit = f" USD/{spec.unit}" if spec.unit else " USD"
            if spec.unit and ("/" in spec.unit or "*" in spec.unit):
                unit = f" USD/({spec.unit})"
        if spec.lo is not None:
            value = spec.lo - draw(st.floats(1.0, 1e3)) - abs(spec.lo)
        else:
            value = spec.hi + draw(st.floats(1.0, 1e3)) + abs(spec.hi)
        if spec.kind == "count":
            return str(int(value) - 1)
        return f"{value:.6g}{unit}".strip() if unit.strip() else f"{value:.6g}"
    if how == "choice":
        return draw(st.sampled_from(["zz-none", "RO!", "", "maybe"]))
    return draw(st.sampled_from(["maybe", "yes please", 2]))


@st.composite
def broken_file(draw):
    """(TOML text, the keys broken): k distinct keys, each broken once, or the TOML broken (no keys)."""
    if draw(st.integers(0, 9)) == 0:
        lines = to_toml(BASE).splitlines(keepends=True)
        at = draw(st.integers(0, len(lines)))       # at the start of a line, so the junk cannot hide in a string
        junk = draw(st.sampled_from(["= = [\n", "[[\n", "\"unterminated\n", "x y z\n", "]]]\n", "[site]\n"]))
        return "".join(lines[:at]) + junk + "".join(lines[at:]), []
    data = json.loads(json.dumps(BASE))
    picks = draw(st.lists(st.sampled_from(range(len(KEYS) + 1)), min_size=1, max_size=3, unique=True))
    broken = []
    for i in picks:
        if i == len(KEYS):                        # an unknown key in a known section
            sec = draw(st.sampled_from(sorted(sections())))
            key = "zz" + draw(st.text(string.ascii_lowercase, min_size=1, max_size=6))
            data.setdefault(sec, {})[key] = "1"
            broken.append(f"{sec}.{key}")
            continue
        sec, key, spec = KEYS[i]
        data.setdefault(sec, {})[key] = draw(breakage(spec))
        broken.append(f"{sec}.{key}")
    return to_toml(data), broken


def _alone(tmp_path, monkeypatch, text: str) -> Path:
    """An emptied working folder (hypothesis reuses the test's tmp_path) holding only s.toml with ``text``."""
    work = tmp_path / "w"
    work.mkdir(exist_ok=True)
    monkeypatch.chdir(work)
    for p in work.iterdir():
        p.unlink()
    Path("s.toml").write_text(text, encoding="utf-8")
    return work


def _clean_lines(err: str, label: str) -> list:
    lines = err.splitlines()
    assert lines, "no error line"
    for line in lines:
        assert line.startswith(f"error: {label}") or line.startswith("error: ("), line
        assert line.isprintable(), line
    assert "Traceback" not in err
    return lines


#: examples per run (more by hand: DESAL_FUZZ_EXAMPLES=600)
EXAMPLES = int(os.environ.get("DESAL_FUZZ_EXAMPLES", 60))


@settings(max_examples=EXAMPLES, deadline=None,
          suppress_health_check=[HealthCheck.function_scoped_fixture, HealthCheck.too_slow])
@given(case=broken_file())
def test_broken_files_are_one_line_per_problem_and_write_nothing(tmp_path, capsys, monkeypatch, case):
    text, broken = case
    work = _alone(tmp_path, monkeypatch, text)
    for argv in (["check", "s.toml"], ["compare", "s.toml", "--out", "runs"],
                 ["sweep", "s.toml", "--vary", "ro.flux=10 L/m^2/h,12 L/m^2/h", "--out", "runs", "--quiet"],
                 ["report", "s.toml", "--out", "runs"],
                 ["claim", "s.toml", "--technology", "ro", "--electricity", "3 kWh/m^3"]):
        code = main(argv)
        out, err = capsys.readouterr()
        assert code == 2, (argv, text, err)
        assert out == ""
        lines = _clean_lines(err, "s.toml")
        if broken:
            assert len(lines) == len(broken), (text, err)
            for key in broken:
                assert any(key in line or key.split(".", 1)[1].split(".")[-1] in line for line in lines), (key, err)
        else:
            assert len(lines) == 1, err
    assert sorted(p.name for p in work.iterdir()) == ["s.toml"]          # nothing written


VALID = to_toml({**BASE, "uncertainty": {"ro.recovery": {"low": "0.4", "high": "0.5"}}})

#: options that are wrong by construction, with a generator of their bad values
BAD_OPTIONS = {
    "--samples": st.sampled_from(["0", "-5", "1.5", "abc", "1e400", "nan", "", "9" * 40]),
    "--seed": st.sampled_from(["-1", "x", str(2 ** 70), "1.5", "nan"]),
    "--workers": st.sampled_from(["0", "-2", "two", "1e9"]),
    "--chunk": st.sampled_from(["0", "-1", "many", "inf"]),
    "--vary": st.one_of(
        st.builds(lambda k, v: f"zz{k}={v}", st.text(string.ascii_lowercase, min_size=1, max_size=5),
                  st.sampled_from(["1:2:3", "1,2", "x"])),
        st.sampled_from(["feed.salinity", "feed.salinity=", "feed.salinity=1:2", "feed.salinity=a:b:3",
                         "feed.salinity=30 g/kg:40 g/kg:0", "feed.salinity=30 g/kg:40 g/kg:-2",
                         "feed.salinity=30 g/kg:40 g/kg:1e12", "ro.recovery=0.4:0.5:3:cubic",
                         "feed.salinity=nan g/kg,35 g/kg", "feed.salinity=35 g/kg\x1b[2J,36 g/kg"])),
    "--set": st.one_of(
        st.builds(lambda k: f"ro.zz{k}=1", st.text(string.ascii_lowercase, min_size=1, max_size=5)),
        st.sampled_from(["ro.recovery", "=1", "ro.recovery=nan", "ro.recovery=1.5", "feed.salinity=35 g/kg#x",
                         "zz.key=1", "ro.recovery=0.4\nerror: forged"])),
}


@settings(max_examples=max(EXAMPLES * 2 // 3, 1), deadline=None,
          suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(option=st.sampled_from(sorted(BAD_OPTIONS)), data=st.data())
def test_broken_options_are_one_line_and_write_nothing(tmp_path, capsys, monkeypatch, option, data):
    value = data.draw(BAD_OPTIONS[option])
    work = _alone(tmp_path, monkeypatch, VALID)
    argv = ["sweep", "s.toml", "--out", "runs", "--quiet", option, value]
    if option in ("--seed", "--workers", "--chunk"):
        argv += ["--samples", "8"]
    with pytest.raises(SystemExit) as exc:
        code = main(argv)
        raise SystemExit(code)
    out, err = capsys.readouterr()
    assert exc.value.code == 2, (argv, err)
    lines = err.splitlines()
    assert len(lines) == 1 and "Traceback" not in err, err
    assert lines[-1].startswith(("error: ", "desal sweep: error: ")) and lines[-1].isprintable(), err
    assert sorted(p.name for p in work.iterdir()) == ["s.toml"]
