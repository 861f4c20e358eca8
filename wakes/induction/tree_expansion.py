"""Cartesian Taylor expansions of the vortex vector potential.

The velocity of vortex sources is the curl of a vector potential,
u = curl(psi) / (4 pi) with psi_l(x) = sum_q alpha_q,l G(x - y_q); the
gradient is the curl of its derivatives. G is 1/|r| for the singular law, or
the potential of a uniform-radius algebraic kernel (Rosenhead--Moore:
(r^2 + s^2)^(-1/2); Winckelmans--Leonard: (r^2 + s^2)^(-1/2) + s^2/2
(r^2 + s^2)^(-3/2)), whose -G'(r)/r is the kernel's f(r^2).

Far interactions use the Cartesian Taylor scheme of the fast multipole
method with a total-order truncation (Dehnen 2002, J. Comput. Phys. 179;
the Taylor coefficients of (r^2 + s^2)^(-nu) by recurrence as in Lindsay &
Krasny 2001, J. Comput. Phys. 172):

* moments about a source-cell centre z: ``M_l^n = sum_q alpha_q,l (y_q - z)^n``
  (multi-index n, |n| <= p, no factorials);
* local coefficients about a target-cell centre w: ``psi_l(w + d) =
  sum_k L_l^k d^k``, with
  ``L_l^k = sum_{|n| <= p - |k|} (-1)^|n| C(n + k, n) a_{n+k}(w - z) M_l^n``
  and a_m = D^m G / m! the Taylor coefficients of G.

The combined truncation |n| + |k| <= p equals the degree-p Taylor
polynomial of G in (x - w) - (y - z), so for the singular kernel the
potential error is the tail of a Legendre series, at most
|alpha| theta^(p+1) / (D (1 - theta)) for theta = (b_s + b_t)/D.

Multi-indices are numbered by total degree (all of degree 0, then 1, ...);
the tables that drive the kernels are built once per order in
:func:`expansion_tables`.
"""

from functools import cache
from math import comb, factorial

import numpy as np
from numba import njit, prange

from ._jit import FASTMATH as _FASTMATH

INV_4PI = 1.0 / (4.0 * np.pi)
M2L_CHUNK = 64  # source cells per block of the M2L sum (keeps the block in L2)


def n_terms(p: int) -> int:
    """Number of multi-indices of total degree at most p: C(p + 3, 3)."""
    return (p + 1) * (p + 2) * (p + 3) // 6


