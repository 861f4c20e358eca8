"""Numba kernels for induced velocity; the public front end is :mod:`.api`.

Kept free of imports so that :mod:`wakes.elements` can read the kernel
registries in :mod:`.smoothing` without a cycle.
"""
