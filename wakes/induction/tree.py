"""Treecode: velocity and gradient of many vortex elements in O(N) work.

Orchestrates the numba kernels of the ``tree_*`` modules on plain arrays;
the public front end is :func:`wakes.induce` (``method="tree"``).

Algorithm (a fast multipole method with Cartesian Taylor expansions and a
dual tree traversal, Dehnen 2002, J. Comput. Phys. 179; regularized-kernel
expansions as in Lindsay & Krasny 2001, J. Comput. Phys. 172):

1. An octree over the targets, and one over each source set (reused when
   the sources are the target points themselves).
2. Moments of the vector potential about every source cell (particles:
   alpha (y - z)^n; segments: the same integrated exactly along the
   segment), shifted up the tree.
3. A dual traversal splits cell pairs until they are far (expansion
   converges, and the far kernel is the true one there) or both leaves.
4. Far pairs add to the target cell's local expansion; local expansions are
   shifted down the tree and evaluated at the targets as velocity (the
   curl) and gradient. Near pairs are summed with the exact pair laws.

Particle pairs are expanded as 1/|r| (harmonic, reduced tables). A
uniform-radius algebraic kernel adds its excess over 1/|r| (which decays
like sigma^4/r^5, Winckelmans--Leonard, or sigma^2/r^3, Rosenhead--Moore)
as a second, low-order expansion on the far pairs where it matters, the
order chosen per pair from its size there; other kernels keep pairs within
their reach in the near field.

The order p and the opening parameter theta come from the tolerance
(:mod:`.tree_params`).
"""

from __future__ import annotations

from dataclasses import dataclass

import numba
import numpy as np

from . import tree_build, tree_expansion, tree_near, tree_params, tree_traverse
from .tree_traverse import GAP, MAC_ONLY, TUBE

# Per term, a direct moment sum over points runs about this much faster than
# the moment shifts (vectorised versus gathered; measured).
DIRECT_MOMENT_ADVANTAGE = 4.0


@dataclass
class _Tree:
    """An octree over sorted points and the geometry of its cells."""

    order: np.ndarray          # sorted position -> original index
    start: np.ndarray
    count: np.ndarray
    first_child: np.ndarray
    n_child: np.ndarray
    depth_ptr: np.ndarray
    center: np.ndarray = None
    radius: np.ndarray = None

    @property
    def n_cells(self) -> int:
        return self.start.shape[0]

    @property
    def leaves(self) -> np.ndarray:
        return np.flatnonzero(self.n_child == 0)


def _build(points_x, points_y, points_z, leaf_size) -> _Tree:
    order, cells = tree_build.build_tree(points_x, points_y, points_z, leaf_size)
    return _Tree(order, *cells)


def _parent_array(tree: _Tree) -> np.ndarray:
    parent = np.full(tree.n_cells, -1, np.int64)
    internal = np.flatnonzero(tree.n_child)
    for c in internal:
        parent[tree.first_child[c]:tree.first_child[c] + tree.n_child[c]] = c
    return parent


def _sorted(a: np.ndarray, order: np.ndarray) -> np.ndarray:
    return np.ascontiguousarray(a[order])


def _moments(tree: _Tree, tables: dict, p2m, *p2m_args) -> np.ndarray:
    """Moments (C, 3, T) of every cell of a source tree.

    A cell whose direct sum over its points costs less than shifting its
    children's moments (count x T < n_child x M2M table length) gets them
    directly from its points by ``p2m(cells, ..., *p2m_args, midx, moments)``
    (vectorised, so cheaper per term than the shifts); the cells above get
    them by shifting, deepest first.
    """
    moments = np.empty((tree.n_cells, 3, tables["midx"].shape[0]))
    direct = (tree.n_child == 0) | (tree.count * tables["midx"].shape[0] <= DIRECT_MOMENT_ADVANTAGE
                                     * tree.n_child * tables["m2m_j"].shape[0])
    p2m(np.flatnonzero(direct), tree.start, tree.count, tree.center, *p2m_args,
        tables["midx"], moments)
    for d in range(tree.depth_ptr.shape[0] - 2, -1, -1):
        cells = np.arange(tree.depth_ptr[d], tree.depth_ptr[d + 1])
        cells = cells[~direct[cells]]
        if cells.size:
            tree_expansion.m2m(cells, tree.first_child, tree.n_child, tree.center,
                               tables["m2m_ptr"], tables["m2m_j"], tables["m2m_d"],
                               tables["m2m_c"], tables["mono_parent"], tables["mono_dir"],
                               moments)
    return moments


