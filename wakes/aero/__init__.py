"""Lifting bodies: polars, geometry, circulation solve, wakes they shed, loads.

The model layer between the case file and the induction engine; see
:mod:`wakes.simulate` for the time loop that drives it.
"""

from .geometry import Distribution, LiftingSurface, WingPlanform, build_surface, wing_surface
from .lifting_line import SolverSettings, solve_circulation
from .polars import PolarRangeError, SectionPolars, TablePolar, ThinAirfoilPolar, load_polar_table
from .wake import WakeSettings, WakeSheet

__all__ = [
    "Distribution", "LiftingSurface", "PolarRangeError", "SectionPolars", "SolverSettings",
    "TablePolar", "ThinAirfoilPolar", "WakeSettings", "WakeSheet", "WingPlanform",
    "build_surface", "load_polar_table", "solve_circulation", "wing_surface",
]
