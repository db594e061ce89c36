"""What the arm will really draw: the pen-down path at the pen's width."""

import cv2
import numpy as np
from PIL import Image

from ..errors import InkreachError

__all__ = ["simulated_png", "pen_down_paths", "auto_px_per_mm"]

_MAX_SIDE_PX = 12000
_AUTO_SIDE_PX = 2000  # longest side of an automatically sized picture ...
_AUTO_PEN_PX = 3.0  # ... which draws the pen this wide when it fits ...
_MIN_PEN_PX = 1.5  # ... and never narrower than this
_SHIFT = 4  # sub-pixel bits for cv2 drawing


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


def simulated_png(paths, pen=None, pen_width_mm=None, *, px_per_mm=None, bounds=None):
    """Render the pen-down path at the pen's width, as the paper will show it.

    Call either ``simulated_png(paths, pen_width_mm)`` with a list of
    pen-down polylines, or ``simulated_png(xy, pen, pen_width_mm)`` with a
    stream's positions and pen flags (pass the forward kinematics of the
    angles the motors really reach, see :func:`inkreach.signals.quantised_angles`).

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
        ``(xmin, xmax, ymin, ymax)`` in mm; by default the paths' box plus a
        margin.

    Returns
    -------
    PIL.Image.Image
        Greyscale ("L"), white paper, black ink, +y up.

    References
    ----------
    .. [1] OpenCV documentation, "Drawing Functions": ``cv2.polylines`` with
       ``LINE_AA`` (anti-aliased lines of a given thickness).

    Examples
    --------
    >>> import numpy as np
    >>> img = simulated_png([np.array([[0.0, 0.0], [10.0, 0.0]])], 1.0, px_per_mm=4)
    >>> img.mode, img.size
    ('L', (64, 24))
    >>> simulated_png([np.array([[0.0, 0.0], [10.0, 0.0]])], 1.0).size  # 3 px/mm
    (48, 18)
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
        if segs:
            allp = np.concatenate(segs)
            lo, hi = allp.min(0), allp.max(0)
        else:
            lo, hi = np.zeros(2), np.ones(2)
        m = 2.0 + w_mm
        bounds = (lo[0] - m, hi[0] + m, lo[1] - m, hi[1] + m)
    x0, x1, y0, y1 = (float(b) for b in bounds)
    if px_per_mm is None:
        px_per_mm = auto_px_per_mm(max(x1 - x0, y1 - y0), w_mm)
    W = int(np.ceil((x1 - x0) * px_per_mm))
    H = int(np.ceil((y1 - y0) * px_per_mm))
    if W < 1 or H < 1:
        raise InkreachError("the simulated picture's bounds are empty; give xmin < xmax and "
                            "ymin < ymax")
    if max(W, H) > _MAX_SIDE_PX:
        raise InkreachError(f"the simulated picture would be {W} x {H} px; lower px_per_mm")
    canvas = np.full((H, W), 255, np.uint8)
    thick = max(1, int(round(w_mm * px_per_mm)))
    scale = float(px_per_mm) * (1 << _SHIFT)
    if segs:
        # a dot: a zero-length line with round ends
        segs = [np.repeat(s, 2, axis=0) if len(s) == 1 else s for s in segs]
        pts = np.concatenate(segs)
        px = np.empty_like(pts)
        px[:, 0] = (pts[:, 0] - x0) * scale
        px[:, 1] = (y1 - pts[:, 1]) * scale  # +y up on the page
        fixed = np.rint(px).astype(np.int32).reshape(-1, 1, 2)
        polys = np.split(fixed, np.cumsum([len(s) for s in segs])[:-1])
        cv2.polylines(canvas, polys, False, 0, thickness=thick, lineType=cv2.LINE_AA,
                      shift=_SHIFT)
    return Image.fromarray(canvas)