def _far_and_near(target: _Tree, source: _Tree, theta, min_pairs, kind, reach, axis,
                  cos_half):
    """Far pairs (t, s) as two arrays, near pairs grouped by target leaf."""
    far_t, far_s, near_t, near_s = tree_traverse.dual_traverse(
        target.center, target.radius, target.count, target.first_child, target.n_child,
        source.center, source.radius, source.count, source.first_child, source.n_child,
        theta, min_pairs, kind, reach, axis, cos_half)
    return (far_t, far_s), tree_traverse.group_by_target(near_t, near_s, target.n_cells)


class _Locals:
    """Local expansions of the target cells, kept in two parts.

    Far fields of harmonic potentials (1/|r|: every particle pair's singular
    part, segments) are summed with the reduced tables on the coefficients
    with k_z <= 1 and completed by Laplace's equation once at the end; the
    excess of a regularized potential over 1/|r| (uniform-radius algebraic
    kernels, near their cores) is summed in full at a low order, separately.
    """

    def __init__(self, n_cells: int, tables: dict):
        self.tables = tables
        self.harmonic = np.zeros((n_cells, 3, tables["midx"].shape[0]))
        self.full = None
        self.has_far = np.zeros(n_cells, np.bool_)  # cells with far pairs of their own

    def add_far(self, target: _Tree, source: _Tree, far, ratio, theta, moments) -> None:
        """Add the harmonic far field of far pairs (two arrays, target and
        source cells, opening ratios ``ratio``) of one source set with
        moments (Cs, 3, T).

        A pair well inside the opening criterion is expanded to a lower
        order q (:func:`.tree_params.harmonic_orders`): the tables of order
        q are prefixes of those of order p (multi-indices are numbered by
        degree).
        """
        tb = self.tables
        reduced = tree_expansion.reduce_moments(moments, tb["reduce_ptr"], tb["reduce_n"],
                                                tb["reduce_c"])
        orders = tree_params.harmonic_orders(tb["p"], theta, ratio)
        for q in np.unique(orders):
            tq = tree_expansion.m2l_tables(int(q), True)
            pick = orders == q
            self._m2l(target, source, (far[0][pick], far[1][pick]), reduced,
                      tq["table"]["n_list"].shape[0], 0.0, 0.0, False, tq, tq["table"],
                      self.harmonic)

    def add_excess(self, target: _Tree, source: _Tree, far, orders, moments, delta2,
                   wl_coef) -> None:
        """Add the potential's excess over 1/|r| for far pairs, each at its
        order in ``orders`` (-1: negligible, skipped)."""
        if self.full is None:
            self.full = np.zeros_like(self.harmonic)
        for q in np.unique(orders[orders >= 0]):
            tq = tree_expansion.m2l_tables(int(q), False)
            pick = orders == q
            self._m2l(target, source, (far[0][pick], far[1][pick]), moments,
                      tq["midx"].shape[0], delta2, wl_coef, True, tq, tq["table"], self.full)

    def _m2l(self, target, source, far, moments, n_mom, delta2, wl_coef, excess, tb,
             m2l_tab, local) -> None:
        ptr, src = tree_traverse.group_by_target(far[0], far[1], target.n_cells)
        t_cells = np.flatnonzero(np.diff(ptr))
        if t_cells.size == 0:
            return
        self.has_far[t_cells] = True
        tree_expansion.m2l(t_cells, ptr, src, target.center, source.center, moments, n_mom,
                           delta2, wl_coef, excess, tb["deg"], tb["rec1"], tb["rec2"],
                           m2l_tab["rec_list"], m2l_tab["k_list"], m2l_tab["ptr"],
                           m2l_tab["n_idx"], m2l_tab["m_idx"], m2l_tab["coef"],
                           16 * numba.get_num_threads(), local)

    def total(self) -> np.ndarray:
        """The complete local coefficients (C, 3, T)."""
        tb = self.tables
        tree_expansion.complete_harmonic(self.harmonic, tb["fill_k"], tb["fill_i"],
                                         tb["fill_c"])
        if self.full is not None:
            self.harmonic += self.full
        return self.harmonic


