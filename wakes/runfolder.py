"""Run folders: write everything a run produces, and read a finished run back.

A run folder holds (see the README for the columns)::

    case.toml            the resolved case, every default filled in
    summary.json         figures of every body, the case, version and revision
    loads.csv            one row per step and body
    sections.csv         span or radial distributions at the last step
    loads.parquet, sections.parquet    the same tables, when pyarrow is installed
    wake_segments.csv, wake_particles.csv   the final wake as tables
    wake/filaments_NNNNNN.vtp, wake/particles_NNNNNN.vtp   VTK PolyData wake snapshots,
                         every [output] snapshot_every steps and at the end
    wake/filaments.pvd, wake/particles.pvd                 ParaView collections over time
    plots/*.png          figures (:mod:`wakes.plots`)

:func:`run_to_folder` is what ``wakes run`` calls; :func:`read_run` is what
``wakes plot`` and ``wakes probe`` start from.
"""

from __future__ import annotations

import json
import math
import os
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pandas as pd

from .elements import Filaments, Particles
from .errors import InputError
from .io.snapshots import WakeSnapshots

RUN_MARKERS = ("summary.json", "case.toml", "loads.csv")


def check_new_folder(out: str | os.PathLike, overwrite: bool = False) -> Path:
    """Refuse a results folder that would overwrite files, unless ``overwrite``.

    Raises
    ------
    wakes.errors.InputError
        If ``out`` is a file, or a folder holding files and ``overwrite`` is false.
    """
    out = Path(out)
    if out.exists() and not out.is_dir():
        raise InputError(f"--out {out}: exists and is not a folder")
    if out.is_dir() and any(out.iterdir()) and not overwrite:
        raise InputError(f"--out {out}: folder exists and is not empty; choose a new folder "
                         "or pass --overwrite to replace the run in it")
    return out


def write_parquet(run, out: str | os.PathLike) -> list[Path]:
    """Parquet copies of loads and sections when pyarrow is installed; else nothing."""
    try:
        import pyarrow  # noqa: F401  (only whether it is there)
    except ImportError:
        return []
    import io

    from .io.atomic import write_bytes

    out = Path(out)
    paths = [out / "loads.parquet", out / "sections.parquet"]
    for frame, path in ((run.loads, paths[0]), (run.sections, paths[1])):
        buf = io.BytesIO()                 # written atomically, as every other file of a run
        frame.to_parquet(buf, index=False)
        write_bytes(path, buf.getvalue())
    return paths


def _unit(key: str) -> tuple[str, str]:
    """Quantity name without its unit suffix, and the unit."""
    for suffix, unit in (("_Nm", "N m"), ("_N", "N"), ("_W", "W"), ("_m2_s", "m^2/s"), ("_m", "m"),
                         ("_s", "s"), ("_deg", "deg")):
        if key.endswith(suffix):
            return key[: -len(suffix)], unit
    return key, ""


def result_table(summary: dict) -> str:
    """A compact table of every body's figures from ``summary.json``.

    Examples
    --------
    >>> print(result_table({"bodies": {"wing": {"CL": 0.5, "lift_N": 12.0}}}))
    body  quantity  value  unit
    wing  CL        0.5
    wing  lift      12     N
    """
    rows = [("body", "quantity", "value", "unit")]
    for name, figures in summary.get("bodies", {}).items():
        for key, value in figures.items():
            if not isinstance(value, (int, float)) or isinstance(value, bool):
                continue
            q, unit = _unit(key)
            text = "-" if isinstance(value, float) and math.isnan(value) else f"{value:.5g}"
            rows.append((name, q, text, unit))
    widths = [max(len(r[i]) for r in rows) for i in range(4)]
    return "\n".join("  ".join(c.ljust(w) for c, w in zip(r, widths)).rstrip() for r in rows)


def run_to_folder(case, out: str | os.PathLike, *, overwrite: bool = False, progress=None,
                  plots: bool = True):
    """Run a case and write its complete run folder.

    Parameters
    ----------
    case : Case or path-like
        A case (:func:`wakes.case.load_case`) or a case file.
    out : path-like
        The run folder; it must not hold files unless ``overwrite``.
    overwrite : bool
        Replace the files of an earlier run in ``out``.
    progress : callable, optional
        ``progress(step, steps)`` (e.g. :class:`wakes.progress.ProgressBar`).
    plots : bool
        Draw the figures into ``out/plots``.

    Returns
    -------
    wakes.simulate.Run
        The run, already written.

    Raises
    ------
    wakes.errors.WakesError
        For a bad case or a results folder that would be overwritten; the
        folder is checked before the run starts.

    Examples
    --------
    >>> run = run_to_folder("cases/survey-glider.toml", "glider-run-2", plots=False)
    >>> sorted(run.summary["bodies"])
    ['wing']
    """
    from .case import Case, load_case
    from .simulate import run_case
    from .watchdog import RunControl

    out = check_new_folder(out, overwrite)
    if not isinstance(case, Case):
        case = load_case(case)
    snapshots = WakeSnapshots(out)
    control = RunControl(snapshot_every=case.output.snapshot_every, snapshot=snapshots.write)
    run = run_case(case, progress=progress, control=control)
    write_run(run, out, plots=plots)
    return run


