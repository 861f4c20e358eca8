"""Ring lattices: net segment circulations, Helmholtz balance, influence matrices."""

import numpy as np
from hypothesis import given
from hypothesis import strategies as st
from wakes.aero.geometry import Distribution, WingPlanform, wing_surface
from wakes.aero.polars import SectionPolars, ThinAirfoilPolar
from wakes.aero.vortex_lattice import influence_matrix, lattice_filaments, lattice_segments
from wakes.exact import segment_velocity


def _grid(r, n):
    x, y = np.meshgrid(np.arange(r, dtype=float), np.arange(n + 1, dtype=float), indexing="ij")
    return np.stack([x, y, 0.1 * x * y], axis=-1)


def test_single_ring_has_four_unit_sides_in_lifting_sense():
    nodes, seg, circ, _ = lattice_segments(_grid(2, 1), np.ones((1, 1)))
    loop = {(int(a), int(b)): c for (a, b), c in zip(seg, circ)}
    # upstream side +y with +1, downstream side +y with -1, right side aft +1, left side aft -1
    assert loop == {(0, 1): 1.0, (2, 3): -1.0, (0, 2): -1.0, (1, 3): 1.0}


@given(st.integers(2, 5), st.integers(1, 5), st.integers(0, 2 ** 31 - 1))
def test_helmholtz_balance_at_every_node(rows, n, seed):
    """A vortex line cannot end: at every node of a closed lattice the circulation flowing in
    equals the circulation flowing out (Helmholtz's second theorem)."""
    g = np.random.default_rng(seed).normal(size=(rows - 1, n))
    nodes, seg, circ, _ = lattice_segments(_grid(rows, n), g)
    balance = np.zeros(nodes.shape[0])
    np.add.at(balance, seg[:, 0], -circ)
    np.add.at(balance, seg[:, 1], circ)
    np.testing.assert_allclose(balance, 0.0, atol=1e-12)


def test_open_far_end_carries_the_tail_circulation():
    g = np.array([[1.0, 2.0]])
    tail = np.array([0.5, 0.5])
    nodes, seg, circ, _ = lattice_segments(_grid(2, 2), g, after=tail)
    far = (seg[:, 0] >= 3) & (seg[:, 1] >= 3)
    np.testing.assert_allclose(circ[far], tail - g[0])


def test_zero_length_segments_are_dropped():
    rows = _grid(2, 2)
    rows[1, 0] = rows[0, 0]  # a tip with zero chord
    f = lattice_filaments(rows, np.ones((1, 2)), core="singular", core_radius=1.0)
    a, b = f.endpoints()
    assert np.all(np.linalg.norm(b - a, axis=1) > 0)


def test_influence_matrix_matches_closed_form_segments():
    """Columns are unit rings summed from the straight-segment law (Katz & Plotkin 2001)."""
    s = wing_surface("w", WingPlanform(3.0, Distribution.constant(0.7), sweep=Distribution.constant(20.0)),
                     n_span=4, spacing="cosine", n_chord=2, lifting_line=False,
                     polars=SectionPolars.uniform(ThinAirfoilPolar(), 4))
    pts = np.random.default_rng(1).normal(size=(7, 3))
    a = influence_matrix([s], pts)
    for k, (r, j) in enumerate([(r, j) for r in range(2) for j in range(4)]):
        q = s.corners[r:r + 2, j:j + 2]
        loop = [q[0, 0], q[0, 1], q[1, 1], q[1, 0], q[0, 0]]
        ref = sum(segment_velocity(pts, loop[i], loop[i + 1], 1.0) for i in range(4))
        np.testing.assert_allclose(a[:, :, k], ref, rtol=1e-12, atol=1e-14)
