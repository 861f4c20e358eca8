"""Every command-line option given something hostile: a clear message, exit 2, nothing written.

Bad paths (missing, a folder for a file and a file for a folder, inside a
file, names too long, empty), unreadable files and unwritable folders
(simulated: the suite may run as root, whom permissions do not stop), bad
numbers, and a full disk simulated by a write that fails with ENOSPC half
way through a file. Whatever happens, no traceback, no partial file, and
the files of earlier work stay as they were.
"""

from __future__ import annotations

import contextlib
import errno
import io
import json
import os
import re
import shutil
from pathlib import Path

import pandas as pd
import pytest
import wakes.io.atomic as atomic
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from wakes.cli import main

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
LONG_NAME = "n" * 300


def _main(argv) -> tuple[int, str]:
    """Exit status and standard error of ``wakes ARGV``, run in this process."""
    out, err = io.StringIO(), io.StringIO()
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
        try:
            status = main([str(a) for a in argv])
        except SystemExit as exc:      # argparse's own usage errors
            status = exc.code
    return status, err.getvalue()


def _tree(folder: Path) -> dict:
    """Every file under ``folder`` with its bytes."""
    return {p.relative_to(folder).as_posix(): p.read_bytes() for p in sorted(folder.rglob("*"))
            if p.is_file()}


@pytest.fixture(scope="module")
def finished(tmp_path_factory) -> Path:
    """A finished run folder (read only by the tests)."""
    root = tmp_path_factory.mktemp("finished")
    (root / "tiny.toml").write_text(TINY)
    assert _main(["run", root / "tiny.toml", "--out", root / "run", "--quiet", "--no-plots"])[0] == 0
    return root / "run"


@pytest.fixture
def place(tmp_path, finished) -> Path:
    """A folder with a case, a plain file, an empty folder and a copy of the finished run."""
    (tmp_path / "tiny.toml").write_text(TINY)
    (tmp_path / "afile").write_text("not a folder\n")
    (tmp_path / "empty").mkdir()
    (tmp_path / "points.csv").write_text("x_m,y_m,z_m\n2.0,0.0,0.0\n")
    (tmp_path / "bigint.toml").write_text("[freestream]\nspeed = " + "9" * 5000 + "\n")
    (tmp_path / "deep.toml").write_text("x = " + "[" * 5000 + "]" * 5000 + "\n")
    shutil.copytree(finished, tmp_path / "run")
    return tmp_path


