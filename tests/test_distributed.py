"""Induction across Dask workers equals the single-process result."""

import numpy as np
import pytest

import wakes
from wakes.distributed import induce_on_cluster

distributed = pytest.importorskip("distributed")


@pytest.fixture(scope="module")
def client():
    # Two worker processes on loopback; one thread each, as a local sweep uses.
    with distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True,
                                  dashboard_address=None) as cluster, \
            distributed.Client(cluster) as c:
        yield c


def test_distributed_equals_serial_on_50000_particles(client):
    """1e-12 relative on 50,000 particles with two workers."""
    rng = np.random.default_rng(8)
    p = wakes.Particles(rng.uniform(size=(50_000, 3)), rng.normal(size=(50_000, 3)) * 1e-4,
                        0.02, kernel="winckelmans-leonard")
    targets = p.positions[::10]
    serial = wakes.induce(p, targets)
    spread = wakes.induce(p, targets, client=client)
    assert np.linalg.norm(spread - serial) <= 1e-12 * np.linalg.norm(serial)


def test_gradient_and_mixed_sources(client):
    rng = np.random.default_rng(9)
    p = wakes.Particles(rng.uniform(size=(500, 3)), rng.normal(size=(500, 3)), 0.05)
    f = wakes.Filaments.from_polyline(rng.uniform(size=(20, 3)), 1.0, 0.05)
    x = rng.uniform(size=(301, 3))
    u, g = wakes.induce([p, f], x, gradient=True)
    u2, g2 = induce_on_cluster([p, f], x, client, chunk_size=64, gradient=True)
    # workers may run another compiled variant of the same sum (one thread
    # each): equal to round-off, not necessarily bit for bit
    assert np.linalg.norm(u2 - u) <= 1e-13 * np.linalg.norm(u)
    assert np.linalg.norm(g2 - g) <= 1e-13 * np.linalg.norm(g)
    with pytest.raises(wakes.WakesError, match="chunk_size"):
        induce_on_cluster(p, x, client, chunk_size=0)
