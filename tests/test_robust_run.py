"""Runs that never lose work: checkpoints, bit-exact resume, watchdog stops, signals, kills."""

import json
import os
import signal
import subprocess
import sys
import time
import xml.etree.ElementTree as ET
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
import wakes.watchdog as watchdog
from wakes.case import parse_case
from wakes.errors import UnstableRunError
from wakes.io.checkpoint import list_checkpoints, newest_checkpoint, prepare_resume, read_checkpoint
from wakes.run import run_case, run_guarded
from wakes.watchdog import EXIT_UNSTABLE, RunControl

TINY = """title = "tiny"
[freestream]
speed = 10.0
angle_of_attack = 5.0
[bodies.wing]
type = "wing"
model = "lifting-line"
span = 6.0
chord = 1.0
spanwise_panels = 6
[wake]
model = "particles"
near_wake_steps = 3
[time]
dt = 0.025
steps = {steps}
[output]
checkpoint_every = {every}
"""


def _case(steps=12, every=0):
    import tomllib
    return parse_case(tomllib.loads(TINY.format(steps=steps, every=every)))


def _write(run, out):
    run.write(out)


def test_interrupt_and_resume_equal_an_uninterrupted_run_bit_for_bit(tmp_path):
    case = _case(steps=12, every=5)
    full = run_case(case)
    control = RunControl(checkpoint_every=5, keep_partial=True,
                         save=lambda st: __import__("wakes.io.checkpoint", fromlist=["x"])
                         .write_checkpoint(tmp_path, st, case.to_toml(), case.source))

    def stop_at_7(step, steps):
        if step == 7:
            control.stop_signal = signal.SIGINT

    part = run_case(case, control=control, progress=stop_at_7)
    assert part.status == "interrupted" and len(part.loads) == 7
    assert [p.name for p in list_checkpoints(tmp_path)] == ["step-0000005.npz", "step-0000007.npz"]
    resumed_case, state = prepare_resume(tmp_path)
    assert state.step == 7
    resumed = run_case(resumed_case, resume=state)
    pd.testing.assert_frame_equal(full.loads, resumed.loads, check_exact=True)
    pd.testing.assert_frame_equal(full.sections, resumed.sections, check_exact=True)
    assert full.summary["bodies"] == resumed.summary["bodies"]


def test_watchdog_stops_with_message_checkpoint_and_resumes_with_a_smaller_step(tmp_path, monkeypatch):
    """The watchdog's stop, its checkpoint and a resume at half the step.

    The stop is forced: the speed limit is lowered to 1.02 times the
    freestream. This wing's start-up transient (measured) peaks at 1.025
    times the freestream at the start of step 3 after 1.014 at step 2, so the
    check fails at step 3 and the last good state -- the start of step 2,
    whose speeds passed -- is the checkpoint. (No case blowing up because of
    its time step alone was found: particle radii follow the wake spacing
    V dt and filament cores bound the induced speed.)
    """
    monkeypatch.setattr(watchdog, "SPEED_FACTOR", 1.02)
    case = _case(steps=12)
    run = run_guarded(case, tmp_path, write=_write)
    assert run.status == "unstable"
    assert watchdog.exit_status(run) == EXIT_UNSTABLE == 3
    msg = run.message
    for part in ("step 3 (t = 0.075 s)", "surface 'wing", "likely cause", "smaller [time] dt",
                 "the last good state is the start of step 2 (t = 0.05 s)"):
        assert part in msg
    state, _, _, _ = newest_checkpoint(tmp_path)
    assert len(run.loads) == state.step == 2      # outputs so far = the steps before that state
    assert (tmp_path / "loads.csv").is_file() and (tmp_path / "summary.json").is_file()
    monkeypatch.setattr(watchdog, "SPEED_FACTOR", 50.0)
    resumed_case, state = prepare_resume(tmp_path, dt=0.0125)
    assert resumed_case.time.dt == 0.0125
    final_time = 11 * 0.025
    done = run_case(resumed_case, resume=state)
    assert done.status == "finished"
    assert done.loads["time_s"].iloc[-1] == pytest.approx(final_time, abs=1e-12)
    assert np.isfinite(done.loads["CL"]).all()


def test_library_default_raises_the_watchdog_error(monkeypatch):
    monkeypatch.setattr(watchdog, "SPEED_FACTOR", 1.001)
    with pytest.raises(UnstableRunError, match="remedy"):
        run_case(_case(steps=12))


# ``wakes run`` in a child process that pauses, by construction, right after it
# has written the checkpoint of step PAUSE: it creates FLAG and waits for
# FLAG.go. The tests send their signal at an event they control (the flag),
# never at a moment raced against the run's speed.
_PAUSING_CLI = """
import os, sys, time
import wakes.io.checkpoint as checkpoint
pause, flag = int(sys.argv[1]), sys.argv[2]
_write = checkpoint.write_checkpoint
def write_then_pause(out, state, *args, **kwargs):
    result = _write(out, state, *args, **kwargs)
    if state.step == pause:
        open(flag, "w").close()
        while not os.path.exists(flag + ".go"):
            time.sleep(0.005)
    return result
checkpoint.write_checkpoint = write_then_pause
from wakes.cli import main
sys.exit(main(sys.argv[3:]))
"""


