"""Parameter sweeps on a local Dask cluster: same numbers as separate runs, failures isolated, resume."""

import os
import select
import signal
import subprocess
import sys
from pathlib import Path

import pandas as pd
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


# A polar that covers -6 to 8 deg only: a point at 20 deg is a valid case that fails while it
# runs (a section leaves the table), the others finish.
NARROW_POLAR = "alpha_deg,cl,cd\n" + "".join(f"{a},{0.1 * a + 0.2:.3f},0.01\n" for a in range(-6, 9))


@pytest.fixture
def narrow_case(tmp_path):
    (tmp_path / "narrow.csv").write_text(NARROW_POLAR)
    path = tmp_path / "narrow.toml"
    path.write_text(TINY + '[bodies.wing.airfoil]\npolar = "narrow.csv"\n')
    return path


def test_bad_value_at_any_point_stops_the_sweep_before_anything_runs(case_file, tmp_path):
    """Every point is checked as `wakes check` checks a case; every bad one is named."""
    with pytest.raises(CaseError) as info:
        sweep(case_file, {"bodies.wing.span": [4.0, -1.0, 5.0, 0.0]}, out=tmp_path / "s")
    message = str(info.value)
    assert message.startswith("2 of 4 sweep points are not valid cases; nothing was run")
    for index, span in ((1, -1.0), (3, 0.0)):
        raw = read_toml(case_file)
        raw["bodies"]["wing"]["span"] = span
        with pytest.raises(CaseError) as alone:     # the check of that case on its own
            parse_case(raw, source=str(case_file), base_dir=tmp_path)
        assert f"point {index} (bodies.wing.span={span!r}): {alone.value}" in message
    assert not (tmp_path / "s").exists()


def test_failing_point_is_reported_and_the_others_finish(narrow_case, tmp_path, client):
    table = sweep(narrow_case, {"freestream.angle_of_attack": [2, 20, 4]}, out=tmp_path / "s",
                  client=client)
    assert list(table["status"]) == ["ran", "failed", "ran"]
    assert table.loc[1, "error"].startswith("PolarRangeError") and "20 deg" in table.loc[1, "error"]
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


# ``wakes sweep`` as a user meets it: a child process, its own stdout and stderr.
def _sweep_cli(args, cwd):
    env = dict(os.environ, PYTHONUNBUFFERED="1")
    return subprocess.run([sys.executable, "-m", "wakes.cli", "sweep", *args], cwd=cwd, env=env,
                          capture_output=True, text=True)


def test_cli_exit_status_1_with_a_table_of_the_failed_points_and_no_library_lines(narrow_case, tmp_path):
    """A sweep with a failing point: status 1, which point and why on stderr, and nothing else
    there (no log line or warning of Dask or its helpers)."""
    done = _sweep_cli([str(narrow_case), "--vary", "freestream.angle_of_attack=2,20", "--out", "s",
                       "--workers", "1"], cwd=tmp_path)
    assert done.returncode == 1, done.stderr
    lines = done.stderr.splitlines()
    assert lines[0] == "wakes: 1 of 2 points failed:", done.stderr
    assert lines[1].split() == ["point", "freestream.angle_of_attack", "folder", "why"]
    assert lines[2].split()[:4] == ["1", "20", "s/0001_angle_of_attack=20", "PolarRangeError:"]
    assert len(lines) == 3, done.stderr       # our lines only
    assert "results in s/sweep.csv" in done.stdout


def test_cli_refuses_bad_values_with_status_2_and_runs_nothing(case_file, tmp_path, capsys):
    from wakes.cli import main

    assert main(["sweep", str(case_file), "--vary", "bodies.wing.span=4,-1", "--out",
                 str(tmp_path / "s")]) == 2
    err = capsys.readouterr().err
    assert err.startswith("wakes: error: 1 of 2 sweep points is not a valid case; nothing was run")
    assert "point 1 (bodies.wing.span=-1)" in err
    assert not (tmp_path / "s").exists()


