"""The stipple style: dots spaced by tone, or one path through them."""

import math

import cv2
import numpy as np
from scipy.spatial import cKDTree

from ..errors import InkreachError
from . import _options
from ._common import as_luminance

__all__ = ["stipple", "default_dot_count", "filled_dot_count", "dot_zigzag", "hex_disc_coverage"]

_GRID_PIXELS_PER_DOT = 16   # density samples per dot for the relaxation
_MAX_GRID = 250_000


_DARK_SPACING = 2.5   # touch-mode dot spacing in the darkest parts, in pen widths
_MAX_DOTS = 8000      # touch mode: at ~0.3 s a dot, about 40 minutes of drawing
_MIN_DOTS = 200
_DOT_PENS = 5.0       # filled dots: mean diameter, pen widths (smaller dots blur
                      # into tone better but cost more pen lifts)
_MAX_FILLED = 6000    # filled dots at most
_PITCH = 0.9          # dot fill lines apart, pen widths: overlapping a little, so solid
_CLOSE_FROM = 0.85    # cells darker than this: dots grow towards the cell's far corner,
_CLOSE_GROW = 1.1     # up to this many times their area-true radius (our choice, by
                      # the tone figures on scikit-image's camera photo)
_LINE_FROM = 0.45     # areas darker than this (smoothed over a dot) are filled with
                      # dense lines, not dots: there the dots would nearly touch, and
                      # the arm inks long lines about four times faster than dots
                      # (each dot's short legs start and end at rest).  Our choice, by
                      # bench/bench_tone.py: on the four photos drawing time falls from
                      # 22-28 to 11-14 minutes with the tone targets still met
_CHAIN_GAP = 1.5      # dots closer than this many pen widths, edge to edge, are
                      # joined pen-down: each hop saves a lift (two dwells and a
                      # pen-up move, about 0.3 s on the default arm) but inks its
                      # gap, ink the dots do not account for; at 3 pen widths a mid
                      # grey came out 0.06 too dark (our choice, by the tests)


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




def filled_dot_count(ink, pen_px):
    """Filled dots enough for a mean diameter of about 5 pen widths.

    The dots together must ink ``sum(ink)`` (pixels of area); dots of
    diameter ``5 pen_px`` each ink ``pi (2.5 pen_px)**2``.  Kept between 200
    and 6,000.

    Examples
    --------
    >>> import numpy as np
    >>> filled_dot_count(np.full((200, 200), 0.5), 2.0)
    255
    """
    n = float(np.sum(ink)) / (np.pi * (0.5 * _DOT_PENS * pen_px) ** 2)
    return int(min(_MAX_FILLED, max(_MIN_DOTS, round(n))))


def dot_zigzag(centre, radius, pen_px, pitch=None):
    """Back-and-forth strokes that ink a disc of ``radius``.

    Chords every ``pitch`` pen widths across the disc of centre lines
    ``radius - pen_px / 2``, each ending half a pen width inside the
    ``radius`` circle (the round pen inks the rest), joined end to end; straight legs let
    the arm draw a dot faster than a spiral of the same ink.  A disc no
    wider than the pen is one touch of the pen.

    Examples
    --------
    >>> z = dot_zigzag((0.0, 0.0), 3.0, 1.0)
    >>> bool(np.all(np.hypot(*z.T) <= 3.0))     # the pen stays on the disc
    True
    >>> dot_zigzag((3.0, 4.0), 0.4, 1.0).tolist()
    [[3.0, 4.0]]
    """
    c = np.asarray(centre, dtype=float).reshape(1, 2)
    rmax = float(radius) - 0.5 * float(pen_px)
    if rmax <= 0:
        return c.copy()
    p = (_PITCH if pitch is None else pitch) * float(pen_px)
    k = max(1, int(np.ceil(2.0 * rmax / p)))
    y = (np.arange(k + 1) - 0.5 * k) * (2.0 * rmax / k) if k > 1 else np.zeros(1)
    r = float(radius)
    hw = np.maximum(np.sqrt(np.maximum(r * r - y * y, 0.0)) - 0.5 * float(pen_px), 0.0)
    sign = np.where(np.arange(len(y)) % 2 == 0, -1.0, 1.0)
    x = np.stack([sign * hw, -sign * hw], axis=1).ravel()
    yy = np.repeat(y, 2)
    return c + np.stack([x, yy], axis=1)


def _cell_ink(ink, pts):
    """Ink (sum of ``ink`` over pixels), area (pixels) and reach (the farthest
    pixel's distance, plus half a pixel) of each dot's Voronoi cell."""
    h, w = ink.shape
    ys, xs = np.mgrid[:h, :w]
    dist, idx = cKDTree(pts).query(np.stack([xs.ravel(), ys.ravel()], axis=1).astype(float),
                                   workers=-1)
    n = len(pts)
    far = np.zeros(n)
    np.maximum.at(far, idx, dist)
    return (np.bincount(idx, ink.ravel().astype(np.float64), minlength=n),
            np.bincount(idx, minlength=n).astype(np.float64), far + 0.5)


