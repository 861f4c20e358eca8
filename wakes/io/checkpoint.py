"""Checkpoints of the time loop: everything a run needs to go on exactly where it stopped.

A checkpoint is one NumPy ``.npz`` file in ``RUN_DIR/checkpoints/``
(``step-NNNNNNN.npz``, the number being the next step to run) holding plain
arrays only -- it is read with ``allow_pickle=False``, so opening one runs no
code. Its ``meta`` entry is a JSON document with the format and version, the
resolved case as TOML text, the step and time, the time origin, the loads
rows written so far and the scalar attributes of every wake.

What the loop carries from one step to the next, and so what is stored:

* the next step and its time, and the time origin ``(step0, t0)`` with
  t = t0 + (step - step0) dt (a resume with a smaller step moves the origin);
* the bound circulation of the last step (the solver's starting guess) and
  of the step before (the unsteady loads take its time derivative);
* the loads rows so far;
* every wake's arrays (node rows, ring circulations, row times, particles)
  and scalars, whatever wake class a body uses;
* every body's own state that one step hands to the next (a flapping
  rotor's flap angles, rates and last air moments; ``motion_state()`` of
  the body models, :mod:`wakes.aero.bodies`);
* the influence blocks that a rotating surface reuses by a rigid rotation of
  a block computed at an earlier step (recomputing them would round
  differently); blocks of surfaces that did not move are recomputed
  identically and are not stored.

There is no random number generator in the loop. Restoring a checkpoint and
running on gives the same bits as a run that never stopped, on the same
machine and with the same library build.
"""

from __future__ import annotations

import json
import re
import tomllib
import zipfile
import zlib
from dataclasses import dataclass, field
from io import BytesIO
from pathlib import Path

import numpy as np

from ..case import merge, parse_case
from ..errors import CheckpointError
from .atomic import write_bytes

CHECKPOINT_FORMAT = "wakes-run-checkpoint"
CHECKPOINT_VERSION = 1
CHECKPOINT_FOLDER = "checkpoints"
KEEP_CHECKPOINTS = 2          # newest checkpoints kept in a run folder; older ones are removed
_NAME = re.compile(r"^step-(\d{7,})\.npz$")


@dataclass
class LoopState:
    """The state of the time loop at the start of step ``step``.

    Attributes
    ----------
    step : int
        The next step to run.
    time : float
        Its time [s].
    origin : tuple of (int, float)
        ``(step0, t0)``: step k runs at t0 + (k - step0) dt.
    gamma : ndarray, shape (N,)
        Bound circulation of the last step [m^2/s] (zeros before step 0).
    gamma_prev : ndarray, shape (N,), or None
        The same of the step before, None before step 1.
    rows : list of dict
        Loads-table rows; the first ``n_rows`` are those of the steps done
        (the loop may have appended more since the state was taken).
    wakes : list of dict
        Per wake: its class name and its attributes that are arrays or
        scalars (``vars(wake)``; settings objects are rebuilt from the case).
    blocks : dict
        Influence-cache entries ``{(source, target): (ref_points, ref_block,
        last_points, last_block)}`` of blocks reused by rotation.
    bodies : list of dict
        Per body: its ``motion_state()`` (arrays and floats; empty for a
        body whose motion is a function of time).
    """

    step: int
    time: float
    origin: tuple
    gamma: np.ndarray
    gamma_prev: np.ndarray | None
    rows: list
    wakes: list
    blocks: dict = field(default_factory=dict)
    n_rows: int = -1
    bodies: list = field(default_factory=list)

    def __post_init__(self):
        if self.n_rows < 0:
            self.n_rows = len(self.rows)

    def done_rows(self) -> list:
        """The loads rows of the steps done before ``step``."""
        return self.rows[:self.n_rows]

    @classmethod
    def capture(cls, step, time, origin, wakes, gamma, gamma_prev, rows, cache=None, bodies=()) -> LoopState:
        """Record the loop's state without copying arrays.

        The loop replaces a wake's arrays instead of writing into them, so
        references taken here keep showing the state at the start of the
        step even after the step has moved the wake on (the bodies' motion
        states, likewise, are replaced, not written into).
        """
        kept = [_wake_record(w) for w in wakes]
        blocks = cache.rotated_blocks() if cache is not None else {}
        return cls(int(step), float(time), (int(origin[0]), float(origin[1])), gamma,
                   gamma_prev, rows, kept, blocks, len(rows), [b.motion_state() for b in bodies])

    def restore(self, wakes, cache=None, bodies=()) -> None:
        """Put the stored wake arrays into freshly built ``wakes`` (and the cache blocks, and the
        ``bodies``' motion states)."""
        if len(wakes) != len(self.wakes):
            raise CheckpointError(f"the checkpoint holds {len(self.wakes)} wakes but the case "
                                  f"builds {len(wakes)}; it was written for another case")
        for w, rec in zip(wakes, self.wakes):
            if type(w).__name__ != rec["class"]:
                raise CheckpointError(f"the checkpoint holds a {rec['class']} wake where the case "
                                      f"builds a {type(w).__name__}; it was written for another case")
            for name, value in rec["state"].items():
                setattr(w, name, value)
        if cache is not None and self.blocks:
            cache.restore_blocks(self.blocks)
        if bodies and self.bodies:
            if len(bodies) != len(self.bodies):
                raise CheckpointError(f"the checkpoint holds {len(self.bodies)} bodies but the case "
                                      f"builds {len(bodies)}; it was written for another case")
            for body, state in zip(bodies, self.bodies):
                body.restore_motion_state(state)


