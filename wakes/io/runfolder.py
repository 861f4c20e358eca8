"""A run folder: reading it back, and the files it owns.

:func:`read_run` reads the tables and summary a finished run wrote (what
``wakes plot`` and ``wakes probe`` start from); the folder's layout is
described in :mod:`wakes.run`. Every run lists the files it wrote in
``manifest.txt`` (:func:`record_files`); :func:`clear_run` removes those
and the files of the format's known names before ``wakes run --overwrite``
starts, and nothing else, so a user's own files in the folder stay.
"""

from __future__ import annotations

import dataclasses
import json
import os
import re
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pandas as pd

from ..errors import InputError
from ..induction.elements import Filaments, Particles
from .atomic import write_bytes, write_text
from .snapshots import KINDS as SNAPSHOT_KINDS

RUN_MARKERS = ("summary.json", "case.toml", "loads.csv")
MANIFEST = "manifest.txt"
# The format's known names, for a folder whose manifest is missing (a run killed before writing
# it, or one written by an earlier version): the run's tables and figures.
RUN_FILES = RUN_MARKERS + ("sections.csv", "loads.parquet", "sections.parquet", "wake_segments.csv",
                           "wake_particles.csv", "tip_vortex.csv", "radial_loading.csv", "disc_map.csv",
                           "blade_harmonics.csv", MANIFEST)
