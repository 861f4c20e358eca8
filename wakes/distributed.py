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
        Targets per task; by default four tasks per worker thread for direct
        sums (faster workers take more) and one for the treecode (which
        builds its tree over all sources in every task).
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
        # the treecode builds its tree over all sources in every task, so it
        # gets one task per worker thread; direct sums take four, so that
        # faster workers take more
        threads = max(1, sum(client.nthreads().values()))
        per_thread = 4 if options.get("method", "direct") == "direct" else 1
        chunk_size = max(1, -(-m // (per_thread * threads)))
    elif not isinstance(chunk_size, (int, np.integer)) or chunk_size < 1:
        raise InputError(f"chunk_size must be a positive integer; got {chunk_size!r}")
    if m == 0:
        return _induce_chunk(sources, tgt, options)
    # hash=False: a unique key per call. With content hashing two calls on the
    # same sources share one key, and the first call releasing it can drop
    # the data under the second call's tasks ("lost dependencies").
    src_future = client.scatter(sources, broadcast=True, hash=False)
    futures = [client.submit(_induce_chunk, src_future, tgt[i:i + chunk_size], options,
                             pure=False)
               for i in range(0, m, chunk_size)]
    parts = client.gather(futures)
    if options.get("gradient", False):
        return (np.concatenate([p[0] for p in parts]), np.concatenate([p[1] for p in parts]))
    return np.concatenate(parts)


SCHEDULER_TIMEOUT_S = 10.0   # how long to wait for a scheduler to answer [s]


def connect(address: str):
    """A client of the Dask scheduler at ``address``, or a clear error within the timeout.

    Parameters
    ----------
    address : str
        ``tcp://HOST:PORT`` of a running scheduler (``dask scheduler``).

    Raises
    ------
    wakes.errors.WakesError
        If no scheduler answers within ``SCHEDULER_TIMEOUT_S``.
    """
    import distributed

    from .errors import WakesError

    try:
        return distributed.Client(address, timeout=SCHEDULER_TIMEOUT_S)
    except ValueError as exc:      # an address Dask cannot parse (scheme, port)
        raise WakesError(f"scheduler {address!r}: not an address of a Dask scheduler ({exc}); give "
                         "tcp://HOST:PORT") from None
    except (OSError, TimeoutError) as exc:
        raise WakesError(f"scheduler {address}: no Dask scheduler answered within "
                         f"{SCHEDULER_TIMEOUT_S:.0f} s ({type(exc).__name__}); start one with "
                         "`dask scheduler` and workers with `dask worker ADDRESS`") from None


class WakeCluster:
    """Sends a run's wake induction to Dask workers once the wake is large.

    Parameters
    ----------
    client : dask.distributed.Client
        A connected client; its workers need ``wakes`` installed.
    min_wake : int
        Wake elements (segments + particles) from which :meth:`options`
        adds the client; smaller wakes are cheaper in this process.
    owned : bool
        Whether :meth:`close` closes the client (it was opened here).

    Examples
    --------
    The client joins the induction options only once the wake is large
    (a string stands in for a connected client here):

    >>> cluster = WakeCluster(client="<client>", min_wake=50_000)
    >>> cluster.options({"method": "tree"}, 80_000)
    {'method': 'tree', 'client': '<client>'}
    >>> cluster.options({"method": "tree"}, 1_000)
    {'method': 'tree'}
    """

    def __init__(self, client, min_wake: int, owned: bool = False):
        self.client = client
        self.min_wake = int(min_wake)
        self.owned = owned

    @classmethod
    def open(cls, spec, client=None) -> WakeCluster | None:
        """The cluster a case asks for: ``client`` if given, else the
        ``[cluster] scheduler`` of ``spec`` (a :class:`wakes.case.ClusterSpec`),
        else None (this process only)."""
        if client is not None:
            return cls(client, spec.min_wake)
        if spec.scheduler:
            return cls(connect(spec.scheduler), spec.min_wake, owned=True)
        return None

    def options(self, method: dict, wake_elements: int) -> dict:
        """``method`` (keyword arguments of :func:`wakes.induce`) with the
        client added when the wake holds at least ``min_wake`` elements."""
        return {**method, "client": self.client} if wake_elements >= self.min_wake else method

    def close(self) -> None:
        """Close the client if it was opened here."""
        if self.owned:
            self.client.close()
