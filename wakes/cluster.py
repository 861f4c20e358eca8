"""Dask at the edge: induced velocity of a large wake evaluated across workers.

The only module that talks to Dask; the engine (:mod:`wakes.induction`)
never imports it. :func:`induce` is the public ``wakes.induce``: the
engine's, with an optional ``client``. :class:`WakeCluster` is the object
a run's time loop is handed (:func:`wakes.run.run_case`).

The sources are scattered to the workers once; the targets are cut into
contiguous chunks, each chunk is evaluated on a worker with the ordinary
single-process engine, and the pieces are gathered in order. Each target's
sum runs over the sources in the same order as in one process, so the result
equals the serial one to round-off (workers with one thread may run another
compiled variant of the same loop, so not always bit for bit).
"""

from __future__ import annotations

import functools

import numpy as np

from ._validate import as_float_array, choice
from .errors import InputError, WakesError
from .induction import api as engine


def _induce_chunk(sources, targets, options):
    return engine.induce(sources, targets, **options)


def induce(sources, targets, *, gradient: bool = False, method: str = "direct",
           tolerance: float = 1e-6, client=None):
    """Velocity (and its gradient) induced by vortex elements at target points.

    :func:`wakes.induction.api.induce` (see there for every parameter, the
    returns and the laws), with one more option:

    Parameters
    ----------
    client : dask.distributed.Client, optional
        Evaluate chunks of the targets on the cluster's workers
        (:func:`induce_on_cluster`): the sources are sent once, the result
        equals the single-process one.

    Examples
    --------
    >>> import numpy as np, wakes
    >>> ring = wakes.Filaments.from_polyline(
    ...     [[np.cos(t), np.sin(t), 0.0] for t in np.linspace(0, 2*np.pi, 64, endpoint=False)],
    ...     circulation=1.0, core_radius=0.01, closed=True)
    >>> u = wakes.induce(ring, [[0.0, 0.0, 0.0]])
    >>> round(float(u[0, 2]), 3)   # Gamma/(2R) at the centre
    0.5
    """
    if client is None:
        return engine.induce(sources, targets, gradient=gradient, method=method,
                             tolerance=tolerance)
    src = engine.as_source_list(sources)
    tgt = as_float_array("targets", targets, (None, 3))
    choice("method", method, engine.METHODS)
    return induce_on_cluster(src, tgt, client, gradient=gradient, method=method,
                             tolerance=tolerance)


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
    import distributed  # optional heavy library: loaded only when a scheduler is named

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
    The workers take over the induction only once the wake is large
    (a string stands in for a connected client here):

    >>> cluster = WakeCluster(client="<client>", min_wake=50_000)
    >>> cluster.inducer(80_000).keywords
    {'client': '<client>'}
    >>> cluster.inducer(1_000).__module__
    'wakes.induction.api'
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

    def inducer(self, wake_elements: int):
        """The function that sums induced velocities for a wake of ``wake_elements``
        elements: the engine's own below ``min_wake``, the workers' from there on.

        Both take ``(sources, targets, **options)`` with the keyword
        arguments of :func:`wakes.induction.api.induce`.
        """
        if wake_elements >= self.min_wake:
            return functools.partial(_induce_with_client, client=self.client)
        return engine.induce

    def close(self) -> None:
        """Close the client if it was opened here."""
        if self.owned:
            self.client.close()


def _induce_with_client(sources, targets, *, client, **options):
    return induce_on_cluster(sources, targets, client, **options)
