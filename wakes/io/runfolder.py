"""Reading a run folder back: the tables and summary a finished run wrote.

What ``wakes plot`` and ``wakes probe`` start from; the folder's layout is
described in :mod:`wakes.run`.
"""

from __future__ import annotations

import json
import os
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pandas as pd

from ..errors import InputError
from ..induction.elements import Filaments, Particles

RUN_MARKERS = ("summary.json", "case.toml", "loads.csv")


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
    radial_loading, tip_vortex : pandas.DataFrame
        Rotors' revolution-averaged radial loading and tip-vortex path
        (empty when the run has no rotor).
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
              for name in ("sections", "wake_segments", "wake_particles", "radial_loading", "tip_vortex")}
    return RunFolder(path=path, case=summary.get("case", {}), summary=summary,
                     loads=_read_csv(path / "loads.csv"), **tables)
