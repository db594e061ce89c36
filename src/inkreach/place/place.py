"""Scale, rotate and position a drawing inside the arm's well-conditioned region."""

import numpy as np
from scipy import ndimage

from ..arms import largest_rectangle, workspace_map
from ..errors import InkreachError
from ._fit import _MaskFit, _any, _best_level, _best_position, _largest_scale, _scale_bounds
from ._geometry import (_along, _apply, _boundary_samples, _ccw, _centroid, _convex_hull,
                        _interior_samples, _linear)
from .placement import Placement

__all__ = ["place_drawing", "provisional_scale", "paper_note"]

#: Rotations tried by default, radians: none, the drawing stays upright (paper
#: taped square to the base shows it square).
DEFAULT_ROTATIONS = (0.0,)
#: Rotations tried with ``tilt=True``, radians, in order of preference.
TILT_ROTATIONS = tuple(np.deg2rad([0.0, 10.0, -10.0, 20.0, -20.0, 30.0, -30.0, 90.0]))

_PREFER_GAIN = 0.01     # a later rotation must give a 1 % larger scale to win (our choice:
                        # above the 0.98 shrink steps' noise, below a visible size change)
_CHECK_SPACING = 1.0    # mm between exactly checked samples
_SHRINK = 0.98          # shrink factor per failed exact check
_SHRINK_STEPS = 25      # 0.98 ** 25 is about 0.6
_ISO_LADDER = (1.0, 0.95, 0.9, 0.85, 0.8)
_ISO_SLACK = 0.02       # conditioning given up to keep a larger scale (our choice: well under
                        # the 0.05 steps of the ladder's conditioning levels)
_SAFE_FIXED = 0.98      # the largest fixed size reported leaves 2 % for the exact check
_TOO_SMALL = ("the arm's usable region is too small for any drawing; "
              "check the limits and the conditioning floor")


