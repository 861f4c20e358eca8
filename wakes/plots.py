"""Figures of a finished run, drawn from its run folder's tables.

:func:`figures` builds them (matplotlib :class:`~matplotlib.figure.Figure`
objects, not yet saved); :func:`plot_run` writes them into ``RUN_DIR/plots``.
Each figure draws one table of the run folder and nothing else:

* ``loads.png`` from ``loads.csv``: every body's history, in a column of
  its own, of the coefficients of its kind (:data:`LOAD_PANELS`): lift,
  drag and pitching moment coefficients of a wing against time; thrust and power
  coefficients and the figure of merit of a lift rotor, thrust and power
  coefficients and efficiency of a propeller, power and thrust
  coefficients of a turbine, against revolutions;
* ``span_loading.png`` (wings) from ``sections.csv``: circulation and
  section lift coefficient at the last step;
* ``radial_loading.png`` (rotors) from ``radial_loading.csv``:
  circulation, section lift coefficient and thrust per unit radius,
  averaged over the last revolution and the blades;
* ``wake_3d.png`` from ``wake_segments.csv`` and ``wake_particles.csv``:
  a 3-D view of the final wake coloured by strength;
* ``tip_vortex.png`` (rotors) from ``tip_vortex.csv``: the tip vortex's
  distance from the axis and along it against wake age.
* ``disc_map_NAME.png`` (one per rotor) from ``disc_map.csv``: the normal
  force per unit radius and the inflow ratio of blade 1 over the last
  revolution, on the disc, psi = 0 (downstream) at the bottom and psi
  growing counter-clockwise (the disc seen from the +axis side of a ``ccw``
  rotor; a ``cw`` rotor's disc is drawn mirrored).

:func:`sweep_figure` draws a sweep's ``sweep.png`` from its table, with
axis labels from the case schema (:func:`key_label`). Every figure has
axis labels with units and a title naming the case, in one look of our own
(:data:`LOOK`). Figures are drawn without pyplot or a display.
"""

from __future__ import annotations

import io
import os
from pathlib import Path

import numpy as np
import pandas as pd

from .case import BODY_TYPES, Case
from .case.schema import public_fields
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

#: Axis label of each figure of ``summary.json`` and ``loads.csv`` drawn as a curve.
QUANTITY_LABELS = {
    "CL": "lift coefficient C_L [-]", "CD": "drag coefficient C_D [-]",
    "CDi": "induced drag coefficient C_Di [-]", "CM": "pitching moment coefficient C_m [-]",
    "lift_to_drag": "lift-to-drag ratio L/D [-]",
    "span_efficiency": "span efficiency e [-]", "CT": "thrust coefficient C_T [-]",
    "CP": "power coefficient C_P [-]", "CQ": "torque coefficient C_Q [-]", "FM": "figure of merit FM [-]",
    "efficiency": "propulsive efficiency η [-]", "J": "advance ratio J [-]",
    "tip_speed_ratio": "tip-speed ratio λ [-]", "thrust_N": "thrust [N]", "power_W": "shaft power [W]",
    "torque_Nm": "torque [N m]", "lift_N": "lift [N]",
}
#: Load history panels of each body kind, by preference: those with data are drawn, at most three.
#: A lift rotor's C_Q equals its C_P (both scale with (Omega R)^2 and Omega R), so only C_P is drawn;
#: ratios fixed by the case (a turbine's tip-speed ratio, a rotor's advance ratio) are not drawn.
LOAD_PANELS = {
    "wing": ("CL", "CD", "CM", "CDi"),
    "rotor": ("CT", "CP", "FM"),
    "propeller": ("CT", "CP", "efficiency"),
    "turbine": ("CP", "CT"),
}
# When a body has none of its kind's coefficients: dimensional loads.
FALLBACK_PANELS = ("lift_N", "thrust_N", "power_W", "torque_Nm")
#: Coefficients a sweep figure draws against the first varied key, in this order, at most four.
SWEEP_PANELS = ("CT", "CP", "FM", "efficiency", "CL", "CD", "CDi", "span_efficiency")
#: A refinement study's table and figure (wakes.refinement); ``plot_run`` redraws the figure of a study folder.
STUDY_TABLE = "uncertainty.csv"
STUDY_FIGURE = "uncertainty.png"
#: Loads an uncertainty figure draws against refinement, in this order, at most four.
UNCERTAINTY_PANELS = ("CT", "CP", "FM", "efficiency", "CL", "CDi", "CD", "CM")


