"""Likeness of a line drawing: does it draw the picture's lines, and only them?

A style that traces lines (edges of a photo, the middle of drawn lines)
is not meant to reproduce tone, so tone figures say nothing about it.
Instead the picture's own lines are found independently of the style --
edges by Canny's detector, or the centre lines of the ink -- and two
shares are measured on the picture's pixel grid:

``lines_drawn``
    the share of the picture's line pixels that lie within a tolerance of
    a drawn stroke (how much of the picture's lines the drawing has);
``strokes_on_lines``
    the share of the drawn stroke length that lies within the tolerance of
    the picture's lines (how much of the drawing is on them).

The tolerance is one pen width plus one grid pixel (both line sets are
rasterised to pixel centres, which moves each by up to half a pixel).
"""

from dataclasses import dataclass

import cv2
import numpy as np
from scipy import ndimage

from ..errors import InkreachError

__all__ = ["LineLikeness", "line_likeness_images", "line_likeness", "picture_lines",
           "plan_line_likeness", "LINE_WORK_SIDE"]

#: Long side, in pixels, of the grid the line likeness is measured on.
LINE_WORK_SIDE = 1024
_CANNY_SIGMA = 2.0   # grid px
# Canny hysteresis thresholds on the Sobel gradient of L*/100: chosen by us on
# scikit-image's camera photo so that the reference holds the edges a person
# would trace (sigma 1 or lower thresholds mark texture, higher ones lose outlines)
_CANNY_LOW, _CANNY_HIGH = 0.05, 0.10
_SAMPLE_PX = 0.5     # spacing of the points sampled along strokes, grid px


@dataclass(frozen=True)
class LineLikeness:
    """Line likeness figures.

    Attributes
    ----------
    lines_drawn : float
        Share of the picture's line pixels within ``tolerance_px`` of a
        stroke, in [0, 1].
    strokes_on_lines : float
        Share of the stroke length within ``tolerance_px`` of the
        picture's lines, in [0, 1].
    tolerance_px : float
        The distance that counts as "on", grid pixels.
    shape : tuple of int
        ``(H, W)`` of the grid.
    """

    lines_drawn: float
    strokes_on_lines: float
    tolerance_px: float
    shape: tuple

    def as_dict(self, digits=4):
        """``{"measure": "lines", "lines_drawn": ..., "strokes_on_lines": ...}``."""
        return {"measure": "lines", "lines_drawn": round(float(self.lines_drawn), digits),
                "strokes_on_lines": round(float(self.strokes_on_lines), digits)}


def _samples(polylines, spacing):
    """Points every ``spacing`` along each polyline, and the length each stands for."""
    pts, wts = [], []
    for p in polylines:
        p = np.asarray(p, dtype=float).reshape(-1, 2)
        p = p[np.all(np.isfinite(p), axis=1)]
        if len(p) == 0:
            continue
        seg = np.hypot(*np.diff(p, axis=0).T)
        L = float(seg.sum())
        if L <= 0:
            pts.append(p[:1])
            wts.append(np.array([spacing]))  # a dot counts as a short piece
            continue
        n = max(2, int(np.ceil(L / spacing)) + 1)
        s = np.linspace(0.0, L, n)
        c = np.r_[0.0, np.cumsum(seg)]
        pts.append(np.stack([np.interp(s, c, p[:, 0]), np.interp(s, c, p[:, 1])], 1))
        wts.append(np.full(n, L / n))
    if not pts:
        return np.zeros((0, 2)), np.zeros(0)
    return np.concatenate(pts), np.concatenate(wts)


def _raster(polylines, shape):
    """Centre lines of polylines as a boolean mask (1-px lines, pixel centres)."""
    mask = np.zeros(shape, np.uint8)
    shift = 4
    arrays = []
    for p in polylines:
        p = np.asarray(p, dtype=float).reshape(-1, 2)
        p = p[np.all(np.isfinite(p), axis=1)]
        if len(p):
            q = np.clip(np.round(p * (1 << shift)), -(1 << 26), 1 << 26).astype(np.int32)
            arrays.append(np.repeat(q, 2, axis=0) if len(q) == 1 else q)
    if arrays:
        cv2.polylines(mask, [a.reshape(-1, 1, 2) for a in arrays], False, 1, 1, cv2.LINE_8,
                      shift)
    return mask.astype(bool)


