"""The numba options of every kernel, written once.

``fastmath`` is limited to ``reassoc`` and ``contract``: reductions may be
reordered and multiply-adds fused, so loops vectorize, but NaN and
infinity are not assumed away (the watchdog's finiteness checks rely on
them). The flags must sit on the outermost jitted function: inlining at the
numba IR level takes the caller's flags, not the callee's.
``error_model="numpy"`` keeps a division from raising inside a kernel, so
nothing in a pair law needs a Python-level check.

:func:`machine_target` reads the CPU numba compiles for (its name and
feature string, as numba itself reads them, honouring ``NUMBA_CPU_NAME`` and
``NUMBA_CPU_FEATURES``), and :func:`gradient_passes` derives from it the one
tuning choice that depends on the machine: see :mod:`.direct`. Numba's cache
is keyed by the same CPU name and features, so a cached kernel always holds
the choice made for the CPU it was compiled for.
"""

from __future__ import annotations

from typing import NamedTuple

import llvmlite.binding as ll
from numba.core import config
from numba.core.codegen import get_host_cpu_features

FASTMATH = {"reassoc", "contract"}
# For exp_neg in gaussian.py: "reassoc" would let LLVM fold (x + C) - C to x and
# the two-part ln2 back into one constant.
FASTMATH_CONTRACT_ONLY = {"contract"}
ERROR_MODEL = "numpy"


class MachineTarget(NamedTuple):
    """The CPU numba compiles for, as the tuning choices read it.

    Attributes
    ----------
    cpu : str
        LLVM's CPU name (e.g. "znver4", "skylake-avx512", "haswell").
    avx2, avx512f : bool
        Whether the feature string enables AVX2 and AVX-512F.
    vector_registers : int
        Architectural vector registers: 32 with AVX-512 (also for 256-bit
        vectors, through AVX-512VL), 16 otherwise.
    max_vector_bits : int
        Widest packed float64 vectors the features allow: 512, 256 or 128.
    """

    cpu: str
    avx2: bool
    avx512f: bool
    vector_registers: int
    max_vector_bits: int


def machine_target(cpu: str | None = None, features: str | None = None) -> MachineTarget:
    """The target numba compiles for, or the one given by ``cpu`` and ``features``.

    Parameters
    ----------
    cpu : str, optional
        LLVM CPU name; default numba's (``NUMBA_CPU_NAME`` or the host's).
    features : str, optional
        LLVM feature string ("+avx2,-avx512f,..."); default numba's
        (``NUMBA_CPU_FEATURES`` or the host's).

    Examples
    --------
    >>> t = machine_target("haswell", "+avx,+avx2,+fma,-avx512f")
    >>> t.vector_registers, t.max_vector_bits
    (16, 256)
    """
    if cpu is None:
        cpu = config.CPU_NAME or ll.get_host_cpu_name()
    if features is None:
        features = config.CPU_FEATURES if config.CPU_FEATURES is not None else get_host_cpu_features()
    enabled = {f[1:] for f in features.split(",") if f.startswith("+")}
    avx512f = "avx512f" in enabled
    avx2 = "avx2" in enabled
    return MachineTarget(cpu, avx2, avx512f, 32 if avx512f else 16,
                         512 if avx512f else (256 if avx2 or "avx" in enabled else 128))


def gradient_passes(target: MachineTarget) -> int:
    """Passes over a source block for the algebraic kernels' velocity and gradient.

    One loop holding the 14 sums and the pair factors needs about 25 live
    vector registers: it fits the 32 of AVX-512 (whatever the vector width
    LLVM prefers), and spills on the 16 of AVX2, where three short loops
    over an L1-sized block are faster (see :mod:`.direct`).

    Examples
    --------
    >>> gradient_passes(machine_target("haswell", "+avx2"))
    3
    >>> gradient_passes(machine_target("skylake-avx512", "+avx2,+avx512f"))
    1
    """
    return 1 if target.vector_registers >= 32 else 3