def _wake_record(wake) -> dict:
    state = {}
    for name, value in vars(wake).items():
        if isinstance(value, np.ndarray) or (isinstance(value, (bool, int, float, str))
                                             and not isinstance(value, np.generic)):
            state[name] = value
        elif isinstance(value, np.generic):
            state[name] = value.item()
    return {"class": type(wake).__name__, "state": state}


def _plain(x):
    if isinstance(x, np.generic):
        return x.item()
    return x


def checkpoint_bytes(state: LoopState, case_toml: str, source: str = "<dict>") -> bytes:
    """The ``.npz`` file of ``state`` for the resolved case ``case_toml`` (read from ``source``)."""
    arrays = {"gamma": np.asarray(state.gamma, dtype=np.float64)}
    if state.gamma_prev is not None:
        arrays["gamma_prev"] = np.asarray(state.gamma_prev, dtype=np.float64)
    wakes_meta = []
    for i, rec in enumerate(state.wakes):
        scalars, names = {}, []
        for name, value in rec["state"].items():
            if isinstance(value, np.ndarray):
                arrays[f"wake{i}/{name}"] = value
                names.append(name)
            else:
                scalars[name] = value
        wakes_meta.append({"class": rec["class"], "arrays": names, "scalars": scalars})
    blocks_meta = []
    for j, (key, entry) in enumerate(state.blocks.items()):
        blocks_meta.append(list(key))
        for part, value in zip(("ref_points", "ref_block", "last_points", "last_block"), entry):
            arrays[f"block{j}/{part}"] = value
    bodies_meta = []
    for i, state_i in enumerate(state.bodies):
        scalars, names = {}, []
        for name, value in state_i.items():
            if isinstance(value, np.ndarray):
                arrays[f"body{i}/{name}"] = value
                names.append(name)
            else:
                scalars[name] = _plain(value)
        bodies_meta.append({"arrays": names, "scalars": scalars})
    meta = {"format": CHECKPOINT_FORMAT, "version": CHECKPOINT_VERSION, "step": state.step,
            "time": state.time, "origin": list(state.origin), "case_toml": case_toml,
            "source": source,
            "rows": [{k: _plain(v) for k, v in r.items()} for r in state.done_rows()],
            "wakes": wakes_meta, "blocks": blocks_meta, "bodies": bodies_meta}
    # allow_nan: a loads value may be inf or nan; Python's reader takes the tokens back exactly
    arrays["meta"] = np.array(json.dumps(meta, allow_nan=True))
    buf = BytesIO()
    np.savez(buf, **arrays)
    return buf.getvalue()


def write_checkpoint(run_dir, state: LoopState, case_toml: str, source: str = "<dict>") -> Path:
    """Write ``state`` atomically to ``run_dir/checkpoints/step-NNNNNNN.npz``; return the path.

    Older checkpoints beyond the newest ``KEEP_CHECKPOINTS`` are removed
    after the new one is in place.
    """
    folder = Path(run_dir) / CHECKPOINT_FOLDER
    path = write_bytes(folder / f"step-{state.step:07d}.npz", checkpoint_bytes(state, case_toml, source))
    for old in list_checkpoints(run_dir)[:-KEEP_CHECKPOINTS]:
        old.unlink(missing_ok=True)
    return path


def list_checkpoints(run_dir) -> list[Path]:
    """Checkpoint files of a run folder, oldest first."""
    folder = Path(run_dir) / CHECKPOINT_FOLDER
    if not folder.is_dir():
        return []
    found = [(int(m.group(1)), p) for p in folder.iterdir() if (m := _NAME.match(p.name))]
    return [p for _, p in sorted(found)]


