"""The run folder as a whole: what --overwrite removes, file modes, a folder that moves, --set."""

from __future__ import annotations

import contextlib
import io
import os
import stat
import tomllib
from pathlib import Path

import pandas as pd
import pytest
from wakes.cli import main
from wakes.io.runfolder import MANIFEST, PLOT_FILES, listed_files
from wakes.plots import FIGURES

TINY = """
title = "tiny"
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
steps = 3
"""


def _main(argv) -> tuple[int, str, str]:
    """Exit status, standard output and standard error of ``wakes ARGV``, run in this process."""
    out, err = io.StringIO(), io.StringIO()
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
        try:
            status = main([str(a) for a in argv])
        except SystemExit as exc:      # argparse's own usage errors
            status = exc.code
    return status, out.getvalue(), err.getvalue()


def _files(folder: Path) -> set[str]:
    return {p.relative_to(folder).as_posix() for p in folder.rglob("*") if p.is_file()}


def _folders(folder: Path) -> set[str]:
    return {p.relative_to(folder).as_posix() for p in folder.rglob("*") if p.is_dir()}


# ----------------------------------------------------------------- --overwrite

FOREIGN = {"notes.txt": "my notes\n", "mine/table.csv": "a,b\n1,2\n", "wake/my-view.pvsm": "<x/>\n"}


@pytest.mark.parametrize("manifest", [True, False], ids=["with-manifest", "killed-before-manifest"])
def test_overwrite_leaves_none_of_the_earlier_runs_files_and_every_foreign_file(tmp_path, manifest):
    (tmp_path / "long.toml").write_text(TINY.replace("steps = 3", "steps = 6")
                                        + "[output]\nsnapshot_every = 1\ncheckpoint_every = 2\n")
    (tmp_path / "short.toml").write_text(TINY + "[output]\nsnapshot_every = 0\nwake = false\n")
    out = tmp_path / "out"
    assert _main(["run", tmp_path / "long.toml", "--out", out, "--quiet"])[0] == 0
    (out / "checkpoints").mkdir()                        # as a run stopped early leaves them
    (out / "checkpoints" / "step-0000004.npz").write_bytes(b"state")
    (out / ".loads.csv.x1y2z3.part").write_bytes(b"half")   # a write killed half way
    (tmp_path / "points.csv").write_text("x_m,y_m,z_m\n2.0,0.0,0.0\n")
    assert _main(["probe", out, "--points", tmp_path / "points.csv"])[0] == 0
    assert _main(["probe", out, "--plane", "x=3", "--grid", "3x3"])[0] == 0
    earlier = _files(out)
    assert {"plots/loads.png", "wake/filaments_000005.vtp", "wake_segments.csv", "probe_points.csv",
            "probe_plane_x3.csv", "probe_plane_x3.vts"} <= earlier
    if not manifest:
        (out / MANIFEST).unlink()
    for name, text in FOREIGN.items():
        (out / name).parent.mkdir(exist_ok=True)
        (out / name).write_text(text)

    assert _main(["run", tmp_path / "short.toml", "--out", out, "--quiet", "--no-plots", "--overwrite"])[0] == 0
    assert _main(["run", tmp_path / "short.toml", "--out", tmp_path / "fresh", "--quiet", "--no-plots"])[0] == 0
    assert _files(out) == _files(tmp_path / "fresh") | set(FOREIGN)
    assert _folders(out) == _folders(tmp_path / "fresh") | {"mine", "wake"}
    for name, text in FOREIGN.items():
        assert (out / name).read_text() == text
    assert set(listed_files(out)) == _files(tmp_path / "fresh")   # the manifest lists the run's files


def test_overwrite_with_a_bad_case_removes_nothing(tmp_path):
    (tmp_path / "tiny.toml").write_text(TINY)
    (tmp_path / "bad.toml").write_text(TINY.replace("steps = 3", "stesp = 3"))
    out = tmp_path / "out"
    assert _main(["run", tmp_path / "tiny.toml", "--out", out, "--quiet", "--no-plots"])[0] == 0
    before = {n: (out / n).read_bytes() for n in _files(out)}
    status, _, err = _main(["run", tmp_path / "bad.toml", "--out", out, "--quiet", "--overwrite"])
    assert status == 2 and "did you mean 'steps'" in err
    assert {n: (out / n).read_bytes() for n in _files(out)} == before


def test_overwrite_keeps_the_cases_own_polar_when_the_case_lives_in_the_run_folder(tmp_path):
    polar = Path(__file__).parents[1] / "cases" / "polars" / "survey-glider-section.csv"
    (tmp_path / "polars").mkdir()
    (tmp_path / "polars" / "section.csv").write_bytes(polar.read_bytes())
    (tmp_path / "tiny.toml").write_text(TINY + '[bodies.wing.airfoil]\npolar = "polars/section.csv"\n')
    for _ in range(2):
        assert _main(["run", tmp_path / "tiny.toml", "--out", tmp_path, "--quiet", "--no-plots",
                      "--overwrite"])[0] == 0
    assert (tmp_path / "polars" / "section.csv").read_bytes() == polar.read_bytes()
    assert (tmp_path / "tiny.toml").is_file()


