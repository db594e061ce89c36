"""What the arm will really draw: the pen-down path at the pen's width, in true tone."""

import numpy as np
from PIL import Image

from ..errors import InkreachError
from ..trace.simplify import simplify_polylines
from .coverage import stroke_coverage

__all__ = ["simulated_png", "pen_down_paths", "auto_px_per_mm", "encode_srgb8", "MARGIN_MM"]

#: Blank paper around the ink in the simulated drawing, mm (on every side).
MARGIN_MM = 2.0

_SIMPLIFY_PX = 0.02  # Douglas-Peucker tolerance on the pen path, px
_MAX_SIDE_PX = 12000
_AUTO_SIDE_PX = 2000  # longest side of an automatically sized picture ...
_AUTO_PEN_PX = 3.0  # ... which draws the pen this wide when it fits ...
_MIN_PEN_PX = 1.5  # ... and never narrower than this


def pen_down_paths(xy, pen):
    """Split a sampled pen path into runs of consecutive pen-down rows.

    Parameters
    ----------
    xy : array_like, shape (N, 2)
        Pen positions, mm.
    pen : array_like, shape (N,)
        1 (or True) where the pen is on the paper.

    Returns
    -------
    list of ndarray, each (M, 2)

    Examples
    --------
    >>> import numpy as np
    >>> xy = np.arange(12.0).reshape(6, 2)
    >>> [p[:, 0].tolist() for p in pen_down_paths(xy, [0, 1, 1, 0, 1, 1])]
    [[2.0, 4.0], [8.0, 10.0]]
    """
    xy = np.asarray(xy, dtype=float)
    down = np.asarray(pen) != 0
    if len(xy) != len(down):
        raise InkreachError("pen flags and positions differ in rows; pass them from one stream")
    edges = np.diff(np.concatenate([[0], down.astype(np.int8), [0]]))
    starts, ends = np.flatnonzero(edges == 1), np.flatnonzero(edges == -1)
    return [xy[a:b] for a, b in zip(starts, ends)]


def auto_px_per_mm(span_mm, pen_width_mm):
    """A resolution for the simulated drawing, from its longer side and the pen width.

    The pen is drawn 3 px wide; where that would make the picture longer
    than 2000 px the resolution drops to fit, but never so far that the pen
    is under 1.5 px (nor the picture over 12000 px) -- below that an
    anti-aliased line no longer shows its width.

    Parameters
    ----------
    span_mm : float
        Longer side of the area to draw, mm.
    pen_width_mm : float
        Width of the inked line, mm.

    Returns
    -------
    float
        Pixels per mm.

    Examples
    --------
    >>> auto_px_per_mm(100.0, 0.5)   # pen 3 px, picture 600 px
    6.0
    >>> auto_px_per_mm(400.0, 0.5)   # capped at 2000 px: pen 2.5 px
    5.0
    >>> auto_px_per_mm(400.0, 0.1)   # the pen stays 1.5 px: 6000 px
    15.0
    """
    span, w = float(span_mm), float(pen_width_mm)
    if not (np.isfinite(span) and span > 0 and np.isfinite(w) and w > 0):
        raise InkreachError("the simulated picture needs a positive size and pen width")
    ppm = min(_AUTO_PEN_PX / w, _AUTO_SIDE_PX / span)
    ppm = max(ppm, _MIN_PEN_PX / w)
    return min(ppm, (_MAX_SIDE_PX - 1) / span)


def _box(segs, w_mm, margin_mm):
    """(x0, x1, y0, y1): the ink's bounding box with ``margin_mm`` on every side."""
    if segs:
        allp = np.concatenate(segs)
        lo, hi = allp.min(0) - w_mm / 2, allp.max(0) + w_mm / 2
    else:
        lo, hi = np.zeros(2), np.ones(2)
    return (lo[0] - margin_mm, hi[0] + margin_mm, lo[1] - margin_mm, hi[1] + margin_mm)


