"""Smoothing traced polylines along their length, keeping corners and ends."""

import numpy as np
from scipy.ndimage import gaussian_filter1d

__all__ = ["smooth_polylines", "find_corners"]

_STEP = 1.0          # resampling step along the curve, in pixels


def _resample(p, step):
    """Points every ``step`` of arc length along ``p`` (ends kept)."""
    seg = np.hypot(*np.diff(p, axis=0).T)
    s = np.concatenate([[0.0], np.cumsum(seg)])
    total = s[-1]
    if total <= 0:
        return p[:1].copy()
    n = max(2, int(np.ceil(total / step)) + 1)
    t = np.linspace(0.0, total, n)
    return np.stack([np.interp(t, s, p[:, 0]), np.interp(t, s, p[:, 1])], axis=1)


def _turning(p, k, closed):
    """Turning angle at every point between the chords k points back and ahead."""
    n = len(p)
    i = np.arange(n)
    if closed:
        m = n - 1                       # last point repeats the first
        back, ahead = p[(i - k) % m], p[(i + k) % m]
    else:
        back, ahead = p[np.maximum(i - k, 0)], p[np.minimum(i + k, n - 1)]
    u, v = p - back, ahead - p
    cross = u[:, 0] * v[:, 1] - u[:, 1] * v[:, 0]
    dot = (u * v).sum(axis=1)
    ang = np.abs(np.arctan2(cross, dot))
    if not closed:
        ang[:k] = ang[n - k:] = 0.0     # no full chord on one side
    return ang


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
    n = len(p)
    k = max(2, int(np.ceil(3 * scale)))
    if n < 2 * k + 1:
        return np.zeros(0, dtype=np.intp)
    a1 = _turning(p, k, closed)
    a2 = _turning(p, 2 * k, closed) if n >= 4 * k + 1 else a1
    cand = (a1 > angle) & (a2 < 1.5 * a1 + 0.1)
    if closed:
        cand[-1] = False
    # Keep only the local maxima of the turn (non-maximum suppression).
    body = a1[:-1] if closed else a1
    pad = np.pad(body, 2 * k, mode="wrap" if closed else "constant")
    win = np.lib.stride_tricks.sliding_window_view(pad, 4 * k + 1).max(axis=1)
    peak = a1 >= (np.append(win, win[0]) if closed else win)
    idx = np.flatnonzero(cand & peak)
    if len(idx) > 1:                      # ties on a plateau: keep the first
        idx = idx[np.concatenate([[True], np.diff(idx) > 2 * k])]
    return idx


def _twice(x, sigma, mode):
    """Gaussian smoothing 'twiced': G(2x - G(x)); no shrinkage to second order."""
    g = gaussian_filter1d(x, sigma, axis=0, mode=mode)
    return gaussian_filter1d(2.0 * x - g, sigma, axis=0, mode=mode)


