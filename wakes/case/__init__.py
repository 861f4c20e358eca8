"""Case files: the schema machinery (:mod:`.schema`), the case's sections (:mod:`.specs`) and
``--set KEY=VALUE`` over a case file (:mod:`.settings`).

``wakes.case.load_case`` reads, checks and resolves a case file; the names
below are the ones other modules and users reach for.
"""

from .schema import dump_toml, key, merge, read_toml
from .settings import apply_settings, load_case_with, parse_setting
from .specs import (
    BODY_TYPES,
    MAX_AZIMUTH_STEP,
    MAX_DT,
    MIN_DT,
    SCHEDULER_ADDRESS,
    AirfoilSpec,
    Case,
    ClusterSpec,
    FluidSpec,
    FreestreamSpec,
    GroundSpec,
    OutputSpec,
    RotorSpec,
    SolverSpec,
    TimeSpec,
    WakeSpec,
    WingSpec,
    case_reference,
    load_case,
    parse_case,
)

__all__ = [
    "BODY_TYPES", "MAX_AZIMUTH_STEP", "MAX_DT", "MIN_DT", "SCHEDULER_ADDRESS", "AirfoilSpec",
    "Case", "ClusterSpec", "FluidSpec",
    "FreestreamSpec", "GroundSpec", "OutputSpec", "RotorSpec", "SolverSpec", "TimeSpec",
    "WakeSpec", "WingSpec", "apply_settings", "case_reference", "dump_toml", "key", "load_case",
    "load_case_with", "merge", "parse_case", "parse_setting", "read_toml",
]
