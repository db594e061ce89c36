"""Smoothing traced polylines along their length, keeping corners and ends."""

import numpy as np
from scipy.ndimage import maximum_filter1d

from . import _ragged

__all__ = ["smooth_polylines", "find_corners"]

_STEP = 1.0          # resampling step along the curve, in pixels
_MAX_SHARPEN_PX = 3.0  # a corner between bent arms moves at most this far to where they meet
_MAX_BEND = np.radians(5.0)   # arms whose halves turn more than this are bent
_STRAIGHT_RMS = 0.2            # px: arms with a larger residual of their fit are bent


def find_corners(p, scale=2.0, angle=np.radians(40.0), closed=False):
    """Indices of corners of an evenly sampled polyline.

    A point is a corner when the curve turns by more than ``angle`` between
    chords ``k = max(2, ceil(3 * scale))`` samples long on either side, the
    turn does not keep growing over chords twice as long (a curve's turn
    grows with the chord, a corner's does not), and it is the largest turn
    within ``2 k`` samples.

    Parameters
    ----------
    p : ndarray, shape (N, 2)
        Points about one unit apart.
    scale : float, optional
        Smoothing scale in samples.
    angle : float, optional
        Smallest turn that counts, in radians.
    closed : bool, optional
        Whether ``p[-1]`` repeats ``p[0]``.

    Returns
    -------
    ndarray of int

    References
    ----------
    .. [1] A. Rosenfeld and E. Johnston, "Angle detection on digital curves",
       IEEE Trans. Computers C-22(9), 1973 (k-cosine corner measure).

    Examples
    --------
    >>> import numpy as np
    >>> L = np.concatenate([np.stack([np.arange(20.0), np.zeros(20)], 1),
    ...                     np.stack([np.full(20, 19.0), np.arange(1.0, 21)], 1)])
    >>> find_corners(L).tolist()
    [19]
    """
    p = np.asarray(p, dtype=float).reshape(-1, 2)
    return _corners(p, np.array([0]), np.array([len(p)]), np.array([bool(closed)]),
                    scale, angle)


def _turning(Q, start, i, n, closed, k):
    """Turning angle at every point between the chords k points back and ahead."""
    m = np.where(closed, n - 1, n)          # a closed piece's last point repeats its first
    back = np.where(closed, np.mod(i - k, m), np.maximum(i - k, 0))
    ahead = np.where(closed, np.mod(i + k, m), np.minimum(i + k, n - 1))
    p = Q[start + i]
    u, v = p - Q[start + back], Q[start + ahead] - p
    cross = u[:, 0] * v[:, 1] - u[:, 1] * v[:, 0]
    dot = (u * v).sum(axis=1)
    ang = np.abs(np.arctan2(cross, dot))
    ang[~closed & ((i < k) | (i >= n - k))] = 0.0     # no full chord on one side
    return ang


def _corners(Q, start, count, closed, scale, angle):
    """`find_corners` of many pieces of the flat ``Q`` at once (flat indices)."""
    k = max(2, int(np.ceil(3 * scale)))
    owner, i = _ragged.local_index(count)
    if len(owner) == 0:
        return np.zeros(0, dtype=np.intp)
    n, cl, s = count[owner], closed[owner], start[owner]
    a1 = _turning(Q, s, i, n, cl, k)
    a2 = np.where(n >= 4 * k + 1, _turning(Q, s, i, n, cl, 2 * k), a1)
    cand = (a1 > angle) & (a2 < 1.5 * a1 + 0.1) & (n >= 2 * k + 1)
    cand[cl & (i == n - 1)] = False
    # Keep only the local maxima of the turn (non-maximum suppression) over
    # 2 k samples either side: zeros beyond an open piece's ends, the loop
    # itself round a closed one.
    body = np.where(closed, count - 1, count)
    width = body + 4 * k
    o2, j = _ragged.local_index(width)
    j = j - 2 * k
    b2, c2 = body[o2], closed[o2]
    off = np.cumsum(count) - count          # where each piece's turns start in a1
    src = off[o2] + np.where(c2, np.mod(j, b2), np.clip(j, 0, b2 - 1))
    vals = np.where(c2 | ((j >= 0) & (j < b2)), a1[src], 0.0)
    win = maximum_filter1d(vals, 4 * k + 1, mode="constant")
    pad_start = np.cumsum(width) - width
    at = pad_start[owner] + 2 * k + np.where(cl & (i == n - 1), 0, i)
    idx = np.flatnonzero(cand & (a1 >= win[at]))
    if len(idx) > 1:                      # ties on a plateau: keep the first
        o = owner[idx]
        idx = idx[np.concatenate([[True], (np.diff(idx) > 2 * k) | (o[1:] != o[:-1])])]
    return start[owner[idx]] + i[idx]


