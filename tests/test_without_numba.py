"""The tool without numba: where it is missing or cannot load, the numpy models serve and every figure of a
comparison matches the compiled run's to the solvers' tolerances."""

import json
import os
import subprocess
import sys

import pytest

ROOT = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))


def _compare(block_numba: bool) -> dict:
    # a fresh interpreter; ``sys.modules["numba"] = None`` makes every ``import numba`` raise ImportError
    code = ("import sys\n" + ("sys.modules['numba'] = None\n" if block_numba else "") +
            "from compare.cli import main\n"
            "rc = main(['compare', 'scenarios/saltbush-flat.toml', '--no-save', '--format', 'json'])\n"
            "print('NUMBA', 'numba' in sys.modules and sys.modules['numba'] is not None, file=sys.stderr)\n"
            "sys.exit(rc)\n")
    run = subprocess.run([sys.executable, "-c", code], cwd=ROOT, capture_output=True, text=True, timeout=300)
    assert run.returncode == 0, run.stderr[-2000:]
    assert run.stderr.strip().splitlines()[-1] == f"NUMBA {not block_numba}"
    return json.loads(run.stdout)


def _numbers(tree, path=""):
    """Every number of a JSON tree by its path (texts and flags compared as they are)."""
    if isinstance(tree, dict):
        for key, value in tree.items():
            yield from _numbers(value, f"{path}/{key}")
    elif isinstance(tree, list):
        for i, value in enumerate(tree):
            yield from _numbers(value, f"{path}/{i}")
    else:
        yield path, tree


def test_comparison_without_numba_matches_the_compiled_one():
    pytest.importorskip("numba", reason="numba not installed: the compiled run cannot be made")
    # a brackish site (RO at its scaling limit, MED, FO with its regenerator): every march of the three
    compiled, plain = _compare(False), _compare(True)
    a, b = dict(_numbers(compiled)), dict(_numbers(plain))
    assert a.keys() == b.keys()
    assert any(k.endswith("/electricity_kwh_per_m3") for k in a)
    for key, value in a.items():
        if isinstance(value, float) and not isinstance(value, bool):
            assert value == pytest.approx(b[key], rel=1e-8, abs=1e-12), key
        else:
            assert value == b[key], key
