"""Induced velocity of a large wake evaluated across Dask workers.

The sources are scattered to the workers once; the targets are cut into
contiguous chunks, each chunk is evaluated on a worker with the ordinary
single-process engine, and the pieces are gathered in order. Each target's
sum runs over the sources in the same order as in one process, so the result
equals the serial one to round-off (workers with one thread may run another
compiled variant of the same loop, so not always bit for bit).
"""

from __future__ import annotations

import numpy as np

from ._validate import as_float_array
from .errors import InputError


def _induce_chunk(sources, targets, options):
    from .induction.api import induce

    return induce(sources, targets, **options)


def induce_on_cluster(sources, targets, client, *, chunk_size: int | None = None, **options):
    """Velocity (and gradient) at ``targets``, evaluated on a Dask cluster.

    Parameters
    ----------
    sources : Particles, Filaments or list of them
        The vortex elements.
    targets : array_like, shape (M, 3)
        Points [m].
    client : dask.distributed.Client
        A connected client; its workers need ``wakes`` installed.
    chunk_size : int, optional
        Targets per task; by default the targets are split into four tasks
        per worker thread, so faster workers take more.
    **options
        Passed to :func:`wakes.induce` on the workers (``gradient``,
        ``method``, ...).

    Returns
    -------
    ndarray (M, 3), or (ndarray (M, 3), ndarray (M, 3, 3)) with ``gradient``
        As :func:`wakes.induce`.
    """
    tgt = as_float_array("targets", targets, (None, 3))
    m = tgt.shape[0]
    if chunk_size is None:
        threads = max(1, sum(client.nthreads().values()))
        chunk_size = max(1, -(-m // (4 * threads)))
    elif not isinstance(chunk_size, (int, np.integer)) or chunk_size < 1:
        raise InputError(f"chunk_size must be a positive integer; got {chunk_size!r}")
    if m == 0:
        return _induce_chunk(sources, tgt, options)
    src_future = client.scatter(sources, broadcast=True)
    futures = [client.submit(_induce_chunk, src_future, tgt[i:i + chunk_size], options,
                             pure=False)
               for i in range(0, m, chunk_size)]
    parts = client.gather(futures)
    if options.get("gradient", False):
        return (np.concatenate([p[0] for p in parts]), np.concatenate([p[1] for p in parts]))
    return np.concatenate(parts)