def _cli(args, *, pause, flag):
    env = dict(os.environ, PYTHONUNBUFFERED="1")
    return subprocess.Popen([sys.executable, "-c", _PAUSING_CLI, str(pause), str(flag), *args], env=env,
                            stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)


def _plain_cli(args):
    env = dict(os.environ, PYTHONUNBUFFERED="1")
    return subprocess.run([sys.executable, "-m", "wakes.cli", *args], env=env, capture_output=True, text=True)


def _wait_for_pause(flag: Path, proc, hang_guard=900.0):
    """Wait until the child has paused after its checkpoint (the guard only stops a hung test)."""
    start = time.monotonic()
    while not flag.exists():
        assert proc.poll() is None, proc.communicate()
        assert time.monotonic() - start < hang_guard, "the child never reached its checkpoint"
        time.sleep(0.01)


def _release(flag: Path):
    Path(str(flag) + ".go").touch()


def _summary_without_timing(path):
    s = json.loads(Path(path).read_text())
    s["run"].pop("wall_time_s")
    return s


def _wait_for_checkpoint(run_dir, proc, timeout=120.0):
    start = time.monotonic()
    while not list_checkpoints(run_dir):
        assert proc.poll() is None, proc.communicate()
        assert time.monotonic() - start < timeout
        time.sleep(0.02)


def test_sigint_mid_run_then_resume_equals_uninterrupted_cli_run(tmp_path):
    """SIGINT to a ``wakes run`` process, then ``wakes run --resume``: the same files as a run
    that never stopped. All three runs are ``wakes run`` child processes with one
    environment: a parallel sum's round-off depends on the thread count and threading
    layer, which may differ between this test process and a child."""
    case_file = tmp_path / "tiny.toml"
    case_file.write_text(TINY.format(steps=20, every=1))
    ref = _plain_cli(["run", str(case_file), "--out", str(tmp_path / "ref"), "--quiet", "--no-plots"])
    assert ref.returncode == 0, ref.stderr
    flag = tmp_path / "paused"
    proc = _cli(["run", str(case_file), "--out", str(tmp_path / "cut"), "--quiet"], pause=7, flag=flag)
    try:
        _wait_for_pause(flag, proc)
        proc.send_signal(signal.SIGINT)      # caught while paused inside step 7's checkpoint write
        _release(flag)
        code = proc.wait(300)
    finally:   # a failed wait must not leave a paused child behind
        if proc.poll() is None:
            proc.kill()
            proc.wait(60)
    err = proc.communicate()[1]
    assert code == 128 + signal.SIGINT, err
    assert "interrupted" in err and "--resume" in err and "Traceback" not in err
    resumed = _plain_cli(["run", "--resume", str(tmp_path / "cut"), "--quiet", "--no-plots"])
    assert resumed.returncode == 0, resumed.stderr
    for name in ("loads.csv", "sections.csv", "wake/filaments.pvd", "wake/particles.pvd"):
        assert (tmp_path / "ref" / name).read_text() == (tmp_path / "cut" / name).read_text(), name
    assert _summary_without_timing(tmp_path / "ref" / "summary.json") == \
        _summary_without_timing(tmp_path / "cut" / "summary.json")
    assert not list_checkpoints(tmp_path / "cut")   # removed once the run finished


def _parses(path: Path):
    if path.suffix == ".csv":
        pd.read_csv(path)
    elif path.suffix == ".json":
        json.loads(path.read_text())
    elif path.suffix == ".npz":
        read_checkpoint(path)
    elif path.suffix in (".vtp", ".pvd"):
        ET.parse(path)
    elif path.suffix == ".toml":
        import tomllib
        tomllib.loads(path.read_text())


def test_sigkill_at_random_points_leaves_only_parseable_files(tmp_path):
    """Three runs started together (their start-up overlaps), each killed at a random
    moment after a checkpoint. Each run pauses after the checkpoint of a random step
    and is released; the kill follows a random delay. The runs are long by
    construction (2,000 steps of a growing particle wake, far longer than the
    delay), so every kill lands inside the run; where it lands changes nothing in
    the verdict: every file left behind parses, and no temporary file is left
    under a final name."""
    case_file = tmp_path / "tiny.toml"
    case_file.write_text(TINY.format(steps=2000, every=1))
    rng = np.random.default_rng(9)
    outs = [tmp_path / f"run{k}" for k in range(3)]
    flags = [tmp_path / f"paused{k}" for k in range(3)]
    procs = [_cli(["run", str(case_file), "--out", str(out), "--quiet", "--no-plots"],
                  pause=int(pause), flag=flag)
             for out, flag, pause in zip(outs, flags, rng.integers(1, 6, size=3))]
    try:
        for out, flag, proc, delay in zip(outs, flags, procs, rng.uniform(0.0, 0.3, size=3)):
            _wait_for_pause(flag, proc)
            _release(flag)
            time.sleep(delay)
            assert proc.poll() is None, "a 2000-step run finished early"
            proc.kill()
            proc.wait(60)
            files = [p for p in out.rglob("*") if p.is_file()]
            assert files
            for p in files:
                assert not p.name.endswith(".part") or p.name.startswith("."), p
                if not p.name.startswith("."):
                    _parses(p)
    finally:   # a failed check must not leave a paused or 2000-step child behind
        for proc in procs:
            if proc.poll() is None:
                proc.kill()
                proc.wait(60)
