"""The hatch style: tone by parallel and crossed lines whose ink matches it."""

import math

import cv2
import numpy as np
from scipy import ndimage

from . import _options
from ._common import as_luminance, finish

__all__ = ["hatch", "layer_fraction"]

# Directions of successive layers relative to the first, in degrees: the
# second crosses the first at right angles, later ones fill in between.
_LAYER_OFFSETS = (0.0, 90.0, 45.0, 135.0, 22.5, 112.5, 67.5, 157.5)
_MAX_FRACTION = 0.4   # at most this much of the paper inked by one layer before
                      # another crossing layer is added (common practice)
_MIN_TONE = 0.02      # lighter than this is left as bare paper
_NONE = 255           # level-map value for "draw nothing"


def layer_fraction(coverage, layers):
    """Ink fraction each of ``layers`` crossed layers needs for ``coverage``.

    Independent crossed line sets, each inking a fraction ``f`` of the
    paper, together ink ``1 - (1 - f)**k``; this solves for ``f``.

    Parameters
    ----------
    coverage : float or ndarray
        Wanted ink coverage in [0, 1], that is ``1 - Y`` for black ink on
        white paper (Murray-Davies).
    layers : int or ndarray

    Returns
    -------
    float or ndarray

    References
    ----------
    .. [1] A. Murray, "Monochrome reproduction in photoengraving", J.
       Franklin Inst. 221, 1936 (the Murray-Davies relation R = 1 - a for
       black ink of coverage a on white paper).

    Examples
    --------
    >>> round(float(layer_fraction(0.75, 2)), 6)
    0.5
    """
    return 1.0 - (1.0 - np.asarray(coverage, dtype=float)) ** (1.0 / np.asarray(layers))


def _clean(lab, pen):
    """Level map without regions much narrower than a few hatch spacings.

    A median filter over about two of the densest spacings (``2.5 pen``)
    removes specks and slivers of odd levels, whose hatching would come out
    as crumbs (an area-and-width filter of the kind morphological opening
    gives, but without leaving holes).
    """
    k = max(5, int(round(5.0 * pen)) | 1)
    return cv2.medianBlur(np.ascontiguousarray(lab), k)


def _plan_levels(tone, levels, layers, pen):
    """Level map and, per level, (layer count, spacing) matching its mean tone."""
    lab = np.minimum((tone * levels).astype(np.int32), levels - 1).astype(np.uint8)
    lab = _clean(lab, pen)          # no specks of odd levels in photos
    count = np.bincount(lab.ravel(), minlength=levels)[:levels]
    total = np.bincount(lab.ravel(), tone.ravel(), minlength=levels)[:levels]
    mean = total / np.maximum(count, 1)
    plan = {}
    for b in range(levels):
        t = mean[b]
        if t < _MIN_TONE or count[b] == 0:
            continue
        k = next((k for k in range(1, layers + 1)
                  if layer_fraction(t, k) <= _MAX_FRACTION), layers)
        f = min(float(layer_fraction(t, k)), 1.0)
        plan[b] = (k, pen / f)
    return lab, plan


def _rotation(shape, angle_deg):
    """Frame in which hatch lines at ``angle_deg`` run along rows.

    Returns ``(size, to_image)`` where ``to_image(u, v)`` maps rotated-frame
    coordinates to image (x, y) and ``M`` is the matrix for
    ``cv2.warpAffine(..., flags=WARP_INVERSE_MAP)``.
    """
    h, w = shape
    a = math.radians(angle_deg)
    d = np.array([math.cos(a), -math.sin(a)])   # counter-clockwise as seen
    n = np.array([-d[1], d[0]])
    side = int(math.ceil(math.hypot(h, w))) + 2
    c = np.array([(w - 1) / 2.0, (h - 1) / 2.0])
    cr = (side - 1) / 2.0
    M = np.array([[d[0], n[0], c[0] - cr * (d[0] + n[0])],
                  [d[1], n[1], c[1] - cr * (d[1] + n[1])]])
    return side, M


def _rotated(level, M, side):
    return cv2.warpAffine(level, M, (side, side), flags=cv2.INTER_NEAREST | cv2.WARP_INVERSE_MAP,
                          borderMode=cv2.BORDER_CONSTANT, borderValue=_NONE)