def place_drawing(strokes, arm, *, wmap=None, image_size=None, paper=None, margin=5.0,
                  size=None, prefer="largest", rotations=None, flip=True, tilt=False):
    """Fit a drawing into the region where the arm draws well.

    The drawing's own shape, the convex hull of its stroke points, is
    scaled, rotated and moved to the largest place inside the usable region
    of the workspace (reachable, inside the joint limits, at or above the
    conditioning floor), eroded by one grid cell. Because the hull lies in
    that region, so does every straight pen-up move between two points of
    the drawing. The hull is rasterised on the map's grid and every
    translation is tested at once by correlating it with the complement of
    the mask (an FFT); a bisection on the scale finds the largest fit, for
    each rotation tried. The placement is then checked exactly with
    ``arm.reachable`` on every stroke point, on the strokes' segments, along
    the hull's edges and over its inside (samples at most 1 mm apart), and
    shrunk about the hull's centroid in 2 % steps while any fails.

    Parameters
    ----------
    strokes : list of ndarray, each (N, 2)
        Polylines in image pixels: x = column, y = row (rows go down).
    arm : FiveBar or SerialArm
    wmap : WorkspaceMap, optional
        A precomputed ``workspace_map(arm)``.
    image_size : tuple of int, optional
        (width, height) of the picture in pixels; used as the shape to fit
        when the drawing is a single dot.
    paper : tuple of float, optional
        ``(x0, y0, width, height)`` of the paper in arm mm; the drawing
        stays inside it, ``margin`` mm in from each edge.
    margin : float
        Blank border kept on the paper, mm.
    size : float, optional
        Fixed length, mm, of the longer side of the drawing's content box
        (in the drawing's own axes). Fails if it cannot fit anywhere.
    prefer : {"largest", "isotropic"}
        ``"largest"``: the biggest scale; among the positions that fit at
        that scale, the one whose worst conditioning over the drawing's
        footprint is highest (then the most central), and the scale is
        finally grown as far as the exact check allows. ``"isotropic"``:
        find the best worst-conditioning reachable at 80 % of the largest
        scale, then take the largest of 100, 95, 90, 85, 80 % of the largest
        scale that still reaches it within 0.02, positioned for the best
        worst-conditioning.
    rotations : sequence of float, optional
        Rotations to try, radians, in order of preference (a later one
        must give a 1 % larger drawing to win). Default ``[0]``: upright
        (or :data:`TILT_ROTATIONS` with ``tilt=True``).
    flip : bool
        Mirror the image's rows so that the picture appears upright with
        the arm frame's +y up (image row 0 goes to the largest y).
    tilt : bool
        When ``rotations`` is not given, also try tilting the drawing by
        ±10°, ±20°, ±30° and 90° and keep a tilt that gives a larger
        drawing; the paper must then be laid turned by the same angle (see
        :func:`paper_note`).

    Returns
    -------
    Placement

    Raises
    ------
    InkreachError
        When the drawing has no points, the paper lies outside the usable
        region, a fixed size cannot fit, or nothing fits at all.

    References
    ----------
    .. [1] X.-J. Liu, J. Wang and G. Pritschow, "Kinematics, singularity and
       workspace of planar 5R symmetrical parallel mechanisms", Mechanism and
       Machine Theory 41(2), 2006 (the maximal inscribed well-conditioned
       workspace; a circle there, the drawing's own hull here).
    .. [2] R. C. Gonzalez and R. E. Woods, "Digital Image Processing",
       Pearson (template matching by correlation computed with the FFT).
    .. [3] C. B. Barber, D. P. Dobkin and H. Huhdanpaa, "The quickhull
       algorithm for convex hulls", ACM Trans. Mathematical Software 22(4),
       1996 (the hull, via scipy.spatial.ConvexHull).

    Examples
    --------
    >>> import numpy as np
    >>> from inkreach.arms import default_arm
    >>> square = [np.array([[0, 0], [99, 0], [99, 99], [0, 99], [0, 0]], float)]
    >>> p = place_drawing(square, default_arm(), rotations=[0.0])
    >>> bool(default_arm().reachable(p.apply(square[0])).all())
    True
    >>> p.flipped                                  # rows down -> y up
    True
    """
    if prefer not in ("largest", "isotropic"):
        raise InkreachError(f"prefer={prefer!r} is unknown; use 'largest' or 'isotropic'")
    pts, seg = _gather(strokes)
    if rotations is None:
        rots = TILT_ROTATIONS if tilt else DEFAULT_ROTATIONS
    else:
        rots = tuple(float(r) for r in np.atleast_1d(np.asarray(rotations, dtype=float)))
    if len(rots) == 0:
        raise InkreachError("rotations is empty; give at least one angle in radians, e.g. [0]")
    if size is not None and not (np.isfinite(size) and size > 0):
        raise InkreachError(f"size={size!r} is not a positive length; give the drawing's longer side in mm")
    if wmap is None:
        wmap = workspace_map(arm)
    shape_px, longer = _shape_to_fit(pts, image_size)
    inner = _paper_inner(paper, margin)

    last_error = None
    for extra in range(3 if size is not None else 1):
        mask = _allowed_mask(wmap, inner, extra, paper)
        fit = _MaskFit(mask, wmap.x[0], wmap.y[0], wmap.step)
        if not fit.any:
            raise InkreachError(_TOO_SMALL)
        units = [shape_px @ _linear(1.0, r, flip).T for r in rots]
        if size is None:
            k, s = _search_largest(fit, units, wmap.step)
            if s <= 0:
                raise InkreachError(_TOO_SMALL)
            if prefer == "isotropic":
                k, s, (i, j, _) = _search_isotropic(fit, units, s, wmap, arm)
            else:
                i, j, _ = _best_position(fit, units[k] * s, wmap.conditioning,
                                         arm.limits.min_conditioning)
        else:
            s = float(size) / longer
            found = _search_fixed(fit, units, s, wmap, arm, prefer)
            if found is None:
                _, s_best = _search_largest(fit, units, wmap.step)
                where = "on the paper" if paper is not None else "in the arm's usable region"
                largest = np.floor(10 * _SAFE_FIXED * s_best * longer) / 10
                raise InkreachError(
                    f"a drawing {size:g} mm long does not fit {where}; "
                    f"the largest that fits is about {largest:.1f} mm")
            k, (i, j, _) = found
        t = fit.translation(units[k] * s, i, j)
        matrix = np.hstack([_linear(s, rots[k], flip), t[:, None]])
        try:
            return _finish(arm, matrix, rots[k], pts, seg, shape_px, inner, wmap.step,
                           grow=(size is None and prefer == "largest"),
                           shrink=(size is None))
        except InkreachError as e:
            last_error = e
    if size is None:
        raise last_error
    raise InkreachError(
        f"a drawing {size:g} mm long does not pass the exact reachability check anywhere; "
        "try a smaller size") from last_error


