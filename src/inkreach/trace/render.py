"""Ink coverage of strokes drawn with a round pen."""

import cv2
import numpy as np

__all__ = ["render_strokes"]

_SHIFT = 4  # sub-pixel bits for OpenCV's drawing calls


def _disc_kernel(radius, samples=8):
    """Share of each sub-pixel inside a disc of ``radius`` sub-pixels about the centre one."""
    n = int(np.ceil(radius - 0.5))
    u = (np.arange(samples) + 0.5) / samples - 0.5
    c = np.arange(-n, n + 1, dtype=float)
    x = (c[:, None] + u[None, :]).ravel()              # sample abscissae of every sub-pixel
    inside = (x[:, None] ** 2 + x[None, :] ** 2) <= radius * radius
    k = inside.reshape(2 * n + 1, samples, 2 * n + 1, samples).mean(axis=(1, 3))
    return k.astype(np.float32)


def _dot_coverage(centres, shape, ss, radius):
    """Coverage of pen dots at sub-pixel ``centres`` (sub-pixel units, rounded to one)."""
    h, w = shape
    ij = np.rint(centres).astype(np.int64)
    k = _disc_kernel(radius)
    m = k.shape[0] // 2
    # dots whose centre is off the canvas can still reach it: pad by the kernel's half width
    pad = np.zeros((h * ss + 2 * m, w * ss + 2 * m), np.float32)
    ij2 = ij + m
    ok2 = ((ij2[:, 0] >= 0) & (ij2[:, 0] < w * ss + 2 * m)
           & (ij2[:, 1] >= 0) & (ij2[:, 1] < h * ss + 2 * m))
    pad[ij2[ok2, 1], ij2[ok2, 0]] = 1.0      # dots on one sub-pixel are one dot
    ink = cv2.filter2D(pad, cv2.CV_32F, k, borderType=cv2.BORDER_CONSTANT)[m:m + h * ss, m:m + w * ss]
    np.clip(ink, 0.0, 1.0, out=ink)
    ink[ink < 1e-6] = 0.0                     # the transform's rounding far from any dot
    if ss > 1:
        ink = cv2.resize(ink, (w, h), interpolation=cv2.INTER_AREA)
    return ink


def render_strokes(strokes, shape, pen_px, supersample=4):
    """Fraction of each pixel covered by ink from a round pen.

    Every stroke is drawn as the set of points within ``pen_px / 2`` of the
    polyline (round caps and joins, which is what a round pen tip leaves);
    a one-point stroke is a dot of diameter ``pen_px``.

    OpenCV draws thick lines an odd number of sub-pixels wide, so the pen is
    drawn at the two odd widths either side of ``pen_px * supersample`` and
    the two coverages are mixed in proportion; that is exact in area wherever
    lines do not overlap, and one drawing call per width draws every stroke.
    Dots are stamped all at once: the sub-pixels holding a dot centre,
    convolved with the disc's sub-pixel coverage (so each dot's ink
    is the disc's area), clipped at full ink where dots overlap.

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
    pen_px = float(pen_px)
    ss = max(1, int(supersample))
    one = float(1 << _SHIFT)
    paths, dots = [], []
    for p in strokes:
        p = np.asarray(p, dtype=float).reshape(-1, 2)
        p = p[np.all(np.isfinite(p), axis=1)]
        if len(p) == 0:
            continue
        q = np.clip(np.round(((p + 0.5) * ss - 0.5) * one), -(1 << 26), 1 << 26)
        q = q.astype(np.int32)
        if np.all(q == q[0]):
            dots.append(q[0])
        else:
            paths.append(q)
    width = pen_px * ss                      # wanted width, sub-pixels
    lo = max(1, int(np.floor((width - 1.0) / 2.0)) * 2 + 1)   # odd width at or below
    if width <= 1.0:
        pairs = [(1, width)]
    else:
        frac = (width - lo) / 2.0
        pairs = [(lo, 1.0 - frac), (lo + 2, frac)]
    cov = np.zeros((h, w), np.float32)
    for odd, weight in pairs:
        if weight <= 0 or not paths:
            continue
        canvas = np.zeros((h * ss, w * ss), dtype=np.uint8)
        # OpenCV draws thickness 2k as a band 2k + 1 sub-pixels wide (1 for 1).
        cv2.polylines(canvas, paths, False, 255, max(1, odd - 1), cv2.LINE_8, _SHIFT)
        if ss > 1:
            canvas = cv2.resize(canvas, (w, h), interpolation=cv2.INTER_AREA)
        cov += np.float32(weight / 255.0) * canvas
    if dots:
        cov = np.maximum(cov, _dot_coverage(np.array(dots) / one, (h, w), ss, 0.5 * width))
    return np.clip(cov, 0.0, 1.0)