@cache
def expansion_tables(p: int) -> dict:
    """Index tables for expansions of order ``p`` (p >= 2).

    Returns a dict of int64/float64 arrays; ``T = n_terms(p)``:

    ``midx`` (T, 3), ``deg`` (T,)
        The multi-indices and their total degrees.
    ``mono_parent``, ``mono_dir`` (T,)
        m = mono_parent[m] + e_{mono_dir[m]}, to build monomials in order.
    ``rec1``, ``rec2`` (T, 3)
        Index of m - e_i and of m - 2 e_i, or T (a slot holding zero).
    ``up`` (T, 3)
        Index of m + e_i (valid for |m| < p), or -1.
    ``m2m_ptr``, ``m2m_j``, ``m2m_d``, ``m2m_c``
        For each n, entries (j, n - j, C(n, j)) with j <= n.
    ``l2l_ptr``, ``l2l_j``, ``l2l_d``, ``l2l_c``
        For each k, entries (j, j - k, C(j, k)) with j >= k, |j| <= p.
    ``full``, ``harmonic`` : dict
        M2L tables (see :func:`_m2l_tables`) for any kernel, and the reduced
        ones valid for the harmonic potential 1/|r|.
    ``reduce_ptr``, ``reduce_n``, ``reduce_c``
        Harmonic reduction of moments onto the multi-indices with n_z <= 1
        (CSR over the reduced list).
    ``fill_k``, ``fill_i``, ``fill_c`` : (F,), (F, 2), (F, 2)
        L^k = fill_c[., 0] L^fill_i[., 0] + fill_c[., 1] L^fill_i[., 1] for
        every k with k_z >= 2, in an order that only reads finished entries.
    """
    if p < 2:
        raise ValueError("expansion order must be at least 2")
    midx = [(nx, d - nx - nz, nz) for d in range(p + 1) for nx in range(d, -1, -1)
            for nz in range(0, d - nx + 1)]
    index = {m: i for i, m in enumerate(midx)}
    t = len(midx)
    assert t == n_terms(p)
    mi = np.array(midx, dtype=np.int64)
    mono_parent = np.zeros(t, np.int64)
    mono_dir = np.zeros(t, np.int64)
    rec1 = np.full((t, 3), t, np.int64)
    rec2 = np.full((t, 3), t, np.int64)
    up = np.full((t, 3), -1, np.int64)
    for i, m in enumerate(midx):
        for d in range(3):
            e = [0, 0, 0]
            e[d] = 1
            lower = tuple(a - b for a, b in zip(m, e))
            lower2 = tuple(a - 2 * b for a, b in zip(m, e))
            upper = tuple(a + b for a, b in zip(m, e))
            if min(lower) >= 0:
                rec1[i, d] = index[lower]
                mono_parent[i] = index[lower]
                mono_dir[i] = d
            if min(lower2) >= 0:
                rec2[i, d] = index[lower2]
            if upper in index:
                up[i, d] = index[upper]

    def sub(a, b):
        return tuple(x - y for x, y in zip(a, b))

    out = {"p": p, "midx": mi, "deg": mi.sum(axis=1), "mono_parent": mono_parent,
           "mono_dir": mono_dir, "rec1": rec1, "rec2": rec2, "up": up}
    out["m2m_ptr"], out["m2m_j"], out["m2m_d"], out["m2m_c"] = _shift_table(mi, p, False)
    out["l2l_ptr"], out["l2l_j"], out["l2l_d"], out["l2l_c"] = _shift_table(mi, p, True)
    out["full"] = _m2l_tables(midx, index, p, harmonic=False)
    out["harmonic"] = _m2l_tables(midx, index, p, harmonic=True)
    # harmonic reduction of moments: D^n = (-1)^q sum_i C(q, i) D^(nx+2i, ny+2q-2i, r)
    # for n_z = 2q + r, so M~^n' = sum_n (-1)^q C(q, i) (n'!/n!) M^n
    red = out["harmonic"]["n_list"]
    pos = {midx[n]: r for r, n in enumerate(red)}
    rows = [[] for _ in red]
    for n in midx:
        q, r = divmod(n[2], 2)
        for i in range(q + 1):
            target = (n[0] + 2 * i, n[1] + 2 * (q - i), r)
            c = (-1) ** q * comb(q, i) * _mfact(target) / _mfact(n)
            rows[pos[target]].append((index[n], c))
    ptr = np.zeros(len(rows) + 1, np.int64)
    ptr[1:] = np.cumsum([len(r) for r in rows])
    out["reduce_ptr"] = ptr
    out["reduce_n"] = np.array([e[0] for r in rows for e in r], np.int64)
    out["reduce_c"] = np.array([e[1] for r in rows for e in r], np.float64)
    # Laplace's equation on the local polynomial gives the k_z >= 2 coefficients
    fk, fi, fc = [], [], []
    for k in midx:
        if k[2] >= 2:
            j = sub(k, (0, 0, 2))
            den = (j[2] + 2) * (j[2] + 1)
            fk.append(index[k])
            fi.append((index[(j[0] + 2, j[1], j[2])], index[(j[0], j[1] + 2, j[2])]))
            fc.append((-(j[0] + 2) * (j[0] + 1) / den, -(j[1] + 2) * (j[1] + 1) / den))
    out["fill_k"] = np.array(fk, np.int64)
    out["fill_i"] = np.array(fi, np.int64).reshape(-1, 2)
    out["fill_c"] = np.array(fc, np.float64).reshape(-1, 2)
    return out


