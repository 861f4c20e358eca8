"""Parameter sweeps: one ordinary run per point of a grid, spread over Dask workers.

A sweep varies dotted case-file keys (``bodies.wing.angle_of_attack`` is not
a key; ``freestream.angle_of_attack`` is) over lists or ranges, as a full
grid or zipped. Every point becomes its own run folder under the sweep
folder; the sweep table has one row per point with the varied values, the
point's status and every summary coefficient.

Every value of every point is checked before the first point runs, by the
same checks as ``wakes check``: an unknown key stops the sweep with a "did
you mean", and a value the schema rejects at any point stops it with a list
of every bad point; nothing runs and nothing is written. A point whose run
fails is recorded with its message and the others run. A point whose folder
already holds a finished run of the same resolved case (same SHA-256 of its
resolved TOML) is reused, so an interrupted sweep resumes.

Work is spread with Dask (``dask.distributed``): by default a local cluster
of worker processes, one thread each, one per core; or any running cluster
given by its scheduler address. Dask's own log lines and warnings are kept
off the terminal (a failed point is reported in the sweep table instead).
Ctrl-C (SIGINT) stops the sweep: the local workers are stopped (they ignore
the signal themselves, so a terminal's Ctrl-C reaches only this process),
``sweep.csv`` is written with every point that finished and the others
marked ``stopped``, and :class:`SweepStopped` says which.
"""

from __future__ import annotations

import contextlib
import copy
import difflib
import hashlib
import io
import itertools
import json
import logging
import math
import os
import signal
import sys
import threading
import time
import warnings
from dataclasses import dataclass
from pathlib import Path

import numba
import pandas as pd

from .case import Case, apply_settings, parse_case, read_toml
from .cluster import connect
from .errors import CaseError, InputError, WakesError
from .io import atomic
from .plots import save_figure, sweep_figure
from .run import run_guarded, write_run

POINT_RECORD = "point.json"
LISTED_BAD_POINTS = 10     # bad points named one by one in the refusal before a sweep runs
# the libraries whose log lines and warnings a sweep keeps off the terminal
QUIET_LIBRARIES = ("distributed", "dask", "tornado", "asyncio", "bokeh")


@dataclass(frozen=True)
class Point:
    """One point of a sweep: its varied values, resolved case and run folder."""

    index: int
    values: dict
    data: dict
    case_hash: str
    folder: Path


class SweepStopped(KeyboardInterrupt):
    """Ctrl-C stopped a sweep; its workers are stopped and its table is written.

    Attributes
    ----------
    table : pandas.DataFrame
        The sweep table as written to ``sweep.csv``: points that finished
        (``ran`` or ``reused``), ``failed`` and ``stopped`` (not finished).
    out : Path
        The sweep folder.
    remote : bool
        Whether the points ran on a cluster given by its scheduler (points
        already running on its workers run to their end there).
    """

    def __init__(self, table: pd.DataFrame, out: Path, remote: bool):
        super().__init__("sweep stopped")
        self.table, self.out, self.remote = table, Path(out), remote

    @property
    def message(self) -> str:
        """What finished, what did not, and where the results are, in one paragraph."""
        status = self.table["status"]
        done = int(status.isin(["ran", "reused"]).sum())
        failed = int((status == "failed").sum())
        stopped = self.table.index[status == "stopped"]
        text = (f"sweep stopped by Ctrl-C: {done} of {len(status)} points finished, "
                f"{failed} failed, {len(stopped)} did not finish")
        if len(stopped):
            text += " (points " + ", ".join(map(str, stopped[:LISTED_BAD_POINTS]))
            text += ", ...)" if len(stopped) > LISTED_BAD_POINTS else ")"
        text += f"; the table so far is {self.out / 'sweep.csv'}"
        if self.remote:
            text += "; points already running on the cluster's workers run to their end there"
        return text + "; run the same command again to go on (finished points are reused)"