def provisional_scale(image_size, arm, wmap=None, paper=None, margin=5.0, size=None):
    """A quick estimate of the placement's mm per pixel before tracing.

    The whole picture is fitted as the largest upright rectangle of its
    aspect ratio in the eroded usable region (and on the paper), so the
    traced drawing, which is no larger than the picture, will be placed
    at this scale or larger.

    Parameters
    ----------
    image_size : tuple of int
        (width, height) of the picture, pixels.
    arm : FiveBar or SerialArm
    wmap : WorkspaceMap, optional
    paper : tuple of float, optional
        ``(x0, y0, width, height)`` in arm mm.
    margin : float
        Blank border on the paper, mm.
    size : float, optional
        Fixed length of the picture's longer side, mm.

    Returns
    -------
    float
        Millimetres per pixel.

    References
    ----------
    .. [1] F. C. Crow, "Summed-area tables for texture mapping", SIGGRAPH
       1984 (via :func:`inkreach.arms.largest_rectangle`).

    Examples
    --------
    >>> from inkreach.arms import default_arm
    >>> s = provisional_scale((400, 300), default_arm())
    >>> 0.2 < s < 1.0
    True
    >>> provisional_scale((400, 300), default_arm(), size=100.0)
    0.25
    """
    w, h = (float(v) for v in image_size)
    if not (w > 0 and h > 0):
        raise InkreachError(f"image size {image_size!r} is empty; give (width, height) in pixels")
    if size is not None:
        if not (np.isfinite(size) and size > 0):
            raise InkreachError(f"size={size!r} is not a positive length; give it in mm")
        return float(size) / max(w, h)
    if wmap is None:
        wmap = workspace_map(arm)
    mask = _allowed_mask(wmap, _paper_inner(paper, margin), 0, paper)
    r = largest_rectangle(wmap, aspect=w / h, mask=mask)
    if r is None:
        raise InkreachError(_TOO_SMALL)
    return min(r.width / w, r.height / h)


def paper_note(rotation_deg):
    """How to lay the paper for a drawing placed at a tilt; None when it is upright.

    Parameters
    ----------
    rotation_deg : float
        The placement's rotation, degrees counter-clockwise in the arm frame
        (x to the right, y away from the motors).

    Returns
    -------
    str or None

    Examples
    --------
    >>> paper_note(0.0) is None
    True
    >>> print(paper_note(-20.0))  # doctest: +NORMALIZE_WHITESPACE
    tilted 20° clockwise: lay the paper turned 20° clockwise from square to the base
    (seen from above, motors nearest you)
    """
    d = float(rotation_deg)
    if abs(d) < 0.05:
        return None
    way = "counter-clockwise" if d > 0 else "clockwise"
    return (f"tilted {abs(d):.0f}° {way}: lay the paper turned {abs(d):.0f}° {way} from "
            "square to the base (seen from above, motors nearest you)")


# --- input -------------------------------------------------------------------

def _gather(strokes):
    """All points (N, 2) and a bool per point: a segment starts here."""
    arrs = [np.asarray(s, dtype=float).reshape(-1, 2) for s in strokes]
    arrs = [a for a in arrs if len(a)]
    if not arrs:
        raise InkreachError("the drawing has no points; trace the picture again with another style "
                            "or a lower threshold")
    pts = np.concatenate(arrs)
    if not np.isfinite(pts).all():
        raise InkreachError("the drawing has non-finite points; remove NaN or infinite "
                            "coordinates from the strokes")
    seg = np.ones(len(pts), dtype=bool)
    seg[np.cumsum([len(a) for a in arrs]) - 1] = False
    return pts, seg


def _shape_to_fit(pts, image_size):
    """The convex hull to fit (image px) and the content's longer side (px)."""
    ext = np.ptp(pts, axis=0)
    longer = float(ext.max())
    if longer > 0:
        return _convex_hull(pts), longer
    # a single dot: fit the picture's frame around it, or one pixel
    if image_size is not None:
        w, h = (float(v) for v in image_size)
        frame = np.array([[0, 0], [w - 1, 0], [w - 1, h - 1], [0, h - 1]], dtype=float)
        if max(w, h) > 1:
            return frame, max(w - 1, h - 1)
    c = pts[0]
    return c + 0.5 * np.array([[-1, -1], [1, -1], [1, 1], [-1, 1]], dtype=float), 1.0


