"""Figures of a finished run, drawn from its run folder.

:func:`plot_run` draws, into ``RUN_DIR/plots``:

* ``loads.png``: the history of the main loads of every body;
* ``span_loading.png`` (wings) and ``radial_loading.png`` (rotors):
  circulation and section lift coefficient at the last step;
* ``wake_3d.png``: a 3-D view of the final wake coloured by strength;
* ``tip_vortex.png`` (rotors): radius and axial position of the strongest
  wake filaments, the rolled-up tip vortex, against wake position.

Every figure has axis labels with units and a title naming the case, in one
look of our own (:data:`LOOK`). Only the Agg backend is used, so figures are
drawn without a display.
"""

from __future__ import annotations

import io
import os
from pathlib import Path

import numpy as np

from .errors import InputError
from .io.atomic import write_bytes
from .io.runfolder import read_run

# Our palette: ink for text and axes, a deep teal for the first series,
# then ochre, plum and slate; the wake colour map runs light to dark.
PALETTE = ("#0f5c63", "#c98a1b", "#7a3b69", "#4d5b6a", "#2f8f5b", "#b4463c")
WAKE_CMAP = "cividis"
LOOK = {
    "figure.figsize": (7.0, 4.4), "figure.dpi": 110, "savefig.dpi": 140,
    "font.size": 9.5, "axes.titlesize": 10.5, "axes.titleweight": "bold", "axes.titlelocation": "left",
    "axes.edgecolor": "#3a3a3a", "axes.labelcolor": "#222222", "axes.linewidth": 0.8,
    "axes.spines.top": False, "axes.spines.right": False, "axes.grid": True,
    "grid.color": "#d9d9d9", "grid.linewidth": 0.6, "grid.linestyle": "-",
    "axes.prop_cycle": None,  # set below from PALETTE
    "lines.linewidth": 1.6, "legend.frameon": False, "legend.fontsize": 8.5,
    "xtick.color": "#3a3a3a", "ytick.color": "#3a3a3a",
}
MAX_WAKE_SEGMENTS_DRAWN = 30000   # a 3-D line plot beyond this takes minutes; every k-th is drawn

# Load history: (column, axis label) by preference; the first two present are drawn.
HISTORY = (("CL", "lift coefficient CL [-]"), ("CDi", "induced drag coefficient CDi [-]"),
           ("thrust_N", "thrust [N]"), ("power_W", "shaft power [W]"), ("torque_Nm", "torque [N m]"))


def _look():
    import matplotlib  # optional heavy library: loaded only when drawing
    matplotlib.use("Agg", force=False)
    from cycler import cycler  # comes with matplotlib
    rc = dict(LOOK)
    rc["axes.prop_cycle"] = cycler(color=PALETTE)
    return matplotlib.rc_context(rc)


def _save(fig, path: Path) -> Path:
    """Write the figure atomically (a full disk leaves no truncated image) and close it."""
    import matplotlib.pyplot as plt  # optional heavy library: loaded only when drawing

    buf = io.BytesIO()
    try:
        fig.savefig(buf, format=Path(path).suffix.lstrip(".") or "png", bbox_inches="tight")
    finally:
        plt.close(fig)
    return write_bytes(path, buf.getvalue())


def plot_loads(run, path) -> Path | None:
    """Load history of every body: two main quantities against time; None if there is none."""
    import matplotlib.pyplot as plt  # optional heavy library: loaded only when drawing

    loads = run.loads
    bodies = list(dict.fromkeys(loads["body"])) if "body" in loads else []
    cols = [(c, lab) for c, lab in HISTORY if c in loads and loads[c].notna().any()][:2]
    if not bodies or not cols:
        return None
    with _look():
        fig, axes = plt.subplots(len(cols), 1, sharex=True, squeeze=False,
                                 figsize=(7.0, 2.3 * len(cols) + 0.6))
        for ax, (col, label) in zip(axes[:, 0], cols):
            for body in bodies:
                mine = loads[loads["body"] == body]
                if mine[col].notna().any():
                    ax.plot(mine["time_s"], mine[col], label=body)
            ax.set_ylabel(label)
        axes[0, 0].set_title(f"{run.title}: load history")
        axes[-1, 0].set_xlabel("simulated time [s]")
        if len(bodies) > 1:
            axes[0, 0].legend()
        return _save(fig, Path(path))