def parse_values(text: str) -> list:
    """Parse a VALUES string: ``4,6,8`` or an inclusive range ``start:stop:step``.

    Numbers become floats (or ints when every item is an integer); other
    items stay strings (``filaments,particles``); ``true``/``false`` become
    booleans.

    Examples
    --------
    >>> parse_values("4:10:2")
    [4, 6, 8, 10]
    >>> parse_values("0.5,1")
    [0.5, 1.0]
    """
    text = text.strip()
    if not text:
        raise InputError("VALUES must not be empty; give a list like 4,6,8 or a range like 4:14:2")
    if ":" in text:
        parts = text.split(":")
        try:
            start, stop, step = (float(p) for p in parts) if len(parts) == 3 else (None,) * 3
        except ValueError:
            start = None
        if start is None:
            raise InputError(f"range {text!r} must be start:stop:step with three numbers, "
                             "e.g. 4:14:2")
        if step == 0 or (stop - start) / step < 0 or not all(map(math.isfinite, (start, stop, step))):
            raise InputError(f"range {text!r} must step from start toward stop with a non-zero step")
        n = int(math.floor((stop - start) / step + 1e-9)) + 1
        if n > 100_000:
            raise InputError(f"range {text!r} has {n} points; at most 100000 are accepted")
        vals = [start + k * step for k in range(n)]
        if all(float(v).is_integer() for v in (start, step)):
            return [int(round(v)) for v in vals]
        return [round(v, 12) for v in vals]
    items = [s.strip() for s in text.split(",")]
    if any(not s for s in items):
        raise InputError(f"list {text!r} has an empty item; give values like 4,6,8")
    return _typed(items)


def _typed(items: list[str]) -> list:
    low = [s.lower() for s in items]
    if all(s in ("true", "false") for s in low):
        return [s == "true" for s in low]
    try:
        nums = [float(s) for s in items]
    except ValueError:
        return items
    if all(s.lstrip("+-").isdigit() for s in items):
        return [int(s) for s in items]
    return nums


def parse_vary(option: str) -> tuple[str, list]:
    """Split a ``KEY=VALUES`` command-line option into the key and its values."""
    if "=" not in option:
        raise InputError(f"--vary {option!r} must be KEY=VALUES, e.g. "
                         "freestream.angle_of_attack=2,4,6")
    key, values = option.split("=", 1)
    key = key.strip()
    if not key or any(not part for part in key.split(".")):
        raise InputError(f"--vary {option!r}: KEY must be a dotted case-file path such as "
                         "bodies.rotor.collective")
    return key, parse_values(values)


def _grid(vary: dict, zipped: bool) -> list[dict]:
    keys = list(vary)
    lists = [list(vary[k]) for k in keys]
    if any(len(v) == 0 for v in lists):
        raise InputError("every varied key needs at least one value")
    if zipped:
        lengths = {k: len(v) for k, v in zip(keys, lists)}
        if len(set(lengths.values())) != 1:
            raise InputError(f"zipped lists must have equal lengths; got {lengths}")
        combos = zip(*lists)
    else:
        combos = itertools.product(*lists)
    return [dict(zip(keys, c)) for c in combos]


def _check_key(raw: dict, key: str, source: str) -> None:
    """An unknown body name gets a did-you-mean here; the schema checks the rest."""
    parts = key.split(".")
    if parts[0] == "bodies":
        bodies = raw.get("bodies", {})
        if len(parts) < 3:
            raise CaseError(f"{source}: --vary key {key!r} must name a body's key, "
                            f"e.g. bodies.{next(iter(bodies), 'NAME')}.KEY")
        if parts[1] not in bodies:
            close = difflib.get_close_matches(parts[1], list(bodies), n=1)
            hint = f" (did you mean {close[0]!r}?)" if close else ""
            raise CaseError(f"{source}: --vary key {key!r} names no body {parts[1]!r}{hint}; "
                            f"bodies are {', '.join(map(repr, bodies))}")


def _set(data: dict, key: str, value) -> dict:
    out = copy.deepcopy(data)
    node = out
    parts = key.split(".")
    for p in parts[:-1]:
        nxt = node.get(p)
        if not isinstance(nxt, dict):
            nxt = {}
            node[p] = nxt
        node = nxt
    node[parts[-1]] = value
    return out


def case_hash(case: Case) -> str:
    """SHA-256 of a resolved case's TOML: equal hashes, equal runs."""
    return hashlib.sha256(case.to_toml().encode("utf-8")).hexdigest()


def _folder_name(index: int, values: dict) -> str:
    label = "_".join(f"{k.split('.')[-1]}={v}" for k, v in values.items())
    label = "".join(c if c.isalnum() or c in "=._-" else "-" for c in label)[:80]
    return f"{index:04d}_{label}"