def _fitted_end(p, m):
    """The first point projected onto a line fitted to points ``m/2 .. 2m``.

    Thinning bends the last pixels of a line's free end into a small hook;
    the fit skips them.
    """
    seg = p[min(m // 2, len(p) - 2):min(2 * m, len(p))]
    c = seg.mean(axis=0)
    d = np.linalg.svd(seg - c, full_matrices=False)[2][0]
    return c + np.dot(p[0] - c, d) * d


def _smooth_open(p, sigma, pin_start=True, pin_end=True):
    """Smooth an open piece; pinned ends stay put, free ones follow a fit."""
    n = len(p)
    if n < 3:
        return p.copy()
    r = min(n - 1, int(np.ceil(4 * sigma)))
    m = max(3, int(np.ceil(3 * sigma)))
    a = p[0] if pin_start else _fitted_end(p, m)
    b = p[-1] if pin_end else _fitted_end(p[::-1], m)
    # Point reflection through each end keeps straight lines straight and
    # the ends where they are.
    head = 2 * a - p[r:0:-1]
    tail = 2 * b - p[-2:-r - 2:-1]
    q = _twice(np.concatenate([head, p, tail]), sigma, "nearest")[r:r + n]
    if pin_start:
        q[0] = p[0]
    if pin_end:
        q[-1] = p[-1]
    return q


def _arm_line(q, a, b):
    """Point, direction and RMS residual of the straight fit to samples a..b."""
    seg = q[a:b + 1]
    c = seg.mean(axis=0)
    _, sv, vt = np.linalg.svd(seg - c, full_matrices=False)
    return c, vt[0], sv[-1] / np.sqrt(len(seg))


def _sharpen(q, corners, z):
    """Corner points moved to where the straight arms on either side meet.

    Thinning rounds a corner and leaves a small hook where a pruned branch
    left the junction; for a corner with ``4 z`` samples of arm on both
    sides the samples within ``2 z`` of it are replaced by the intersection
    of lines fitted to the arms, if both arms are straight (RMS residual
    under 0.35 px) and the meeting point lies within ``2 z`` of the corner.
    Returns the new points, one per corner, or None where left alone.
    """
    n = len(q)
    brk = np.concatenate([[0], corners, [n - 1]])
    out = []
    for i, c in enumerate(corners):
        lo, hi = brk[i], brk[i + 2]
        if c - lo < 4 * z or hi - c < 4 * z:
            out.append(None)
            continue
        p1, d1, e1 = _arm_line(q, c - 4 * z, c - 2 * z)
        p2, d2, e2 = _arm_line(q, c + 2 * z, c + 4 * z)
        A = np.stack([d1, -d2], axis=1)
        if abs(np.linalg.det(A)) < 0.2 or max(e1, e2) > 0.35:   # parallel or bent
            out.append(None)
            continue
        t = np.linalg.solve(A, p2 - p1)
        x = p1 + t[0] * d1
        out.append(x if np.hypot(*(x - q[c])) <= 2 * z else None)
    return out


def _smooth_one(p, sigma, angle, pins):
    closed = len(p) > 3 and np.allclose(p[0], p[-1])
    q = _resample(p, _STEP)
    if len(q) < 4:
        return p.copy()
    corners = find_corners(q, sigma, angle, closed)
    if not closed:                       # no corners in the hook of a free end
        z = max(2, int(round(2 * sigma)))
        corners = corners[((corners >= 3 * z) | pins[0]) & ((corners <= len(q) - 1 - 3 * z) | pins[1])]
    if closed and len(corners) == 0:
        body = _twice(q[:-1], sigma, "wrap")
        return np.concatenate([body, body[:1]])
    if closed:
        c0 = corners[0]
        q = np.concatenate([q[c0:-1], q[:c0 + 1]])
        inner = corners[1:] - c0
        # The first corner is now both ends; look at it once, round the loop.
        z = max(2, int(round(2 * sigma)))
        shifted = np.concatenate([q[len(q) // 2:-1], q[:len(q) // 2 + 1]])
        first = _sharpen(shifted, np.array([len(q) - 1 - len(q) // 2]), z)[0]
        if len(inner) and (inner[0] < 4 * z or inner[-1] > len(q) - 1 - 4 * z):
            first = None                     # its arms are too short
        tips = [first] + _sharpen(q, inner, z) + [first]
        corners = np.concatenate([[0], inner, [len(q) - 1]])
    else:
        z = max(2, int(round(2 * sigma)))
        tips = [None] + _sharpen(q, corners, z) + [None]
        corners = np.concatenate([[0], corners, [len(q) - 1]])
    parts = []
    for i in range(len(corners) - 1):
        a, b = corners[i], corners[i + 1]
        ta, tb = tips[i], tips[i + 1]
        s0 = a + 2 * z if ta is not None else a
        s1 = b - 2 * z if tb is not None else b
        piece = q[s0:s1 + 1]
        if ta is not None:
            piece = np.concatenate([ta[None], piece])
        if tb is not None:
            piece = np.concatenate([piece, tb[None]])
        if ta is not None or tb is not None:
            piece = _resample(piece, _STEP)
        first, last = i == 0, i == len(corners) - 2
        parts.append(_smooth_open(piece, sigma, pins[0] or closed or not first,
                                  pins[1] or closed or not last))
    return np.concatenate([parts[0]] + [s[1:] for s in parts[1:]])


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
    out = []
    if isinstance(pinned, (bool, np.bool_)):
        pinned = [(bool(pinned), bool(pinned))] * len(polylines)
    for p, pins in zip(polylines, pinned):
        p = np.asarray(p, dtype=float).reshape(-1, 2)
        if sigma <= 0 or len(p) < 3:
            out.append(p.copy())
        else:
            out.append(_smooth_one(p, float(sigma), float(corner_angle), pins))
    return out