def plot_sections(run, folder) -> list[Path]:
    """Span loading of wings and radial loading of rotors at the last step."""
    import matplotlib.pyplot as plt  # optional heavy library: loaded only when drawing

    s = run.sections
    out = []
    if not len(s) or "gamma_m2_s" not in s:
        return out
    groups = (("span_loading.png", "eta", "y_m", "spanwise position y [m]", "span loading"),
              ("radial_loading.png", "r_over_R", "r_over_R", "radius r/R [-]", "radial loading"))
    for name, marker, xcol, xlabel, what in groups:
        mine = s[s[marker].notna()] if marker in s else s.iloc[0:0]
        if marker == "eta" and "r_over_R" in s:
            mine = mine[mine["r_over_R"].isna()]
        if not len(mine):
            continue
        with _look():
            fig, (a1, a2) = plt.subplots(2, 1, sharex=True, figsize=(7.0, 5.0))
            keys = ["body"] + (["blade"] if "blade" in mine and mine["blade"].notna().any()
                               and marker == "r_over_R" else []) + (["surface"] if marker == "eta" else [])
            for label, part in mine.groupby(keys, sort=False):
                label = " ".join(dict.fromkeys(str(v) for v in (label if isinstance(label, tuple) else (label,))))
                part = part.sort_values(xcol)
                a1.plot(part[xcol], part["gamma_m2_s"], marker=".", label=label)
                if "cl" in part:
                    a2.plot(part[xcol], part["cl"], marker=".", label=label)
            a1.set_ylabel("circulation Γ [m²/s]")
            a2.set_ylabel("section lift coefficient cl [-]")
            a2.set_xlabel(xlabel)
            a1.set_title(f"{run.title}: {what} at the last step")
            a1.legend()
            out.append(_save(fig, Path(folder) / name))
    return out


def plot_wake(run, path) -> Path | None:
    """3-D view of the final wake: filaments coloured by |Γ|, particles by |α|; None if no wake."""
    import matplotlib.pyplot as plt  # optional heavy library: loaded only when drawing
    from matplotlib import colors  # optional heavy library: loaded only when drawing
    from mpl_toolkits.mplot3d.art3d import Line3DCollection  # comes with matplotlib

    seg, par = run.wake_segments, run.wake_particles
    if not len(seg) and not len(par):
        return None
    with _look():
        fig = plt.figure(figsize=(7.5, 5.6))
        ax = fig.add_subplot(projection="3d")
        pts = []
        if len(seg):
            every = max(1, int(np.ceil(len(seg) / MAX_WAKE_SEGMENTS_DRAWN)))
            s = seg.iloc[::every]
            a = s[["x0_m", "y0_m", "z0_m"]].to_numpy()
            b = s[["x1_m", "y1_m", "z1_m"]].to_numpy()
            g = np.abs(s["gamma_m2_s"].to_numpy())
            lines = Line3DCollection(np.stack([a, b], axis=1), cmap=WAKE_CMAP,
                                     norm=colors.Normalize(0.0, g.max() or 1.0), linewidths=0.8)
            lines.set_array(g)
            ax.add_collection3d(lines)
            fig.colorbar(lines, ax=ax, shrink=0.6, pad=0.1, label="filament circulation |Γ| [m²/s]")
            pts += [a, b]
        if len(par):
            p = par[["x_m", "y_m", "z_m"]].to_numpy()
            mag = np.linalg.norm(par[["alpha_x_m3_s", "alpha_y_m3_s", "alpha_z_m3_s"]].to_numpy(), axis=1)
            sc = ax.scatter(p[:, 0], p[:, 1], p[:, 2], c=mag, cmap=WAKE_CMAP, s=3, depthshade=False)
            fig.colorbar(sc, ax=ax, shrink=0.6, pad=0.02, label="particle strength |α| [m³/s]")
            pts.append(p)
        allp = np.vstack(pts)
        lo, hi = allp.min(axis=0), allp.max(axis=0)
        mid, half = 0.5 * (lo + hi), 0.5 * max(float((hi - lo).max()), 1e-9)
        ax.set_xlim(mid[0] - half, mid[0] + half)
        ax.set_ylim(mid[1] - half, mid[1] + half)
        ax.set_zlim(mid[2] - half, mid[2] + half)
        ax.set_xlabel("x [m]")
        ax.set_ylabel("y [m]")
        ax.set_zlabel("z [m]")
        ax.set_title(f"{run.title}: final wake")
        return _save(fig, Path(path))