def _lines(segs):
    """Centre, direction and RMS residual of straight fits, one per (m, 2) set."""
    c = segs.mean(axis=1)
    _, sv, vt = np.linalg.svd(segs - c[:, None], full_matrices=False)
    return c, vt[:, 0], sv[:, -1] / np.sqrt(segs.shape[1])


def _sharpen(W, arm1, arm2, tip, z):
    """Corner points moved to where the straight arms on either side meet.

    Thinning rounds a corner and leaves a small hook where a pruned branch
    left the junction; for a corner with ``4 z`` samples of arm on both
    sides the samples within ``2 z`` of it are replaced by the intersection
    of lines fitted to the arms (``2 z + 1`` samples each, starting at flat
    indices ``arm1`` and ``arm2``), if both arms are straight (RMS residual
    under 0.35 px) and the meeting point lies within ``2 z`` of the corner
    point ``W[tip]``.  Returns the new points and whether each is used.
    """
    J = len(tip)
    if J == 0:
        return np.zeros((0, 2)), np.zeros(0, dtype=bool)
    off = np.arange(2 * z + 1)
    p1, d1, e1 = _lines(W[arm1[:, None] + off])
    p2, d2, e2 = _lines(W[arm2[:, None] + off])
    A = np.stack([d1, -d2], axis=2)
    ok = (np.abs(np.linalg.det(A)) >= 0.2) & (np.maximum(e1, e2) <= 0.35)  # else parallel or bent
    x = np.zeros((J, 2))
    if ok.any():
        t = np.linalg.solve(A[ok], (p2 - p1)[ok][:, :, None])[:, :, 0]
        x[ok] = p1[ok] + t[:, :1] * d1[ok]
    d = x - W[tip]
    # a bent arm (its two halves' directions differ) makes the meeting point
    # of the fitted lines drift further the further it is extrapolated: such
    # corners move at most _MAX_SHARPEN_PX
    bent = ((_bend(W, arm1, z) > _MAX_BEND) | (_bend(W, arm2, z) > _MAX_BEND)
            | (np.maximum(e1, e2) > _STRAIGHT_RMS))
    reach = np.where(bent, min(2 * z, _MAX_SHARPEN_PX), 2 * z)
    ok &= np.hypot(d[:, 0], d[:, 1]) <= reach
    return x, ok


def _bend(W, first, z):
    """Angle (radians, 0..pi/2) between lines fitted to the two halves of the
    ``2 z + 1`` samples from flat index ``first``."""
    half = np.arange(z + 1)
    _, da, _ = _lines(W[first[:, None] + half])
    _, db, _ = _lines(W[first[:, None] + z + half])
    return np.arccos(np.clip(np.abs((da * db).sum(axis=1)), 0.0, 1.0))


