"""wakes: aerodynamic wakes of lifting systems with Lagrangian vortex methods.

The public API is re-exported here; see the README for a tour.
"""

import os as _os

# OpenMP threads that spin and yield between parallel regions cost about
# 20 ms per region on a loaded 2-core machine (measured: 20 ms against
# 0.6 ms passive for a 32-target induction); sleeping idle threads cost
# nothing measurable. A user's own setting wins.
_os.environ.setdefault("OMP_WAIT_POLICY", "PASSIVE")

from . import exact
from ._version import __version__
from .case import Case, load_case, parse_case
from .cluster import induce
from .errors import CaseError, InputError, NumericalError, WakesError
from .induction.elements import Filaments, Particles
from .refinement import refinement_study
from .run import run_case
from .simulate import Run
from .sweep import sweep
from .trim import trim_case, trim_rotor
from .vortex.flow import ParticleFlow
from .vortex.initial import lamb_oseen_ring, vortex_ring

__all__ = [
    "CaseError", "Filaments", "InputError", "NumericalError", "Particles",
    "WakesError", "exact", "induce", "__version__",
    "ParticleFlow", "lamb_oseen_ring", "vortex_ring",
    "Case", "Run", "load_case", "parse_case", "refinement_study", "run_case", "sweep", "trim_case",
    "trim_rotor",
]