def plan(raw: dict, vary: dict, out_dir, *, source: str = "<dict>", base_dir=".",
         zipped: bool = False) -> list[Point]:
    """Check every value of every point of the sweep before anything runs.

    Each point's case goes through the checks of ``wakes check``
    (:func:`wakes.case.parse_case`).

    Raises
    ------
    wakes.errors.CaseError
        For a key the schema does not know (with a did-you-mean; the same
        key would fail at every point), or for values the schema rejects:
        one line per bad point (the first ``LISTED_BAD_POINTS``) with its
        values and the check's message.

    Examples
    --------
    >>> raw = {"freestream": {"speed": 10.0},
    ...        "bodies": {"wing": {"type": "wing", "span": 4.0, "chord": 0.5}}}
    >>> plan(raw, {"bodies.wing.span": [4.0, -1.0]}, "out")
    Traceback (most recent call last):
    ...
    wakes.errors.CaseError: 1 of 2 sweep points is not a valid case; nothing was run:
      point 1 (bodies.wing.span=-1.0): <dict>: bodies.wing.span must be greater than 0 [m]; got -1.0 ...
    """
    if not vary:
        raise InputError("a sweep needs at least one varied key")
    for key in vary:
        _check_key(raw, key, source)
    points, bad = [], []
    grid = _grid(vary, zipped)
    for index, values in enumerate(grid):
        data = raw
        for k, v in values.items():
            data = _set(data, k, v)
        try:
            case = parse_case(data, source=source, base_dir=base_dir)
        except CaseError as exc:
            if "did you mean" in str(exc) or "unknown key" in str(exc):
                raise
            bad.append(f"  point {index} ({_label(values)}): {exc}")
            continue
        points.append(Point(index, values, data, case_hash(case), Path(out_dir) / _folder_name(index, values)))
    if bad:
        more = len(bad) - LISTED_BAD_POINTS
        lines = bad[:LISTED_BAD_POINTS] + ([f"  and {more} more"] if more > 0 else [])
        verb = "is not a valid case" if len(bad) == 1 else "are not valid cases"
        raise CaseError(f"{len(bad)} of {len(grid)} sweep points {verb}; nothing was run:\n"
                        + "\n".join(lines))
    return points


def _label(values: dict) -> str:
    return ", ".join(f"{k}={v!r}" for k, v in values.items())


def _finished(point: Point) -> dict | None:
    """The summary of an earlier finished run of this very point, if any."""
    try:
        record = json.loads((point.folder / POINT_RECORD).read_text(encoding="utf-8"))
        summary = json.loads((point.folder / "summary.json").read_text(encoding="utf-8"))
    except (OSError, ValueError):
        return None
    return summary if record.get("case_sha256") == point.case_hash else None


def run_point(data: dict, source: str, base_dir: str, folder: str, expected_hash: str) -> dict:
    """Run one point in a worker and write its folder.

    The point runs its numba loops on one thread: the points fill the
    cores, and OpenMP threads of several points on the same cores stall
    each other. The point record (with the case hash) is written last, so
    a folder without it is an unfinished run and is run again on resume.

    Returns
    -------
    dict
        ``{"summary": summary, "error": ""}``, or ``{"summary": None,
        "error": message}`` when the point failed: a failure is the point's
        result, not a task error the scheduler would log.
    """
    numba.set_num_threads(1)
    try:
        case = parse_case(data, source=source, base_dir=base_dir)
        if case_hash(case) != expected_hash:   # a worker with another wakes version
            raise WakesError(f"point resolved differently on the worker ({folder})")
        # the one orchestrator, as `wakes run` uses it; the sweep's workers are the cluster
        run = run_guarded(case, folder, write=lambda r, o: write_run(r, o, plots=False),
                          use_cluster=False)
        if run.status != "finished":
            raise WakesError(f"{run.status}: {run.message}")
        atomic.write_text(Path(folder) / POINT_RECORD,
                          json.dumps({"case_sha256": expected_hash}, indent=2) + "\n")
    except Exception as exc:   # any failure of one point is that point's result
        return {"summary": None, "error": f"{type(exc).__name__}: {exc}"}
    return {"summary": run.summary, "error": ""}


def _flatten(summary: dict) -> dict:
    bodies = summary.get("bodies", {})
    row = {}
    for name, figures in bodies.items():
        for k, v in figures.items():
            if isinstance(v, (int, float)) and not isinstance(v, bool):
                row[k if len(bodies) == 1 else f"{name}.{k}"] = v
    return row


class _Progress:
    """One line on the terminal: points done, failed, time left."""

    def __init__(self, total: int, enabled: bool):
        self.total, self.enabled = total, enabled
        self.done = self.failed = 0
        self.start = time.perf_counter()

    def update(self, ok: bool) -> None:
        self.done += 1
        self.failed += not ok
        if not self.enabled:
            return
        elapsed = time.perf_counter() - self.start
        left = elapsed / self.done * (self.total - self.done)
        width = 24
        fill = int(width * self.done / self.total)
        print(f"\rsweep [{'#' * fill}{'.' * (width - fill)}] {self.done}/{self.total} points, "
              f"{self.failed} failed, {left:5.0f} s left", end="", file=sys.stderr, flush=True)
        if self.done == self.total:
            print(file=sys.stderr)


