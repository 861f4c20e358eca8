"""Plausibility warnings and run status in ``summary.json`` and at the end of ``wakes run``.

Tiny wing cases run through the CLI in this process (a few dozen steps of a
lifting line, about a second each).
"""

import json
import signal

from wakes.case import parse_case
from wakes.cli import main
from wakes.io.checkpoint import list_checkpoints
from wakes.run import run_guarded, write_run

WING = """title = "tiny wing"
[freestream]
speed = 10.0
angle_of_attack = 4.0
[bodies.wing]
type = "wing"
span = 2.0
chord = 0.2
spanwise_panels = 6
[wake]
max_age = {max_age}
[time]
dt = 0.02
steps = {steps}
"""


def _case_file(tmp_path, *, max_age="inf", steps=40):
    path = tmp_path / "wing.toml"
    path.write_text(WING.format(max_age=max_age, steps=steps))
    return path


def _summary(out):
    return json.loads((out / "summary.json").read_text())


def test_a_short_wake_is_warned_in_summary_and_printed(tmp_path, capsys):
    # 0.06 s at 10 m/s keeps 0.6 m of wake behind a 2 m span: the inflow is far too low
    out = tmp_path / "run"
    assert main(["run", str(_case_file(tmp_path, max_age="0.06")), "--out", str(out), "--no-plots"]) == 0
    warnings = _summary(out)["warnings"]
    codes = [w["code"] for w in warnings]
    assert "wake-too-short" in codes
    assert all(set(w) == {"code", "message", "value", "bound", "source"} for w in warnings)
    printed = capsys.readouterr().out
    n = len(warnings)
    assert f"{n} plausibility warning{'s' if n != 1 else ''}:" in printed
    for w in warnings:
        assert f"  ! {w['code']}: {w['message']} (bound " in printed


def test_quiet_run_gives_one_stderr_line_for_the_warnings(tmp_path, capsys):
    out = tmp_path / "run"
    assert main(["run", str(_case_file(tmp_path, max_age="0.06")), "--out", str(out), "--no-plots",
                 "--quiet"]) == 0
    captured = capsys.readouterr()
    n = len(_summary(out)["warnings"])
    assert captured.out == ""
    assert f"wakes: {n} plausibility warning" in captured.err and "summary.json" in captured.err
    assert "  ! " not in captured.err


def test_a_plausible_run_has_no_warnings_and_a_finished_status(tmp_path, capsys):
    out = tmp_path / "run"
    assert main(["run", str(_case_file(tmp_path)), "--out", str(out), "--no-plots"]) == 0
    summary = _summary(out)
    assert summary["warnings"] == []
    assert "plausibility warning" not in capsys.readouterr().out
    assert summary["status"] == "finished"
    assert summary["last_step"] == 39
    assert summary["resume"]["possible"] is False


def test_a_stopped_run_says_so_with_its_last_step_and_how_to_resume(tmp_path, monkeypatch):
    """A stop request (as SIGINT sets it) after step index 6, through the orchestrator:
    the summary names the status, the signal, the last step and the checkpoint to go on from."""
    import tomllib
    case = parse_case(tomllib.loads(WING.format(max_age="inf", steps=40)))
    out = tmp_path / "run"
    out.mkdir()
    control = {}

    def stop_at_7(step, steps):
        if step == 7:      # the loop checks the request after this step
            control["run"].stop_signal = signal.SIGINT

    import wakes.run as run_module
    real = run_module.RunControl

    def keep(*args, **kwargs):
        control["run"] = real(*args, **kwargs)
        return control["run"]

    monkeypatch.setattr(run_module, "RunControl", keep)
    run = run_guarded(case, out, write=write_run_no_plots, progress=stop_at_7)
    assert run.status == "interrupted"
    summary = _summary(out)
    assert summary["status"] == "stopped"
    assert "SIGINT" in summary["reason"]
    assert summary["last_step"] == 6
    assert summary["resume"]["possible"] is True and summary["resume"]["from_step"] == 7
    assert summary["resume"]["how"] == f"wakes run --resume {out}"
    assert [p.name for p in list_checkpoints(out)] == ["step-0000007.npz"]


def write_run_no_plots(run, out):
    return write_run(run, out, plots=False)


TINY_PARTICLES = """title = "tiny"
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
steps = 12
"""


def test_a_run_the_watchdog_stopped_is_diverged_with_its_checkpoint(tmp_path, monkeypatch):
    """The watchdog's speed limit lowered to 1.02 times the freestream (as in
    tests/test_robust_run.py): this wing's start-up transient passes it at the
    start of step 3, so the last good state is the start of step 2."""
    import tomllib

    import wakes.watchdog as watchdog
    monkeypatch.setattr(watchdog, "SPEED_FACTOR", 1.02)
    case = parse_case(tomllib.loads(TINY_PARTICLES))
    run_guarded(case, tmp_path, write=write_run_no_plots)
    summary = _summary(tmp_path)
    assert summary["status"] == "diverged"
    assert "step 3" in summary["reason"] and "last good state" in summary["reason"]
    assert summary["last_step"] == 1
    assert summary["resume"] == {"possible": True, "from_step": 2, "how": f"wakes run --resume {tmp_path}"}


def test_a_run_that_diverges_in_its_first_step_still_writes_its_status(tmp_path, monkeypatch):
    """A speed limit below the freestream fails the check at the start of step 0: no
    step is done, so no tables, but summary.json says diverged, last step -1, resume
    from step 0."""
    import tomllib

    import wakes.watchdog as watchdog
    monkeypatch.setattr(watchdog, "SPEED_FACTOR", 0.5)
    case = parse_case(tomllib.loads(TINY_PARTICLES))
    run = run_guarded(case, tmp_path, write=write_run_no_plots)
    assert run.status == "unstable" and not len(run.loads)
    assert not (tmp_path / "loads.csv").exists()
    summary = _summary(tmp_path)
    assert summary["status"] == "diverged" and summary["last_step"] == -1
    assert summary["warnings"] == [] and summary["bodies"] == {}
    assert summary["resume"]["possible"] is True and summary["resume"]["from_step"] == 0
