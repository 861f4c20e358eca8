"""Parameter sweeps on a local Dask cluster: same numbers as separate runs, failures isolated, resume."""

import os

import pytest
from wakes.case import parse_case, read_toml
from wakes.cluster import SCHEDULER_TIMEOUT_S
from wakes.errors import CaseError, WakesError
from wakes.run import run_case
from wakes.sweep import parse_values, parse_vary, sweep

distributed = pytest.importorskip("distributed")

TINY = """
title = "tiny sweep wing"
[freestream]
speed = 10.0
angle_of_attack = 4.0
[bodies.wing]
type = "wing"
span = 4.0
chord = 0.5
spanwise_panels = 6
[wake]
motion = "frozen"
[time]
steps = 4
"""


@pytest.fixture(scope="module")
def client():
    with distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True,
                                  dashboard_address=None) as cluster, \
            distributed.Client(cluster) as c:
        yield c


@pytest.fixture
def case_file(tmp_path):
    path = tmp_path / "tiny.toml"
    path.write_text(TINY)
    return path


def test_sweep_equals_separate_runs(case_file, tmp_path, client):
    table = sweep(case_file, {"freestream.angle_of_attack": [2, 4, 6]}, out=tmp_path / "s",
                  client=client)
    assert list(table["status"]) == ["ran"] * 3
    raw = read_toml(case_file)
    for alpha, row in zip((2, 4, 6), table.itertuples()):
        raw["freestream"]["angle_of_attack"] = alpha
        single = run_case(parse_case(raw, source=str(case_file), base_dir=tmp_path))
        ref = single.summary["bodies"]["wing"]
        assert row.CL == pytest.approx(ref["CL"], rel=1e-12)
        assert row.CDi == pytest.approx(ref["CDi"], rel=1e-12)
    assert (tmp_path / "s" / "sweep.csv").is_file() and (tmp_path / "s" / "sweep.png").is_file()


def test_failing_point_is_reported_and_the_others_finish(case_file, tmp_path, client):
    table = sweep(case_file, {"bodies.wing.span": [4.0, -1.0, 5.0]}, out=tmp_path / "s",
                  client=client)
    assert list(table["status"]) == ["ran", "failed", "ran"]
    assert "span" in table.loc[1, "error"]
    assert table.loc[[0, 2], "CL"].notna().all()


def test_interrupted_sweep_resumes_without_rerunning(case_file, tmp_path, client):
    out = tmp_path / "s"
    sweep(case_file, {"freestream.angle_of_attack": [2, 4]}, out=out, client=client)
    # a stamp no rewrite can carry: a reused point's summary keeps it (no wait on the clock)
    stamps = {}
    for p in out.glob("*/summary.json"):
        os.utime(p, ns=(1_000_000_000, 1_000_000_000))
        stamps[p] = p.stat().st_mtime_ns
    # a killed point: its folder lacks the point record, so it runs again
    unfinished = sorted(out.glob("0001_*"))[0] / "point.json"
    unfinished.unlink()
    table = sweep(case_file, {"freestream.angle_of_attack": [2, 4, 6]}, out=out, client=client)
    assert list(table["status"]) == ["reused", "ran", "ran"]
    first = sorted(out.glob("0000_*"))[0] / "summary.json"
    assert first.stat().st_mtime_ns == stamps[first]


def test_unknown_key_is_refused_before_running(case_file, tmp_path):
    with pytest.raises(CaseError, match="did you mean 'angle_of_attack'"):
        sweep(case_file, {"freestream.angle_of_atack": [1, 2]}, out=tmp_path / "s")
    with pytest.raises(CaseError, match="names no body 'wnig'.*did you mean 'wing'"):
        sweep(case_file, {"bodies.wnig.span": [1, 2]}, out=tmp_path / "s")
    assert not (tmp_path / "s").exists()


def test_unreachable_scheduler_fails_fast(case_file, tmp_path):
    """Fast by construction: the client waits SCHEDULER_TIMEOUT_S, and the message says so."""
    with pytest.raises(WakesError, match=f"no Dask scheduler answered within {SCHEDULER_TIMEOUT_S:.0f} s"):
        sweep(case_file, {"freestream.angle_of_attack": [1]}, out=tmp_path / "s",
              scheduler="tcp://127.0.0.1:9")


def test_value_syntax():
    assert parse_values("4:14:2") == [4, 6, 8, 10, 12, 14]
    assert parse_values("0:1:0.25") == [0.0, 0.25, 0.5, 0.75, 1.0]
    assert parse_values("4,6.5") == [4.0, 6.5]
    assert parse_values("filaments,particles") == ["filaments", "particles"]
    assert parse_vary("bodies.rotor.collective=4,6") == ("bodies.rotor.collective", [4, 6])
    for bad in ("", "1:2", "4:1:1", "1,,2", "1:5:0"):
        with pytest.raises(WakesError):
            parse_values(bad)
    with pytest.raises(WakesError, match="KEY=VALUES"):
        parse_vary("collective")
