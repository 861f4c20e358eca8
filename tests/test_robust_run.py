"""Runs that never lose work: checkpoints, bit-exact resume, watchdog stops, signals, kills."""

import json
import os
import signal
import subprocess
import sys
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
from wakes.watchdog import EXIT_UNSTABLE

from .resume import stopped_and_resumed

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
    full, part, state, resumed = stopped_and_resumed(_case(steps=12, every=5), tmp_path)
    assert part.status == "interrupted" and len(part.loads) == 7
    assert [p.name for p in list_checkpoints(tmp_path)] == ["step-0000005.npz", "step-0000007.npz"]
    assert state.step == 7
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
                 "the last good state is the start of step 2 (t = 0.05 s)", "[wake] particle_overlap"):
        assert part in msg
    assert 'model = "particles"' not in msg    # the remedy names only changes that apply: it has particles
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


def test_the_remedy_names_only_changes_that_apply_to_the_run():
    from wakes.case.specs import WakeSpec
    lattice = watchdog.remedy_for(WakeSpec())
    assert 'model = "particles"' in lattice and "a finite [wake] max_age" in lattice
    assert "particle_overlap" not in lattice
    trimmed = watchdog.remedy_for(WakeSpec(model="particles", max_age=1.0))
    assert "shorter [wake] max_age" in trimmed and 'model = "particles"' not in trimmed


def test_library_default_raises_the_watchdog_error(monkeypatch):
    monkeypatch.setattr(watchdog, "SPEED_FACTOR", 1.001)
    with pytest.raises(UnstableRunError, match="remedy"):
        run_case(_case(steps=12))


# ``wakes run`` in a child process that pauses, by construction, just before the
# rename of its N-th atomic file write (the temporary file is complete, the
# final name not yet taken: the moment a kill hurts most). It says so on one
# pipe and blocks reading another until the test releases it, so the test
# acts at an event the child makes, never at a moment raced against the run's
# speed. Only the package's own atomic writes are counted, so the pause point
# is the same on every machine, warm or cold numba cache.
_PAUSING_CLI = """
import os, sys
import wakes.io.atomic as atomic
pause_at, paused_fd, go_fd = int(sys.argv[1]), int(sys.argv[2]), int(sys.argv[3])
renames = 0
class _PauseBeforeRename:
    def __getattr__(self, name):
        return getattr(os, name)
    def replace(self, src, dst):
        global renames
        renames += 1
        if renames == pause_at:
            os.write(paused_fd, b"p")
            os.read(go_fd, 1)
        os.replace(src, dst)
atomic.os = _PauseBeforeRename()
from wakes.cli import main
sys.exit(main(sys.argv[4:]))
"""


class _PausingRun:
    """A ``wakes run`` child that pauses before its ``pause_at``-th atomic rename."""

    def __init__(self, args, *, pause_at):
        self._paused_r, paused_w = os.pipe()
        go_r, self._go_w = os.pipe()
        env = dict(os.environ, PYTHONUNBUFFERED="1")
        self.proc = subprocess.Popen(
            [sys.executable, "-c", _PAUSING_CLI, str(pause_at), str(paused_w), str(go_r), *args],
            env=env, stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True, pass_fds=(paused_w, go_r))
        os.close(paused_w)
        os.close(go_r)

    def wait_for_pause(self):
        """Block until the child has paused (an empty read: it ended without pausing)."""
        assert os.read(self._paused_r, 1) == b"p", self.proc.communicate()

    def release(self):
        os.write(self._go_w, b"g")

    def close(self):
        """Kill the child if it still runs (a failed check must not leave it behind)."""
        if self.proc.poll() is None:
            self.proc.kill()
            self.proc.wait()
        for fd in (self._paused_r, self._go_w):
            os.close(fd)


def _plain_cli(args):
    env = dict(os.environ, PYTHONUNBUFFERED="1")
    return subprocess.run([sys.executable, "-m", "wakes.cli", *args], env=env, capture_output=True, text=True)


def _summary_without_timing(path):
    s = json.loads(Path(path).read_text())
    s["run"].pop("wall_time_s")
    return s


def test_sigint_mid_run_then_resume_equals_uninterrupted_cli_run(tmp_path):
    """SIGINT to a ``wakes run`` process, then ``wakes run --resume``: the same files as a run
    that never stopped. All three runs are ``wakes run`` child processes with one
    environment: a parallel sum's round-off depends on the thread count and threading
    layer, which may differ between this test process and a child."""
    case_file = tmp_path / "tiny.toml"
    case_file.write_text(TINY.format(steps=20, every=1))
    ref = _plain_cli(["run", str(case_file), "--out", str(tmp_path / "ref"), "--quiet", "--no-plots"])
    assert ref.returncode == 0, ref.stderr
    run = _PausingRun(["run", str(case_file), "--out", str(tmp_path / "cut"), "--quiet"], pause_at=8)
    try:
        run.wait_for_pause()
        run.proc.send_signal(signal.SIGINT)   # caught while paused inside a step's file writes
        run.release()
        code = run.proc.wait()
        err = run.proc.communicate()[1]
    finally:
        run.close()
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
    point of its file writes: just before the rename of a random (seeded) atomic write,
    where a temporary file is complete and its final name not yet taken. Every file
    left behind under a final name parses, and temporary files are hidden."""
    case_file = tmp_path / "tiny.toml"
    case_file.write_text(TINY.format(steps=30, every=1))   # a checkpoint a step: >= 30 renames
    rng = np.random.default_rng(9)
    outs = [tmp_path / f"run{k}" for k in range(3)]
    runs = [_PausingRun(["run", str(case_file), "--out", str(out), "--quiet", "--no-plots"],
                        pause_at=int(n)) for out, n in zip(outs, rng.integers(2, 26, size=3))]
    try:
        for out, run in zip(outs, runs):
            run.wait_for_pause()
            run.proc.kill()
            run.proc.wait()
            files = [p for p in out.rglob("*") if p.is_file()]
            assert files
            for p in files:
                assert not p.name.endswith(".part") or p.name.startswith("."), p
                if not p.name.startswith("."):
                    _parses(p)
    finally:
        for run in runs:
            run.close()