def _connect(client, scheduler, workers):
    """Return (client, owned): a client to use and whether we must close it."""
    import distributed  # optional heavy library: a local cluster only when no client is given

    if client is not None:
        return client, None
    if scheduler:
        return connect(scheduler), None
    n = workers or os.cpu_count() or 1
    # The worker processes start with SIGINT ignored (an ignored signal stays ignored in a
    # started program, and Python then installs no KeyboardInterrupt handler): a terminal's
    # Ctrl-C reaches the whole process group, and only this process is to act on it.
    with _sigint_ignored():
        cluster = distributed.LocalCluster(n_workers=n, threads_per_worker=1, processes=True,
                                           dashboard_address=None, silence_logs=logging.CRITICAL)
    return distributed.Client(cluster), cluster


@contextlib.contextmanager
def _sigint_ignored():
    """SIGINT ignored within the block (main thread only; elsewhere nothing changes)."""
    if threading.current_thread() is not threading.main_thread():
        yield
        return
    old = signal.signal(signal.SIGINT, signal.SIG_IGN)
    try:
        yield
    finally:
        signal.signal(signal.SIGINT, old)


@contextlib.contextmanager
def _libraries_quiet():
    """Dask's (and its helpers') log lines and warnings kept off the terminal in the block.

    Errors of a point are in the sweep table; a failure of Dask itself
    still raises.
    """
    loggers = [logging.getLogger(name) for name in QUIET_LIBRARIES]
    levels = [lg.level for lg in loggers]
    with warnings.catch_warnings():
        for name in QUIET_LIBRARIES:
            warnings.filterwarnings("ignore", module=rf"{name}(\.|$)")
        for lg in loggers:
            lg.setLevel(logging.CRITICAL)
        try:
            yield
        finally:
            for lg, level in zip(loggers, levels):
                lg.setLevel(level)


def sweep(case, vary: dict, *, out="sweep", settings=(), zipped: bool = False, client=None,
          scheduler: str | None = None, workers: int | None = None,
          progress: bool = False) -> pd.DataFrame:
    """Run a case over a grid of values and tabulate every point's coefficients.

    Parameters
    ----------
    case : str, Path or dict
        A case file, or a case as nested data (``base_dir`` is then the
        current folder).
    vary : dict
        ``{dotted key: list of values}``, e.g.
        ``{"bodies.rotor.collective": [4, 6, 8]}``.
    out : str or Path
        Sweep folder: one run folder per point, plus ``sweep.csv`` and
        ``sweep.png``.
    settings : sequence of str
        ``KEY=VALUE`` case keys set for every point before ``vary``
        (:func:`wakes.case.apply_settings`, as ``--set``).
    zipped : bool
        Pair the lists element by element instead of forming the full grid.
    client : dask.distributed.Client, optional
        Use this client. Otherwise ``scheduler`` is connected to, or a local
        cluster of ``workers`` single-threaded processes is started.
    scheduler : str, optional
        Address of a running Dask scheduler, e.g. ``tcp://10.0.0.5:8786``.
    workers : int, optional
        Worker processes of the local cluster (default: one per core).
    progress : bool
        Draw a progress line on standard error.

    Returns
    -------
    pandas.DataFrame
        One row per point: the varied keys, ``status`` ("ran", "reused" or
        "failed"), ``error``, ``folder`` and every numeric summary figure
        (prefixed ``BODY.`` when the case has several bodies).

    Raises
    ------
    wakes.errors.CaseError
        Before anything runs, for an unknown key or for values the schema
        rejects at any point (:func:`plan`).
    SweepStopped
        On Ctrl-C (a :class:`KeyboardInterrupt`): the workers are stopped
        and ``sweep.csv`` is written, with ``status`` "stopped" for the
        points that did not finish.

    Examples
    --------
    >>> import wakes
    >>> table = wakes.sweep("cases/survey-glider.toml",
    ...                     {"freestream.angle_of_attack": [2, 4], "time.steps": [10]},
    ...                     out="glider-sweep", workers=1)
    >>> list(table["status"]), bool(table["CL"].iloc[1] > table["CL"].iloc[0])
    (['ran', 'ran'], True)
    """
    if isinstance(case, (str, Path)):
        source, base_dir, raw = str(case), str(Path(case).resolve().parent), read_toml(case)
    elif isinstance(case, dict):
        source, base_dir, raw = "<dict>", str(Path.cwd()), case
    else:
        raise InputError(f"case must be a case file path or a dict; got {type(case).__name__}")
    raw = apply_settings(raw, settings)
    out = Path(out)
    points = plan(raw, vary, out, source=source, base_dir=base_dir, zipped=zipped)
    rows: dict[int, dict] = {}
    bar = _Progress(len(points), progress)
    todo = []
    for p in points:
        if (summary := _finished(p)) is not None:
            rows[p.index] = {"status": "reused", "error": "", **_flatten(summary)}
            bar.update(True)
        else:
            todo.append(p)
    try:
        if todo:
            with _libraries_quiet():
                _run_all(todo, rows, bar, client, scheduler, workers, source, base_dir)
    except KeyboardInterrupt:
        with _sigint_ignored():   # the workers are stopped; the table is written whole
            for p in todo:        # the folders say what finished, whatever the results said
                if p.index not in rows:
                    summary = _finished(p)
                    rows[p.index] = ({"status": "ran", "error": "", **_flatten(summary)}
                                     if summary is not None else
                                     {"status": "stopped", "error": "stopped by Ctrl-C before it finished"})
            table = _table(points, rows)
            _write_outputs(table, list(vary), out, raw)
        raise SweepStopped(table, out, remote=client is not None or bool(scheduler)) from None
    table = _table(points, rows)
    _write_outputs(table, list(vary), out, raw)
    return table