def _look():
    import matplotlib  # optional heavy library: loaded only when drawing
    from cycler import cycler  # comes with matplotlib

    rc = dict(LOOK)
    rc["axes.prop_cycle"] = cycler(color=PALETTE)
    return matplotlib.rc_context(rc)


def _figure(**kw):
    """A figure not registered with pyplot (nothing to close; no display needed)."""
    from matplotlib.figure import Figure  # optional heavy library: loaded only when drawing

    return Figure(**kw)


def save_figure(fig, path) -> Path:
    """Write a figure atomically (a full disk leaves no truncated image); the format from the suffix."""
    buf = io.BytesIO()
    fig.savefig(buf, format=Path(path).suffix.lstrip(".") or "png", bbox_inches="tight",
                dpi=LOOK["savefig.dpi"])
    return write_bytes(Path(path), buf.getvalue())


def _bodies(run) -> dict:
    """Body name -> kind ("wing", "rotor", "propeller" or "turbine") of the run's case, in case order."""
    out = {}
    for name, body in run.case.get("bodies", {}).items():
        out[name] = body.get("kind", "rotor") if body.get("type") == "rotor" else body.get("type", "wing")
    return out


def _has_data(frame, col) -> bool:
    return col in frame and bool(np.isfinite(frame[col].to_numpy(np.float64, na_value=np.nan)).any())


def load_panels(loads, kind: str) -> list[str]:
    """The ``loads.csv`` columns drawn for one body of ``kind`` (rows of that body only)."""
    cols = [c for c in LOAD_PANELS.get(kind, ()) if _has_data(loads, c)][:3]
    return cols or [c for c in FALLBACK_PANELS if _has_data(loads, c)][:2]


def loads_figure(run):
    """Load history of every body, one column of panels per body; None if ``loads.csv`` is empty.

    A rotor's history is drawn against revolutions (time x rpm / 60), a
    wing's against simulated time [s]. Each curve's label is its body's name.
    """
    loads = run.loads
    kinds = _bodies(run)
    names = [n for n in kinds if "body" in loads and (loads["body"] == n).any()]
    if not names:
        return None
    mine = {n: loads[loads["body"] == n] for n in names}
    panels = {n: load_panels(mine[n], kinds[n]) for n in names}
    rows = max(1, max(len(p) for p in panels.values()))
    fig = _figure(figsize=(max(7.0, 3.8 * len(names)), 2.2 * rows + 0.8), layout="constrained")
    axes = fig.subplots(rows, len(names), squeeze=False)
    for j, name in enumerate(names):
        part = mine[name]
        if kinds[name] == "wing":
            x, xlabel = part["time_s"], "simulated time [s]"
        else:
            x, xlabel = part["time_s"] * float(run.case["bodies"][name]["rpm"]) / 60.0, "revolutions [-]"
        for i in range(rows):
            ax = axes[i, j]
            if i >= len(panels[name]):
                ax.set_visible(False)
                continue
            col = panels[name][i]
            ax.plot(x, part[col], label=name)
            ax.set_ylabel(QUANTITY_LABELS.get(col, col))
            if i == len(panels[name]) - 1:
                ax.set_xlabel(xlabel)
        axes[0, j].set_title(f"{name} ({kinds[name]})")
    fig.suptitle(f"{run.title}: load history", x=0.01, ha="left", fontweight="bold")
    return fig


def _lines(ax, table, x: str, y: str, label: str, **kw) -> None:
    part = table.sort_values(x)
    ax.plot(part[x], part[y], marker=".", label=label, **kw)