def _runs(mask_rows):
    """Runs of True in each row: (row, first, last) arrays, row-major order."""
    p = np.pad(mask_rows, ((0, 0), (1, 1))).astype(np.int8)
    d = np.diff(p, axis=1)
    rs, cs = np.nonzero(d == 1)
    _, ce = np.nonzero(d == -1)
    return rs, cs, ce - 1


def _inside_many(mask, p, q):
    """Whether each straight segment p[i] -> q[i] (rotated frame, (u, v))
    stays inside ``mask``."""
    if len(p) == 0:
        return np.zeros(0, dtype=bool)
    n = int(math.ceil(np.hypot(*(q - p).T).max())) + 2
    t = np.linspace(0.0, 1.0, n)[None, :]
    u = np.rint(p[:, :1] + t * (q[:, :1] - p[:, :1])).astype(np.intp)
    v = np.rint(p[:, 1:] + t * (q[:, 1:] - p[:, 1:])).astype(np.intp)
    np.clip(u, 0, mask.shape[1] - 1, out=u)
    np.clip(v, 0, mask.shape[0] - 1, out=v)
    return mask[v, u].all(axis=1)


def _successors(rs, ends, offs, mask, gap, big):
    """For every run, the run of the next line whose same-side end is nearest
    to its own, or -1 when that is too far or the join leaves the mask."""
    key = rs * big + ends
    j = np.searchsorted(key, (rs + 1) * big + ends)
    best = np.full(len(rs), -1, dtype=np.intp)
    dist = np.full(len(rs), np.inf)
    for cand in (j - 1, j):
        ok = (cand >= 0) & (cand < len(rs))
        c = np.where(ok, cand, 0)
        ok &= rs[c] == rs + 1
        d = np.where(ok, np.abs(ends[c] - ends), np.inf)
        better = d < dist
        best[better], dist[better] = c[better], d[better]
    cand = np.flatnonzero(dist <= gap)
    p = np.stack([ends[cand], offs[rs[cand]]], axis=1)
    q = np.stack([ends[best[cand]], offs[rs[best[cand]]]], axis=1)
    inside = _inside_many(mask, p, q)
    out = np.full(len(rs), -1, dtype=np.intp)
    out[cand[inside]] = best[cand[inside]]
    return out


def _hatch_field(mask, spacing, pen, min_run):
    """Lines along the rows of ``mask`` every ``spacing`` px, clipped to it and
    joined end to end (boustrophedon) where the join stays inside."""
    side = mask.shape[0]
    offs = spacing * (np.arange(int(side / spacing) + 1) + 0.5)
    offs = offs[offs <= side - 1]
    rows = np.rint(offs).astype(int)
    rs, u0, u1 = _runs(mask[rows])
    # Round pen ends reach pen/2 past a line's end points: pull them in.
    a = u0 - 0.5 + 0.5 * pen
    b = u1 + 0.5 - 0.5 * pen
    keep = (u1 - u0 + 1) >= max(min_run, pen)
    rs, a, b = rs[keep], a[keep], b[keep]
    if len(rs) == 0:
        return []
    mid = 0.5 * (a + b)
    a, b = np.minimum(a, mid), np.maximum(b, mid)
    big = 4.0 * side + 4.0
    gap = 1.5 * spacing + pen
    next_right = _successors(rs, b, offs, mask, gap, big)  # after running towards +u
    next_left = _successors(rs, a, offs, mask, gap, big)   # after running towards -u
    taken = np.zeros(len(rs), dtype=bool)
    chains = []
    for start in range(len(rs)):
        if taken[start]:
            continue
        right = rs[start] % 2 == 0
        pts, k = [], start
        while k >= 0 and not taken[k]:
            taken[k] = True
            pts += [(a[k], offs[rs[k]]), (b[k], offs[rs[k]])] if right else \
                   [(b[k], offs[rs[k]]), (a[k], offs[rs[k]])]
            k = next_right[k] if right else next_left[k]
            right = not right
        chains.append(np.asarray(pts, dtype=float))
    return chains