def hex_disc_coverage(radius, spacing):
    """Coverage of the plane by equal discs on a hexagonal lattice.

    Discs of ``radius`` at centres ``spacing`` apart: each lattice cell
    (area ``sqrt(3)/2 spacing**2``) holds one disc, less the lens it shares
    with each of its six neighbours once ``radius > spacing / 2`` (a lens of
    two circles of radius ``R`` at distance ``a`` has area
    ``2 R**2 acos(a / 2R) - (a / 2) sqrt(4 R**2 - a**2)``), and the plane is
    covered once ``radius >= spacing / sqrt(3)``.

    References
    ----------
    .. [1] E. W. Weisstein, "Circle-circle intersection", MathWorld (the
       lens area); the hexagonal lattice: L. Fejes Toth, *Lagerungen in der
       Ebene, auf der Kugel und im Raum*, Springer 1953.

    Examples
    --------
    >>> round(float(hex_disc_coverage(0.5, 1.0)), 4)    # touching: pi / (2 sqrt 3)
    0.9069
    >>> float(hex_disc_coverage(1 / np.sqrt(3), 1.0))
    1.0
    """
    R = np.asarray(radius, dtype=float)
    a = np.asarray(spacing, dtype=float)
    cell = 0.5 * np.sqrt(3.0) * a * a
    Rc = np.maximum(R, 0.5 * a)
    lens = 2 * Rc ** 2 * np.arccos(np.clip(a / (2 * Rc), -1, 1)) \
        - 0.5 * a * np.sqrt(np.maximum(4 * Rc ** 2 - a * a, 0.0))
    cov = (np.pi * R ** 2 - 3.0 * lens * (R > 0.5 * a)) / cell
    return np.where(R >= a / np.sqrt(3.0), 1.0, np.clip(cov, 0.0, 1.0))


def _dot_radius(ink, cell):
    """Radius of the dot that inks ``ink`` of a cell of area ``cell`` once the
    dots of neighbouring cells overlap (`hex_disc_coverage`)."""
    c = np.clip(ink / np.maximum(cell, 1e-9), 0.0, 1.0)
    u = np.linspace(0.0, 1.0 / np.sqrt(3.0), 400)           # radius / spacing
    cov = hex_disc_coverage(u, 1.0)
    spacing = np.sqrt(2.0 * cell / np.sqrt(3.0))
    return spacing * np.interp(c, cov, u)


def _filled_dots(ink, pts, pen, rng):
    """Filled dots inking each Voronoi cell's ink, chained where dots nearly touch."""
    from ..route import order_points

    area, cell, far = _cell_ink(ink, pts)
    touch = np.pi * (0.5 * pen) ** 2
    # a cell with less ink than one touch of the pen is inked or left bare at
    # random, in proportion, so the tone stays right on average
    small = area < touch
    keep = ~small | (rng.uniform(size=len(pts)) < area / touch)
    pts, area, cell, far = pts[keep], np.maximum(area[keep], touch), cell[keep], far[keep]
    radius = np.maximum(_dot_radius(area, cell), 0.5 * pen)
    # Lloyd's cells are only nearly hexagonal: for the darkest tones the dot
    # grows towards its cell's farthest corner, so the cell really closes up
    t = np.clip((area / np.maximum(cell, 1e-9) - _CLOSE_FROM) / (1.0 - _CLOSE_FROM), 0.0, 1.0)
    radius = (1.0 - t) * radius + t * np.clip(far, radius, _CLOSE_GROW * radius)
    if len(pts) == 0:
        return []
    order = np.asarray(order_points(pts), dtype=np.intp)
    pts, radius = pts[order], radius[order]
    gap = np.hypot(*np.diff(pts, axis=0).T) - radius[1:] - radius[:-1]
    join = gap < _CHAIN_GAP * pen
    strokes, cur = [], [dot_zigzag(pts[0], radius[0], pen)]
    for i in range(1, len(pts)):
        sp = dot_zigzag(pts[i], radius[i], pen)
        if join[i - 1]:
            cur.append(sp)
        else:
            strokes.append(np.concatenate(cur))
            cur = [sp]
    strokes.append(np.concatenate(cur))
    return strokes

