"""wakes: aerodynamic wakes of lifting systems with Lagrangian vortex methods.

The public API is re-exported here; see the README for a tour.
"""

import os as _os

# OpenMP threads that spin and yield between parallel regions cost about
# 20 ms per region on a loaded 2-core machine (measured: 20 ms against
# 0.6 ms passive for a 32-target induction); sleeping idle threads cost
# nothing measurable. A user's own setting wins.
_os.environ.setdefault("OMP_WAIT_POLICY", "PASSIVE")

from importlib import metadata as _metadata

from . import exact
from .case import Case, load_case, parse_case
from .elements import Filaments, Particles
from .errors import CaseError, InputError, NumericalError, WakesError
from .flow import ParticleFlow
from .induction.api import induce
from .initial import lamb_oseen_ring, vortex_ring
from .simulate import Run, run_case
from .sweep import sweep

try:   # the installed distribution's version, written once in pyproject.toml
    __version__ = _metadata.version("wakes")
except _metadata.PackageNotFoundError:   # a source tree on sys.path, not installed
    __version__ = "0+unknown"

__all__ = [
    "CaseError", "Filaments", "InputError", "NumericalError", "Particles",
    "WakesError", "exact", "induce", "__version__",
    "ParticleFlow", "lamb_oseen_ring", "vortex_ring",
    "Case", "Run", "load_case", "parse_case", "run_case", "sweep",
]