@dataclass(frozen=True)
class ParticleSet:
    """Particle sources as arrays: positions (N, 3), strengths (N, 3),
    radii (N,) [m], kernel code."""

    positions: np.ndarray
    strengths: np.ndarray
    radii: np.ndarray
    kernel: int


@dataclass(frozen=True)
class SegmentSet:
    """Segment sources as arrays: start and end points (K, 3) [m],
    circulation (K,) [m^2/s], core radius (K,) [m], core code."""

    start: np.ndarray
    end: np.ndarray
    circulation: np.ndarray
    core_radius: np.ndarray
    core: int


def tree_induce(targets: np.ndarray, sources: list, gradient: bool, tolerance: float,
                leaf_size: int = tree_params.LEAF_SIZE):
    """Velocity (and gradient) of particle and segment sets at the targets.

    Parameters
    ----------
    targets : (M, 3) float64
        Target points [m], M >= 1.
    sources : list of ParticleSet or SegmentSet
        Non-empty source sets; their fields add.
    gradient : bool
        Also compute the velocity gradient.
    tolerance : float
        Requested relative L2 error of the velocity (gradient: 10x).
    leaf_size : int
        Largest number of points in a leaf.

    Returns
    -------
    vel : (M, 3) float64
        Velocity [m/s].
    grad : (M, 3, 3) float64 or (0, 3, 3)
        grad[i, j, k] = d u_j / d x_k [1/s].
    """
    theta, p = tree_params.expansion_settings(tolerance)
    tables = tree_expansion.expansion_tables(p)
    m = targets.shape[0]
    tx0, ty0, tz0 = (np.ascontiguousarray(targets[:, k]) for k in range(3))
    target = _build(tx0, ty0, tz0, leaf_size)
    tx, ty, tz = (_sorted(a, target.order) for a in (tx0, ty0, tz0))
    target.center, target.radius = tree_build.point_cell_geometry(target.start, target.count,
                                                                  tx, ty, tz)
    t_leaves = target.leaves
    local = _Locals(target.n_cells, tables)
    vel = np.zeros((m, 3))
    grad = np.zeros((m, 3, 3) if gradient else (0, 3, 3))
    for s in sources:
        if isinstance(s, ParticleSet):
            _add_particles(s, targets, target, tx, ty, tz, t_leaves, tables, theta,
                           tolerance, leaf_size, gradient, local, vel, grad)
        else:
            _add_segments(s, target, tx, ty, tz, t_leaves, tables, theta, tolerance,
                          leaf_size, gradient, local, vel, grad)
    has_far = local.has_far
    local = local.total()
    _downward(target, tables, has_far, local, tx, ty, tz, gradient, vel, grad)
    out_v = np.empty_like(vel)
    out_v[target.order] = vel
    if not gradient:
        return out_v, grad
    out_g = np.empty_like(grad)
    out_g[target.order] = grad
    return out_v, out_g


def _downward(target: _Tree, tables: dict, has_far, local, tx, ty, tz, gradient, vel,
              grad) -> None:
    """Shift local expansions down and evaluate them at the targets.

    Only cells with far pairs of their own get a shifted copy of their
    nearest expanded ancestor's polynomial; the others, and the leaves'
    targets, use that ancestor's directly (shifting a polynomial is exact).
    """
    parent = _parent_array(target)
    owner = np.full(target.n_cells, -1, np.int64)
    owner[0] = 0 if has_far[0] else -1
    for d in range(1, target.depth_ptr.shape[0] - 1):
        cells = np.arange(target.depth_ptr[d], target.depth_ptr[d + 1])
        above = owner[parent[cells]]
        shift = has_far[cells] & (above >= 0)
        if shift.any():
            tree_expansion.l2l(cells[shift], above[shift], target.center, tables["l2l_ptr"],
                               tables["l2l_j"], tables["l2l_d"], tables["l2l_c"],
                               tables["mono_parent"], tables["mono_dir"], local)
        owner[cells] = np.where(has_far[cells], cells, above)
    leaves = target.leaves
    owned = owner[leaves] >= 0
    tree_expansion.l2p(leaves[owned], owner[leaves[owned]], target.start, target.count,
                       target.center, tx, ty, tz, local, tables["midx"], tables["up"],
                       gradient, vel, grad)


