"""Octree construction: Morton order and cells as contiguous index ranges.

Points are sorted along a Morton (Z-order) curve of 21 bits per axis; a cell
is then a contiguous range of the sorted points. Cells are created breadth
first, so a cell's children are consecutive and the cells of one tree depth
form one contiguous block (the upward and downward passes run a depth at a
time, in parallel within it). A cell whose points all fall into one octant is
not stored: the split descends until at least two octants are occupied, so
every internal cell has two to eight children and a tree over N points has
fewer than 2N cells. A cell with at most ``leaf_size`` points, or whose points
share one Morton key (coincident points), is a leaf.

Geometry is computed separately for each kind of content: a cell's centre
is the centre of the bounding box of what it holds and its radius the
largest distance from that centre to any of it (segment end points
included), so the acceptance tests see the true extent.
"""

import math

import numpy as np
from numba import njit, prange

MORTON_BITS = 21  # bits per axis: 3 * 21 = 63 bits fit an int64 key


@njit(inline="always", cache=True)
def _spread_bits(v):
    """Insert two zero bits between each of the low 21 bits of v."""
    v &= 0x1FFFFF
    v = (v | (v << 32)) & 0x1F00000000FFFF
    v = (v | (v << 16)) & 0x1F0000FF0000FF
    v = (v | (v << 8)) & 0x100F00F00F00F00F
    v = (v | (v << 4)) & 0x10C30C30C30C30C3
    v = (v | (v << 2)) & 0x1249249249249249
    return v


@njit(parallel=True, cache=True)
def morton_keys(x, y, z):
    """Morton keys of points in their bounding cube.

    Parameters
    ----------
    x, y, z : (N,) float64
        Point coordinates [m].

    Returns
    -------
    keys : (N,) int64
        Interleaved 21-bit cell coordinates (x in the lowest bit).
    """
    n = x.shape[0]
    lo_x, lo_y, lo_z = x.min(), y.min(), z.min()
    side = max(x.max() - lo_x, y.max() - lo_y, z.max() - lo_z)
    top = (1 << MORTON_BITS) - 1
    scale = top / side if side > 0.0 else 0.0
    keys = np.empty(n, np.int64)
    for i in prange(n):
        ix = min(int((x[i] - lo_x) * scale), top)
        iy = min(int((y[i] - lo_y) * scale), top)
        iz = min(int((z[i] - lo_z) * scale), top)
        keys[i] = _spread_bits(ix) | (_spread_bits(iy) << 1) | (_spread_bits(iz) << 2)
    return keys


@njit(cache=True)
def build_cells(keys, leaf_size):
    """Cells of an octree over points already sorted by Morton key.

    Parameters
    ----------
    keys : (N,) int64
        Sorted Morton keys, N >= 1.
    leaf_size : int
        Largest number of points in a leaf.

    Returns
    -------
    start, count : (C,) int64
        Range of sorted points held by each cell.
    first_child, n_child : (C,) int64
        Children are cells first_child .. first_child + n_child - 1;
        n_child = 0 marks a leaf.
    depth_ptr : (D + 1,) int64
        Cells of tree depth d are depth_ptr[d] .. depth_ptr[d + 1] - 1.
    """
    n = keys.shape[0]
    cap = 2 * n + 1
    start = np.empty(cap, np.int64)
    count = np.empty(cap, np.int64)
    first_child = np.zeros(cap, np.int64)
    n_child = np.zeros(cap, np.int64)
    depth = np.empty(cap, np.int64)
    level = np.empty(cap, np.int64)  # Morton level at which the cell splits
    start[0] = 0
    count[0] = n
    depth[0] = 0
    level[0] = 0
    n_cells = 1
    head = 0
    while head < n_cells:
        c = head
        head += 1
        if count[c] <= leaf_size:
            continue
        s = start[c]
        e = s + count[c]
        lev = level[c]
        shift = 0
        while lev < MORTON_BITS:
            shift = 3 * (MORTON_BITS - 1 - lev)
            if ((keys[s] >> shift) & 7) != ((keys[e - 1] >> shift) & 7):
                break
            lev += 1
        if lev == MORTON_BITS:
            continue  # all keys equal: coincident points stay in one leaf
        first_child[c] = n_cells
        j = s
        for octant in range(8):
            lo = j
            hi = e
            while lo < hi:  # first point of a later octant
                mid = (lo + hi) // 2
                if ((keys[mid] >> shift) & 7) <= octant:
                    lo = mid + 1
                else:
                    hi = mid
            if lo > j:
                start[n_cells] = j
                count[n_cells] = lo - j
                depth[n_cells] = depth[c] + 1
                level[n_cells] = lev + 1
                n_cells += 1
            j = lo
        n_child[c] = n_cells - first_child[c]
    n_depth = depth[n_cells - 1] + 1
    depth_ptr = np.zeros(n_depth + 1, np.int64)
    for c in range(n_cells):
        depth_ptr[depth[c] + 1] = c + 1
    return (start[:n_cells].copy(), count[:n_cells].copy(), first_child[:n_cells].copy(),
            n_child[:n_cells].copy(), depth_ptr)