def _shift_table(mi: np.ndarray, p: int, local: bool) -> tuple:
    """CSR shift table over multi-indices ``mi`` (T, 3) of order p.

    Moments (``local`` False): for each n, the j <= n with (j, n - j,
    C(n, j)). Local coefficients (True): for each k, the j >= k with
    (j, j - k, C(j, k)). Rows list j in index order.
    """
    below = (mi[None, :, :] <= mi[:, None, :]).all(axis=2)   # [a, b]: mi[b] <= mi[a]
    row, j = np.nonzero(below.T if local else below)
    hi, lo = (mi[j], mi[row]) if local else (mi[row], mi[j])
    lut = np.full((p + 1,) * 3, -1, np.int64)
    lut[mi[:, 0], mi[:, 1], mi[:, 2]] = np.arange(mi.shape[0])
    d = hi - lo
    binom = np.array([[comb(a, b) for b in range(p + 1)] for a in range(p + 1)], np.float64)
    coef = np.prod(binom[hi, lo], axis=1)
    ptr = np.zeros(mi.shape[0] + 1, np.int64)
    ptr[1:] = np.cumsum(np.bincount(row, minlength=mi.shape[0]))
    return ptr, j.astype(np.int64), lut[d[:, 0], d[:, 1], d[:, 2]], coef


@cache
def m2l_tables(q: int, harmonic: bool) -> dict:
    """What :func:`m2l` needs for order ``q``: ``deg``, ``rec1``, ``rec2``
    as in :func:`expansion_tables` and one M2L table (``harmonic`` or
    full), without the shift tables (a far pair expanded below the tree's
    order uses these; building the full set costs seconds at high orders)."""
    if q < 2:
        raise ValueError("expansion order must be at least 2")
    midx = [(nx, d - nx - nz, nz) for d in range(q + 1) for nx in range(d, -1, -1)
            for nz in range(0, d - nx + 1)]
    index = {m: i for i, m in enumerate(midx)}
    t = len(midx)
    mi = np.array(midx, dtype=np.int64)
    rec1 = np.full((t, 3), t, np.int64)
    rec2 = np.full((t, 3), t, np.int64)
    for i, m in enumerate(midx):
        for d in range(3):
            if m[d] >= 1:
                rec1[i, d] = index[tuple(a - (k == d) for k, a in enumerate(m))]
            if m[d] >= 2:
                rec2[i, d] = index[tuple(a - 2 * (k == d) for k, a in enumerate(m))]
    out = {"p": q, "midx": mi, "deg": mi.sum(axis=1), "rec1": rec1, "rec2": rec2}
    out["table"] = _m2l_tables(midx, index, q, harmonic=harmonic)
    return out


def _cbin(a, b) -> int:
    return comb(a[0], b[0]) * comb(a[1], b[1]) * comb(a[2], b[2])


def _mfact(m) -> int:
    return factorial(m[0]) * factorial(m[1]) * factorial(m[2])


def _m2l_tables(midx, index, p, harmonic) -> dict:
    """Entries of the M2L sum L^k = sum_n c(n, k) a_{n+k} M^n.

    With ``harmonic`` the sum runs over moments and local coefficients with
    a z-index of at most one (2|n| + 1 per degree instead of (|n|+1)(|n|+2)/2),
    valid when the potential is harmonic: moments reduced by ``reduce_*``,
    local coefficients completed by ``fill_*`` (Laplace's equation).

    Returns ``k_list`` (local indices computed), ``n_list`` (moment indices
    used; ``n_idx`` of an entry is its position in this list), ``ptr``
    (CSR over k_list), ``n_idx``, ``m_idx`` (index of n + k), ``coef``
    ((-1)^|n| C(n + k, n)) and ``rec_list`` (Taylor coefficients needed, in
    an order the recurrence can follow).
    """
    keep = (lambda m: m[2] <= 1) if harmonic else (lambda m: True)
    k_list = [i for i, m in enumerate(midx) if keep(m)]
    n_list = list(k_list)
    npos = {n: r for r, n in enumerate(n_list)}
    rows = []
    needed = set()
    for k in k_list:
        row = []
        for n in n_list:
            mk, mn = midx[k], midx[n]
            if sum(mk) + sum(mn) <= p:
                s = tuple(a + b for a, b in zip(mk, mn))
                row.append((npos[n], index[s], (-1.0) ** sum(mn) * _cbin(s, mn)))
                needed.add(index[s])
        rows.append(row)
    ptr = np.zeros(len(rows) + 1, np.int64)
    ptr[1:] = np.cumsum([len(r) for r in rows])
    flat = [e for r in rows for e in r]
    # the recurrence for a_m reads m - e_i and m - 2 e_i: close the set downwards
    closed = set()
    for m in needed:
        stack = [m]
        while stack:
            c = stack.pop()
            if c in closed:
                continue
            closed.add(c)
            for d in range(3):
                for step in (1, 2):
                    lower = list(midx[c])
                    lower[d] -= step
                    if min(lower) >= 0:
                        stack.append(index[tuple(lower)])
    return {"k_list": np.array(k_list, np.int64), "n_list": np.array(n_list, np.int64),
            "ptr": ptr, "n_idx": np.array([e[0] for e in flat], np.int64),
            "m_idx": np.array([e[1] for e in flat], np.int64),
            "coef": np.array([e[2] for e in flat], np.float64),
            "rec_list": np.array(sorted(closed - {0}), np.int64)}