# ----------------------------------------------------------------- file modes

@pytest.mark.parametrize("mask", [0o022, 0o027])
def test_every_file_of_a_run_folder_has_the_mode_the_umask_gives(tmp_path, mask):
    (tmp_path / "tiny.toml").write_text(TINY + "[output]\nsnapshot_every = 1\n")
    old = os.umask(mask)
    try:
        assert _main(["run", tmp_path / "tiny.toml", "--out", tmp_path / "out", "--quiet"])[0] == 0
    finally:
        os.umask(old)
    modes = {p.relative_to(tmp_path).as_posix(): stat.S_IMODE(p.stat().st_mode)
             for p in (tmp_path / "out").rglob("*")}
    assert "out/plots/loads.png" in modes and "out/wake/filaments.pvd" in modes
    for name, mode in modes.items():
        folder = (tmp_path / name).is_dir()
        assert mode == (0o777 if folder else 0o666) & ~mask, (name, oct(mode))


# ----------------------------------------------------------------- --set

def test_set_changes_keys_and_is_recorded_in_the_run_folders_case_toml(tmp_path):
    (tmp_path / "tiny.toml").write_text(TINY)
    out = tmp_path / "out"
    status, _, err = _main(["run", tmp_path / "tiny.toml", "--out", out, "--quiet", "--no-plots",
                            "--set", "time.steps=2", "--set", "bodies.wing.spanwise_panels=4",
                            "--set", "title=set from the command line", "--set", "wake.core=rankine"])
    assert status == 0, err
    text = (out / "case.toml").read_text()
    case = tomllib.loads(text)
    assert case["time"]["steps"] == 2 and case["bodies"]["wing"]["spanwise_panels"] == 4
    assert case["title"] == "set from the command line" and case["wake"]["core"] == "rankine"
    assert "# Set on the command line: time.steps=2\n" in text
    assert sorted(pd.read_csv(out / "loads.csv")["step"]) == [0, 1]
    assert pd.read_csv(out / "sections.csv")["strip"].nunique() == 4


def test_check_shows_the_set_values(tmp_path):
    (tmp_path / "tiny.toml").write_text(TINY)
    status, text, _ = _main(["check", tmp_path / "tiny.toml", "--set", "freestream.speed=12.5",
                             "--set", "bodies.wing.chord={law = \"linear\", root = 0.6, tip = 0.4}"])
    assert status == 0
    case = tomllib.loads(text[:text.index("tiny: case is valid")])
    assert case["freestream"]["speed"] == 12.5
    assert case["bodies"]["wing"]["chord"] == {"law": "linear", "root": 0.6, "tip": 0.4}


BAD_SETTINGS = [
    ("time.stesp=4", "--set time.stesp=4: unknown key 'time.stesp'; did you mean 'steps'?"),
    ("tmie.steps=4", "--set tmie.steps=4: unknown key 'tmie'; did you mean 'time'?"),
    ("bodies.wnig.span=3", "--set bodies.wnig.span=3: unknown body 'wnig'; did you mean 'wing'?"),
    ("bodies.wing.spna=3", "unknown key 'bodies.wing.spna'; did you mean 'span'?"),
    ("bodies.wing.airfoil.lift_slop=6", "unknown key 'bodies.wing.airfoil.lift_slop'; did you mean 'lift_slope'?"),
    ("time.steps=abc", "--set time.steps=abc: time.steps must be an integer; got 'abc'"),
    ("time.steps=2.5", "time.steps must be an integer; got 2.5"),
    ("freestream.speed=fast", "freestream.speed must be a number [m/s]; got 'fast'"),
    ("wake.motion=true", "wake.motion must be a string; got True"),
    ("output.wake=1", "output.wake must be true or false; got 1"),
    ("bodies.wing.position=[0, 1]", "bodies.wing.position must be a list of 3 numbers [m]; got [0, 1]"),
    ("freestream.speed=-3", "freestream.speed must be between 0 and 1000 [m/s]; got -3"),
    ("wake.model=particle", "wake.model must be one of 'filaments', 'particles'; got 'particle' "
                            "(did you mean 'particles'?)"),
    ("time.steps", "--set time.steps: give KEY=VALUE"),
    ("bodies.wing.span.root=2", "bodies.wing.span is a single value"),
]


@pytest.mark.parametrize("setting, message", BAD_SETTINGS, ids=[s for s, _ in BAD_SETTINGS])
@pytest.mark.parametrize("command", ["run", "check", "sweep"])
def test_a_bad_set_exits_2_naming_the_key_and_writes_nothing(tmp_path, command, setting, message):
    (tmp_path / "tiny.toml").write_text(TINY)
    extra = {"run": ["--out", tmp_path / "out"], "check": [],
             "sweep": ["--vary", "freestream.angle_of_attack=2,4", "--out", tmp_path / "out", "--workers", "1"]}
    before = _files(tmp_path)
    status, _, err = _main([command, tmp_path / "tiny.toml", *extra[command], "--set", setting])
    assert status == 2 and message in err and err.count("\n") == 1, err
    assert _files(tmp_path) == before and not (tmp_path / "out").exists()