# (arguments, message): {p} is the place folder
BAD = [
    # run and check: CASE
    (["run", "{p}/missing.toml", "--out", "{p}/o"], r"case file '.*missing.toml' not found"),
    (["run", "{p}/empty", "--out", "{p}/o"], r"case file '.*empty' is a folder"),
    (["run", "{p}/afile/x.toml", "--out", "{p}/o"], r"case file '.*afile/x.toml' not found"),
    (["check", f"{{p}}/{LONG_NAME}.toml"], r"case file .*: cannot read it \(File name too long\)"),
    (["check", "{p}/afile"], r"afile: invalid TOML at line 1"),
    (["check", "{p}/bigint.toml"], r"bigint.toml: invalid TOML: Exceeds the limit \(4300 digits\)"),
    (["run", "{p}/deep.toml", "--out", "{p}/o"], r"deep.toml: arrays or tables nested too deeply to read"),
    # run: --out
    (["run", "{p}/tiny.toml", "--out", "{p}/afile"], r"--out .*afile: exists and is not a folder"),
    (["run", "{p}/tiny.toml", "--out", "{p}/afile/o"], r"--out .*afile/o: .*afile is a file, so nothing"),
    (["run", "{p}/tiny.toml", "--out", f"{{p}}/{LONG_NAME}"], r"--out .*(File name too long|longer than)"),
    (["run", "{p}/tiny.toml", "--out", ""], r"--out '': not a usable path"),
    (["run", "{p}/tiny.toml", "--out", "{p}/run"], r"--out .*run: folder exists and is not empty"),
    # run: --resume, --dt, --max-memory
    (["run", "--resume", "{p}/missing"], r"--resume .*missing: no such run folder"),
    (["run", "--resume", "{p}/afile"], r"--resume .*afile: exists and is not a folder"),
    (["run", "--resume", "{p}/empty"], r"--resume .*empty: the folder holds no checkpoint"),
    (["run", "--resume", "{p}/run", "--dt", "nan"], r"--dt must be a time step from 1e-09 to 3600 s; got nan"),
    (["run", "--resume", "{p}/run", "--dt=-inf"], r"--dt must be a time step"),
    (["run", "--resume", "{p}/run", "--dt", "1e300"], r"--dt must be a time step .*got 1e\+300"),
    (["run", "--resume", "{p}/run", "--dt", "x"], r"argument --dt: invalid float value"),
    (["run", "{p}/tiny.toml", "--out", "{p}/o", "--dt", "0.1"], r"--dt applies with --resume only"),
    (["run", "{p}/tiny.toml", "--out", "{p}/o", "--max-memory", "0"], r"--max-memory must be a positive size"),
    (["run", "{p}/tiny.toml", "--out", "{p}/o", "--max-memory", "1e9"], r"--max-memory must be a positive size"),
    # new
    (["new", "glider", "{p}/x.toml"], r"template kind 'glider' is unknown"),
    (["new", "wing", "{p}/empty"], r"FILE .*empty: is a folder"),
    (["new", "wing", "{p}/afile/x.toml"], r"FILE .*afile is a file, so nothing can be created"),
    (["new", "wing", f"{{p}}/{LONG_NAME}.toml"], r"FILE .*(File name too long|longer than)"),
    (["new", "wing", "{p}/tiny.toml"], r"case file .*tiny.toml exists"),
    # probe
    (["probe", "{p}/missing", "--plane", "x=1"], r"run folder .*missing not found"),
    (["probe", "{p}/afile", "--plane", "x=1"], r"run folder .*afile: is a file"),
    (["probe", "{p}/empty", "--plane", "x=1"], r"empty is not a run folder"),
    (["probe", "{p}/run", "--points", "{p}/missing.csv"], r"--points .*missing.csv: points file not found"),
    (["probe", "{p}/run", "--points", "{p}/empty"], r"--points .*empty: is a folder"),
    (["probe", "{p}/run", "--points", "{p}/tiny.toml"], r"points file .*tiny.toml.*missing column"),
    (["probe", "{p}/run", "--plane", "w=1"], r"--plane 'w=1': accepted is AXIS=VALUE"),
    (["probe", "{p}/run", "--plane", "x=nan"], r"--plane 'x=nan'"),
    (["probe", "{p}/run", "--plane", "x=1e400"], r"--plane x=1e400: the coordinate must be a number"),
    (["probe", "{p}/run", "--plane", "x=1", "--extent=-1:1,nan:2"], r"--extent -1:1,nan:2: each range"),
    (["probe", "{p}/run", "--plane", "x=1", "--extent=1:1,0:2"], r"--extent 1:1,0:2: the range 1:1 has zero size"),
    (["probe", "{p}/run", "--plane", "x=1", "--extent=a"], r"--extent 'a': accepted is A0:A1,B0:B1"),
    (["probe", "{p}/run", "--plane", "x=1", "--grid", "1x5"], r"--grid 1x5: accepted is at least 2 and at most 10,000"),
    (["probe", "{p}/run", "--plane", "x=1", "--grid", "99999x99999"], r"--grid 99999x99999: accepted"),
    (["probe", "{p}/run", "--plane", "x=1", "--grid", "ax3"], r"--grid 'ax3': accepted is NAxNB"),
    (["probe", "{p}/run", "--plane", "x=1", "--out", "{p}/afile/t.csv"], r"--out .*afile is a file"),
    (["probe", "{p}/run", "--plane", "x=1", "--out", "{p}/empty"], r"--out .*empty: is a folder"),
    (["probe", "{p}/run", "--points", "{p}/points.csv", "--extent=0:1,0:1"], r"--extent applies to --plane only"),
    # plot
    (["plot", "{p}/afile"], r"run folder .*afile: is a file"),
    (["plot", "{p}/run", "--out", "{p}/afile"], r"--out .*afile: exists and is not a folder"),
    (["plot", "{p}/run", "--out", "{p}/afile/figs"], r"--out .*afile is a file"),
    # verify
    (["verify", "--csv", "{p}/afile/v.csv"], r"--csv .*afile is a file"),
    (["verify", "--csv", "{p}/empty"], r"--csv .*empty: is a folder"),
    # sweep
    (["sweep", "{p}/missing.toml", "--vary", "bodies.wing.span=3,4"], r"missing.toml' not found"),
    (["sweep", "{p}/tiny.toml", "--vary", "span"], r"--vary 'span' must be KEY=VALUES"),
    (["sweep", "{p}/tiny.toml", "--vary", "bodies.wing.span=1:1e9:1e-9"], r"at most 100000 are accepted"),
    (["sweep", "{p}/tiny.toml", "--vary", "bodies.wing.span=3,4", "--workers", "0"], r"--workers must be from 1"),
    (["sweep", "{p}/tiny.toml", "--vary", "bodies.wing.span=3,4", "--workers", "100000"], r"--workers must be"),
    (["sweep", "{p}/tiny.toml", "--vary", "bodies.wing.span=3,4", "--scheduler", "foo://x:1"],
     r"--scheduler must be an address tcp://HOST:PORT"),
    (["sweep", "{p}/tiny.toml", "--vary", "bodies.wing.span=3,4", "--scheduler", "tcp://x:notaport"],
     r"--scheduler must be an address"),
    (["sweep", "{p}/tiny.toml", "--vary", "bodies.wing.span=3,4", "--out", "{p}/afile"],
     r"--out .*afile: exists and is not a folder"),
]


