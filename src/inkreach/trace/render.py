"""Ink coverage of strokes drawn with a round pen."""

import cv2
import numpy as np

__all__ = ["render_strokes"]

_SHIFT = 4  # sub-pixel bits for OpenCV's drawing calls


def render_strokes(strokes, shape, pen_px, supersample=4):
    """Fraction of each pixel covered by ink from a round pen.

    Every stroke is drawn as the set of points within ``pen_px / 2`` of the
    polyline (round caps and joins, which is what a round pen tip leaves);
    a one-point stroke is a dot of diameter ``pen_px``.

    Parameters
    ----------
    strokes : list of array_like, shape (N, 2)
        Polylines in pixels, x = column, y = row, pixel centres at whole
        numbers.
    shape : tuple of int
        ``(H, W)`` of the result.
    pen_px : float
        Pen width in pixels.
    supersample : int, optional
        Sub-pixels per pixel along each axis.

    Returns
    -------
    ndarray, shape (H, W), float32
        Ink coverage in [0, 1].

    Examples
    --------
    >>> import numpy as np
    >>> cov = render_strokes([np.array([[-5.0, 9.5], [25.0, 9.5]])], (20, 20), 4.0)
    >>> round(float(cov.sum(axis=0).mean()), 2)   # 4 px of ink per column
    4.0
    """
    h, w = int(shape[0]), int(shape[1])
    ss = max(1, int(supersample))
    canvas = np.zeros((h * ss, w * ss), dtype=np.uint8)
    one = float(1 << _SHIFT)
    # OpenCV fills every sub-pixel whose centre is on or inside the outline,
    # which widens shapes by about one sub-pixel; take half of it off each side.
    half = max(0.5 * pen_px * ss - 0.5, 0.0)
    r = int(round(half * one))
    for s in strokes:
        p = np.asarray(s, dtype=float).reshape(-1, 2)
        if len(p) == 0:
            continue
        q = np.round(((p + 0.5) * ss - 0.5) * one).astype(np.int64)
        q = np.clip(q, -(1 << 26), 1 << 26).astype(np.int32)
        for pt in q:
            cv2.circle(canvas, (int(pt[0]), int(pt[1])), r, 1, -1, cv2.LINE_8, _SHIFT)
        if len(q) < 2:
            continue
        d = np.diff(p, axis=0)
        L = np.hypot(d[:, 0], d[:, 1])
        ok = L > 0
        n = np.zeros_like(d)
        n[ok] = np.stack([-d[ok, 1], d[ok, 0]], axis=1) / L[ok, None]
        off = np.round(n * (half * one)).astype(np.int64)
        a, b = q[:-1].astype(np.int64), q[1:].astype(np.int64)
        quads = np.stack([a + off, b + off, b - off, a - off], axis=1).astype(np.int32)
        for quad in quads[ok]:
            cv2.fillConvexPoly(canvas, quad, 1, cv2.LINE_8, _SHIFT)
    cov = canvas.reshape(h, ss, w, ss).mean(axis=(1, 3), dtype=np.float32)
    return cov
