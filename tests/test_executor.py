"""Sweeps that scale out: the same summary and cases whatever the chunk size, in worker processes (--workers) and on
a Dask cluster (--scheduler); cases drawn per chunk from their own position of one seeded stream."""

import json
from pathlib import Path

import numpy as np
import pytest

from compare import sweep as sw
from compare.cli import main
from compare.scenario import load

SCENARIO = Path(__file__).resolve().parent.parent / "scenarios" / "gull-harbour.toml"
# FO costs about a second per call whatever the chunk, so the executor tests run RO and MED only
ONE_TEMPERATURE = ["--set", "feed.temperature=28 degC", "--set", "fo.enabled=false"]


def _scenario():
    return load(SCENARIO, ["feed.temperature=28 degC"])


@pytest.mark.parametrize("lhs", [False, True])
def test_a_chunk_draws_the_rows_of_its_position(lhs):
    # identity: any cut of the cases draws the same values as one draw of them all
    plan = sw.sampler(_scenario(), 1000, seed=11, lhs=lhs)
    whole = plan.draw(0, 1000)
    for a, b in [(0, 1), (1, 8), (8, 333), (333, 1000)]:
        part = plan.draw(a, b)
        for k in whole:
            np.testing.assert_array_equal(part[k], whole[k][a:b])
    if lhs:   # every stratum of every key holds exactly one case
        u = (sw._strata(plan.entropy, 1000, len(plan.keys)) + sw._uniforms(plan.entropy, 0, 1000, len(plan.keys)))
        assert np.array_equal(np.sort(np.floor(u).astype(int), axis=0), np.tile(np.arange(1000)[:, None],
                                                                              (1, len(plan.keys))))


def test_plain_samples_are_the_seeded_generators_stream():
    # identity: row i of the uniforms is what numpy's seeded generator gives in order
    u = sw._uniforms(5, 40, 60, 3)
    np.testing.assert_array_equal(u, np.random.default_rng(5).random((60, 3))[40:])


def test_results_do_not_change_with_chunk():
    s = _scenario()
    plan = sw.sampler(s, 60, seed=3)
    a = sw.run(s, plan, mode="samples", chunk=23)
    b = sw.run(s, plan, mode="samples", chunk=60)
    assert sorted(a.technologies) == ["fo", "med", "ro"]
    for t in a.technologies:
        np.testing.assert_array_equal(a.feasible[t], b.feasible[t])
        for m in sw.METRICS:
            np.testing.assert_allclose(a.metrics[t][m], b.metrics[t][m], rtol=1e-12, equal_nan=True)
    assert sw.payload(a)["flags"] == sw.payload(b)["flags"]


def _sweep(tmp_path, name, *extra):
    out = tmp_path / name
    args = ["sweep", str(SCENARIO), *ONE_TEMPERATURE, "--samples", "120", "--seed", "9", "--chunk", "40",
            "--format", "json", "--out", str(out), "--quiet", *extra]
    return args, out


def _compare_runs(capsys, serial_args, serial_out, other_args, other_out):
    import pandas as pd
    assert main(serial_args) == 0
    one = json.loads(capsys.readouterr().out)
    assert main(other_args) == 0
    two = json.loads(capsys.readouterr().out)
    assert one["cases"] == two["cases"] == 120
    assert json.dumps(one["ranking"]) == json.dumps(two["ranking"])
    assert one["flags"] == two["flags"] and one["warnings"] == two["warnings"]
    for r1, r2 in zip(one["summary"], two["summary"], strict=True):
        assert (r1["technology"], r1["metric"], r1["n"]) == (r2["technology"], r2["metric"], r2["n"])
        for k in ("p10", "p50", "p90", "mean"):
            assert r1[k] == pytest.approx(r2[k], rel=1e-12, abs=0) or r1[k] is r2[k] is None
    a = pd.read_parquet(next(serial_out.iterdir()) / "cases")
    b = pd.read_parquet(next(other_out.iterdir()) / "cases")
    assert list(a.columns) == list(b.columns) and len(a) == len(b) == 240
    pd.testing.assert_frame_equal(a, b, rtol=1e-12, atol=0)


def test_worker_processes_give_the_serial_summary_and_cases(tmp_path, capsys):
    serial, serial_out = _sweep(tmp_path, "serial")
    pool, pool_out = _sweep(tmp_path, "pool", "--workers", "2")
    _compare_runs(capsys, serial, serial_out, pool, pool_out)


def test_a_dask_cluster_gives_the_serial_summary_and_cases(tmp_path, capsys):
    distributed = pytest.importorskip("distributed", reason="optional extra 'dask' missing")
    serial, serial_out = _sweep(tmp_path, "serial")
    with distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True, dashboard_address=None,
                                  silence_logs=50) as cluster:
        remote, remote_out = _sweep(tmp_path, "dask", "--scheduler", cluster.scheduler_address)
        _compare_runs(capsys, serial, serial_out, remote, remote_out)


def test_a_spawned_worker_finds_a_technology_the_parent_registered(toy):
    # a fresh interpreter starts with an empty registry; the task carries the test technology by reference
    from compare import executor as ex
    from tests.test_sweep import UNCERTAIN, scenario
    s = scenario(uncertainty=UNCERTAIN)
    plan = sw.sampler(s, 40, seed=2)
    pool = ex.Pool(1)
    try:
        a = sw.run(s, plan, mode="samples", chunk=15, executor=pool)
    finally:
        pool.close()
    b = sw.run(s, plan, mode="samples", chunk=40)
    np.testing.assert_allclose(a.metrics["toy"]["lcow"], b.metrics["toy"]["lcow"], rtol=1e-12)


def test_bad_executor_options_one_line_exit_2(tmp_path, capsys):
    args, out = _sweep(tmp_path, "bad")
    assert main([*args, "--workers", "0"]) == 2
    assert main([*args, "--workers", "2", "--scheduler", "tcp://127.0.0.1:1"]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 2 and "--workers" in err[0] and "--scheduler" in err[1]
    assert not out.exists() or not any(out.iterdir())
