"""Plane geometry helpers: convex hulls, affines, sampling along and inside polygons."""

import numpy as np
from scipy.spatial import ConvexHull, QhullError

__all__ = []


def _convex_hull(points):
    """Vertices of the convex hull of 2-D points, counter-clockwise, (M, 2).

    Degenerate inputs are handled: collinear points give their two extreme
    points (M = 2) and coincident points a single vertex (M = 1).

    References
    ----------
    .. [1] C. B. Barber, D. P. Dobkin and H. Huhdanpaa, "The quickhull
       algorithm for convex hulls", ACM Trans. Mathematical Software 22(4),
       1996 (via scipy.spatial.ConvexHull).
    """
    p = np.asarray(points, dtype=float)
    lo, hi = p.min(0), p.max(0)
    span = float(np.max(hi - lo))
    if span == 0.0:
        return p[:1].copy()
    try:
        h = ConvexHull(p)
        v = p[h.vertices]
    except QhullError:
        v = None
    if v is None or abs(_signed_area(v)) <= 1e-12 * span * span:
        # collinear: the two extreme points along the principal direction
        c = p.mean(0)
        _, _, vt = np.linalg.svd(p - c, full_matrices=False)
        s = (p - c) @ vt[0]
        return p[[np.argmin(s), np.argmax(s)]].copy()
    if _signed_area(v) < 0:
        v = v[::-1]
    return v


def _signed_area(v):
    """Shoelace area, positive for counter-clockwise vertices."""
    x, y = v[:, 0], v[:, 1]
    return 0.5 * float(np.dot(x, np.roll(y, -1)) - np.dot(y, np.roll(x, -1)))


def _centroid(v):
    """Area centroid of a polygon (vertex mean if it has no area)."""
    a = _signed_area(v) if len(v) >= 3 else 0.0
    span = float(np.ptp(v, axis=0).max()) if len(v) > 1 else 0.0
    if abs(a) <= 1e-12 * max(span, 1e-300) ** 2:
        return v.mean(0)
    x, y = v[:, 0], v[:, 1]
    xn, yn = np.roll(x, -1), np.roll(y, -1)
    cr = x * yn - xn * y
    return np.array([np.dot(x + xn, cr), np.dot(y + yn, cr)]) / (6.0 * a)


def _linear(scale, rotation, flip):
    """The 2x2 part of the image-to-arm affine: scale * R(rotation) * diag(1, -1 or 1)."""
    c, s = np.cos(rotation), np.sin(rotation)
    f = -1.0 if flip else 1.0
    return scale * np.array([[c, -s * f], [s, c * f]])


def _apply(matrix, points):
    p = np.asarray(points, dtype=float)
    return p @ matrix[:, :2].T + matrix[:, 2]


def _ccw(v):
    """The same polygon with counter-clockwise vertex order."""
    return v[::-1].copy() if len(v) >= 3 and _signed_area(v) < 0 else v


def _inside_convex(v, points, tol):
    """True where points lie inside (or within ``tol`` of) a convex polygon.

    ``v`` is counter-clockwise; one or two vertices mean a point or a segment.
    """
    p = np.atleast_2d(np.asarray(points, dtype=float))
    if len(v) == 1:
        return np.hypot(*(p - v[0]).T) <= tol
    if len(v) == 2:
        return _point_segment_distance(p, v[0], v[1]) <= tol
    e = np.roll(v, -1, axis=0) - v
    ok = np.ones(len(p), dtype=bool)
    for (vx, vy), (ex, ey) in zip(v, e):                 # one pass per hull edge
        ok &= ex * (p[:, 1] - vy) - ey * (p[:, 0] - vx) >= -tol * np.hypot(ex, ey)
    return ok


def _point_segment_offset(p, a, b):
    """Vector to points ``p`` from their nearest points on segments ``a -> b``, (..., 2)."""
    ab = b - a
    L2 = np.einsum("...i,...i->...", ab, ab)
    with np.errstate(invalid="ignore", divide="ignore"):
        u = np.where(L2 > 0, np.einsum("...i,...i->...", p - a, ab) / L2, 0.0)
    u = np.clip(u, 0.0, 1.0)
    return p - (a + u[..., None] * ab)


def _point_segment_distance(p, a, b):
    """Distance from points ``p`` to segments ``a -> b``, all broadcasting (..., 2)."""
    d = _point_segment_offset(p, a, b)
    return np.hypot(d[..., 0], d[..., 1])


def _along(a, b, spacing):
    """Points strictly between a[i] and b[i], evenly spaced at most ``spacing`` apart."""
    if len(a) == 0:
        return np.empty((0, 2))
    d = b - a
    L = np.hypot(d[:, 0], d[:, 1])
    n = np.maximum(np.ceil(L / spacing).astype(np.int64) - 1, 0)
    total = int(n.sum())
    if total == 0:
        return np.empty((0, 2))
    idx = np.repeat(np.arange(len(a)), n)
    start = np.repeat(np.cumsum(n) - n, n)
    k = np.arange(total) - start + 1
    frac = k / (n[idx] + 1.0)
    return a[idx] + frac[:, None] * d[idx]


def _boundary_samples(v, spacing):
    """The vertices of a closed polygon and points along its edges."""
    if len(v) < 2:
        return v.copy()
    b = np.roll(v, -1, axis=0) if len(v) >= 3 else v[::-1]
    return np.concatenate([v, _along(v, b, spacing)])


def _interior_samples(v, spacing):
    """Grid points at ``spacing`` inside a convex polygon."""
    if len(v) < 3:
        return np.empty((0, 2))
    lo, hi = v.min(0), v.max(0)
    xs = np.arange(lo[0] + spacing / 2, hi[0], spacing)
    ys = np.arange(lo[1] + spacing / 2, hi[1], spacing)
    if len(xs) == 0 or len(ys) == 0:
        return np.empty((0, 2))
    X, Y = np.meshgrid(xs, ys)
    g = np.stack([X.ravel(), Y.ravel()], 1)
    return g[_inside_convex(v, g, 0.0)]
