"""Induction across Dask workers equals the single-process result."""

import numpy as np
import pytest
import wakes
from wakes.cluster import induce_on_cluster

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


def _small_wing(**cluster):
    return {"title": "cluster wing", "freestream": {"speed": 10.0, "angle_of_attack": 5.0},
            "time": {"steps": 6}, "wake": {"model": "particles", "near_wake_steps": 2},
            "cluster": cluster,
            "bodies": {"wing": {"type": "wing", "span": 4.0, "chord": 0.5, "spanwise_panels": 8}}}


def test_run_sends_the_wake_to_the_workers_once_it_is_large(client):
    """A case run whose wake induction goes to two workers from the third step
    equals the one-process run to round-off, loads and final wake alike."""
    from wakes.case import parse_case
    from wakes.run import run_case

    serial = run_case(parse_case(_small_wing()))
    case = parse_case(_small_wing(min_wake=20))
    assert serial.loads["wake_particles"].iloc[2] + serial.loads["wake_segments"].iloc[2] >= 20
    calls = []
    real_submit = client.submit
    client.submit = lambda *a, **k: calls.append(1) or real_submit(*a, **k)
    try:
        spread = run_case(case, client=client)
    finally:
        del client.submit
    assert calls, "no induction reached the workers"
    for col in ("CL", "CDi"):
        np.testing.assert_allclose(spread.loads[col], serial.loads[col], rtol=1e-12, atol=1e-15)
    alone = run_case(case, client=client, use_cluster=False)
    assert alone.loads["CL"].tolist() == serial.loads["CL"].tolist()


def test_cluster_scheduler_must_be_an_address():
    from wakes.case import parse_case

    with pytest.raises(wakes.WakesError, match=r"cluster.scheduler must be an address"):
        parse_case(_small_wing(scheduler="localhost"))
