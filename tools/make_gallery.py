"""Regenerate the README gallery: figures of the bundled demo cases, run as written.

Usage::

    python tools/make_gallery.py [--only glider]

Runs ``cases/survey-glider.toml`` (about half a minute) into a temporary
folder with the figures ``wakes run`` draws, and copies the chosen ones
to ``docs/gallery/`` after checking each stays below ``MAX_BYTES``.
``--only conventions`` draws the rotor's azimuth and hub-load conventions
(``docs/gallery/rotor-conventions.png``) from the rotor geometry itself:
the blade directions at psi = 0, 90, 180 and 270 deg are placed with
:meth:`wakes.aero.rotor.RotorGeometry.rotor_frame` and checked against
:meth:`~wakes.aero.rotor.RotorGeometry.azimuth_of`.
"""

from __future__ import annotations

import argparse
import shutil
import tempfile
from pathlib import Path

import numpy as np
from wakes.aero.geometry import Distribution
from wakes.aero.rotor import RotorGeometry
from wakes.plots import PALETTE, _figure, _look, save_figure
from wakes.run import run_to_folder

ROOT = Path(__file__).resolve().parents[1]
GALLERY = ROOT / "docs" / "gallery"
MAX_BYTES = 200_000   # a README figure stays small in the repository

FIGURES = {   # demo: (case file, {figure drawn by the run: name in the gallery})
    "glider": ("cases/survey-glider.toml", {"wake_3d.png": "survey-glider-wake.png",
                                            "span_loading.png": "survey-glider-span-loading.png"}),
}


def make(demo: str, work: Path) -> list[Path]:
    """Run one demo case and copy its gallery figures; return the files written."""
    case, figures = FIGURES[demo]
    out = work / demo
    run_to_folder(ROOT / case, out)
    GALLERY.mkdir(parents=True, exist_ok=True)
    written = []
    for drawn, name in figures.items():
        src = out / "plots" / drawn
        size = src.stat().st_size
        if size > MAX_BYTES:
            raise SystemExit(f"{src.name} of {case} is {size:,} bytes, above {MAX_BYTES:,}")
        written.append(Path(shutil.copyfile(src, GALLERY / name)))
    return written


def _page(v: np.ndarray) -> np.ndarray:
    """A global vector seen from +z (above) with global +x (downstream) pointing down the page."""
    return np.array([v[1], -v[0]])


def conventions() -> list[Path]:
    """Draw the azimuth origin, sense and hub-load axes of a ccw and a cw rotor in edgewise flight."""
    with _look():
        fig = _figure(figsize=(8.0, 4.4), layout="constrained")
        for i, spin in enumerate((1, -1)):
            g = RotorGeometry(blades=2, radius=1.0, root_cutout=0.1, chord=Distribution.constant(0.1),
                              twist=Distribution.constant(0.0), collective=8.0, rpm=600.0, spin=spin,
                              downstream=(10.0, 0.0, 0.0))
            x_h, y_h, _ = g.rotor_frame()
            ax = fig.add_subplot(1, 2, i + 1)
            ax.set_aspect("equal")
            ax.axis("off")
            t = np.linspace(0.0, 2.0 * np.pi, 200)
            ax.plot(np.cos(t), np.sin(t), color="#3a3a3a", linewidth=1.0)
            for psi_deg in (0, 90, 180, 270):
                psi = np.radians(psi_deg)
                d = np.cos(psi) * x_h + spin * np.sin(psi) * y_h
                assert abs(g.azimuth_of(d) - psi) < 1e-12      # the code's own azimuth of that direction
                tip = _page(d)
                ax.plot([0, tip[0]], [0, tip[1]], color=PALETTE[0] if psi_deg == 0 else "#9a9a9a",
                        linewidth=3.0 if psi_deg == 0 else 1.2)
                word = {0: "ψ = 0°\ndownstream", 90: "ψ = 90°\nadvancing", 180: "ψ = 180°",
                        270: "ψ = 270°\nretreating"}[psi_deg]
                ax.annotate(word, (1.45 if psi_deg in (90, 270) else 1.28) * tip, ha="center", va="center",
                            fontsize=8.5)
            sense = np.linspace(0.35, 1.2, 30)         # the sense of rotation, from psi = 0 onwards
            arc = np.array([_page(0.55 * (np.cos(p) * x_h + spin * np.sin(p) * y_h)) for p in sense])
            ax.plot(arc[:, 0], arc[:, 1], color=PALETTE[1], linewidth=1.6)
            ax.annotate("", arc[-1], arc[-3], arrowprops=dict(arrowstyle="-|>", color=PALETTE[1]))
            origin = np.array([-2.1, -0.9])
            for vec, word in ((x_h, "x_h: H, roll M_x"), (y_h, "y_h: Y, pitch M_y")):
                end = origin + _page(0.6 * vec)
                ax.annotate("", end, origin, arrowprops=dict(arrowstyle="-|>", color=PALETTE[2]))
                down = _page(vec)[1] < -0.5
                ax.annotate(word, end + (np.array([0.0, -0.08]) if down else np.array([-0.55, 0.1])),
                            fontsize=8, color=PALETTE[2], ha="left", va="top" if down else "bottom")
            ax.annotate("", (1.85, 1.45), (1.85, 0.65), arrowprops=dict(arrowstyle="-|>", color="#3a3a3a"))
            ax.annotate("flight", (1.85, 1.52), ha="center", fontsize=8.5)
            ax.set_xlim(-2.4, 2.1)
            ax.set_ylim(-1.75, 1.75)
            ax.set_title(f"spin = \"{'ccw' if spin > 0 else 'cw'}\", seen from the +axis side")
        fig.suptitle("Rotor azimuth ψ and hub-load axes in edgewise flight (axis a towards the viewer)",
                     x=0.02, horizontalalignment="left", fontweight="bold", fontsize=10.5)
        path = save_figure(fig, GALLERY / "rotor-conventions.png")
    if path.stat().st_size > MAX_BYTES:
        raise SystemExit(f"{path.name} is {path.stat().st_size:,} bytes, above {MAX_BYTES:,}")
    return [path]


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--only", choices=sorted(FIGURES) + ["conventions"], help="one demo only")
    args = parser.parse_args()
    with tempfile.TemporaryDirectory() as tmp:
        for demo in [args.only] if args.only else [*FIGURES, "conventions"]:
            for path in (conventions() if demo == "conventions" else make(demo, Path(tmp))):
                print(f"{path.relative_to(ROOT)}  {path.stat().st_size:,} bytes")


if __name__ == "__main__":
    main()
