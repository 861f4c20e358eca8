"""Wake snapshots over time: ``.vtp`` files and ``.pvd`` collections written as a run goes.

A run folder's ``wake/`` holds ``filaments_NNNNNN.vtp`` and
``particles_NNNNNN.vtp`` (NNNNNN: the step whose starting wake they show)
and the collections ``filaments.pvd`` and ``particles.pvd`` listing them
with their simulated times, so ParaView plays the wake as an animation.
Beside them ``surfaces_NNNNNN.vtp`` and ``surfaces.pvd`` hold the lifting
surfaces (wings, blades) at the same times, as the panels of their ring
lattices (:func:`wakes.io.vtk.write_surfaces`: the leading row on the
quarter-chord line, the last on the shedding line), so the blades turn
with their wake.

Every file is written atomically and a collection is rewritten after each
snapshot, so a run killed at any moment leaves a collection that lists
only snapshots that are complete. A resumed run reads the collections
back, keeps the snapshots before the step it resumes from and writes the
rest.
"""

from __future__ import annotations

import os
import re
import xml.etree.ElementTree as ET
from pathlib import Path

import numpy as np

from ..induction.elements import Filaments, Particles
from . import vtk as vtk_io

KINDS = ("filaments", "particles", "surfaces")
WAKE_FOLDER = "wake"
_FILE = re.compile(r"^(filaments|particles|surfaces)_(\d{6,})\.vtp$")


def merge_wake(sources) -> tuple[Filaments | None, Particles | None]:
    """All filaments and all particles of a wake list as one of each (None if absent)."""
    fil = [s for s in sources if isinstance(s, Filaments) and s.segment_count]
    par = [s for s in sources if isinstance(s, Particles) and s.count]
    merged_f = merged_p = None
    if fil:
        offsets = np.cumsum([0] + [f.nodes.shape[0] for f in fil[:-1]])
        merged_f = Filaments(np.vstack([f.nodes for f in fil]),
                             np.vstack([f.segments + o for f, o in zip(fil, offsets)]),
                             np.concatenate([f.circulation for f in fil]),
                             np.concatenate([f.core_radius for f in fil]), core=fil[0].core)
    if par:
        merged_p = Particles(np.vstack([p.positions for p in par]), np.vstack([p.strengths for p in par]),
                             np.concatenate([p.radii for p in par]), kernel=par[0].kernel)
    return merged_f, merged_p


def _read_collection(path: Path) -> list[tuple[float, str]]:
    """(time, file name) entries of a ``.pvd`` written by :class:`WakeSnapshots`; [] if unreadable."""
    try:
        root = ET.parse(path).getroot()
        return [(float(d.get("timestep")), os.path.basename(d.get("file")))
                for d in root.iter("DataSet")]
    except (OSError, ET.ParseError, TypeError, ValueError):
        return []


class WakeSnapshots:
    """The wake snapshots of one run folder, written one at a time.

    Parameters
    ----------
    run_dir : path-like
        The run folder; files go to ``run_dir/wake/``.
    keep_before : int
        Snapshots already in the folder for steps before this one are kept
        (those of the run being resumed); every other snapshot file there
        is removed. 0 for a new run.
    remove_now : bool
        Remove those files now; if false, when the first snapshot file is
        written (so a run that fails before leaves an earlier run's files
        as they were) or by :meth:`remove_stale`.

    Examples
    --------
    >>> import tempfile, numpy as np, wakes
    >>> ring = wakes.Filaments.from_polyline(np.eye(3), 1.0, 0.01, closed=True)
    >>> snaps = WakeSnapshots(tempfile.mkdtemp())
    >>> paths = snaps.write(0, 0.0, [ring]) + snaps.write(5, 0.5, [ring])
    >>> sorted(p.name for p in paths)
    ['filaments.pvd', 'filaments.pvd', 'filaments_000000.vtp', 'filaments_000005.vtp']
    >>> snaps.times("filaments")
    [0.0, 0.5]
    """

    def __init__(self, run_dir: str | os.PathLike, keep_before: int = 0, remove_now: bool = True):
        self.folder = Path(run_dir) / WAKE_FOLDER
        self.entries: dict[str, list[tuple[int, float, str]]] = {k: [] for k in KINDS}
        listed = set()
        for kind in KINDS:
            for time, name in _read_collection(self.folder / f"{kind}.pvd"):
                m = _FILE.match(name)
                if m and m.group(1) == kind and int(m.group(2)) < keep_before \
                        and (self.folder / name).is_file():
                    self.entries[kind].append((int(m.group(2)), time, name))
                    listed.add(name)
        self._stale = []
        if self.folder.is_dir():
            self._stale = [p for p in self.folder.iterdir()
                           if (_FILE.match(p.name) and p.name not in listed)
                           or (p.suffix == ".pvd" and p.stem in KINDS and not self.entries[p.stem])]
        if remove_now:
            self.remove_stale()

    def times(self, kind: str) -> list[float]:
        """Simulated times [s] of the ``kind`` ("filaments" or "particles") snapshots so far."""
        return [t for _, t, _ in self.entries[kind]]

    def write(self, step: int, time: float, sources, surfaces=()) -> list[Path]:
        """Write the wake ``sources`` (Filaments and Particles) and ``surfaces`` at ``step`` and ``time`` [s].

        ``surfaces`` are :class:`wakes.aero.geometry.LiftingSurface` objects
        at ``time``, written only beside a wake. Returns the files written:
        a ``.vtp`` and its rewritten ``.pvd`` per kind present (none for an
        empty wake, so a run that fails in its first step leaves no file).
        """
        written = []
        writers = {"filaments": vtk_io.write_filaments, "particles": vtk_io.write_particles,
                   "surfaces": vtk_io.write_surfaces}
        wake = merge_wake(sources)
        bodies = list(surfaces) if any(e is not None for e in wake) and len(surfaces) else None
        for kind, elements in zip(KINDS, wake + (bodies,)):
            if elements is None:
                continue
            name = f"{kind}_{step:06d}.vtp"
            written.append(writers[kind](self.folder / name, elements))
            kept = [e for e in self.entries[kind] if e[0] != step]
            self.entries[kind] = sorted(kept + [(step, float(time), name)])
            written.append(vtk_io.write_collection(
                self.folder / f"{kind}.pvd",
                [(t, self.folder / n) for _, t, n in self.entries[kind]]))
        if written:
            self._stale = [p for p in self._stale if p not in written]  # rewritten, not stale
            self.remove_stale()
        return written

    def remove_stale(self) -> None:
        """Remove the snapshot files of an earlier run that this one does not keep."""
        for p in self._stale:
            p.unlink(missing_ok=True)
        self._stale = []