def _add_particles(s: ParticleSet, targets, target: _Tree, tx, ty, tz, t_leaves, tables,
                   theta, tolerance, leaf_size, gradient, local, vel, grad) -> None:
    pos = s.positions
    if pos.shape == targets.shape and np.array_equal(pos, targets):
        source = target  # sources are the targets: one tree serves both
        sx, sy, sz = tx, ty, tz
    else:
        sx0, sy0, sz0 = (np.ascontiguousarray(pos[:, k]) for k in range(3))
        source = _build(sx0, sy0, sz0, leaf_size)
        sx, sy, sz = (_sorted(a, source.order) for a in (sx0, sy0, sz0))
        source.center, source.radius = tree_build.point_cell_geometry(
            source.start, source.count, sx, sy, sz)
    ax, ay, az = (_sorted(s.strengths[:, k], source.order) for k in range(3))
    sig = _sorted(s.radii, source.order)
    moments = _moments(source, tables, tree_expansion.p2m_points, sx, sy, sz, ax, ay, az)
    exact, delta2, wl_coef = tree_params.kernel_far_potential(s.kernel, s.radii)
    reach = tree_params.particle_reach(s.kernel, tolerance) * \
        tree_build.cell_max(source.start, source.count, sig)
    min_pairs = tree_params.min_far_pairs(tables["p"], s.kernel, False)
    far, near = _far_and_near(target, source, theta, min_pairs, MAC_ONLY if exact else GAP,
                              reach, np.zeros((1, 3)), np.ones(1))
    gap, ratio = tree_traverse.pair_separation(far[0], far[1], target.center, target.radius,
                                               source.center, source.radius)
    local.add_far(target, source, far, ratio, theta, moments)
    if delta2 != 0.0:
        # the kernel's departure from 1/|r|, where it matters, at the order
        # its size and the pair's separation call for
        orders = tree_params.excess_orders(s.kernel, tolerance, float(np.sqrt(delta2)),
                                           tables["p"], gap, ratio)
        local.add_excess(target, source, far, orders, moments, delta2, wl_coef)
    tree_near.particles_near(s.kernel, gradient, t_leaves, target.start, target.count,
                             near[0], near[1], source.start, source.count, tx, ty, tz,
                             sx, sy, sz, ax, ay, az, sig * sig, vel, grad)


def _add_segments(s: SegmentSet, target: _Tree, tx, ty, tz, t_leaves, tables, theta,
                  tolerance, leaf_size, gradient, local, vel, grad) -> None:
    mid = 0.5 * (s.start + s.end)
    source = _build(*(np.ascontiguousarray(mid[:, k]) for k in range(3)), leaf_size)
    pax, pay, paz = (_sorted(s.start[:, k], source.order) for k in range(3))
    pbx, pby, pbz = (_sorted(s.end[:, k], source.order) for k in range(3))
    gam = _sorted(s.circulation, source.order)
    rc = _sorted(s.core_radius, source.order)
    source.center, source.radius, axis, cos_half = tree_build.segment_cell_geometry(
        source.start, source.count, pax, pay, paz, pbx, pby, pbz)
    n_gauss = tables["p"] // 2 + 1  # Gauss-Legendre exact to degree 2 n - 1 >= p
    gx, gw = np.polynomial.legendre.leggauss(n_gauss)
    moments = _moments(source, tables, tree_expansion.p2m_segments, pax, pay, paz, pbx, pby,
                       pbz, gam, 0.5 * gx, 0.5 * gw)
    reach = tree_params.core_reach(s.core, tolerance) * \
        tree_build.cell_max(source.start, source.count, rc)
    min_pairs = tree_params.min_far_pairs(tables["p"], s.core, True)
    far, near = _far_and_near(target, source, theta, min_pairs, TUBE, reach, axis, cos_half)
    ratio = tree_traverse.pair_separation(far[0], far[1], target.center, target.radius,
                                          source.center, source.radius)[1]
    local.add_far(target, source, far, ratio, theta, moments)
    tree_near.segments_near(s.core, gradient, t_leaves, target.start, target.count,
                            near[0], near[1], source.start, source.count, tx, ty, tz,
                            pax, pay, paz, pbx, pby, pbz, gam, rc * rc, vel, grad)