def read_checkpoint(path) -> tuple[LoopState, str, str]:
    """Read a checkpoint file: the loop state, the resolved case TOML text and its source.

    Raises
    ------
    CheckpointError
        If the file is not a readable checkpoint of this format and version.
    """
    path = Path(path)
    try:
        with np.load(path, allow_pickle=False) as data:
            arrays = {k: data[k] for k in data.files}
        meta = json.loads(str(arrays.pop("meta")))
        fmt, version = meta.get("format"), meta.get("version")
    except (OSError, ValueError, KeyError, EOFError, AttributeError, zipfile.BadZipFile, zlib.error) as exc:
        raise CheckpointError(f"checkpoint '{path}' cannot be read ({type(exc).__name__}: {exc}); "
                              "it must be a file written by a wakes run") from None
    if fmt != CHECKPOINT_FORMAT or version != CHECKPOINT_VERSION:
        raise CheckpointError(f"checkpoint '{path}' has format {fmt!r} version {version!r}; this "
                              f"wakes reads {CHECKPOINT_FORMAT!r} version {CHECKPOINT_VERSION}")
    try:
        wakes = []
        for i, w in enumerate(meta["wakes"]):
            state = {name: arrays[f"wake{i}/{name}"] for name in w["arrays"]}
            state.update(w["scalars"])
            wakes.append({"class": w["class"], "state": state})
        blocks = {tuple(key): tuple(arrays[f"block{j}/{part}"] for part in
                                    ("ref_points", "ref_block", "last_points", "last_block"))
                  for j, key in enumerate(meta["blocks"])}
        bodies = []
        for i, b in enumerate(meta.get("bodies", [])):   # none in checkpoints of earlier versions
            body = {name: arrays[f"body{i}/{name}"] for name in b["arrays"]}
            body.update(b["scalars"])
            bodies.append(body)
        state = LoopState(step=int(meta["step"]), time=float(meta["time"]),
                          origin=(int(meta["origin"][0]), float(meta["origin"][1])),
                          gamma=arrays["gamma"], gamma_prev=arrays.get("gamma_prev"),
                          rows=list(meta["rows"]), wakes=wakes, blocks=blocks, bodies=bodies)
        return state, str(meta["case_toml"]), str(meta.get("source", "<dict>"))
    except (KeyError, TypeError, ValueError, IndexError) as exc:
        raise CheckpointError(f"checkpoint '{path}' is incomplete ({type(exc).__name__}: {exc})") from None


def newest_checkpoint(run_dir) -> tuple[LoopState, str, str, Path]:
    """The newest checkpoint of a run folder: state, case TOML text, case source and its path.

    Raises
    ------
    CheckpointError
        If the folder holds no checkpoint.
    """
    run_dir = Path(run_dir)
    if not run_dir.is_dir():
        raise CheckpointError(f"--resume {run_dir}: no such run folder")
    found = list_checkpoints(run_dir)
    if not found:
        raise CheckpointError(f"--resume {run_dir}: the folder holds no checkpoint "
                              f"({CHECKPOINT_FOLDER}/step-*.npz); it is written every "
                              "[output] checkpoint_every steps, on Ctrl-C and when a run goes unstable")
    state, text, source = read_checkpoint(found[-1])
    return state, text, source, found[-1]


def case_from_checkpoint(case_toml: str, source: str, overrides: dict | None = None, base_dir=None):
    """The resolved case stored in a checkpoint, re-checked (``overrides`` merged first).

    ``source`` is the case file the run was started from (kept for messages
    and the run folder's case.toml); relative paths in the stored case are
    taken from ``base_dir``, the run folder (checkpoints of earlier
    versions hold absolute ones).
    """

    try:
        data = tomllib.loads(case_toml)
    except tomllib.TOMLDecodeError as exc:
        raise CheckpointError(f"{source}: the stored case is not valid TOML ({exc})") from None
    if overrides:
        data = merge(data, overrides)
    base = Path(base_dir) if base_dir is not None else Path(source).resolve().parent
    return parse_case(data, source=source, base_dir=base)


def prepare_resume(run_dir, dt: float | None = None):
    """The case and loop state to go on from the newest checkpoint of ``run_dir``.

    Parameters
    ----------
    run_dir : path-like
        A run folder holding ``checkpoints/``.
    dt : float, optional
        A new time step [s] (e.g. smaller after the run went unstable). The
        run then still ends at the final time of the stored case: the step
        count is raised to reach it and time goes on from the checkpoint's.
        The first step's unsteady term sees the circulation of the old
        step, taken ``dt`` earlier.

    Returns
    -------
    case : wakes.case.Case
    state : LoopState
    """
    state, text, source, _ = newest_checkpoint(run_dir)
    overrides = None
    if dt is not None:
        if not (isinstance(dt, (int, float)) and dt > 0.0 and np.isfinite(dt)):
            raise CheckpointError(f"--dt must be a positive number of seconds; got {dt!r}")
        old = tomllib.loads(text)["time"]
        step0, t0 = state.origin
        t_end = t0 + (int(old["steps"]) - 1 - step0) * float(old["dt"])
        remaining = max(int(np.ceil((t_end - state.time) / dt - 1e-9)), 0)
        overrides = {"time": {"dt": float(dt), "steps": state.step + remaining + 1}}
        state.origin = (state.step, state.time)
    case = case_from_checkpoint(text, source, overrides, base_dir=run_dir)
    if state.step >= case.time.steps:
        raise CheckpointError(f"--resume {run_dir}: the checkpoint is at step {state.step} of "
                              f"{case.time.steps}; nothing is left to run")
    return case, state


def remove_checkpoints(run_dir) -> None:
    """Delete the checkpoints of a run folder (after the run has finished)."""
    for p in list_checkpoints(run_dir):
        p.unlink(missing_ok=True)
    folder = Path(run_dir) / CHECKPOINT_FOLDER
    if folder.is_dir() and not any(folder.iterdir()):
        folder.rmdir()