# --- the allowed region ----------------------------------------------------------

def _paper_inner(paper, margin):
    if paper is None:
        return None
    try:
        x0, y0, w, h = (float(v) for v in paper)
    except (TypeError, ValueError):
        raise InkreachError("paper must be (x0, y0, width, height) in mm") from None
    m = float(margin)
    if not (np.isfinite([x0, y0, w, h, m]).all() and m >= 0):
        raise InkreachError("paper and margin must be finite, and the margin not negative")
    if w - 2 * m <= 0 or h - 2 * m <= 0:
        raise InkreachError(f"the paper ({w:g} x {h:g} mm) leaves nothing inside a {m:g} mm margin; "
                            "use a larger paper or a smaller margin")
    return (x0 + m, y0 + m, x0 + w - m, y0 + h - m)


def _allowed_mask(wmap, inner, extra, paper):
    """Usable cells eroded by 1 + extra cells, cut to the paper's inner part."""
    usable = ndimage.binary_erosion(wmap.usable, structure=np.ones((3, 3), bool),
                                    iterations=1 + extra, border_value=0)
    if inner is None:
        return usable
    h = wmap.step / 2
    X, Y = np.meshgrid(wmap.x, wmap.y)
    on = ((X >= inner[0] + h) & (X <= inner[2] - h) & (Y >= inner[1] + h) & (Y <= inner[3] - h))
    both = usable & on
    area_both = float(both.sum())
    need = 0.25 * min(float(on.sum()), float(usable.sum()))
    if area_both < max(need, 1.0):
        w, hh = inner[2] - inner[0], inner[3] - inner[1]
        r = largest_rectangle(wmap, aspect=w / hh, mask=usable)
        if r is None:
            raise InkreachError(_TOO_SMALL)
        m = inner[0] - float(paper[0])
        cx, cy = r.center
        raise InkreachError(
            "the paper rectangle lies outside the arm's usable region; move it to "
            f"x0={cx - w / 2 - m:.1f}, y0={cy - hh / 2 - m:.1f} mm (centred on the largest usable "
            f"{r.width:.0f} x {r.height:.0f} mm rectangle of its shape)")
    return both


# --- searches -----------------------------------------------------------------

def _tol(unit, step):
    return 0.25 * step / float(np.ptp(unit, axis=0).max())


def _search_largest(fit, units, step):
    """(index, scale) of the rotation giving the largest fit."""
    best_k, best_s = 0, 0.0
    for k, U in enumerate(units):
        hi = _scale_bounds(fit, U)
        lo = best_s * (1 + _PREFER_GAIN) if k else 0.0
        if lo >= hi or (k and not fit.fits(U * lo)):
            continue
        s = _largest_scale(fit, U, lo, hi, _tol(U, step))
        if k == 0 or s > best_s * (1 + _PREFER_GAIN):
            best_k, best_s = k, s
    return best_k, best_s


def _search_isotropic(fit, units, s_max, wmap, arm):
    floor = arm.limits.min_conditioning
    c_target = _best_level(fit, [U * (_ISO_LADDER[-1] * s_max) for U in units],
                           wmap.conditioning, floor)
    cond = np.nan_to_num(wmap.conditioning, nan=-1.0)
    fb = fit.sub(fit.mask & (cond >= max(floor, c_target - _ISO_SLACK)))
    for f in _ISO_LADDER:
        for k, U in enumerate(units):
            if _any(fit.feasible(U * (f * s_max), fb)):
                pos = _best_position(fit, U * (f * s_max), wmap.conditioning, floor)
                return k, f * s_max, pos
    # not reached in practice: the last rung fits at c_target by construction
    s = _ISO_LADDER[-1] * s_max
    return 0, s, _best_position(fit, units[0] * s, wmap.conditioning, floor)


def _search_fixed(fit, units, s, wmap, arm, prefer):
    floor = arm.limits.min_conditioning
    best = None
    for k, U in enumerate(units):
        pos = _best_position(fit, U * s, wmap.conditioning, floor)
        if pos is None:
            continue
        if prefer == "largest":
            return k, pos
        if best is None or pos[2] > best[1][2]:
            best = (k, pos)
    return best