def span_loading_figure(run):
    """Circulation and section lift coefficient of every wing surface at the last step
    (the wing rows of ``sections.csv``); None if the run has no wing."""
    s = run.sections
    if not len(s) or "eta" not in s or "gamma_m2_s" not in s:
        return None
    wing = s[s["eta"].notna() & (s["r_over_R"].isna() if "r_over_R" in s else True)]
    if not len(wing):
        return None
    fig = _figure(figsize=(7.0, 5.0), layout="constrained")
    a1, a2 = fig.subplots(2, 1, sharex=True)
    for (body, surface), part in wing.groupby(["body", "surface"], sort=False):
        label = str(body) if str(surface) == str(body) else f"{body}, {surface}"
        _lines(a1, part, "y_m", "gamma_m2_s", label)
        _lines(a2, part, "y_m", "cl", label)
    a1.set_ylabel("circulation Γ [m²/s]")
    a2.set_ylabel("section lift coefficient c_l [-]")
    a2.set_xlabel("spanwise position y [m]")
    a1.set_title(f"{run.title}: span loading at the last step")
    a1.legend()
    return fig


def radial_loading_figure(run):
    """Circulation, section lift coefficient and thrust per unit radius of every rotor, averaged
    over its last revolution and its blades (``radial_loading.csv``); None if there is none."""
    t = run.radial_loading
    if not len(t):
        return None
    fig = _figure(figsize=(7.0, 6.6), layout="constrained")
    axes = fig.subplots(3, 1, sharex=True)
    for body, part in t.groupby("body", sort=False):
        for ax, col in zip(axes, ("gamma_m2_s", "cl", "dT_dr_N_per_m")):
            _lines(ax, part, "r_over_R", col, str(body))
    axes[0].set_ylabel("circulation Γ [m²/s]")
    axes[1].set_ylabel("section lift coefficient c_l [-]")
    axes[2].set_ylabel("thrust per unit radius dT/dr [N/m]")
    axes[2].set_xlabel("radius r/R [-]")
    axes[0].set_title(f"{run.title}: radial loading, mean over the last revolution and the blades")
    axes[0].legend()
    return fig


def wake_figure(run):
    """3-D view of the final wake: filaments coloured by |Γ|, particles by |α|; None if no wake.

    Beyond :data:`MAX_WAKE_SEGMENTS_DRAWN` segments every k-th is drawn.
    """
    from matplotlib import colors  # optional heavy library: loaded only when drawing
    from mpl_toolkits.mplot3d.art3d import Line3DCollection  # comes with matplotlib

    seg, par = run.wake_segments, run.wake_particles
    if not len(seg) and not len(par):
        return None
    fig = _figure(figsize=(7.5, 5.6))
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
    return fig


def tip_vortex_figure(run):
    """The tip vortex of every rotor against wake age (``tip_vortex.csv``): distance from the
    axis, with the spread over the last revolution's samples shaded, and offset along the
    axis; None if the run has no rotor wake."""
    t = run.tip_vortex
    if not len(t):
        return None
    fig = _figure(figsize=(7.0, 5.0), layout="constrained")
    a1, a2 = fig.subplots(2, 1, sharex=True)
    for body, part in t.groupby("body", sort=False):
        part = part.sort_values("wake_age_deg")
        age, r, spread = part["wake_age_deg"], part["r_over_R"], part["r_over_R_std"]
        line, = a1.plot(age, r, label=str(body))
        a1.fill_between(age, r - spread, r + spread, color=line.get_color(), alpha=0.2, linewidth=0)
        a2.plot(age, part["axial_over_R"], label=str(body))
    a1.set_ylabel("distance from the axis r/R [-]")
    a2.set_ylabel("offset along the axis z/R [-]\n(axis: the thrust direction)")
    a2.set_xlabel("wake age [deg]")
    a1.set_title(f"{run.title}: tip vortex of blade 1, mean over the last revolution")
    a1.legend()
    return fig


def _wedge_edges(centres: np.ndarray) -> np.ndarray:
    """Edges (n + 1,) of cells around sorted azimuths ``centres`` (n,) [rad], half way to each
    neighbour, the last neighbour of the first being the last one a turn earlier."""
    gaps = np.diff(np.append(centres, centres[0] + 2.0 * np.pi))
    return np.concatenate([[centres[0] - 0.5 * gaps[-1]], centres + 0.5 * gaps])