# ----------------------------------------------------------------------------
# small inline helpers
# ----------------------------------------------------------------------------

@njit(inline="always", cache=True)
def _monomials(dx, dy, dz, parent, direction, mono):
    """mono[m] = d^m for every multi-index m (len(mono) of them)."""
    mono[0] = 1.0
    for m in range(1, mono.shape[0]):
        dd = direction[m]
        f = dx if dd == 0 else (dy if dd == 1 else dz)
        mono[m] = mono[parent[m]] * f


@njit(inline="always", cache=True)
def _powers(d, p):
    """out[i, j] = d[j]^i for 0 <= i <= p."""
    out = np.empty((p + 1, d.shape[0]))
    out[0, :] = 1.0
    for i in range(1, p + 1):
        for j in range(d.shape[0]):
            out[i, j] = out[i - 1, j] * d[j]
    return out


@njit(inline="always", cache=True)
def _point_moments(dx, dy, dz, wx, wy, wz, midx, mom):
    """mom[l, m] = sum_j w_l[j] (dx_j, dy_j, dz_j)^m over the points j.

    Vectorised over the points: monomials come from per-axis powers.
    """
    p = midx[-1, 0] + midx[-1, 1] + midx[-1, 2]
    px = _powers(dx, p)
    py = _powers(dy, p)
    pz = _powers(dz, p)
    for m in range(mom.shape[1]):
        rx = px[midx[m, 0]]
        ry = py[midx[m, 1]]
        rz = pz[midx[m, 2]]
        s0 = 0.0
        s1 = 0.0
        s2 = 0.0
        for j in range(dx.shape[0]):
            w = rx[j] * ry[j] * rz[j]
            s0 += wx[j] * w
            s1 += wy[j] * w
            s2 += wz[j] * w
        mom[0, m] = s0
        mom[1, m] = s1
        mom[2, m] = s2


# ----------------------------------------------------------------------------
# particle and segment moments (P2M), moment shifts (M2M)
# ----------------------------------------------------------------------------

@njit(parallel=True, cache=True, fastmath=_FASTMATH)
def p2m_points(cells, start, count, center, x, y, z, ax, ay, az, midx, moments):
    """Moments of the point sources of each listed cell about its centre.

    ``moments`` (C, 3, T) is overwritten on the cells listed in ``cells``.
    """
    for li in prange(cells.shape[0]):
        c = cells[li]
        s = start[c]
        e = s + count[c]
        _point_moments(x[s:e] - center[c, 0], y[s:e] - center[c, 1], z[s:e] - center[c, 2],
                       ax[s:e], ay[s:e], az[s:e], midx, moments[c])