# --- the exact check ------------------------------------------------------------

def _samples(matrix, pts, seg, shape_px, spacing, strokes=True, interior_spacing=None):
    hull = _apply(matrix, shape_px)
    parts = [_boundary_samples(hull, spacing),
             _interior_samples(hull, interior_spacing or spacing)]
    if strokes:
        P = _apply(matrix, pts)
        a = P[:-1][seg[:-1]]
        b = P[1:][seg[:-1]]
        parts += [P, _along(a, b, spacing)]
    return np.concatenate(parts), hull


def _passes(arm, S, hull, inner):
    if inner is not None:
        tol = 1e-9
        if not ((hull[:, 0] >= inner[0] - tol).all() and (hull[:, 0] <= inner[2] + tol).all()
                and (hull[:, 1] >= inner[1] - tol).all() and (hull[:, 1] <= inner[3] + tol).all()):
            return False
    return bool(arm.reachable(S).all())


def _about(matrix, c, f):
    """The affine followed by scaling by f about the point c."""
    out = matrix * f
    out[:, 2] = c + f * (matrix[:, 2] - c)
    return out


def _grow(arm, matrix, pts, seg, shape_px, inner, step):
    """Grow the placement as far as the exact check allows (at most two cells).

    Growth about the centroid stops where the hull first meets the region's
    edge; growing about points set off towards the sides lets it move away
    from that edge, so a few such anchors are tried and the largest kept.
    Returns (factor, anchor) with about a quarter millimetre left in hand.
    """
    hull0 = _apply(matrix, shape_px)
    c = _centroid(hull0)
    half = 0.5 * np.ptp(hull0, axis=0)
    dirs = np.array([[0, 0], [1, 0], [-1, 0], [0, 1], [0, -1],
                     [1, 1], [-1, 1], [1, -1], [-1, -1]], dtype=float)
    best_f, best_a = 1.0, c

    def ok(f, a):
        S, h = _samples(_about(matrix, a, f), pts, seg, shape_px, _CHECK_SPACING,
                        strokes=False, interior_spacing=2 * _CHECK_SPACING)
        return _passes(arm, S, h, inner)

    for d in dirs:
        a = c + 0.5 * half * d
        r = float(np.hypot(*(hull0 - a).T).max())
        if r <= 0:
            continue
        hi = 1.0 + 2.0 * step / r
        lo = best_f
        if lo >= hi or not ok(lo + 0.25 * (hi - lo) / 8, a):
            continue
        for _ in range(5):
            mid = 0.5 * (lo + hi)
            if ok(mid, a):
                lo = mid
            else:
                hi = mid
        if lo > best_f:
            best_f, best_a = lo, a
    r = float(np.hypot(*(hull0 - best_a).T).max())
    return max(1.0, best_f - 0.25 / r) if r > 0 else 1.0, best_a


def _finish(arm, matrix, rotation, pts, seg, shape_px, inner, step, grow, shrink):
    hull0 = _apply(matrix, shape_px)
    c = _centroid(hull0)
    candidates = []
    if grow:
        f, a = _grow(arm, matrix, pts, seg, shape_px, inner, step)
        if f > 1.0:
            candidates.append(_about(matrix, a, f))
    candidates.append(matrix)
    if shrink:
        candidates += [_about(matrix, c, _SHRINK ** n) for n in range(1, _SHRINK_STEPS + 1)]
    for m in candidates:
        S, hull = _samples(m, pts, seg, shape_px, _CHECK_SPACING)
        if _passes(arm, S, hull, inner):
            return _placement(arm, m, rotation, pts, S, hull)
    raise InkreachError(_TOO_SMALL)


def _placement(arm, m, rotation, pts, S, hull):
    P = _apply(m, pts)
    lo, hi = P.min(0), P.max(0)
    scale = float(np.sqrt(abs(np.linalg.det(m[:, :2]))))
    worst = float(np.nanmin(arm.conditioning_at(S)))
    return Placement(matrix=m, scale=scale, rotation=float(rotation), hull=_ccw(hull),
                     bbox=(float(lo[0]), float(lo[1]), float(hi[0] - lo[0]), float(hi[1] - lo[1])),
                     worst_conditioning=worst)