# A ``wakes sweep`` child that pauses right after the main process has recorded its first
# finished point: it says so on one pipe and blocks reading another, so the test signals it at an
# event the sweep makes, never at a moment raced against its speed.
_PAUSING_SWEEP = """
import importlib, os, sys
sw = importlib.import_module("wakes.sweep")   # the module (wakes.sweep is also the function)
paused_fd, go_fd = int(sys.argv[1]), int(sys.argv[2])
_update = sw._Progress.update
def update(self, ok):
    _update(self, ok)
    os.write(paused_fd, b"p")
    os.read(go_fd, 1)
sw._Progress.update = update
from wakes.cli import main
sys.exit(main(sys.argv[3:]))
"""


def _group_members(pgid: int) -> list[int]:
    """Processes of group ``pgid`` still running (an ended process waiting to be reaped is not)."""
    members = []
    for stat in Path("/proc").glob("[0-9]*/stat"):
        try:
            fields = stat.read_text().rsplit(")", 1)[1].split()
        except OSError:   # the process ended meanwhile
            continue
        if int(fields[2]) == pgid and fields[0] not in ("Z", "X"):
            members.append(int(stat.parent.name))
    return members


def _wait_for_exit(pids) -> None:
    """Block until every process of ``pids`` has ended: its pidfd turns readable (an event, not a
    deadline; the 300 s are a hang guard only)."""
    for pid in pids:
        try:
            fd = os.pidfd_open(pid)
        except ProcessLookupError:   # already gone
            continue
        try:
            select.select([fd], [], [], 300)
        finally:
            os.close(fd)


@pytest.mark.skipif(not Path("/proc/self/stat").exists() or not hasattr(os, "pidfd_open"),
                    reason="reads process groups from /proc and waits on pidfds (Linux)")
def test_ctrl_c_stops_the_workers_and_says_what_finished(case_file, tmp_path):
    """Ctrl-C at a terminal signals the whole process group: the sweep and its workers. The
    sweep stops its workers, writes the table and names what finished; point 1 runs 20,000
    steps, so by construction it has not finished when the signal comes."""
    paused_r, paused_w = os.pipe()
    go_r, go_w = os.pipe()
    args = ["sweep", str(case_file), "--vary", "time.steps=2,20000", "--out", "s", "--workers", "1"]
    proc = subprocess.Popen([sys.executable, "-c", _PAUSING_SWEEP, str(paused_w), str(go_r), *args],
                            cwd=tmp_path, env=dict(os.environ, PYTHONUNBUFFERED="1"),
                            stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True,
                            pass_fds=(paused_w, go_r), start_new_session=True)
    os.close(paused_w)
    os.close(go_r)
    try:
        assert os.read(paused_r, 1) == b"p", proc.communicate()
        os.killpg(proc.pid, signal.SIGINT)       # as a terminal's Ctrl-C: every process of the group
        os.write(go_w, b"g")
        out, err = proc.communicate(timeout=300)  # hang guard only
    finally:
        if proc.poll() is None:
            os.killpg(proc.pid, signal.SIGKILL)
            proc.wait()
        os.close(paused_r)
        os.close(go_w)
    assert proc.returncode == 130, err
    assert err.splitlines() == [
        "wakes: sweep stopped by Ctrl-C: 1 of 2 points finished, 0 failed, 1 did not finish "
        "(points 1); the table so far is s/sweep.csv; run the same command again to go on "
        "(finished points are reused)"]
    table = pd.read_csv(tmp_path / "s" / "sweep.csv")
    assert list(table["status"]) == ["ran", "stopped"]
    assert (tmp_path / "s" / "0000_steps=2" / "point.json").is_file()
    assert not (tmp_path / "s" / "0001_steps=20000" / "point.json").exists()
    # the workers went with the sweep: wait for those still ending, then none is left
    _wait_for_exit(_group_members(proc.pid))
    assert _group_members(proc.pid) == []