@njit(parallel=True, cache=True)
def point_cell_geometry(start, count, x, y, z):
    """Centre (C, 3) and radius (C,) of each cell over sorted points."""
    n_cells = start.shape[0]
    center = np.empty((n_cells, 3))
    radius = np.empty(n_cells)
    for c in prange(n_cells):
        s = start[c]
        e = s + count[c]
        x0 = x[s]
        x1 = x[s]
        y0 = y[s]
        y1 = y[s]
        z0 = z[s]
        z1 = z[s]
        for i in range(s + 1, e):
            x0 = min(x0, x[i])
            x1 = max(x1, x[i])
            y0 = min(y0, y[i])
            y1 = max(y1, y[i])
            z0 = min(z0, z[i])
            z1 = max(z1, z[i])
        cx = 0.5 * (x0 + x1)
        cy = 0.5 * (y0 + y1)
        cz = 0.5 * (z0 + z1)
        r2 = 0.0
        for i in range(s, e):
            r2 = max(r2, (x[i] - cx) ** 2 + (y[i] - cy) ** 2 + (z[i] - cz) ** 2)
        center[c, 0] = cx
        center[c, 1] = cy
        center[c, 2] = cz
        radius[c] = math.sqrt(r2)
    return center, radius


@njit(parallel=True, cache=True)
def segment_cell_geometry(start, count, ax, ay, az, bx, by, bz):
    """Centre, radius and direction cone of cells over sorted segments.

    Returns
    -------
    center : (C, 3) float64
        Centre of the bounding box of the segments' end points [m].
    radius : (C,) float64
        Largest distance from the centre to an end point [m].
    axis : (C, 3) float64
        Unit axis of a double cone holding every segment's line direction.
    cos_half : (C,) float64
        Cosine of the cone's half angle: |t . axis| >= cos_half for every
        segment direction t (1 for a cell of parallel segments; a
        zero-length segment has no direction and is skipped).
    """
    n_cells = start.shape[0]
    center = np.empty((n_cells, 3))
    radius = np.empty(n_cells)
    axis = np.zeros((n_cells, 3))
    cos_half = np.ones(n_cells)
    for c in prange(n_cells):
        s = start[c]
        e = s + count[c]
        x0 = min(ax[s], bx[s])
        x1 = max(ax[s], bx[s])
        y0 = min(ay[s], by[s])
        y1 = max(ay[s], by[s])
        z0 = min(az[s], bz[s])
        z1 = max(az[s], bz[s])
        for i in range(s + 1, e):
            x0 = min(x0, min(ax[i], bx[i]))
            x1 = max(x1, max(ax[i], bx[i]))
            y0 = min(y0, min(ay[i], by[i]))
            y1 = max(y1, max(ay[i], by[i]))
            z0 = min(z0, min(az[i], bz[i]))
            z1 = max(z1, max(az[i], bz[i]))
        cx = 0.5 * (x0 + x1)
        cy = 0.5 * (y0 + y1)
        cz = 0.5 * (z0 + z1)
        r2 = 0.0
        # axis: sum of directions flipped into the half space of the first one
        sx = 0.0
        sy = 0.0
        sz = 0.0
        rx = 0.0
        ry = 0.0
        rz = 0.0
        for i in range(s, e):
            r2 = max(r2, (ax[i] - cx) ** 2 + (ay[i] - cy) ** 2 + (az[i] - cz) ** 2)
            r2 = max(r2, (bx[i] - cx) ** 2 + (by[i] - cy) ** 2 + (bz[i] - cz) ** 2)
            tx = bx[i] - ax[i]
            ty = by[i] - ay[i]
            tz = bz[i] - az[i]
            tn = math.sqrt(tx * tx + ty * ty + tz * tz)
            if tn == 0.0:
                continue
            if rx == 0.0 and ry == 0.0 and rz == 0.0:
                rx = tx
                ry = ty
                rz = tz
            sign = 1.0 if tx * rx + ty * ry + tz * rz >= 0.0 else -1.0
            sx += sign * tx / tn
            sy += sign * ty / tn
            sz += sign * tz / tn
        center[c, 0] = cx
        center[c, 1] = cy
        center[c, 2] = cz
        radius[c] = math.sqrt(r2)
        sn = math.sqrt(sx * sx + sy * sy + sz * sz)
        if sn == 0.0:
            continue  # only zero-length segments: no direction constraint needed
        sx /= sn
        sy /= sn
        sz /= sn
        axis[c, 0] = sx
        axis[c, 1] = sy
        axis[c, 2] = sz
        cmin = 1.0
        for i in range(s, e):
            tx = bx[i] - ax[i]
            ty = by[i] - ay[i]
            tz = bz[i] - az[i]
            tn = math.sqrt(tx * tx + ty * ty + tz * tz)
            if tn == 0.0:
                continue
            cmin = min(cmin, abs(tx * sx + ty * sy + tz * sz) / tn)
        cos_half[c] = cmin
    return center, radius, axis, cos_half


@njit(parallel=True, cache=True)
def cell_max(start, count, values):
    """Largest of ``values`` (sorted like the points) in each cell."""
    n_cells = start.shape[0]
    out = np.empty(n_cells)
    for c in prange(n_cells):
        s = start[c]
        m = values[s]
        for i in range(s + 1, s + count[c]):
            m = max(m, values[i])
        out[c] = m
    return out


def build_tree(x, y, z, leaf_size):
    """Sort points along the Morton curve and build the octree cells.

    Parameters
    ----------
    x, y, z : (N,) float64
        Point coordinates [m], N >= 1.
    leaf_size : int
        Largest number of points in a leaf.

    Returns
    -------
    order : (N,) int64
        Sorted position -> original index.
    cells : tuple
        ``(start, count, first_child, n_child, depth_ptr)`` from
        :func:`build_cells`.
    """
    keys = morton_keys(x, y, z)
    order = np.argsort(keys, kind="stable")
    return order, build_cells(keys[order], int(leaf_size))