@pytest.mark.parametrize("argv, message", BAD, ids=[" ".join(a)[:60] for a, _ in BAD])
def test_bad_option_exits_2_with_one_line_naming_it_and_writes_nothing(place, argv, message):
    before = _tree(place)
    status, err = _main([a.format(p=place) for a in argv])
    assert status == 2, err
    assert err.count("\n") == 1 and err.startswith("wakes"), err
    assert "Traceback" not in err
    assert re.search(message, err), err
    assert _tree(place) == before                      # nothing written or changed
    assert not (place / "o").exists()


def test_a_run_beyond_the_memory_budget_exits_4_before_anything_is_written(place):
    before = _tree(place)
    status, err = _main(["run", place / "tiny.toml", "--out", place / "o", "--max-memory", "1K"])
    assert status == 4 and re.search(r"the run would need about .* GiB .* --max-memory", err), err
    assert _tree(place) == before and not (place / "o").exists()


def test_an_unreadable_case_file_names_it(place, monkeypatch):
    import wakes.case.schema

    def refuse(path, *args, **kwargs):
        raise PermissionError(errno.EACCES, "Permission denied", str(path))

    monkeypatch.setattr(wakes.case.schema, "open", refuse, raising=False)
    status, err = _main(["check", place / "tiny.toml"])
    assert status == 2 and "tiny.toml': cannot read it (Permission denied)" in err, err


def test_unreadable_points_and_an_unwritable_output_folder_name_the_option(place, monkeypatch):
    real = os.access
    monkeypatch.setattr(os, "access", lambda path, mode, **kw: False if Path(path).name in ("points.csv", "locked")
                        else real(path, mode, **kw))
    (place / "locked").mkdir()
    status, err = _main(["probe", place / "run", "--points", place / "points.csv"])
    assert status == 2 and "--points" in err and "no permission to read it" in err, err
    status, err = _main(["run", place / "tiny.toml", "--out", place / "locked" / "new" / "o"])
    assert status == 2 and "--out" in err and "no permission to write in" in err, err
    assert not (place / "locked" / "new").exists()


def test_a_folder_the_system_will_not_create_is_an_error_before_the_run(place, monkeypatch):
    real = Path.mkdir

    def refuse(self, *args, **kwargs):
        if self.name == "o":
            raise PermissionError(errno.EROFS, "Read-only file system", str(self))
        return real(self, *args, **kwargs)

    monkeypatch.setattr(Path, "mkdir", refuse)
    status, err = _main(["run", place / "tiny.toml", "--out", place / "o"])
    assert status == 2 and "--out" in err and "cannot create the folder (Read-only file system)" in err, err