def line_likeness_images(polylines, lines, tolerance_px):
    """Line likeness of drawn polylines against a mask of the picture's lines.

    Parameters
    ----------
    polylines : list of array_like, shape (N, 2)
        Drawn strokes in grid pixels (x = column, y = row, pixel centres at
        whole numbers).
    lines : array_like of bool, shape (H, W)
        The picture's line pixels.
    tolerance_px : float
        Distance that counts as "on", pixels.

    Returns
    -------
    LineLikeness

    References
    ----------
    .. [1] D. R. Martin, C. C. Fowlkes and J. Malik, "Learning to detect
       natural image boundaries using local brightness, color, and texture
       cues", IEEE Trans. PAMI 26(5), 2004 (boundary recall and precision
       within a distance tolerance; here without their one-to-one matching).
    .. [2] P. E. Danielsson, "Euclidean distance mapping", Computer Graphics
       and Image Processing 14, 1980 (the distance maps, via
       :func:`scipy.ndimage.distance_transform_edt`).

    Examples
    --------
    >>> import numpy as np
    >>> lines = np.zeros((20, 40), bool); lines[10, 5:35] = True
    >>> f = line_likeness_images([np.array([[5.0, 10.0], [19.5, 10.0]])], lines, 2.0)
    >>> round(f.lines_drawn, 2), round(f.strokes_on_lines, 2)
    (0.6, 1.0)
    """
    ref = np.asarray(lines, dtype=bool)
    if ref.ndim != 2 or min(ref.shape) < 2:
        raise InkreachError("the line mask must be a 2-D image of at least 2 x 2 pixels")
    tol = float(tolerance_px)
    drawn = _raster(polylines, ref.shape)
    if ref.any() and drawn.any():
        to_drawn = ndimage.distance_transform_edt(~drawn)
        recall = float(np.mean(to_drawn[ref] <= tol))
    else:
        recall = 0.0
    pts, w = _samples(polylines, _SAMPLE_PX)
    if len(pts) and ref.any():
        to_lines = ndimage.distance_transform_edt(~ref)
        ij = np.rint(pts[:, ::-1]).astype(np.int64)
        inside = ((ij >= 0) & (ij < np.array(ref.shape))).all(axis=1)
        on = np.zeros(len(pts), bool)
        on[inside] = to_lines[ij[inside, 0], ij[inside, 1]] <= tol
        precision = float(np.sum(w[on]) / np.sum(w))
    else:
        precision = 0.0
    return LineLikeness(lines_drawn=recall, strokes_on_lines=precision, tolerance_px=tol,
                        shape=tuple(ref.shape))


def picture_lines(luminance, style):
    """The picture's own lines, found without the style's tracer.

    ``"centerline"``: the skeleton of the ink (darker than Otsu's
    threshold); any other line style: Canny edges of the picture's CIE
    lightness (L*/100), sigma 2 px, hysteresis thresholds 0.05 and 0.10.

    Parameters
    ----------
    luminance : ndarray, shape (H, W)
        Linear luminance in [0, 1].
    style : str

    Returns
    -------
    ndarray of bool, shape (H, W)

    References
    ----------
    .. [1] J. Canny, "A computational approach to edge detection", IEEE
       Trans. PAMI 8(6), 1986.
    .. [2] N. Otsu, "A threshold selection method from gray-level
       histograms", IEEE Trans. SMC 9(1), 1979.
    .. [3] T. Y. Zhang and C. Y. Suen, "A fast parallel algorithm for
       thinning digital patterns", Comm. ACM 27(3), 1984 (as
       :func:`skimage.morphology.skeletonize`).
    .. [4] CIE 15:2004, Colorimetry (CIE 1976 lightness L*).
    """
    from skimage.feature import canny
    from skimage.filters import threshold_otsu
    from skimage.morphology import skeletonize

    lum = np.clip(np.asarray(luminance, dtype=np.float64), 0.0, 1.0)
    if style == "centerline":
        if np.ptp(lum) <= 0:
            return np.zeros(lum.shape, bool)
        return skeletonize(lum < threshold_otsu(lum))
    e = (6 / 29) ** 3
    f = np.where(lum > e, np.cbrt(lum), lum / (3 * (6 / 29) ** 2) + 4 / 29)
    lightness = (116 * f - 16) / 100
    return canny(lightness, sigma=_CANNY_SIGMA, low_threshold=_CANNY_LOW,
                 high_threshold=_CANNY_HIGH)


def line_likeness(plan_or_parts, image, style, *, max_side=LINE_WORK_SIDE):
    """Line likeness of a plan: the strokes as the arm draws them, against the picture.

    The pen positions of the stream's joint angles (forward kinematics),
    pen-down rows joined within each stroke, are mapped into the picture's
    pixels by the inverse of the placement, on a grid whose long side is
    at most ``max_side`` pixels, and compared with :func:`picture_lines`
    by :func:`line_likeness_images` at a tolerance of one pen width plus
    one grid pixel.

    Parameters
    ----------
    plan_or_parts : Plan or tuple
        A plan, or a ``(stream, arm, placement)`` triple.
    image : str, os.PathLike, PIL.Image.Image or ndarray
        The picture the plan was made from.
    style : str
        The style the plan was traced in.
    max_side : int, optional

    Returns
    -------
    LineLikeness
    """
    from .tone import _on_comparison_grid

    pic, paths, _, pen_px = _on_comparison_grid(plan_or_parts, image, max_side,
                                                what="the likeness")
    tol = pen_px + 1.0
    return line_likeness_images(paths, picture_lines(pic.luminance, style), tol)


def plan_line_likeness(plan, image):
    """The figures the planner puts in ``stats["fidelity"]`` for a line style."""
    return line_likeness(plan, image, plan.style).as_dict(4)
