"""The numba options of every kernel, written once.

``fastmath`` is limited to ``reassoc`` and ``contract``: reductions may be
reordered and multiply-adds fused, so loops vectorize, but NaN and
infinity are not assumed away (the watchdog's finiteness checks rely on
them). The flags must sit on the outermost jitted function: inlining at the
numba IR level takes the caller's flags, not the callee's.
``error_model="numpy"`` keeps a division from raising inside a kernel, so
nothing in a pair law needs a Python-level check.
"""

FASTMATH = {"reassoc", "contract"}
# For exp_neg in gaussian.py: "reassoc" would let LLVM fold (x + C) - C to x and
# the two-part ln2 back into one constant.
FASTMATH_CONTRACT_ONLY = {"contract"}
ERROR_MODEL = "numpy"