def write_run(run, out: str | os.PathLike, *, plots: bool = True) -> list[Path]:
    """Write a finished (or partial) :class:`wakes.simulate.Run` as a run folder; return the paths.

    The run's final wake is added to the snapshots in ``out/wake`` (those a
    run wrote as it went, :class:`wakes.io.snapshots.WakeSnapshots`, up to
    the final wake's step are kept; any later ones are removed).
    """
    out = Path(out)
    paths = run.write(out)
    sources = [e for elements in run.wake.values() for e in elements]
    snapshots = WakeSnapshots(out, keep_before=run.wake_step)
    paths += snapshots.write(run.wake_step, run.wake_time_s, sources) + write_parquet(run, out)
    if plots:
        from .plots import plot_run
        paths += plot_run(out, overwrite=True)
    return paths


@dataclass
class RunFolder:
    """A finished run read back from its folder.

    Attributes
    ----------
    path : Path
    case : dict
        The resolved case as plain data (``summary.json["case"]``).
    summary : dict
    loads, sections : pandas.DataFrame
    wake_segments, wake_particles : pandas.DataFrame
        The final wake tables (empty when the run wrote no wake).
    """

    path: Path
    case: dict
    summary: dict
    loads: pd.DataFrame
    sections: pd.DataFrame
    wake_segments: pd.DataFrame
    wake_particles: pd.DataFrame

    @property
    def title(self) -> str:
        """The case title, or the folder name when the case has none."""
        return self.case.get("title") or self.path.name

    def wake_sources(self) -> list:
        """The final wake as :class:`wakes.Filaments` and :class:`wakes.Particles`.

        Core model and particle kernel come from the resolved case's
        ``[wake]`` section.
        """
        wake = self.case.get("wake", {})
        out = []
        s = self.wake_segments
        if len(s):
            a = s[["x0_m", "y0_m", "z0_m"]].to_numpy(np.float64)
            b = s[["x1_m", "y1_m", "z1_m"]].to_numpy(np.float64)
            k = a.shape[0]
            seg = np.stack([np.arange(k), np.arange(k, 2 * k)], axis=1)
            out.append(Filaments(np.vstack([a, b]), seg, s["gamma_m2_s"].to_numpy(np.float64),
                                 s["core_radius_m"].to_numpy(np.float64),
                                 core=wake.get("core", "lamb-oseen")))
        p = self.wake_particles
        if len(p):
            out.append(Particles(p[["x_m", "y_m", "z_m"]].to_numpy(np.float64),
                                 p[["alpha_x_m3_s", "alpha_y_m3_s", "alpha_z_m3_s"]].to_numpy(np.float64),
                                 p["radius_m"].to_numpy(np.float64),
                                 kernel=wake.get("particle_kernel", "gaussian")))
        return out


def _read_csv(path: Path) -> pd.DataFrame:
    try:
        return pd.read_csv(path)
    except (pd.errors.ParserError, pd.errors.EmptyDataError, UnicodeDecodeError) as exc:
        raise InputError(f"run folder file {path}: cannot read it as CSV ({type(exc).__name__})") from None


def read_run(path: str | os.PathLike) -> RunFolder:
    """Read a finished run folder written by ``wakes run``.

    Parameters
    ----------
    path : path-like
        The run folder.

    Returns
    -------
    RunFolder

    Raises
    ------
    wakes.errors.InputError
        If the folder is missing or is not a run folder.

    Examples
    --------
    >>> run = read_run("glider-run")
    >>> len(run.loads)
    70
    """
    path = Path(path)
    if not path.exists():
        raise InputError(f"run folder {path} not found")
    if not path.is_dir():
        raise InputError(f"run folder {path}: is a file, not a folder written by 'wakes run'")
    missing = [m for m in RUN_MARKERS if not (path / m).is_file()]
    if missing:
        raise InputError(f"{path} is not a run folder: {', '.join(missing)} missing "
                         "(a folder written by 'wakes run' holds summary.json, case.toml and loads.csv)")
    try:
        summary = json.loads((path / "summary.json").read_text(encoding="utf-8"))
    except (json.JSONDecodeError, UnicodeDecodeError) as exc:
        raise InputError(f"run folder file {path / 'summary.json'}: not valid JSON ({exc})") from None
    if not isinstance(summary, dict) or "bodies" not in summary:
        raise InputError(f"run folder file {path / 'summary.json'}: has no 'bodies' entry; "
                         "not written by 'wakes run'")
    empty = pd.DataFrame()
    tables = {name: (_read_csv(path / name) if (path / name).is_file() else empty)
              for name in ("sections.csv", "wake_segments.csv", "wake_particles.csv")}
    return RunFolder(path=path, case=summary.get("case", {}), summary=summary,
                     loads=_read_csv(path / "loads.csv"), sections=tables["sections.csv"],
                     wake_segments=tables["wake_segments.csv"],
                     wake_particles=tables["wake_particles.csv"])
