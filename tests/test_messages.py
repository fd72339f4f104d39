"""What a user reads: error lines that say what to write instead, tables that keep keys whole, shares that do not
round a near-certainty up to a certainty."""

from pathlib import Path

import pytest

from compare.cli import main
from compare.present.fields import share_pct

ROOT = Path(__file__).resolve().parents[1]
GULL = str(ROOT / "scenarios" / "gull-harbour.toml")
BASE = 'name = "Messages (fictional)"\n[site]\ncapacity = "1000 m^3/day"\n[feed]\ntemperature = "25 degC"\n'


def one_line(capsys, *argv) -> str:
    assert main(list(argv)) == 2
    err = capsys.readouterr().err
    assert len(err.splitlines()) == 1, err
    return err


@pytest.mark.parametrize("text,says", [
    (BASE + 'salinty = "35 g/kg"\n', "did you mean 'salinity'?"),                 # the typo, not also "required"
    (BASE + 'salinity = "35 g/kg"\n[reverse_osmosis]\nrecovery = 0.4\n', "the sections are [site]"),
    (BASE.replace('"25 degC"', '"25 C"') + 'salinity = "35 g/kg"\n', 'write "degC" for Celsius'),
    (BASE.replace('"1000 m^3/day"', '"-1000 m^3/day"') + 'salinity = "35 g/kg"\n', "it must be above zero"),
])
def test_an_error_says_what_to_write_instead(tmp_path, capsys, text, says):
    path = tmp_path / "s.toml"
    path.write_text(text, encoding="utf-8")
    assert says in one_line(capsys, "check", str(path))


def test_strict_says_refused_not_extrapolated(capsys):
    err = one_line(capsys, "compare", GULL, "--no-save", "--strict", "--set", "feed.salinity=130 g/kg")
    assert "refused (--strict)" in err and "extrapolated" not in err


def test_check_keeps_every_key_whole_on_a_narrow_terminal(capsys, monkeypatch):
    monkeypatch.setenv("COLUMNS", "80")
    assert main(["check", GULL]) == 0
    out = capsys.readouterr().out
    assert max(len(line) for line in out.splitlines()) <= 80                 # the premise: a narrow table
    keys = [line.split("│")[1].strip() for line in out.splitlines() if line.startswith("│")]
    joined = "".join(keys)
    assert "…" not in joined
    assert "brine.evaporation_pond_capital" in joined.replace(" ", "")     # folded onto two lines, not cut


@pytest.mark.parametrize("x,shown", [(1.0, "100 %"), (0.998, "99.8 %"), (0.9999, "99.9 %"), (0.0019, "0.2 %"),
                                     (0.0, "0 %"), (0.0001, "0.1 %"), (0.5, "50 %")])
def test_shares_never_round_to_certainty(x, shown):
    assert share_pct(x) == shown
    assert share_pct(x, sign=False) == shown[:-2]          # a table cell under a "[%]" label: the number alone