def simulated_png(paths, pen=None, pen_width_mm=None, *, px_per_mm=None, bounds=None,
                  margin_mm=MARGIN_MM):
    """The paper as the pen leaves it: black ink on white, in true tone.

    Call either ``simulated_png(paths, pen_width_mm)`` with a list of
    pen-down polylines, or ``simulated_png(xy, pen, pen_width_mm)`` with a
    stream's positions and pen flags (pass the forward kinematics of the
    angles the motors really reach, see :func:`inkreach.signals.quantised_angles`);
    pen-up rows leave no ink.

    Every pixel holds the share of its area the round pen covers
    (:func:`stroke_coverage`: strokes that overlap ink the paper once, so
    coverage never passes 1). Black ink on white paper reflects ``1 -
    coverage`` of the light, which is linear light; it is encoded with the
    sRGB transfer function [1]_ into 8 bits, so a screen shows the tone the
    paper will have. The picture covers the ink's bounding box with the same
    margin on every side, and records its resolution in the PNG ``pHYs``
    chunk [2]_ (``image.info["dpi"]``, written by :func:`png_bytes`).

    Parameters
    ----------
    paths : list of array_like (M, 2), or array_like (N, 2)
        Pen-down polylines in arm mm, or sampled positions with ``pen``.
    pen : array_like (N,) or float
        Pen flags for sampled positions; or the pen width when ``paths`` is
        a list of polylines.
    pen_width_mm : float
        Width of the inked line, mm.
    px_per_mm : float, optional
        Resolution. By default it is chosen from the drawing's size and the
        pen's width: the pen is 3 px wide, or less where that would make the
        longer side exceed 2000 px, but never under 1.5 px (see
        :func:`auto_px_per_mm`).
    bounds : tuple, optional
        ``(xmin, xmax, ymin, ymax)`` in mm; by default the ink's box plus
        ``margin_mm`` on every side. The picture is centred on it.
    margin_mm : float, optional
        Blank paper around the ink, mm.

    Returns
    -------
    PIL.Image.Image
        Greyscale ("L"), sRGB-encoded, +y up, ``info["dpi"]`` set.

    References
    ----------
    .. [1] IEC 61966-2-1:1999, "Multimedia systems and equipment - Colour
       measurement and management - Part 2-1: Default RGB colour space -
       sRGB" (the encoding of linear light).
    .. [2] W3C, "Portable Network Graphics (PNG) Specification (Second
       Edition)", 2003, section 11.3.5.3 (pHYs, pixels per metre).

    Examples
    --------
    >>> import numpy as np
    >>> img = simulated_png([np.array([[0.0, 0.0], [10.0, 0.0]])], 1.0, px_per_mm=4)
    >>> img.mode, img.size, round(img.info["dpi"][0] / 25.4, 6)
    ('L', (60, 20), 4.0)
    >>> simulated_png([np.array([[0.0, 0.0], [10.0, 0.0]])], 1.0).size  # 3 px/mm
    (45, 15)
    """
    if pen_width_mm is None:
        if pen is None or np.ndim(pen) != 0:
            raise InkreachError("give the pen width in mm")
        pen_width_mm, segs = float(pen), [np.asarray(p, float).reshape(-1, 2) for p in paths]
    else:
        segs = pen_down_paths(paths, pen)
    w_mm = float(pen_width_mm)
    if not np.isfinite(w_mm) or w_mm <= 0:
        raise InkreachError("the pen width must be greater than zero mm")
    segs = [s[np.all(np.isfinite(s), axis=1)] for s in segs]
    segs = [s for s in segs if len(s)]
    if bounds is None:
        bounds = _box(segs, w_mm, float(margin_mm))
    x0, x1, y0, y1 = (float(b) for b in bounds)
    if not (x1 > x0 and y1 > y0):
        raise InkreachError("the simulated picture's bounds are empty; give xmin < xmax and "
                            "ymin < ymax")
    if px_per_mm is None:
        px_per_mm = auto_px_per_mm(max(x1 - x0, y1 - y0), w_mm)
    ppm = float(px_per_mm)
    W = int(np.ceil((x1 - x0) * ppm - 1e-9))
    H = int(np.ceil((y1 - y0) * ppm - 1e-9))
    if max(W, H) > _MAX_SIDE_PX:
        raise InkreachError(f"the simulated picture would be {W} x {H} px; lower px_per_mm")
    # centre the whole pixels on the box, so the margins stay equal
    left = (x0 + x1) / 2 - W / (2 * ppm)
    top = (y0 + y1) / 2 + H / (2 * ppm)
    px = []
    for s in segs:
        q = np.empty_like(s)
        q[:, 0] = (s[:, 0] - left) * ppm - 0.5   # pixel centres at whole numbers
        q[:, 1] = (top - s[:, 1]) * ppm - 0.5    # +y up on the page
        px.append(q)
    # points that lie within 1/50 px of the line through their neighbours add
    # nothing visible; dropping them makes long straight runs one segment
    px = simplify_polylines(px, _SIMPLIFY_PX)
    cov = stroke_coverage(px, (H, W), w_mm * ppm)
    img = Image.fromarray(encode_srgb8(1.0 - cov))
    img.info["dpi"] = (ppm * 25.4, ppm * 25.4)
    return img


def encode_srgb8(linear):
    """Linear light in [0, 1] to 8-bit sRGB codes (IEC 61966-2-1), rounded to nearest.

    Examples
    --------
    >>> encode_srgb8([0.0, 0.0031308, 0.5, 1.0]).tolist()
    [0, 10, 188, 255]
    """
    v = np.clip(np.asarray(linear, dtype=np.float64), 0.0, 1.0)
    s = np.where(v <= 0.0031308, 12.92 * v, 1.055 * np.power(v, 1 / 2.4) - 0.055)
    return np.rint(s * 255.0).astype(np.uint8)