def _fitted_ends(P, first, step, count, m):
    """Point ``P[first]`` projected onto a line fitted to points ``m/2 .. 2m``.

    The points are counted from ``first`` going by ``step`` (+1 or -1) along
    pieces of ``count`` points.  Thinning bends the last pixels of a line's
    free end into a small hook; the fit skips them.
    """
    out = np.empty((len(first), 2))
    lo = np.minimum(m // 2, count - 2)
    hi = np.minimum(2 * m, count)
    for size in np.unique(hi - lo).tolist():
        sel = np.flatnonzero(hi - lo == size)
        idx = (first[sel] + step[sel] * lo[sel])[:, None] + step[sel][:, None] * np.arange(size)
        c, d, _ = _lines(P[idx])
        p0 = P[first[sel]]
        out[sel] = c + ((p0 - c) * d).sum(axis=1)[:, None] * d
    return out


def _smooth_many(lines, pins, sigma, angle):
    """Smoothed copies of polylines (each of 3 or more points); None: unchanged."""
    K = len(lines)
    count = np.array([len(p) for p in lines])
    start = np.cumsum(count) - count
    P = np.concatenate(lines)
    closed = (count > 3) & np.isclose(P[start], P[start + count - 1]).all(axis=1)
    Q, qs, qn = _ragged.resample(P, start, count, _STEP)
    use = np.flatnonzero(qn >= 4)
    z = max(2, int(round(2 * sigma)))
    cidx = _corners(Q, qs[use], qn[use], closed[use], sigma, angle)
    # corners per stroke, local indices
    cown = use[np.searchsorted(qs[use], cidx, side="right") - 1]
    cloc = (cidx - qs[cown]).tolist()
    nc = np.bincount(cown, minlength=K)
    cstart = (np.cumsum(nc) - nc).tolist()
    nc = nc.tolist()
    qs_l, qn_l, closed_l = qs.tolist(), qn.tolist(), closed.tolist()

    widx = np.arange(len(Q))               # the working points: Q, a loop turned round
    plans = []                             # per stroke: loop or (breaks, tips)
    jobs = []                              # corners to sharpen: arm1, arm2, tip (flat)
    for e in use.tolist():
        L, base, cl = qn_l[e], qs_l[e], closed_l[e]
        cs = cloc[cstart[e]:cstart[e] + nc[e]]
        if not cl:                         # no corners in the hook of a free end
            cs = [c for c in cs if (c >= 3 * z or pins[e][0]) and (c <= L - 1 - 3 * z or pins[e][1])]
        if cl and not cs:
            plans.append((e, None, None))
            continue
        tips = []
        if cl:
            c0 = cs[0]
            widx[base:base + L] = base + np.mod(np.arange(L) + c0, L - 1)
            inner = [c - c0 for c in cs[1:]]
            # The first corner is now both ends; look at it once, round the loop.
            first = -1
            if (L - 1 - L // 2 >= 4 * z and L // 2 >= 4 * z
                    and not (inner and (inner[0] < 4 * z or inner[-1] > L - 1 - 4 * z))):
                first = len(jobs)
                jobs.append((base + L - 1 - 4 * z, base + 2 * z, base))
            cs = inner
            tips.append(first)
        else:
            tips.append(-1)
        brk = [0] + cs + [L - 1]
        for i, c in enumerate(cs):
            if c - brk[i] < 4 * z or brk[i + 2] - c < 4 * z:
                tips.append(-1)
            else:
                tips.append(len(jobs))
                jobs.append((base + c - 4 * z, base + c + 2 * z, base + c))
        tips.append(tips[0] if cl else -1)
        plans.append((e, brk, tips))

    W = Q[widx]
    jobs = np.array(jobs, dtype=np.intp).reshape(-1, 3)
    tip_xy, tip_ok = _sharpen(W, jobs[:, 0], jobs[:, 1], jobs[:, 2], z)
    tip_ok = tip_ok.tolist()

    # Pieces between corners: (tip before, first sample, samples, tip after, pins)
    nW = len(W)
    pa, ps0, pmid, pb, pin0, pin1, pfirst = [], [], [], [], [], [], []
    loops = []
    order = []                             # per stroke: (e, 0, loop) or (e, 1, (first, end piece))
    for e, brk, tips in plans:
        if brk is None:
            order.append((e, 0, len(loops)))
            loops.append(e)
            continue
        cl, base = closed_l[e], qs_l[e]
        lo = len(pa)
        last = len(brk) - 2
        for i in range(len(brk) - 1):
            ta = tips[i] if tips[i] >= 0 and tip_ok[tips[i]] else -1
            tb = tips[i + 1] if tips[i + 1] >= 0 and tip_ok[tips[i + 1]] else -1
            s0 = brk[i] + 2 * z if ta >= 0 else brk[i]
            s1 = brk[i + 1] - 2 * z if tb >= 0 else brk[i + 1]
            pa.append(nW + ta if ta >= 0 else -1)
            pb.append(nW + tb if tb >= 0 else -1)
            ps0.append(base + s0)
            pmid.append(max(0, s1 - s0 + 1))
            pin0.append(pins[e][0] or cl or i > 0)
            pin1.append(pins[e][1] or cl or i < last)
            pfirst.append(i == 0)
        order.append((e, 1, (lo, len(pa))))

    SRC = np.concatenate([W, tip_xy])
    pa, pb = np.array(pa, dtype=np.intp), np.array(pb, dtype=np.intp)
    hasA, hasB = pa >= 0, pb >= 0
    pmid = np.array(pmid, dtype=np.intp)
    pc = hasA + pmid + hasB
    own, loc = _ragged.local_index(pc)
    gi = np.where(loc < hasA[own], pa[own], np.array(ps0, dtype=np.intp)[own] + loc - hasA[own])
    gi = np.where(hasB[own] & (loc == pc[own] - 1), pb[own], gi)
    X = SRC[gi]
    pst = np.cumsum(pc) - pc
    # Pieces with a moved corner are resampled again.
    redo = np.flatnonzero(hasA | hasB)
    if len(redo):
        R, rs, rn = _ragged.resample(X, pst[redo], pc[redo], _STEP)
        pc = pc.copy()
        starts = pst.copy()
        starts[redo] = len(X) + rs
        pc[redo] = rn
        X = np.concatenate([X, R])[_ragged.ranges(starts, pc)]
        pst = np.cumsum(pc) - pc

    # Each open piece of 3 or more samples is reflected through its ends
    # (point reflection keeps straight lines straight and the ends where
    # they are): r samples each side; the loops go round.
    pin0, pin1 = np.array(pin0, dtype=bool), np.array(pin1, dtype=bool)
    sm = np.flatnonzero(pc >= 3)
    n = pc[sm]
    r = np.minimum(n - 1, int(np.ceil(4 * sigma)))
    m = max(3, int(np.ceil(3 * sigma)))
    head_pt = X[pst[sm]].copy()
    tail_pt = X[pst[sm] + n - 1].copy()
    free0, free1 = ~pin0[sm], ~pin1[sm]
    if free0.any():
        head_pt[free0] = _fitted_ends(X, pst[sm][free0], np.ones(free0.sum(), np.intp),
                                      n[free0], m)
    if free1.any():
        tail_pt[free1] = _fitted_ends(X, (pst[sm] + n - 1)[free1],
                                      -np.ones(free1.sum(), np.intp), n[free1], m)
    ext = n + 2 * r
    own, j = _ragged.local_index(ext)
    no, ro, so = n[own], r[own], pst[sm][own]
    mid = so + np.clip(j - ro, 0, no - 1)
    refl = np.where(j < ro, so + ro - j, so + no - 2 - (j - ro - no))
    refl = np.clip(refl, so, so + no - 1)
    Y = X[mid]
    hd, tl = j < ro, j >= ro + no
    Y[hd] = 2 * head_pt[own[hd]] - X[refl[hd]]
    Y[tl] = 2 * tail_pt[own[tl]] - X[refl[tl]]
    loops = np.array(loops, dtype=np.intp)
    lb = Q[_ragged.ranges(qs[loops], qn[loops] - 1)]
    ln = qn[loops] - 1
    items = np.concatenate([Y, lb])
    ic = np.concatenate([ext, ln])
    ist = np.cumsum(ic) - ic
    smoothed = _ragged.twice(items, ist, ic, sigma, np.arange(len(ic)) >= len(ext))

    out_p = X.copy()                       # pieces under 3 samples stay as they are
    keep = _ragged.ranges(ist[:len(sm)] + r, n)
    out_p[_ragged.ranges(pst[sm], n)] = smoothed[keep]
    out_p[pst[sm][pin0[sm]]] = X[pst[sm][pin0[sm]]]
    last = pst[sm] + n - 1
    out_p[last[pin1[sm]]] = X[last[pin1[sm]]]

    result = [None] * K
    for e in np.flatnonzero(qn < 4).tolist():
        result[e] = lines[e].copy()
    pfirst = np.array(pfirst, dtype=bool)
    skip = (~pfirst).astype(np.intp)
    flat = out_p[_ragged.ranges(pst + skip, pc - skip)]
    kept = pc - skip
    fst = np.cumsum(kept) - kept
    fst_l, kept_l = fst.tolist(), kept.tolist()
    ist_l, ln_l = ist[len(sm):].tolist(), ln.tolist()
    for e, kind, where in order:
        if kind == 0:
            a, L = ist_l[where], ln_l[where]
            body = smoothed[a:a + L]
            result[e] = np.concatenate([body, body[:1]])
        else:
            lo, hi = where
            result[e] = flat[fst_l[lo]:fst_l[hi - 1] + kept_l[hi - 1]]
    return result


def smooth_polylines(polylines, sigma=1.5, corner_angle=np.radians(40.0), pinned=True):
    """Smooth traced polylines along their arc length, corners and ends kept.

    Each polyline is resampled every pixel of arc length and its x and y are
    smoothed with a Gaussian of ``sigma`` samples, "twiced" (Tukey's
    ``G(2x - G(x))``), so pixel staircases vanish while circles keep their
    radius: the plain Gaussian pulls a circle of radius ``r`` in by about
    ``sigma**2 / (2 r)``, the twiced one only to fourth order.  Pinned ends
    (those on junctions) stay where they are, so strokes still meet; free
    ends move onto a straight fit of the last few pixels.  Corners found by
    `find_corners` are kept (and moved out to where their straight arms
    meet, which undoes the rounding of thinning), so a star keeps its
    points; closed polylines without corners are smoothed round the loop.

    Parameters
    ----------
    polylines : list of array_like, shape (N, 2)
    sigma : float, optional
        Gaussian sigma in pixels of arc length; 0 returns copies.
    corner_angle : float, optional
        Smallest turn, in radians, kept as a corner.
    pinned : bool or sequence of (bool, bool), optional
        Per polyline, whether its start and its end are held in place;
        one bool for all ends.

    Returns
    -------
    list of ndarray, shape (M, 2)
        Evenly sampled (about one point per pixel); simplify them after.

    References
    ----------
    .. [1] D. G. Lowe, "Organization of smooth image curves at multiple
       scales", IJCV 3(2), 1989 (Gaussian smoothing of curves in arc length).
    .. [2] F. Mokhtarian and A. K. Mackworth, "A theory of multiscale,
       curvature-based shape representation for planar curves", IEEE PAMI
       14(8), 1992.
    .. [3] G. Taubin, "Curve and surface smoothing without shrinkage", ICCV
       1995.
    .. [4] J. W. Tukey, *Exploratory Data Analysis*, Addison-Wesley, 1977
       ("twicing").

    Examples
    --------
    >>> import numpy as np
    >>> t = np.linspace(0, 2 * np.pi, 400)
    >>> ring = np.stack([20 * np.cos(t), 20 * np.sin(t)], 1)
    >>> ring = np.round(ring)                  # a pixel staircase
    >>> r = np.hypot(*smooth_polylines([ring])[0].T)
    >>> bool(abs(r.mean() - 20) < 0.2 and r.std() < 0.3)
    True
    """
    if isinstance(pinned, (bool, np.bool_)):
        pinned = [(bool(pinned), bool(pinned))] * len(polylines)
    lines = [np.asarray(p, dtype=float).reshape(-1, 2) for p, _ in zip(polylines, pinned)]
    pins = [(bool(a), bool(b)) for (a, b), _ in zip(pinned, lines)]
    out = [p.copy() for p in lines]
    work = [i for i, p in enumerate(lines) if len(p) >= 3]
    if sigma <= 0 or not work:
        return out
    for i, s in zip(work, _smooth_many([lines[i] for i in work], [pins[i] for i in work],
                                       float(sigma), float(corner_angle))):
        if s is not None:
            out[i] = s
    return out