@njit(parallel=True, cache=True, fastmath=_FASTMATH)
def p2m_segments(cells, start, count, center, pax, pay, paz, pbx, pby, pbz, gam,
                 gauss_x, gauss_w, midx, moments):
    """Moments of straight vortex segments about each listed cell's centre.

    A segment A->B of circulation Gamma is the line of vorticity
    Gamma (B - A) ds' over s' in [0, 1]; its moments are the integrals of the
    point moments along it, computed exactly by Gauss--Legendre quadrature
    with nodes ``gauss_x`` in [-1/2, 1/2] about the midpoint and weights
    ``gauss_w`` summing to one (exact for degree <= 2 len(gauss_x) - 1).
    """
    ng = gauss_x.shape[0]
    for li in prange(cells.shape[0]):
        c = cells[li]
        n = count[c] * ng
        dx = np.empty(n)
        dy = np.empty(n)
        dz = np.empty(n)
        wx = np.empty(n)
        wy = np.empty(n)
        wz = np.empty(n)
        k = 0
        for j in range(start[c], start[c] + count[c]):
            ex = pbx[j] - pax[j]
            ey = pby[j] - pay[j]
            ez = pbz[j] - paz[j]
            mx = 0.5 * (pax[j] + pbx[j]) - center[c, 0]
            my = 0.5 * (pay[j] + pby[j]) - center[c, 1]
            mz = 0.5 * (paz[j] + pbz[j]) - center[c, 2]
            for g in range(ng):
                w = gam[j] * gauss_w[g]
                dx[k] = mx + gauss_x[g] * ex
                dy[k] = my + gauss_x[g] * ey
                dz[k] = mz + gauss_x[g] * ez
                wx[k] = w * ex
                wy[k] = w * ey
                wz[k] = w * ez
                k += 1
        _point_moments(dx, dy, dz, wx, wy, wz, midx, moments[c])


@njit(parallel=True, cache=True, fastmath=_FASTMATH)
def m2m(cells, first_child, n_child, center, ptr, j_idx, d_idx, coef, parent, direction,
        moments):
    """Moments of the internal cells in ``cells`` from their children's.

    M_p^n = sum_{j <= n} C(n, j) M_c^j (z_c - z_p)^(n - j).
    """
    nt = moments.shape[2]
    for ci in prange(cells.shape[0]):
        c = cells[ci]
        if n_child[c] == 0:
            continue
        mono = np.empty(nt)
        out = moments[c]
        out[:, :] = 0.0
        for ch in range(first_child[c], first_child[c] + n_child[c]):
            _monomials(center[ch, 0] - center[c, 0], center[ch, 1] - center[c, 1],
                       center[ch, 2] - center[c, 2], parent, direction, mono)
            mc = moments[ch]
            for n in range(nt):
                s0 = 0.0
                s1 = 0.0
                s2 = 0.0
                for e in range(ptr[n], ptr[n + 1]):
                    w = coef[e] * mono[d_idx[e]]
                    j = j_idx[e]
                    s0 += w * mc[0, j]
                    s1 += w * mc[1, j]
                    s2 += w * mc[2, j]
                out[0, n] += s0
                out[1, n] += s1
                out[2, n] += s2


# ----------------------------------------------------------------------------
# moments to local coefficients (M2L)
# ----------------------------------------------------------------------------

@njit(inline="always", cache=True)
def _taylor_coefficients(rx, ry, rz, inv_s, n_src, nu, deg, rec1, rec2, rec_list, a):
    """Taylor coefficients of (|R|^2 + delta^2)^(-nu) at R, for n_src points.

    Recurrence (from s grad G = -2 nu R G, s = |R|^2 + delta^2):
    s |m| a_m = -(2|m| - 2 + 2 nu) sum_i R_i a_{m-e_i} - (|m| - 2 + 2 nu) sum_i a_{m-2e_i},
    evaluated for the indices of ``rec_list`` in order. ``a`` (T + 1, chunk)
    holds a_0 in row 0 and zero in row T on entry.
    """
    for r in range(rec_list.shape[0]):
        m = rec_list[r]
        dm = deg[m]
        c1 = -(2.0 * dm - 2.0 + 2.0 * nu) / dm
        c2 = -(dm - 2.0 + 2.0 * nu) / dm
        am = a[m]
        a_i0 = a[rec1[m, 0]]
        a_i1 = a[rec1[m, 1]]
        a_i2 = a[rec1[m, 2]]
        a_j0 = a[rec2[m, 0]]
        a_j1 = a[rec2[m, 1]]
        a_j2 = a[rec2[m, 2]]
        for s in range(n_src):
            am[s] = (c1 * (rx[s] * a_i0[s] + ry[s] * a_i1[s] + rz[s] * a_i2[s])
                     + c2 * (a_j0[s] + a_j1[s] + a_j2[s])) * inv_s[s]


