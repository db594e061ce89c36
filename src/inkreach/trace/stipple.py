"""The stipple style: dots spaced by tone, or one path through them."""

import math

import cv2
import numpy as np
from scipy.spatial import cKDTree

from ..errors import InkreachError
from . import _options
from ._common import as_luminance

__all__ = ["stipple", "default_dot_count"]

_GRID_PIXELS_PER_DOT = 16   # density samples per dot for the relaxation
_MAX_GRID = 250_000


_DARK_SPACING = 2.5   # dot spacing in the darkest parts, in pen widths (common practice)
_MAX_DOTS = 8000      # at ~0.3 s a dot, about 40 minutes of drawing
_MIN_DOTS = 200


def default_dot_count(density, pen_px):
    """Dots enough for the darkest parts to read, bounded for drawing time.

    Lloyd-relaxed dots are spread in proportion to ``density``, so with
    ``n`` dots the darkest parts (``density`` at its 99th percentile,
    ``d_max``) get ``n d_max / sum(density)`` dots per pixel.  Setting that
    to one dot per ``(2.5 pen_px)**2`` gives
    ``n = sum(density) / (d_max (2.5 pen_px)**2)``, kept between 200 and
    8,000 (about 40 minutes at 0.3 s a dot).

    Parameters
    ----------
    density : ndarray
        The dot density, ``(1 - Y) ** contrast``.
    pen_px : float

    Returns
    -------
    int

    Examples
    --------
    >>> import numpy as np
    >>> default_dot_count(np.ones((100, 100)), 2.0)    # 25 px^2 a dot
    400
    """
    dmax = float(np.quantile(density, 0.99))
    if dmax <= 0:
        return _MIN_DOTS
    n = float(density.sum()) / (dmax * (_DARK_SPACING * pen_px) ** 2)
    return int(min(_MAX_DOTS, max(_MIN_DOTS, round(n))))


def _lloyd(density, points, iterations):
    """Weighted Lloyd relaxation of ``points`` (x, y) over a density grid."""
    ys, xs = np.nonzero(density > 0)
    wts = density[ys, xs].astype(np.float64)
    grid = np.stack([xs, ys], axis=1).astype(np.float64)
    n = len(points)
    for _ in range(iterations):
        _, idx = cKDTree(points).query(grid, workers=-1)
        m = np.bincount(idx, wts, minlength=n)
        cx = np.bincount(idx, wts * grid[:, 0], minlength=n)
        cy = np.bincount(idx, wts * grid[:, 1], minlength=n)
        has = m > 0
        points[has, 0] = cx[has] / m[has]
        points[has, 1] = cy[has] / m[has]
    return points


def stipple(lum, *, pen_px=2.0, dots=None, iterations=20, mode="dots", seed=0,
            contrast=2.0):
    """Draw tone with dots placed by weighted Voronoi stippling.

    Parameters
    ----------
    lum : ndarray, shape (H, W)
        Linear luminance in [0, 1]; the dot density follows ``1 - Y``.
    pen_px : float, optional
        Pen width in working pixels (one dot's diameter).
    dots : int, optional
        Number of dots; by default (`default_dot_count`) enough that dots
        in the darkest parts sit about 2.5 pen widths apart, between 200
        and 8,000.  True tone matching with pen-sized dots would need far
        more dots than an arm can draw, so stippling stays a sketch of the
        tone: dots are spaced by it, not inked to it.
    iterations : int, optional
        Lloyd relaxation rounds.
    mode : {'dots', 'line'}, optional
        ``'dots'``: each dot is a one-point stroke (the pen touches down and
        lifts).  ``'line'``: one stroke through all dots, in the order of
        ``inkreach.route.order_points`` (a short open path).
    seed : int, optional
        Seed for the first, density-weighted random positions.
    contrast : float, optional
        The dot density is ``(1 - Y) ** contrast``; 1 follows the ink a
        tone needs (Murray-Davies), larger values set dark parts further
        apart from light ones, which reads better with only a few thousand
        dots (common practice).

    Returns
    -------
    list of ndarray
        ``dots`` arrays of shape (1, 2), or one (N, 2) array in line mode;
        working pixels, x = column, y = row.

    Raises
    ------
    InkreachError
        For a blank picture.

    Notes
    -----
    Each round moves every dot to the density-weighted centroid of its
    Voronoi cell; cells are found by assigning density samples to their
    nearest dot with a k-d tree.  The relaxation runs on a grid with about
    16 samples per dot, shrunk by area averaging.

    References
    ----------
    .. [1] A. Secord, "Weighted Voronoi stippling", NPAR 2002.
    .. [2] S. Lloyd, "Least squares quantization in PCM", IEEE Trans. IT
       28(2), 1982.
    .. [3] C. S. Kaplan and R. Bosch, "TSP art", Bridges 2005.

    Examples
    --------
    >>> import numpy as np
    >>> lum = np.ones((60, 60), np.float32); lum[:, :30] = 0.0
    >>> pts = np.concatenate(stipple(lum, dots=200))
    >>> bool((pts[:, 0] < 31).mean() > 0.95)     # the dots sit on the dark half
    True
    """
    o = _options.check("stipple", dict(pen_px=pen_px, dots=dots, iterations=iterations,
                                       mode=mode, seed=seed, contrast=contrast))
    lum = as_luminance(lum)
    tone = 1.0 - lum
    ink = tone ** o["contrast"]
    if float(tone.max()) < 0.02:
        raise InkreachError("the stipple style found nothing to draw in this picture; "
                            "try another style or a darker picture")
    n = default_dot_count(ink, o["pen_px"]) if o["dots"] is None else o["dots"]
    h, w = ink.shape
    g = max(1.0, math.sqrt(h * w / min(max(_GRID_PIXELS_PER_DOT * n, 40_000), _MAX_GRID)))
    gh, gw = max(2, int(round(h / g))), max(2, int(round(w / g)))
    density = cv2.resize(ink, (gw, gh), interpolation=cv2.INTER_AREA) if g > 1 else ink
    density = np.where(density > 1e-4, density, 0.0)
    if not np.any(density > 0):
        raise InkreachError("the stipple style found nothing to draw in this picture; "
                            "try another style or a darker picture")
    rng = np.random.default_rng(o["seed"])
    flat = density.ravel().astype(np.float64)
    pick = rng.choice(flat.size, size=n, p=flat / flat.sum())
    pts = np.stack([pick % gw, pick // gw], axis=1).astype(np.float64)
    pts += rng.uniform(-0.5, 0.5, size=pts.shape)
    pts = _lloyd(density, pts, o["iterations"])
    sx, sy = w / gw, h / gh
    pts = np.stack([(pts[:, 0] + 0.5) * sx - 0.5, (pts[:, 1] + 0.5) * sy - 0.5], axis=1)
    pts[:, 0] = np.clip(pts[:, 0], 0, w - 1)
    pts[:, 1] = np.clip(pts[:, 1], 0, h - 1)
    if o["mode"] == "line":
        from ..route import order_points   # the routing stage orders the path

        order = np.asarray(order_points(pts), dtype=np.intp)
        return [pts[order]]
    return [p[None, :] for p in pts]
