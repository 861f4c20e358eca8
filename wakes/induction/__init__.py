"""The induction engine: numba kernels, the element types and :func:`.api.induce`.

Kept free of imports so that importing one kernel module does not load the
rest; the front end is :mod:`.api`.
"""