@njit(parallel=True, cache=True, fastmath=_FASTMATH)
def m2l(t_cells, far_ptr, far_src, t_center, s_center, moments, nr, delta2, wl_coef,
        excess, deg, rec1, rec2, rec_list, k_list, kptr, n_idx, m_idx, coef, n_blocks,
        local):
    """Add the far source cells' potential to each target cell's local expansion.

    Parameters
    ----------
    t_cells : (K,) int64
        Target cells with a non-empty far list.
    far_ptr, far_src : int64
        CSR lists: source cells far_src[far_ptr[t]:far_ptr[t + 1]] of target t.
    t_center, s_center : (C, 3) float64
        Expansion centres.
    moments : (Cs, 3, R) float64
        Source moments on the moment list of order p >= the table's
        (reduced ones for the harmonic tables).
    nr : int
        Length of the table's moment list, a prefix of the moments' (the
        lists of lower orders are prefixes: indices are numbered by degree).
    delta2, wl_coef : float
        Kernel potential G = s^(-1/2) + wl_coef s^(-3/2), s = |r|^2 + delta2
        (0, 0 singular; sigma^2, 0 Rosenhead--Moore; sigma^2, sigma^2/2
        Winckelmans--Leonard).
    excess : bool
        Expand G - 1/|r| instead of G: the kernel's departure from the
        singular potential, added to a harmonic expansion of 1/|r| of the
        same pairs. It is small far from the cores, so a low order serves.
    deg, rec1, rec2
        Multi-index tables of :func:`expansion_tables`.
    rec_list, k_list, kptr, n_idx, m_idx, coef
        One M2L table of :func:`_m2l_tables`.
    n_blocks : int
        Target cells are shared out in this many blocks (a few per thread),
        each reusing one set of scratch arrays.
    local : (Ct, 3, T) float64
        Local coefficients, accumulated on the indices of ``k_list``.
    """
    nt = deg.shape[0]
    nk = k_list.shape[0]
    wl = wl_coef != 0.0
    n_t = t_cells.shape[0]
    n_blocks = max(1, min(n_t, n_blocks))
    for blk in prange(n_blocks):
        a = np.empty((nt + 1, M2L_CHUNK))
        b = np.empty((nt + 1, M2L_CHUNK))
        mg = np.empty((nr, 3, M2L_CHUNK))
        rx = np.empty(M2L_CHUNK)
        ry = np.empty(M2L_CHUNK)
        rz = np.empty(M2L_CHUNK)
        inv_s = np.empty(M2L_CHUNK)
        inv_r2 = np.empty(M2L_CHUNK)
        acc = np.empty((3, nk))
        for ti in range(blk * n_t // n_blocks, (blk + 1) * n_t // n_blocks):
            t = t_cells[ti]
            f0 = far_ptr[t]
            f1 = far_ptr[t + 1]
            acc[:, :] = 0.0
            # equal chunks of at most M2L_CHUNK: a short last chunk would cost
            # nearly a full one (the loop over table entries dominates)
            n_chunks = (f1 - f0 + M2L_CHUNK - 1) // M2L_CHUNK
            for ch in range(n_chunks):
                c0 = f0 + ch * (f1 - f0) // n_chunks
                ns = f0 + (ch + 1) * (f1 - f0) // n_chunks - c0
                for s in range(ns):
                    src = far_src[c0 + s]
                    rx[s] = t_center[t, 0] - s_center[src, 0]
                    ry[s] = t_center[t, 1] - s_center[src, 1]
                    rz[s] = t_center[t, 2] - s_center[src, 2]
                    r2 = rx[s] * rx[s] + ry[s] * ry[s] + rz[s] * rz[s]
                    inv_s[s] = 1.0 / (r2 + delta2)
                    inv_r2[s] = 1.0 / r2
                    a[0, s] = np.sqrt(inv_s[s])
                    a[nt, s] = 0.0
                    if wl:
                        b[0, s] = wl_coef * inv_s[s] * a[0, s]
                        b[nt, s] = 0.0
                    for n in range(nr):
                        mg[n, 0, s] = moments[src, 0, n]
                        mg[n, 1, s] = moments[src, 1, n]
                        mg[n, 2, s] = moments[src, 2, n]
                _taylor_coefficients(rx, ry, rz, inv_s, ns, 0.5, deg, rec1, rec2, rec_list, a)
                if wl:
                    _taylor_coefficients(rx, ry, rz, inv_s, ns, 1.5, deg, rec1, rec2, rec_list,
                                         b)
                    for r in range(rec_list.shape[0]):
                        m = rec_list[r]
                        for s in range(ns):
                            a[m, s] += b[m, s]
                    for s in range(ns):
                        a[0, s] += b[0, s]
                if excess:
                    for s in range(ns):
                        b[0, s] = np.sqrt(inv_r2[s])
                        b[nt, s] = 0.0
                    _taylor_coefficients(rx, ry, rz, inv_r2, ns, 0.5, deg, rec1, rec2, rec_list,
                                         b)
                    for r in range(rec_list.shape[0]):
                        m = rec_list[r]
                        for s in range(ns):
                            a[m, s] -= b[m, s]
                    for s in range(ns):
                        a[0, s] -= b[0, s]
                for kk in range(nk):
                    s0 = 0.0
                    s1 = 0.0
                    s2 = 0.0
                    for e in range(kptr[kk], kptr[kk + 1]):
                        c = coef[e]
                        am = a[m_idx[e]]
                        mn = mg[n_idx[e]]
                        for s in range(ns):
                            w = c * am[s]
                            s0 += w * mn[0, s]
                            s1 += w * mn[1, s]
                            s2 += w * mn[2, s]
                    acc[0, kk] += s0
                    acc[1, kk] += s1
                    acc[2, kk] += s2
            for kk in range(nk):
                k = k_list[kk]
                local[t, 0, k] += acc[0, kk]
                local[t, 1, k] += acc[1, kk]
                local[t, 2, k] += acc[2, kk]


@njit(parallel=True, cache=True)
def reduce_moments(moments, ptr, n_idx, coef):
    """Harmonic reduction of moments (C, 3, T) onto the n_z <= 1 list (C, 3, R)."""
    n_cells = moments.shape[0]
    nr = ptr.shape[0] - 1
    out = np.empty((n_cells, 3, nr))
    for c in prange(n_cells):
        for r in range(nr):
            s0 = 0.0
            s1 = 0.0
            s2 = 0.0
            for e in range(ptr[r], ptr[r + 1]):
                n = n_idx[e]
                s0 += coef[e] * moments[c, 0, n]
                s1 += coef[e] * moments[c, 1, n]
                s2 += coef[e] * moments[c, 2, n]
            out[c, 0, r] = s0
            out[c, 1, r] = s1
            out[c, 2, r] = s2
    return out


@njit(parallel=True, cache=True)
def complete_harmonic(local, fill_k, fill_i, fill_c):
    """Set the k_z >= 2 local coefficients from Laplace's equation."""
    for c in prange(local.shape[0]):
        for l in range(3):
            lc = local[c, l]
            for f in range(fill_k.shape[0]):
                lc[fill_k[f]] = fill_c[f, 0] * lc[fill_i[f, 0]] + fill_c[f, 1] * lc[fill_i[f, 1]]


# ----------------------------------------------------------------------------
# local shifts (L2L) and evaluation at the targets (L2P)
# ----------------------------------------------------------------------------

@njit(parallel=True, cache=True, fastmath=_FASTMATH)
def l2l(cells, from_cells, center, ptr, j_idx, d_idx, coef, parent, direction, local):
    """Add to each cell the local expansion of ``from_cells[i]`` (an
    ancestor), shifted to the cell's centre.

    L_c^k += sum_{j >= k} C(j, k) L_a^j (w_c - w_a)^(j - k).
    """
    nt = local.shape[2]
    for ci in prange(cells.shape[0]):
        c = cells[ci]
        pc = from_cells[ci]
        mono = np.empty(nt)
        _monomials(center[c, 0] - center[pc, 0], center[c, 1] - center[pc, 1],
                   center[c, 2] - center[pc, 2], parent, direction, mono)
        lp = local[pc]
        lc = local[c]
        for k in range(nt):
            s0 = 0.0
            s1 = 0.0
            s2 = 0.0
            for e in range(ptr[k], ptr[k + 1]):
                w = coef[e] * mono[d_idx[e]]
                j = j_idx[e]
                s0 += w * lp[0, j]
                s1 += w * lp[1, j]
                s2 += w * lp[2, j]
            lc[0, k] += s0
            lc[1, k] += s1
            lc[2, k] += s2


@njit(parallel=True, cache=True, fastmath=_FASTMATH)
def l2p(leaves, owners, start, count, center, tx, ty, tz, local, midx, up, gradient, vel,
        grad):
    """Evaluate the local expansions at the targets of each leaf.

    Leaf ``leaves[i]`` uses the expansion of cell ``owners[i]`` (itself or the
    nearest ancestor holding one: shifting a polynomial is exact, so the
    ancestor's serves unchanged).

    The potential's local polynomial is turned once per leaf into the
    velocity polynomial u = curl(psi) (degree p - 1) and, when asked, the
    gradient polynomial (degree p - 2); these are then summed over the
    leaf's targets, vectorised over the targets. Adds u / (4 pi) into ``vel``
    (sorted target order) and d u_j / d x_k / (4 pi) into ``grad[i, j, k]``.
    """
    nt = local.shape[2]
    p = midx[nt - 1, 0] + midx[nt - 1, 1] + midx[nt - 1, 2]
    # number of multi-indices of degree <= p - 1 and <= p - 2
    n1 = p * (p + 1) * (p + 2) // 6
    n2 = (p - 1) * p * (p + 1) // 6
    for li in prange(leaves.shape[0]):
        c = leaves[li]
        o = owners[li]
        lc = local[o]
        uc = np.empty((3, n1))
        for m in range(n1):
            fx = midx[m, 0] + 1.0
            fy = midx[m, 1] + 1.0
            fz = midx[m, 2] + 1.0
            ux_ = up[m, 0]
            uy_ = up[m, 1]
            uz_ = up[m, 2]
            uc[0, m] = (fy * lc[2, uy_] - fz * lc[1, uz_]) * INV_4PI
            uc[1, m] = (fz * lc[0, uz_] - fx * lc[2, ux_]) * INV_4PI
            uc[2, m] = (fx * lc[1, ux_] - fy * lc[0, uy_]) * INV_4PI
        gc = np.empty((9, n2))
        if gradient:
            for m in range(n2):
                for j in range(3):
                    for k in range(3):
                        gc[3 * j + k, m] = (midx[m, k] + 1.0) * uc[j, up[m, k]]
        s = start[c]
        e = s + count[c]
        n = e - s
        px = _powers(tx[s:e] - center[o, 0], p - 1)
        py = _powers(ty[s:e] - center[o, 1], p - 1)
        pz = _powers(tz[s:e] - center[o, 2], p - 1)
        u = np.zeros((3, n))
        g = np.zeros((9 if gradient else 0, n))
        w = np.empty(n)
        for m in range(n1):
            rx = px[midx[m, 0]]
            ry = py[midx[m, 1]]
            rz = pz[midx[m, 2]]
            c0 = uc[0, m]
            c1 = uc[1, m]
            c2 = uc[2, m]
            for j in range(n):
                w[j] = rx[j] * ry[j] * rz[j]
                u[0, j] += c0 * w[j]
                u[1, j] += c1 * w[j]
                u[2, j] += c2 * w[j]
            if gradient and m < n2:
                for jk in range(9):
                    cg = gc[jk, m]
                    gr = g[jk]
                    for j in range(n):
                        gr[j] += cg * w[j]
        for j in range(n):
            vel[s + j, 0] += u[0, j]
            vel[s + j, 1] += u[1, j]
            vel[s + j, 2] += u[2, j]
        if gradient:
            for jk in range(9):
                for j in range(n):
                    grad[s + j, jk // 3, jk % 3] += g[jk, j]