# ----------------------------------------------------------------- a full disk

class _FullDisk:
    """``os`` as seen by wakes.io.atomic, except that after ``allowed`` whole files a write stops
    half way with ENOSPC, as on a full disk."""

    def __init__(self, allowed: int):
        self.allowed = allowed
        self.failed = []

    def __getattr__(self, name):
        return getattr(os, name)

    def fdopen(self, fd, mode="r", *args, **kwargs):
        real = os.fdopen(fd, mode, *args, **kwargs)
        disk = self

        class Half:
            def __enter__(self):
                return self

            def __exit__(self, *exc):
                real.close()
                return False

            def write(self, data):
                if disk.allowed <= 0:
                    real.write(data[: len(data) // 2])
                    real.flush()
                    disk.failed.append(fd)
                    raise OSError(errno.ENOSPC, "No space left on device")
                disk.allowed -= 1
                return real.write(data)

            def __getattr__(self, name):
                return getattr(real, name)

        return Half()


def _full_disk(monkeypatch, allowed: int = 0) -> _FullDisk:
    disk = _FullDisk(allowed)
    monkeypatch.setattr(atomic, "os", disk)
    return disk


def _no_partial_files(folder: Path) -> None:
    for p in folder.rglob("*"):
        assert not p.name.endswith(".part"), p
        if p.suffix == ".csv":
            pd.read_csv(p)
        if p.suffix == ".json":
            json.loads(p.read_text())


@pytest.mark.parametrize("allowed", [0, 2, 5])
def test_a_full_disk_during_a_run_exits_2_naming_the_file_and_leaves_whole_files(place, monkeypatch, allowed):
    disk = _full_disk(monkeypatch, allowed)
    status, err = _main(["run", place / "tiny.toml", "--out", place / "o", "--quiet"])
    assert disk.failed and status == 2, err
    assert err.count("\n") == 1 and "No space left on device" in err and str(place / "o") in err, err
    _no_partial_files(place / "o")


def test_a_full_disk_in_an_overwriting_run_leaves_whole_files_and_none_of_the_earlier_run(place, monkeypatch):
    """--overwrite removes the earlier run before the new one starts (so the two never mix);
    a write that then fails leaves whole files only."""
    before = _tree(place / "run")
    _full_disk(monkeypatch)
    status, err = _main(["run", place / "tiny.toml", "--out", place / "run", "--overwrite", "--quiet"])
    assert status == 2 and "No space left on device" in err, err
    after = _tree(place / "run")
    assert not any(after.get(name) == data for name, data in before.items())
    _no_partial_files(place / "run")


def test_a_full_disk_at_the_end_of_a_resumed_run_keeps_its_checkpoints(place, monkeypatch):
    """The checkpoints of earlier work stay until the outputs are written; the resume then works."""
    case = place / "long.toml"
    case.write_text(TINY.replace("steps = 3", "steps = 6").replace("[time]", "[output]\ncheckpoint_every = 2\n[time]"))
    from wakes.case import load_case
    from wakes.io.checkpoint import list_checkpoints, write_checkpoint
    from wakes.run import run_case
    from wakes.watchdog import RunControl

    resolved = load_case(case)
    run_case(resolved, control=RunControl(checkpoint_every=2, save=lambda s: write_checkpoint(
        place / "cut", s, resolved.to_toml(), resolved.source)))
    kept = _tree(place / "cut")
    assert list_checkpoints(place / "cut")
    _full_disk(monkeypatch, allowed=3)
    status, err = _main(["run", "--resume", place / "cut", "--quiet", "--no-plots"])
    assert status == 2 and "No space left on device" in err, err
    assert {k: v for k, v in _tree(place / "cut").items() if k.startswith("checkpoints/")} == {
        k: v for k, v in kept.items() if k.startswith("checkpoints/")}
    _no_partial_files(place / "cut")
    monkeypatch.undo()
    assert _main(["run", "--resume", place / "cut", "--quiet", "--no-plots"])[0] == 0
    assert len(pd.read_csv(place / "cut" / "loads.csv")) == 6


@pytest.mark.parametrize("argv", [
    ["new", "wing", "{p}/w.toml"],
    ["probe", "{p}/run", "--plane", "x=2", "--grid", "3x3", "--extent=-1:1,-1:1"],
    ["probe", "{p}/run", "--points", "{p}/points.csv"],
    ["plot", "{p}/run"],
])
def test_a_full_disk_in_the_other_commands_exits_2_and_leaves_no_partial_file(place, monkeypatch, argv):
    before = _tree(place)
    _full_disk(monkeypatch)
    status, err = _main([a.format(p=place) for a in argv])
    assert status == 2 and "No space left on device" in err and "Traceback" not in err, err
    assert _tree(place) == before or argv[0] == "plot"   # plot makes its (empty) folder first
    _no_partial_files(place)


# ----------------------------------------------------------------- options drawn at random

PATH_KINDS = ["case", "run", "afile", "empty", "missing", "under-file", "long", "points", "new"]


def _path(place: Path, kind: str) -> str:
    return {"case": place / "tiny.toml", "run": place / "run", "afile": place / "afile",
            "empty": place / "empty", "missing": place / "missing", "under-file": place / "afile" / "x",
            "long": place / LONG_NAME, "points": place / "points.csv", "new": place / "new-thing"}[kind]


NUMBERS = st.sampled_from(["nan", "inf", "-inf", "-1", "0", "1e-300", "1e300", "2.5", "x", "", "1e-3"])
ARGV = st.one_of(
    st.tuples(st.just("check"), st.sampled_from(PATH_KINDS)),
    st.tuples(st.just("run"), st.sampled_from(PATH_KINDS), st.just("--out"), st.sampled_from(PATH_KINDS),
              st.sampled_from([[], ["--overwrite"], ["--max-memory", "1K"], ["--dt", "0.1"]])),
    st.tuples(st.just("run"), st.just("--resume"), st.sampled_from(PATH_KINDS), st.just("--dt"), NUMBERS),
    st.tuples(st.just("new"), st.sampled_from(["wing", "rotor", "fan", ""]), st.sampled_from(PATH_KINDS)),
    st.tuples(st.just("probe"), st.sampled_from(PATH_KINDS), st.just("--plane"),
              st.sampled_from(["x=1", "y=0", "z=nan", "x=1e400", "q=1", "x"]), st.just("--grid"),
              st.sampled_from(["3x3", "1x1", "0x9", "3x", "99999x2"]),
              st.sampled_from([[], ["--extent=-1:1,-1:1"], ["--extent=nan:1,0:1"], ["--extent=1:1,1:1"]]),
              st.sampled_from([[], ["--out"]]), st.sampled_from(PATH_KINDS)),
    st.tuples(st.just("probe"), st.sampled_from(PATH_KINDS), st.just("--points"), st.sampled_from(PATH_KINDS)),
    st.tuples(st.just("plot"), st.sampled_from(PATH_KINDS), st.sampled_from([[], ["--out"]]),
              st.sampled_from(PATH_KINDS)),
)


@settings(max_examples=60, deadline=None, derandomize=True, database=None,
          suppress_health_check=[HealthCheck.function_scoped_fixture, HealthCheck.too_slow])
@given(ARGV)
def test_options_drawn_at_random_end_cleanly(place, drawn):
    """Any mix of paths and numbers: a clean exit, or exit 2 with one line; never a traceback."""
    argv = []
    items = list(drawn)
    for i, a in enumerate(items):
        if isinstance(a, list):
            if a == ["--out"]:
                argv += ["--out", _path(place, items[i + 1])]
                items[i + 1] = None
            else:
                argv += a
        elif a is None:
            continue
        elif a in PATH_KINDS and i > 0:
            argv.append(_path(place, a))
        else:
            argv.append(a)
    if argv[0] == "plot":
        argv += ["--overwrite"]
    status, err = _main(argv)
    assert status in (0, 2), (argv, status, err)
    assert "Traceback" not in err
    if status == 2:
        assert err.count("\n") == 1 and err.startswith("wakes"), err