def _radial_edges(centres: np.ndarray) -> np.ndarray:
    """Edges (n + 1,) of cells around sorted radii ``centres`` (n,), half way to each neighbour."""
    mids = 0.5 * (centres[1:] + centres[:-1])
    return np.concatenate([[max(0.0, 2.0 * centres[0] - mids[0])], mids, [2.0 * centres[-1] - mids[-1]]])


#: The quantities of a disc map and their colour-bar labels.
DISC_MAP_PANELS = (("normal_force_N_per_m", "normal force per unit radius dT/dr [N/m]"),
                   ("inflow_ratio", "inflow ratio λ [-] (flow through the disc / ΩR)"))


def disc_map_grid(table, body: str) -> tuple[np.ndarray, np.ndarray, dict]:
    """Blade 1's rows of rotor ``body`` in ``disc_map.csv`` as a grid.

    Returns
    -------
    psi_deg : ndarray, shape (m,)
        The sampled azimuths, ascending [deg].
    r_over_R : ndarray, shape (n,)
        The section radii, ascending.
    values : dict of ndarray, each shape (m, n)
        The :data:`DISC_MAP_PANELS` quantities at each azimuth and radius.
    """
    part = table[(table["body"] == body) & (table["blade"] == 1)]
    part = part.sort_values(["azimuth_deg", "r_over_R"], kind="stable")
    n = part["r_over_R"].nunique()
    m = len(part) // n
    psi = part["azimuth_deg"].to_numpy().reshape(m, n)[:, 0]
    r = part["r_over_R"].to_numpy().reshape(m, n)[0]
    return psi, r, {col: part[col].to_numpy().reshape(m, n) for col, _ in DISC_MAP_PANELS}


def disc_map_figure(run, body: str):
    """The disc map of rotor ``body`` (``disc_map.csv``): blade 1's normal force per unit radius
    and inflow ratio over its last revolution, one cell per sampled azimuth and section; None if
    the run has no disc map of it."""
    t = run.disc_map
    if not len(t) or body not in set(t["body"]):
        return None
    psi, r, values = disc_map_grid(t, body)
    theta, radius = _wedge_edges(np.radians(psi)), _radial_edges(r)
    fig = _figure(figsize=(9.0, 4.6), layout="constrained")
    for i, (col, label) in enumerate(DISC_MAP_PANELS):
        ax = fig.add_subplot(1, 2, i + 1, projection="polar")
        ax.set_theta_zero_location("S")
        ax.set_theta_direction(1)
        mesh = ax.pcolormesh(theta, radius, values[col].T, cmap=WAKE_CMAP, shading="flat")
        ax.set_ylim(0.0, max(1.0, float(radius[-1])))
        ax.set_rlabel_position(100.0)
        ax.tick_params(labelsize=7.5)
        ax.grid(True, color="#ffffff", linewidth=0.5, alpha=0.6)
        fig.colorbar(mesh, ax=ax, shrink=0.8, pad=0.1, label=label)
    fig.suptitle(f"{run.title}: disc map of {body}, blade 1 over the last revolution", x=0.02,
                 horizontalalignment="left", fontweight="bold", fontsize=LOOK["axes.titlesize"])
    fig.supxlabel("azimuth ψ from downstream (0°, bottom) in the sense of rotation; radius r/R",
                  fontsize=LOOK["font.size"])
    return fig


#: The figures of a run: file name -> builder (a function of a RunFolder returning a Figure or None).
FIGURES = {"loads.png": loads_figure, "span_loading.png": span_loading_figure,
           "radial_loading.png": radial_loading_figure, "wake_3d.png": wake_figure,
           "tip_vortex.png": tip_vortex_figure}
#: Figures drawn once per body: file name pattern -> builder of (RunFolder, body name).
BODY_FIGURES = {"disc_map_{body}.png": disc_map_figure}


