"""Dual tree traversal: which cell pairs interact through expansions.

A pair (target cell t, source cell s) at centre distance D is *far* when

* the expansion converges fast enough: b_t + b_s <= theta D, with b the
  cells' radii about their expansion centres (Dehnen 2002, J. Comput.
  Phys. 179), and
* the far-field kernel is the true one there (``kind``):

  - ``MAC_ONLY``: the far kernel is exact (singular particles, or a
    uniform-radius algebraic kernel expanded as itself);
  - ``GAP``: every pair in the two cells is at least ``reach[s]`` apart,
    D - b_t - b_s >= reach[s], where reach = rho_far * largest smoothing
    radius in s is where the regularized kernel equals the singular one to
    the requested accuracy;
  - ``TUBE``: every target lies at least ``reach[s]`` from the *line* of
    every segment of s, where a core model multiplies the segment law by a
    factor of that distance. The segment directions of s lie in a double
    cone (axis, half angle beta), so the angle between x - m_i and the line
    of segment i is at least gamma = angle(R, axis line) - beta -
    asin((b_t + b_s)/D), and its distance from the line at least
    (D - b_t - b_s) sin(gamma).

and the two cells hold enough point pairs for an expansion to cost less
than summing them (``min_pairs``, the cost-based test of Dehnen 2002).
Otherwise the larger cell is split; two leaves that are not far are a
*near* pair, summed with the exact pair laws. The lists come back grouped
by target cell (CSR).
"""

import math

import numpy as np
from numba import njit

MAC_ONLY, GAP, TUBE = 0, 1, 2


@njit(cache=True)
def _grow(a):
    b = np.empty(2 * a.shape[0], a.dtype)
    b[: a.shape[0]] = a
    return b


@njit(inline="always", cache=True)
def _is_far(t, s, t_center, t_radius, t_count, s_center, s_radius, s_count, theta2,
            min_pairs, kind, reach, axis, cos_half):
    if t_count[t] * s_count[s] < min_pairs:
        return False  # summing the pairs directly is cheaper than an expansion
    rx = t_center[t, 0] - s_center[s, 0]
    ry = t_center[t, 1] - s_center[s, 1]
    rz = t_center[t, 2] - s_center[s, 2]
    d2 = rx * rx + ry * ry + rz * rz
    rsum = t_radius[t] + s_radius[s]
    if rsum * rsum >= theta2 * d2:  # strict: two one-point cells at one spot are near
        return False
    if kind == MAC_ONLY or reach[s] == 0.0:
        return True
    d = math.sqrt(d2)
    gap = d - rsum
    if kind == GAP:
        return gap >= reach[s]
    # TUBE
    cos_r = min(abs(rx * axis[s, 0] + ry * axis[s, 1] + rz * axis[s, 2]) / d, 1.0)
    gamma = math.acos(cos_r) - math.acos(min(cos_half[s], 1.0)) - math.asin(rsum / d)
    if gamma <= 0.0:
        return False
    return gap * math.sin(gamma) >= reach[s]


@njit(cache=True)
def dual_traverse(t_center, t_radius, t_count, t_first, t_nchild, s_center, s_radius,
                  s_count, s_first, s_nchild, theta, min_pairs, kind, reach, axis, cos_half):
    """Far and near cell pairs of a target tree and a source tree.

    Parameters
    ----------
    t_center, t_radius, t_count, t_first, t_nchild
        Target cells: centres (Ct, 3), radii (Ct,), point counts, children.
    s_center, s_radius, s_count, s_first, s_nchild
        Source cells, likewise (may be the same arrays as the targets').
    theta : float
        Opening parameter, 0 < theta < 1.
    min_pairs : int
        A pair of cells holding fewer than this many point pairs is never
        far: below it the direct sum costs less than an expansion.
    kind : int
        ``MAC_ONLY``, ``GAP`` or ``TUBE`` (see the module notes).
    reach : (Cs,) float64
        Per source cell distance of the GAP or TUBE test [m] (unused for
        MAC_ONLY).
    axis, cos_half : (Cs, 3), (Cs,) float64
        Direction cone of the segments of each source cell (TUBE only).

    Returns
    -------
    far_t, far_s, near_t, near_s : int64 arrays
        Far pairs and near (leaf, leaf) pairs.
    """
    theta2 = theta * theta
    cap = 1024
    far_t = np.empty(cap, np.int64)
    far_s = np.empty(cap, np.int64)
    near_t = np.empty(cap, np.int64)
    near_s = np.empty(cap, np.int64)
    n_far = 0
    n_near = 0
    stack_t = np.empty(cap, np.int64)
    stack_s = np.empty(cap, np.int64)
    stack_t[0] = 0
    stack_s[0] = 0
    top = 1
    while top > 0:
        top -= 1
        t = stack_t[top]
        s = stack_s[top]
        if _is_far(t, s, t_center, t_radius, t_count, s_center, s_radius, s_count, theta2,
                   min_pairs, kind, reach, axis, cos_half):
            if n_far == far_t.shape[0]:
                far_t = _grow(far_t)
                far_s = _grow(far_s)
            far_t[n_far] = t
            far_s[n_far] = s
            n_far += 1
            continue
        t_leaf = t_nchild[t] == 0
        s_leaf = s_nchild[s] == 0
        if t_leaf and s_leaf:
            if n_near == near_t.shape[0]:
                near_t = _grow(near_t)
                near_s = _grow(near_s)
            near_t[n_near] = t
            near_s[n_near] = s
            n_near += 1
            continue
        while top + 8 > stack_t.shape[0]:
            stack_t = _grow(stack_t)
            stack_s = _grow(stack_s)
        if not s_leaf and (t_leaf or s_radius[s] >= t_radius[t]):
            for c in range(s_first[s], s_first[s] + s_nchild[s]):
                stack_t[top] = t
                stack_s[top] = c
                top += 1
        else:
            for c in range(t_first[t], t_first[t] + t_nchild[t]):
                stack_t[top] = c
                stack_s[top] = s
                top += 1
    return far_t[:n_far], far_s[:n_far], near_t[:n_near], near_s[:n_near]


@njit(cache=True)
def pair_separation(pair_t, pair_s, t_center, t_radius, s_center, s_radius):
    """Gap (centre distance minus both radii, the least distance between
    their contents) [m] and opening ratio (b_t + b_s)/D of cell pairs."""
    n = pair_t.shape[0]
    gap = np.empty(n)
    ratio = np.empty(n)
    for i in range(n):
        t = pair_t[i]
        s = pair_s[i]
        d = math.sqrt((t_center[t, 0] - s_center[s, 0]) ** 2
                      + (t_center[t, 1] - s_center[s, 1]) ** 2
                      + (t_center[t, 2] - s_center[s, 2]) ** 2)
        b = t_radius[t] + s_radius[s]
        gap[i] = d - b
        ratio[i] = b / d
    return gap, ratio


@njit(cache=True)
def group_by_target(pair_t, pair_s, n_cells):
    """CSR form of pairs: sources of cell t are src[ptr[t]:ptr[t + 1]]."""
    ptr = np.zeros(n_cells + 1, np.int64)
    for i in range(pair_t.shape[0]):
        ptr[pair_t[i] + 1] += 1
    for c in range(n_cells):
        ptr[c + 1] += ptr[c]
    fill = ptr[:-1].copy()
    src = np.empty(pair_t.shape[0], np.int64)
    for i in range(pair_t.shape[0]):
        t = pair_t[i]
        src[fill[t]] = pair_s[i]
        fill[t] += 1
    return ptr, src
