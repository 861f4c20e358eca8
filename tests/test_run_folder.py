"""The run folder as a whole: what --overwrite removes, file modes, a folder that moves, --set."""

from __future__ import annotations

import contextlib
import io
import os
import stat
from pathlib import Path

import pytest
from wakes.cli import main
from wakes.io.runfolder import MANIFEST, listed_files

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