def _table(points: list[Point], rows: dict[int, dict]) -> pd.DataFrame:
    return pd.DataFrame([{**p.values, **rows[p.index], "folder": str(p.folder)} for p in points])


def failure_lines(table: pd.DataFrame) -> list[str]:
    """The failed points of a sweep table as lines for the terminal: which point and why.

    Examples
    --------
    >>> import pandas as pd
    >>> table = pd.DataFrame({"time.steps": [10, 20], "status": ["ran", "failed"],
    ...                       "error": ["", "PolarRangeError: angle 20 deg met"],
    ...                       "folder": ["s/0000_steps=10", "s/0001_steps=20"]})
    >>> for line in failure_lines(table):
    ...     print(line)
    1 of 2 points failed:
      point  time.steps  folder           why
      1      20          s/0001_steps=20  PolarRangeError: angle 20 deg met
    """
    failed = table[table["status"] == "failed"]
    if not len(failed):
        return []
    keys = list(table.columns[:list(table.columns).index("status")])
    cells = [["point", *keys, "folder", "why"]]
    cells += [[str(i), *(str(row[k]) for k in keys), str(row["folder"]), str(row["error"])]
              for i, row in failed.iterrows()]
    widths = [max(len(r[c]) for r in cells) for c in range(len(cells[0]))]
    body = ["  " + "  ".join(v.ljust(w) for v, w in zip(r, widths)).rstrip() for r in cells]
    return [f"{len(failed)} of {len(table)} points failed:"] + body


def _run_all(todo, rows, bar, client, scheduler, workers, source, base_dir) -> None:
    from distributed import as_completed  # optional heavy library: only while a sweep runs

    client, cluster = _connect(client, scheduler, workers)
    futures = {}
    try:
        futures = {client.submit(run_point, p.data, source, base_dir, str(p.folder), p.case_hash,
                                 pure=False): p for p in todo}
        for fut in as_completed(futures):
            p = futures[fut]
            try:
                result = fut.result()
            except Exception as exc:   # the task itself was lost (a worker died): the point failed
                result = {"summary": None, "error": f"{type(exc).__name__}: {exc}"}
            ok = not result["error"]
            rows[p.index] = ({"status": "ran", "error": "", **_flatten(result["summary"])} if ok
                             else {"status": "failed", "error": result["error"]})
            bar.update(ok)
    except KeyboardInterrupt:
        with _sigint_ignored():   # stop the workers whole, even at a second Ctrl-C
            client.cancel(list(futures))
            _close(client, cluster)
        raise
    _close(client, cluster)


def _close(client, cluster) -> None:
    """Close a local cluster this sweep started (its worker processes end with it)."""
    if cluster is not None:
        client.close()
        cluster.close()


def _write_outputs(table: pd.DataFrame, keys: list, out: Path, raw: dict) -> None:
    out.mkdir(parents=True, exist_ok=True)
    atomic.write_text(out / "sweep.csv", table.to_csv(index=False, float_format="%.10g"))
    try:
        import pyarrow  # noqa: F401  (optional: the parquet copy only when it is installed)

        buf = io.BytesIO()
        table.to_parquet(buf, index=False)
        atomic.write_bytes(out / "sweep.parquet", buf.getvalue())
    except ImportError:
        pass
    fig = sweep_figure(table, keys[0], raw)
    if fig is not None:
        save_figure(fig, out / "sweep.png")