def tip_vortex_points(segments, body: dict) -> tuple[np.ndarray, np.ndarray]:
    """Axial and radial positions of a rotor wake's tip-vortex filaments.

    After roll-up the tip and root vortices are the strongest filaments,
    with opposite signs; those carrying at least half the largest |Γ| with
    the sign of the group farther from the axis are the tip vortex.

    Parameters
    ----------
    segments : pandas.DataFrame
        Wake segments of one rotor (columns ``x0_m`` ... ``z1_m``, ``gamma_m2_s``).
    body : dict
        The rotor's case table (``hub``, ``axis``).

    Returns
    -------
    axial, radial : ndarray (K,)
        Distance of each filament's midpoint along the axis from the hub, and
        from the axis [m].
    """
    gamma = segments["gamma_m2_s"].to_numpy()
    mid = 0.5 * (segments[["x0_m", "y0_m", "z0_m"]].to_numpy()
                 + segments[["x1_m", "y1_m", "z1_m"]].to_numpy())
    axis = np.asarray(body["axis"], dtype=np.float64)
    axis = axis / np.linalg.norm(axis)
    rel = mid - np.asarray(body["hub"], dtype=np.float64)
    axial = rel @ axis
    radial = np.linalg.norm(rel - axial[:, None] * axis, axis=1)
    strong = np.abs(gamma) >= 0.5 * np.abs(gamma).max()
    mean_r = {sign: radial[strong & (np.sign(gamma) == sign)].mean()
              for sign in (-1.0, 1.0) if np.any(strong & (np.sign(gamma) == sign))}
    tip = strong & (np.sign(gamma) == max(mean_r, key=mean_r.get))
    return axial[tip], radial[tip]


def plot_tip_vortex(run, path) -> Path | None:
    """Tip-vortex path of every rotor: radius and axial distance of the
    filaments :func:`tip_vortex_points` picks. None if the run has no rotor wake."""
    import matplotlib.pyplot as plt  # optional heavy library: loaded only when drawing

    seg = run.wake_segments
    rotors = {name: b for name, b in run.case.get("bodies", {}).items() if b.get("type") == "rotor"}
    if not len(seg) or not rotors:
        return None
    drawn = False
    with _look():
        fig, ax = plt.subplots()
        for name, body in rotors.items():
            mine = seg[seg["surface"].astype(str).str.startswith(f"{name}/")]
            if not len(mine):
                continue
            axial, radial = tip_vortex_points(mine, body)
            big_r = float(body["radius"])
            ax.scatter(-axial / big_r, radial / big_r, s=6, label=name)
            drawn = True
        if not drawn:
            plt.close(fig)
            return None
        ax.set_xlabel("distance behind the rotor disc along -axis, z/R [-]")
        ax.set_ylabel("radius r/R [-]")
        ax.set_title(f"{run.title}: tip-vortex path")
        ax.legend()
        return _save(fig, Path(path))


def plot_run(run_dir: str | os.PathLike, *, out: str | os.PathLike | None = None,
             overwrite: bool = False) -> list[Path]:
    """Draw every figure of a finished run.

    Parameters
    ----------
    run_dir : path-like
        A run folder written by ``wakes run``.
    out : path-like, optional
        Folder for the PNG files (default: ``run_dir/plots``).
    overwrite : bool
        Replace figures already there.

    Returns
    -------
    list of Path
        The PNG files written.

    Raises
    ------
    wakes.errors.InputError
        If ``run_dir`` is not a run folder, or figures exist and ``overwrite`` is false.

    Examples
    --------
    >>> paths = plot_run("glider-run", overwrite=True)
    >>> [p.name for p in paths]
    ['loads.png', 'span_loading.png', 'wake_3d.png']
    """
    run = read_run(run_dir)
    folder = Path(out) if out is not None else run.path / "plots"
    if folder.exists() and not folder.is_dir():
        raise InputError(f"plot folder {folder}: exists and is not a folder")
    existing = sorted(folder.glob("*.png")) if folder.is_dir() else []
    if existing and not overwrite:
        raise InputError(f"plot folder {folder} already holds {existing[0].name}"
                         f"{' and others' if len(existing) > 1 else ''}; pass --overwrite to redraw "
                         "or --out to draw elsewhere")
    folder.mkdir(parents=True, exist_ok=True)
    paths = [plot_loads(run, folder / "loads.png")]
    paths += plot_sections(run, folder)
    paths += [plot_wake(run, folder / "wake_3d.png"), plot_tip_vortex(run, folder / "tip_vortex.png")]
    return [p for p in paths if p is not None]
