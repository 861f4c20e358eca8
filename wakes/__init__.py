"""wakes: aerodynamic wakes of lifting systems with Lagrangian vortex methods.

The public API is re-exported here; see the README for a tour.
"""

from .elements import Filaments, Particles
from . import exact
from .errors import CaseError, InputError, NumericalError, WakesError
from .induction.api import induce
from .flow import ParticleFlow
from .initial import lamb_oseen_ring, vortex_ring

__version__ = "0.1.0"

__all__ = [
    "CaseError", "Filaments", "InputError", "NumericalError", "Particles",
    "WakesError", "exact", "induce", "__version__",
    "ParticleFlow", "lamb_oseen_ring", "vortex_ring",
]