def _dark_areas(tone, pen):
    """Where the dots would close up: the tone, smoothed over a dot's width,
    darker than ``_LINE_FROM``, without parts narrower than a dot."""
    from scipy import ndimage

    sm = cv2.GaussianBlur(tone.astype(np.float32), (0, 0), _DOT_PENS * pen / 2.0)
    r = max(1, int(round(_DOT_PENS * pen / 2.0)))
    disk = np.hypot(*np.mgrid[-r:r + 1, -r:r + 1]) <= r
    return ndimage.binary_opening(sm > _LINE_FROM, structure=disk)


def _dark_lines(tone, dark, pen):
    """The dark areas hatched at their own tone (`inkreach.trace.hatch`)."""
    from .hatch import _line_fill

    try:
        return list(_line_fill(np.where(dark, tone, 0.0), pen))
    except InkreachError:
        return []


def stipple(lum, *, pen_px=2.0, dots=None, iterations=20, mode="dots", seed=0,
            contrast=1.0):
    """Draw tone with dots placed by weighted Voronoi stippling.

    Dots are spread with a density proportional to ``(1 - Y)**contrast``
    (Secord's rule for ``contrast = 1``), and in the default mode each dot
    is a small filled disc inking exactly the ink ``1 - Y`` of its
    Voronoi cell (Murray-Davies; where neighbouring dots overlap, by the
    overlap of discs on a hexagonal lattice, `hex_disc_coverage`, and the
    darkest cells close up), so dark parts really come out dark.  Where
    the tone, smoothed over a dot, is darker than 0.45 the dots would
    nearly touch; in ``'dots'`` mode such areas are filled instead with
    dense parallel lines whose share follows the tone, crossed near black
    (``inkreach.trace.hatch._line_fill``): long lines the arm draws at full
    speed, where each small dot's short legs start and end at rest.  This
    keeps a photo's drawing time on the default arm under 15 minutes.

    Parameters
    ----------
    lum : ndarray, shape (H, W)
        Linear luminance in [0, 1]; the dot density follows ``1 - Y``.
    pen_px : float, optional
        Pen width in working pixels (one dot's diameter).
    dots : int, optional
        Number of dots; by default for filled dots `filled_dot_count`
        (a mean diameter of about 5 pen widths, at most 6,000), for touches
        and the line `default_dot_count` (dots in the darkest parts about
        2.5 pen widths apart, between 200 and 8,000).
    iterations : int, optional
        Lloyd relaxation rounds.
    mode : {'dots', 'touch', 'line'}, optional
        ``'dots'``: each dot is filled back and forth (`dot_zigzag`) as large as its
        cell's ink, dots whose rims come within 1.5 pen widths of the next
        are drawn in one stroke; the darkest areas are filled with lines.  ``'touch'``: each dot is a one-point stroke
        (the pen touches down and lifts; a sketch of the tone, lighter than
        the picture).  ``'line'``: one stroke through all dot centres, in
        the order of ``inkreach.route.order_points`` (a short open path).
    seed : int, optional
        Seed for the first, density-weighted random positions.
    contrast : float, optional
        The dot density is ``(1 - Y) ** contrast``.  1 is Secord's rule
        (density proportional to darkness; filled dots then all come out
        about one size); below 1 light parts get more, smaller dots; for
        touches, above 1 sets dark parts further apart from light ones.

    Returns
    -------
    list of ndarray
        Filled dots and chains of them; or ``dots`` arrays of shape (1, 2)
        in touch mode; or one (N, 2) array in line mode.  Working pixels,
        x = column, y = row.

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
    >>> pts = np.concatenate(stipple(lum, dots=200, mode="touch"))
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
    lines = []
    if o["mode"] == "dots" and _LINE_FROM < 1.0:
        dark = _dark_areas(tone, o["pen_px"])
        if dark.any():
            lines = _dark_lines(tone, dark, o["pen_px"])
            tone = np.where(dark, 0.0, tone)
            ink = tone ** o["contrast"]
            if float(tone.max()) < 0.02:
                return lines
    if o["dots"] is not None:
        n = o["dots"]
    elif o["mode"] == "dots":
        n = filled_dot_count(tone, o["pen_px"])
    else:
        n = default_dot_count(ink, o["pen_px"])
    h, w = ink.shape
    g = max(1.0, math.sqrt(h * w / min(max(_GRID_PIXELS_PER_DOT * n, 40_000), _MAX_GRID)))
    gh, gw = max(2, int(round(h / g))), max(2, int(round(w / g)))
    density = cv2.resize(ink, (gw, gh), interpolation=cv2.INTER_AREA) if g > 1 else ink
    density = np.where(density > 1e-4, density, 0.0)
    if not np.any(density > 0):
        if lines:
            return lines
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
    if o["mode"] == "dots":
        hi = np.array([w - 1.0, h - 1.0])
        return lines + [np.clip(s, 0.0, hi) for s in _filled_dots(tone, pts, o["pen_px"], rng)]
    return [p[None, :] for p in pts]