def hatch(lum, *, pen_px=2.0, spacing=None, angle=45.0, layers=4, levels=12, smooth=None,
          min_length=None):
    """Draw tone with parallel hatching, crossed for darker tones.

    Parameters
    ----------
    lum : ndarray, shape (H, W)
        Linear luminance in [0, 1].
    pen_px : float, optional
        Pen width in working pixels.
    spacing : float, optional
        Fixed gap between hatch lines in pixels; each added layer is then
        drawn where the tone is closest to what that many layers give.  By
        default the gap is set for each tone level so the ink coverage of
        that level equals its mean ``1 - Y``.
    angle : float, optional
        Direction of the first layer in degrees, counter-clockwise as seen.
    layers : int, optional
        Most crossed layers.
    levels : int, optional
        Tone levels told apart (ignored with a fixed ``spacing``).
    smooth : float, optional
        Gaussian sigma of the tone before it is split into levels; default
        1.5 pen widths (most of the densest spacing, 2.5 pens).  Regions of a
        level narrower than about two such spacings are then merged into
        their neighbours by a median filter.
    min_length : float, optional
        Pieces of line shorter than this are not drawn; default four pen
        widths.

    Returns
    -------
    list of ndarray, shape (N, 2)
        Strokes in working pixels, x = column, y = row.  Neighbouring lines
        of one field are joined end to end into long zig-zag strokes.

    Raises
    ------
    InkreachError
        When nothing is dark enough to draw.

    Notes
    -----
    Black ink covering a fraction ``a`` of white paper reflects
    ``Y = 1 - a`` (Murray-Davies [1]_).  Lines of width ``w`` every ``s``
    pixels cover ``w / s``; ``k`` crossed layers cover
    ``1 - (1 - w / s)**k``.  A level with mean wanted coverage ``a`` gets the
    fewest layers with ``w / s <= 0.4`` and the spacing that solves that
    relation.

    References
    ----------
    .. [1] A. Murray, "Monochrome reproduction in photoengraving", J.
       Franklin Inst. 221, 1936.

    Examples
    --------
    >>> import numpy as np
    >>> lum = np.full((80, 80), 0.5, np.float32)   # 50 % grey in linear light
    >>> strokes = hatch(lum)
    >>> len(strokes) < 10                          # a few long zig-zags
    True
    """
    o = _options.check("hatch", dict(pen_px=pen_px, spacing=spacing, angle=angle,
                                     layers=layers, levels=levels, smooth=smooth,
                                     min_length=min_length))
    lum = as_luminance(lum)
    pen = o["pen_px"]
    tone = 1.0 - lum.astype(np.float64)
    # Smooth the tone over most of one of the densest spacings, so levels
    # form fields a few lines wide and not film-grain islands.
    sigma = 1.5 * pen if o["smooth"] is None else o["smooth"]
    if sigma > 0:
        tone = ndimage.gaussian_filter(tone, sigma, mode="nearest")
    min_run = 4.0 * pen if o["min_length"] is None else o["min_length"]
    L = o["layers"]
    # fields: (angle, spacing, level value(s) to select)
    if o["spacing"] is None:
        level, plan = _plan_levels(tone, o["levels"], L, pen)
        fields = [(j, s, ("eq", b)) for b, (k, s) in plan.items() for j in range(k)]
    else:
        s = o["spacing"]
        f = min(pen / s, 1.0)
        cov = 1.0 - (1.0 - f) ** np.arange(L + 1)
        level = np.abs(tone[..., None] - cov).argmin(axis=-1).astype(np.uint8)
        level = _clean(level, pen)
        level[tone < _MIN_TONE] = 0
        fields = [(j, s, ("ge", j + 1)) for j in range(L)]
    strokes = []
    rotated = {}
    for j, s, (how, val) in fields:
        ang = o["angle"] + _LAYER_OFFSETS[j]
        if j not in rotated:
            side, M = _rotation(lum.shape, ang)
            rotated[j] = (_rotated(level, M, side), M)
        R, M = rotated[j]
        mask = (R == val) if how == "eq" else ((R >= val) & (R != _NONE))
        for ch in _hatch_field(mask, s, pen, min_run):
            strokes.append(ch @ M[:, :2].T + M[:, 2])
    return finish(strokes, "hatch", 0.0, 0.0)