PLOT_FILES = ("loads.png", "span_loading.png", "radial_loading.png", "wake_3d.png", "tip_vortex.png")
RUN_SUBFOLDERS = ("wake", "checkpoints", "plots", "polars")   # made by a run; removed when left empty
# Known patterns: snapshots, checkpoints, rotors' disc-map figures, the default outputs of 'wakes
# probe' (of the run's wake) and the temporary file of a write killed half way (.NAME.RANDOM.part).
_OWNED = re.compile(rf"^(?:wake/(?:{'|'.join(SNAPSHOT_KINDS)})(?:_\d{{6,}}\.vtp|\.pvd)|checkpoints/step-\d{{7,}}\.npz"
                    r"|probe_points\.csv|probe_plane_[xyz][^/]*\.(?:csv|vts)|plots/disc_map_[A-Za-z0-9_-]+\.png"
                    r"|(?:(?:wake|checkpoints|plots|polars)/)?\.[^/]+\.part)$")


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
    radial_loading, tip_vortex, disc_map : pandas.DataFrame
        Rotors' revolution-averaged radial loading, tip-vortex path and
        disc map (empty when the run has no rotor).
    """

    path: Path
    case: dict
    summary: dict
    loads: pd.DataFrame
    sections: pd.DataFrame
    wake_segments: pd.DataFrame
    wake_particles: pd.DataFrame
    radial_loading: pd.DataFrame
    tip_vortex: pd.DataFrame
    disc_map: pd.DataFrame

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
    tables = {name: (_read_csv(path / f"{name}.csv") if (path / f"{name}.csv").is_file() else empty)
              for name in ("sections", "wake_segments", "wake_particles", "radial_loading", "tip_vortex",
                           "disc_map")}
    return RunFolder(path=path, case=summary.get("case", {}), summary=summary,
                     loads=_read_csv(path / "loads.csv"), **tables)


def _inside(out: Path, rel: str) -> Path | None:
    """``out / rel`` when ``rel`` is a plain relative path that stays inside ``out``, else None."""
    p = Path(rel)
    if not rel or p.is_absolute() or ".." in p.parts:
        return None
    return out / p


def listed_files(out: str | os.PathLike) -> list[str]:
    """The files ``manifest.txt`` of a run folder lists (relative, POSIX ``/``); [] without one."""
    path = Path(out) / MANIFEST
    try:
        lines = path.read_text(encoding="utf-8").splitlines()
    except (FileNotFoundError, UnicodeDecodeError):
        return []
    return [line for line in lines if line and not line.startswith("#")]


def record_files(out: str | os.PathLike, paths) -> Path:
    """Add ``paths`` (files written into the run folder ``out``) to its ``manifest.txt``.

    Entries of files no longer there are dropped; paths outside ``out`` are
    not listed.

    Examples
    --------
    >>> import tempfile, pathlib
    >>> out = pathlib.Path(tempfile.mkdtemp())
    >>> _ = (out / "loads.csv").write_text("step\\n")
    >>> _ = record_files(out, [out / "loads.csv"])
    >>> listed_files(out)
    ['loads.csv', 'manifest.txt']
    """
    out = Path(out)
    names = set(listed_files(out)) | {MANIFEST}
    root = out.resolve()
    for p in map(Path, paths):
        full = (p if p.is_absolute() else Path.cwd() / p).resolve()
        if full.is_relative_to(root) and full != root:
            names.add(full.relative_to(root).as_posix())
    names = sorted(n for n in names if n == MANIFEST or ((q := _inside(out, n)) and q.is_file()))
    header = ("# Files written by wakes into this run folder ('wakes run --overwrite' removes them "
              "and nothing else).\n")
    return write_text(out / MANIFEST, header + "".join(f"{n}\n" for n in names))


def run_files(out: str | os.PathLike) -> list[Path]:
    """The files of ``out`` that a run wrote: listed in its manifest or of the format's known names.

    Examples
    --------
    >>> [p.relative_to("glider-run").as_posix() for p in run_files("glider-run") if p.suffix == ".csv"]
    ['loads.csv', 'polars/survey-glider-section.csv', 'sections.csv', 'wake_segments.csv']
    """
    out = Path(out)
    found = {q for n in listed_files(out) if (q := _inside(out, n)) is not None}
    found |= {out / n for n in RUN_FILES} | {out / "plots" / n for n in PLOT_FILES}
    for folder in ("", *RUN_SUBFOLDERS):
        if (out / folder).is_dir():
            found |= {p for p in (out / folder).iterdir()
                      if _OWNED.match(p.relative_to(out).as_posix())}
    return sorted(p for p in found if p.is_file() or p.is_symlink())


def clear_run(out: str | os.PathLike, keep=()) -> list[Path]:
    """Remove what an earlier run wrote into ``out`` (:func:`run_files`); return the files removed.

    Files named in ``keep`` stay (the inputs of the run about to start, if
    a case was put inside the folder), as do all files the run did not
    write; the run's subfolders go when left empty.
    """
    out = Path(out)
    kept = {Path(k).resolve() for k in keep}
    removed = [p for p in run_files(out) if p.resolve() not in kept]
    for p in removed:
        p.unlink(missing_ok=True)
    for folder in RUN_SUBFOLDERS:
        if (out / folder).is_dir() and not any((out / folder).iterdir()):
            (out / folder).rmdir()
    return removed


POLAR_FOLDER = "polars"


def copy_inputs(case, out: str | os.PathLike):
    """Copy the polar tables ``case`` reads into ``out/polars`` and return the case reading them there.

    With them, the folder's ``case.toml`` (written relative to the folder)
    runs and resumes wherever the folder is moved. A table already inside
    ``out`` stays where it is; two tables of one name get ``-2``, ``-3``...

    Examples
    --------
    >>> import tempfile, pathlib
    >>> from wakes.case import load_case
    >>> out = pathlib.Path(tempfile.mkdtemp())
    >>> case = copy_inputs(load_case("cases/survey-glider.toml"), out)
    >>> case.to_dict(relative_to=out)["bodies"]["wing"]["airfoil"]["polar"]
    'polars/survey-glider-section.csv'
    """
    out = Path(out)
    root = out.resolve()
    copied: dict[Path, Path] = {}
    bodies = []
    for body in case.bodies:
        polar = body.airfoil.polar
        if polar is None or Path(polar).resolve().is_relative_to(root):
            bodies.append(body)
            continue
        source = Path(polar).resolve()
        if source not in copied:
            data = source.read_bytes()
            target = out / POLAR_FOLDER / source.name
            n = 1
            while target.exists() and target.read_bytes() != data:
                n += 1
                target = out / POLAR_FOLDER / f"{source.stem}-{n}{source.suffix}"
            if not target.exists():
                write_bytes(target, data)
            copied[source] = target.resolve()
        airfoil = dataclasses.replace(body.airfoil, polar=str(copied[source]))
        bodies.append(dataclasses.replace(body, airfoil=airfoil))
    if copied:
        record_files(out, list(copied.values()))
    return dataclasses.replace(case, bodies=tuple(bodies))