def figures(run) -> dict:
    """Every figure of a finished run, built but not saved.

    Parameters
    ----------
    run : wakes.io.runfolder.RunFolder or path-like
        A run folder (or its path) written by ``wakes run``.

    Returns
    -------
    dict
        File name (e.g. ``"loads.png"``) -> :class:`matplotlib.figure.Figure`,
        for the figures the run has data for, in :data:`FIGURES` order, then
        those of :data:`BODY_FIGURES` in the case's body order.

    Examples
    --------
    >>> figs = figures("glider-run")
    >>> list(figs)
    ['loads.png', 'span_loading.png', 'wake_3d.png']
    >>> figs["loads.png"].axes[0].get_ylabel()
    'lift coefficient C_L [-]'
    """
    if not hasattr(run, "loads"):
        run = read_run(run)
    out = {}
    with _look():
        for name, build in FIGURES.items():
            fig = build(run)
            if fig is not None:
                out[name] = fig
        for pattern, build in BODY_FIGURES.items():
            for body in _bodies(run):
                fig = build(run, body)
                if fig is not None:
                    out[pattern.format(body=body)] = fig
    return out


def plot_run(run_dir: str | os.PathLike, *, out: str | os.PathLike | None = None,
             overwrite: bool = False) -> list[Path]:
    """Draw every figure of a finished run (:func:`figures`) into PNG files.

    Parameters
    ----------
    run_dir : path-like
        A run folder written by ``wakes run``, or the folder of a refinement
        study (``wakes run --uncertainty``), whose one figure is
        ``uncertainty.png`` (:func:`uncertainty_figure`).
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
    study = Path(run_dir) / STUDY_TABLE
    if study.is_file() and not (Path(run_dir) / "loads.csv").is_file():   # a refinement study's folder
        figs = {STUDY_FIGURE: uncertainty_figure(pd.read_csv(study))}
        path = Path(run_dir)
    else:
        run = read_run(run_dir)
        figs, path = None, run.path
    folder = Path(out) if out is not None else path / "plots"
    if folder.exists() and not folder.is_dir():
        raise InputError(f"plot folder {folder}: exists and is not a folder")
    existing = sorted(folder.glob("*.png")) if folder.is_dir() else []
    if existing and not overwrite:
        raise InputError(f"plot folder {folder} already holds {existing[0].name}"
                         f"{' and others' if len(existing) > 1 else ''}; pass --overwrite to redraw "
                         "or --out to draw elsewhere")
    folder.mkdir(parents=True, exist_ok=True)
    figs = figures(run) if figs is None else {k: f for k, f in figs.items() if f is not None}
    return [save_figure(fig, folder / name) for name, fig in figs.items()]


def key_label(key: str, case: dict | None = None) -> str:
    """Axis label of a dotted case key: words and the unit from the case schema.

    Parameters
    ----------
    key : str
        A dotted case key, e.g. ``"bodies.rotor.collective"``.
    case : dict, optional
        The case as data; gives a body's type (else every body type is tried).

    Returns
    -------
    str
        ``"CONTEXT: WORDS [UNIT]"``; ``[-]`` for a dimensionless key; the key's
        words alone if the schema does not know it.

    Examples
    --------
    >>> key_label("freestream.angle_of_attack")
    'freestream: angle of attack [deg]'
    >>> key_label("bodies.rotor.collective", {"bodies": {"rotor": {"type": "rotor"}}})
    'rotor: collective [deg]'
    >>> key_label("bodies.prop.airfoil.cd0")
    'prop airfoil: cd0 [-]'
    """
    parts = key.split(".")
    classes, context = [Case], []
    i = 0
    meta = None
    while i < len(parts):
        part = parts[i]
        if part == "bodies" and i + 1 < len(parts) and Case in classes:
            btype = ((case or {}).get("bodies", {}).get(parts[i + 1]) or {}).get("type")
            classes = [BODY_TYPES[btype]] if btype in BODY_TYPES else list(BODY_TYPES.values())
            context.append(parts[i + 1])
            i += 2
            continue
        found = [f for cls in classes for f in public_fields(cls) if f.name == part]
        if not found:
            meta = None
            break
        if i < len(parts) - 1:
            classes = [type(f.default) for f in found if f.metadata.get("kind") == "table"]
            context.append(part)
        else:
            meta = found[0].metadata
        i += 1
    words = parts[-1].replace("_", " ")
    if meta is None:
        return " ".join(p.replace("_", " ") for p in parts)
    prefix = f"{' '.join(context)}: " if context else ""
    return f"{prefix}{words} [{meta.get('unit') or '-'}]"


def sweep_figure(table, key: str, case: dict | None = None):
    """A sweep's coefficients against its first varied key; None if there is nothing to draw.

    Parameters
    ----------
    table : pandas.DataFrame
        The sweep table (``sweep.csv``): the varied keys, ``status`` and the
        summary figures (prefixed ``BODY.`` when the case has several bodies).
    key : str
        The varied key on the x axis (numeric values only).
    case : dict, optional
        The swept case as data (for :func:`key_label`).

    Returns
    -------
    matplotlib.figure.Figure or None
        One panel per coefficient of :data:`SWEEP_PANELS` present, at most
        four, over the points that ran or were reused (not those failed or stopped).
    """
    ok = table[table["status"].isin(("ran", "reused"))]
    cols = [c for base in SWEEP_PANELS for c in table.columns if c == base or c.endswith("." + base)][:4]
    if not cols or not len(ok) or not np.issubdtype(table[key].dtype, np.number):
        return None
    with _look():
        fig = _figure(figsize=(6.5, 2.3 * len(cols) + 0.6), layout="constrained")
        axes = fig.subplots(len(cols), 1, sharex=True, squeeze=False)[:, 0]
        order = ok.sort_values(key)
        for ax, c in zip(axes, cols):
            body, _, base = c.rpartition(".")
            ax.plot(order[key], order[c], "o-", label=body or base)
            ax.set_ylabel((f"{body}: " if body else "") + QUANTITY_LABELS.get(base, base))
        axes[-1].set_xlabel(key_label(key, case))
        axes[0].set_title(f"sweep over {key_label(key, case)}")
    return fig


def uncertainty_figure(table):
    """Each main load of a refinement study against the levels' spacing, with its extrapolation.

    Parameters
    ----------
    table : pandas.DataFrame
        The study's table (``uncertainty.csv``, :func:`wakes.refinement.uncertainty_table`):
        one row per body and load with ``value``, ``extrapolated``,
        ``uncertainty``, ``convergence``, and ``spacing_K``, ``level_K`` for
        each level K (1 the finest, its spacing 1).

    Returns
    -------
    matplotlib.figure.Figure or None
        One panel per load of :data:`UNCERTAINTY_PANELS` present, at most
        four (None when none is): the levels' values against their spacing
        h / h_finest (line ``"levels"``); when the band is trusted, the
        Richardson-extrapolated value at h = 0 (``"extrapolated"``) and the
        band on the finest value (``"band"``, a vertical line at h = 1).
    """
    rows = [r for base in UNCERTAINTY_PANELS for _, r in table.iterrows() if r["quantity"] == base][:4]
    if not rows:
        return None
    n = sum(1 for c in table.columns if c.startswith("level_"))
    with _look():
        fig = _figure(figsize=(6.5, 2.3 * len(rows) + 0.6), layout="constrained")
        axes = fig.subplots(len(rows), 1, sharex=True, squeeze=False)[:, 0]
        for ax, r in zip(axes, rows):
            h = [float(r[f"spacing_{k}"]) for k in range(1, n + 1)]
            v = [float(r[f"level_{k}"]) for k in range(1, n + 1)]
            ax.plot(h, v, "o-", label="levels")
            if r["convergence"] == "monotonic" and np.isfinite(r["uncertainty"]):
                ax.plot([0.0], [float(r["extrapolated"])], marker="*", markersize=10, linestyle="none",
                        label="extrapolated")
                u = float(r["uncertainty"])
                ax.plot([1.0, 1.0], [float(r["value"]) - u, float(r["value"]) + u], linewidth=4, alpha=0.5,
                        label="band")
            else:
                why = "order out of range" if r["convergence"] == "monotonic" else r["convergence"]
                ax.text(0.02, 0.9, f"no band: {why}", transform=ax.transAxes, va="top")
            ax.set_ylabel(f"{r['body']}: " + QUANTITY_LABELS.get(r["quantity"], r["quantity"]))
            ax.set_xlim(left=-0.05 * max(h))
            ax.legend(loc="best")
        axes[-1].set_xlabel("spacing of the level / spacing of the finest level [-]")
        axes[0].set_title("loads against refinement, Richardson-extrapolated to zero spacing")
    return fig
