"""Regenerate the README gallery: figures of the bundled demo cases, run as written.

Usage::

    python tools/make_gallery.py [--only glider]

Runs ``cases/survey-glider.toml`` (about half a minute) into a temporary
folder with the figures ``wakes run`` draws, and copies the chosen ones
to ``docs/gallery/`` after checking each stays below ``MAX_BYTES``.
"""

from __future__ import annotations

import argparse
import shutil
import tempfile
from pathlib import Path

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


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--only", choices=sorted(FIGURES), help="one demo only")
    args = parser.parse_args()
    with tempfile.TemporaryDirectory() as tmp:
        for demo in [args.only] if args.only else list(FIGURES):
            for path in make(demo, Path(tmp)):
                print(f"{path.relative_to(ROOT)}  {path.stat().st_size:,} bytes")


if __name__ == "__main__":
    main()
