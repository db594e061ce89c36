"""Small JSON preview data: decimated strokes and the workspace outline."""

import numpy as np

__all__ = ["decimate_strokes", "region_outline", "preview_data"]


def decimate_strokes(strokes, max_points=8000, tol=0.1, decimals=2):
    """Thin polylines for an on-screen preview, keeping their ends.

    Each polyline is first simplified with the Douglas-Peucker algorithm at
    ``tol`` mm; if the total is still above ``max_points``, every polyline
    keeps an evenly spaced share of its points (at least its two ends). Dots
    (single points) stay single points.

    Parameters
    ----------
    strokes : sequence of array_like, shape (N, 2)
        Polylines in mm, in drawing order.
    max_points : int
        Budget for the total number of points.
    tol : float
        Douglas-Peucker tolerance, mm.
    decimals : int
        Rounding of the returned coordinates.

    Returns
    -------
    polylines : list of list of [x, y]
    truncated : bool
        True if even two points per stroke did not fit the budget and some
        strokes were left out.

    References
    ----------
    .. [1] D. H. Douglas and T. K. Peucker, "Algorithms for the reduction of
       the number of points required to represent a digitized line or its
       caricature", Cartographica 10(2), 1973 (as in
       :func:`inkreach.trace.simplify_polylines`).

    Examples
    --------
    >>> import numpy as np
    >>> line = np.c_[np.linspace(0, 10, 101), np.zeros(101)]
    >>> out, cut = decimate_strokes([line])
    >>> out, cut
    ([[[0.0, 0.0], [10.0, 0.0]]], False)
    """
    from ..trace import simplify_polylines

    polys = [np.asarray(s, dtype=float).reshape(-1, 2) for s in strokes]
    polys = [a[np.all(np.isfinite(a), axis=1)] for a in polys]
    polys = simplify_polylines([a for a in polys if len(a)], tol)
    truncated = False
    n = np.array([len(a) for a in polys], dtype=int)
    if n.sum() > max_points:
        floor = np.minimum(n, 2)
        if floor.sum() > max_points:
            # keep an evenly spread subset of whole strokes
            keep = np.cumsum(floor) <= max_points
            polys = [a for a, k in zip(polys, keep) if k]
            n, floor = n[keep], floor[keep]
            truncated = True
        spare = max_points - floor.sum()
        extra = n - floor
        share = np.floor(extra * (spare / max(extra.sum(), 1))).astype(int)
        target = floor + share
        polys = [a if t >= len(a) else a[np.unique(np.linspace(0, len(a) - 1, t).round().astype(int))]
                 for a, t in zip(polys, target)]
    return [np.round(a, decimals).tolist() for a in polys], truncated


def region_outline(mask, x, y, tol=None, decimals=2):
    """Outline polygons of a boolean region sampled on a grid, in mm.

    Parameters
    ----------
    mask : ndarray of bool, shape (ny, nx)
        Region; row ``i`` lies at ``y[i]``, column ``j`` at ``x[j]``.
    x, y : ndarray
        Cell centres along each axis, evenly spaced, mm.
    tol : float, optional
        Simplification tolerance, mm (default: half a grid step).
    decimals : int
        Rounding of the returned coordinates.

    Returns
    -------
    list of list of [x, y]
        Closed polygons (marching squares at level 0.5, simplified).

    References
    ----------
    .. [1] W. E. Lorensen and H. E. Cline, "Marching cubes: a high resolution
       3D surface construction algorithm", SIGGRAPH 1987 (the 2-D case, as in
       :func:`skimage.measure.find_contours`).

    Examples
    --------
    >>> import numpy as np
    >>> m = np.zeros((5, 5), bool); m[1:4, 1:4] = True
    >>> polys = region_outline(m, np.arange(5.0), np.arange(5.0))
    >>> len(polys), min(p[0] for p in polys[0]), max(p[0] for p in polys[0])
    (1, 0.5, 3.5)
    """
    from skimage.measure import approximate_polygon, find_contours

    m = np.asarray(mask, dtype=float)
    if m.size == 0 or not m.any():
        return []
    x = np.asarray(x, float)
    y = np.asarray(y, float)
    step = float(x[1] - x[0]) if len(x) > 1 else 1.0
    tol = step / 2 if tol is None else tol
    padded = np.pad(m, 1)
    out = []
    for c in find_contours(padded, 0.5):
        rows, cols = c[:, 0] - 1, c[:, 1] - 1
        pts = np.c_[x[0] + cols * step, y[0] + rows * step]
        if len(pts) > 3:
            pts = approximate_polygon(pts, tolerance=tol)
        if len(pts) >= 3:
            out.append(np.round(pts, decimals).tolist())
    return out


def _points(arm, names):
    out = []
    for n in names:
        v = getattr(arm, n, None)
        if v is not None:
            try:
                p = np.asarray(v, dtype=float).reshape(2)
            except (TypeError, ValueError):
                continue
            out.append(np.round(p, 2).tolist())
    return out


def preview_data(plan, max_points=8000):
    """The preview part of the web API's answer for a plan.

    Parameters
    ----------
    plan : Plan
        A finished plan (``strokes``, ``workspace``, ``arm``).
    max_points : int
        Budget for the stroke points.

    Returns
    -------
    dict
        ``strokes`` (decimated polylines, mm, drawing order), ``truncated``,
        ``workspace`` with ``usable`` and ``reach`` outlines, ``extent``
        ``[xmin, xmax, ymin, ymax]`` and the ``motors`` positions;
        ``colours``, the exported previews' colours (``order``: 64 steps
        of the drawing-order ramp, ``usable``, ``edge``, ``travel``) so the page looks
        the same; and ``likeness``, the likeness figures as one text, worded
        as in the previews and the printed table.
    """
    strokes, truncated = decimate_strokes(plan.strokes, max_points=max_points)
    ws = {"usable": [], "reach": [], "extent": None, "motors": []}
    wmap = getattr(plan, "workspace", None)
    if wmap is not None:
        ws["usable"] = region_outline(wmap.usable, wmap.x, wmap.y)
        reach = getattr(wmap, "in_limits", None)
        if reach is not None:
            ws["reach"] = region_outline(reach, wmap.x, wmap.y)
        ws["extent"] = [round(float(v), 2) for v in wmap.extent]
    arm = getattr(plan, "arm", None)
    if arm is not None:
        ws["motors"] = _points(arm, ("left_motor", "right_motor", "shoulder"))
    from ..export import likeness_text
    from ..export._colour import hex_colour, order_ramp, usable_colour
    from ..export.picture import _EDGE, _TRAVEL

    colours = {"order": [hex_colour(c) for c in order_ramp(np.linspace(0.0, 1.0, 64))],
               "usable": hex_colour(usable_colour()), "edge": hex_colour(_EDGE),
               "travel": hex_colour(_TRAVEL)}
    stats = getattr(plan, "stats", None) or {}
    return {"strokes": strokes, "truncated": bool(truncated), "workspace": ws,
            "colours": colours, "likeness": likeness_text(stats.get("fidelity"))}