def test_set_applies_to_every_point_of_a_sweep(tmp_path):
    (tmp_path / "tiny.toml").write_text(TINY)
    status, _, err = _main(["sweep", tmp_path / "tiny.toml", "--vary", "freestream.angle_of_attack=2,5",
                            "--set", "time.steps=2", "--set", "freestream.speed=8", "--out", tmp_path / "s",
                            "--workers", "1", "--quiet"])
    assert status == 0, err
    folders = sorted(p for p in (tmp_path / "s").iterdir() if p.is_dir())
    assert len(folders) == 2
    for folder, alpha in zip(folders, (2.0, 5.0)):
        case = tomllib.loads((folder / "case.toml").read_text())
        assert case["time"]["steps"] == 2 and case["freestream"]["speed"] == 8.0
        assert case["freestream"]["angle_of_attack"] == alpha


def test_the_run_folders_known_figure_names_are_the_figures_a_run_draws():
    # the names --overwrite removes in a folder without manifest.txt
    assert set(PLOT_FILES) == set(FIGURES)


# ----------------------------------------------------------------- a portable run folder

POLAR = Path(__file__).parents[1] / "cases" / "polars" / "survey-glider-section.csv"
# a wing whose worked-out defaults come out with float noise when computed plainly:
# mean chord 0.2 m gives core radius 0.1 x 0.2 = 0.020000000000000004, and the
# tapered planform's area integrates to 0.8999999999999998 m^2
NOISY = """
[freestream]
speed = 10.0
angle_of_attack = 3.0
[bodies.wing]
type = "wing"
span = 4.5
chord = {law = "linear", root = 0.3, tip = 0.1}
spanwise_panels = 6
[bodies.wing.airfoil]
polar = "polars/section.csv"
[wake]
motion = "frozen"
[time]
steps = 4
dt = 0.3
[output]
checkpoint_every = 1
"""


def _noisy_case(folder: Path) -> Path:
    (folder / "polars").mkdir(parents=True)
    (folder / "polars" / "section.csv").write_bytes(POLAR.read_bytes())
    (folder / "noisy.toml").write_text(NOISY)
    return folder / "noisy.toml"


def test_case_toml_holds_worked_out_defaults_without_float_noise_and_reruns_bit_for_bit(tmp_path):
    case = _noisy_case(tmp_path / "src")
    assert _main(["run", case, "--out", tmp_path / "a", "--quiet", "--no-plots"])[0] == 0
    text = (tmp_path / "a" / "case.toml").read_text()
    written = tomllib.loads(text)
    assert written["wake"]["core_radius"] == 0.02 and "core_radius = 0.02\n" in text
    assert written["bodies"]["wing"]["reference_area"] == 0.9 and "reference_area = 0.9\n" in text
    assert written["bodies"]["wing"]["airfoil"]["polar"] == "polars/section.csv"
    # the written case, run again, gives the very same numbers
    assert _main(["run", tmp_path / "a" / "case.toml", "--out", tmp_path / "b", "--quiet", "--no-plots"])[0] == 0
    for name in ("loads.csv", "sections.csv", "wake_segments.csv"):
        assert (tmp_path / "a" / name).read_bytes() == (tmp_path / "b" / name).read_bytes(), name


def test_a_moved_run_folder_checks_and_resumes_without_the_original_files(tmp_path, monkeypatch):
    import shutil

    import wakes.run

    case = _noisy_case(tmp_path / "src")
    assert _main(["run", case, "--out", tmp_path / "whole", "--quiet", "--no-plots"])[0] == 0
    # a run that stopped after step 2: its checkpoints stay (as after Ctrl-C)
    monkeypatch.setattr(wakes.run.checkpoints, "remove_checkpoints", lambda out: None)
    assert _main(["run", case, "--out", tmp_path / "part", "--quiet", "--no-plots"])[0] == 0
    monkeypatch.undo()
    for p in sorted((tmp_path / "part" / "checkpoints").glob("step-*.npz"))[1:]:
        p.unlink()                                      # go on from the oldest one kept
    shutil.rmtree(tmp_path / "src")                     # the case file and its polar are gone
    moved = tmp_path / "elsewhere" / "run"
    shutil.move(tmp_path / "part", moved)
    assert (moved / "polars" / "section.csv").read_bytes() == POLAR.read_bytes()
    status, _, err = _main(["check", moved / "case.toml", "--quiet"])
    assert status == 0, err
    status, _, err = _main(["run", "--resume", moved, "--quiet", "--no-plots"])
    assert status == 0, err
    for name in ("loads.csv", "sections.csv"):
        assert (moved / name).read_bytes() == (tmp_path / "whole" / name).read_bytes(), name
