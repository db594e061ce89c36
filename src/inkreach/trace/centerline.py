"""The centerline style: one stroke down the middle of every drawn line."""

import cv2
import numpy as np
from scipy import ndimage
from skimage.filters import threshold_otsu
from skimage.morphology import skeletonize

from ..errors import InkreachError
from . import _options
from ._common import as_luminance, default_min_length, finish, perceptual8
from .graph import trace_skeleton

__all__ = ["centerline", "ink_mask"]

# The longest edge between two junctions that may lie in one merged zone and be
# repaired with them, in line half-widths (two lines running side by side merge
# along the way; a validity check keeps real short edges).
_JUNCTION_SPAN = 40.0


def _drop_small(mask, max_size):
    """Remove 8-connected pieces of ``mask`` with at most ``max_size`` pixels."""
    lab, n = ndimage.label(mask, structure=np.ones((3, 3), bool))
    if n == 0:
        return mask
    size = np.bincount(lab.ravel())
    keep = size > max_size
    keep[0] = False
    return keep[lab]


def _background_varies(img):
    """True when the paper's brightness changes a lot across the picture."""
    h, w = img.shape
    k = max(3, int(max(h, w) / 16) | 1)
    # Paper shows through as the local maximum once lines are dilated away.
    paper = cv2.dilate(img, np.ones((k, k), np.uint8))
    paper = cv2.blur(paper, (k, k))
    lo, hi = np.percentile(paper, [5, 95])
    return (hi - lo) > 0.2 * 255


def ink_mask(lum, threshold="auto"):
    """Which pixels are ink (dark lines on light paper).

    Parameters
    ----------
    lum : ndarray, shape (H, W)
        Linear luminance in [0, 1].
    threshold : {'auto', 'otsu', 'adaptive'} or float
        ``'otsu'``: one level for the whole picture [1]_; ``'adaptive'``: a
        level from each pixel's neighbourhood (Gaussian-weighted mean minus
        an offset), for uneven light; ``'auto'`` picks adaptive when the
        paper's brightness varies by more than a fifth across the picture;
        a float is a level on the sRGB-encoded 0..1 scale.

    Returns
    -------
    ndarray of bool, shape (H, W)

    References
    ----------
    .. [1] N. Otsu, "A threshold selection method from gray-level
       histograms", IEEE Trans. SMC 9(1), 1979.
    """
    img = perceptual8(as_luminance(lum))
    if threshold == "auto":
        threshold = "adaptive" if _background_varies(img) else "otsu"
    if threshold == "otsu":
        if img.min() == img.max():
            return np.zeros(img.shape, bool)
        level = threshold_otsu(img)
        return img <= level
    if threshold == "adaptive":
        h, w = img.shape
        block = max(11, int(max(h, w) / 24) | 1)
        m = cv2.adaptiveThreshold(img, 1, cv2.ADAPTIVE_THRESH_GAUSSIAN_C,
                                  cv2.THRESH_BINARY_INV, block, 10)
        return m.astype(bool)
    return img <= float(threshold) * 255.0


def centerline(lum, *, pen_px=2.0, threshold="auto", min_length=None, prune=None,
               smooth=2.0, simplify=0.6):
    """Draw the centre lines of the dark lines of a picture.

    Parameters
    ----------
    lum : ndarray, shape (H, W)
        Linear luminance in [0, 1].
    pen_px : float, optional
        Pen width in working pixels; specks smaller than the pen are ignored.
    threshold : {'auto', 'otsu', 'adaptive'} or float, optional
        How dark counts as ink, see `ink_mask`.
    min_length : float, optional
        Strokes shorter than this are dropped; default about 1 % of the
        picture's long side.
    prune : float, optional
        Side branches shorter than this are cut; default 2.5 times the
        typical half-width of the lines, at least 3 px.
    smooth : float, optional
        Gaussian sigma in pixels along each stroke, corners and ends kept
        (see `smooth_polylines`); removes the pixel staircase.
    simplify : float, optional
        Ramer-Douglas-Peucker tolerance in pixels, applied after smoothing.

    Returns
    -------
    list of ndarray, shape (N, 2)
        Strokes in working pixels, x = column, y = row.

    Raises
    ------
    InkreachError
        When nothing is left to draw.

    Notes
    -----
    Where lines cross or touch, their ink merges and the skeleton [1]_, [2]_
    runs between them [3]_; around such junctions the skeleton is cut back to
    where the ink is a lone line's again and the lone lines are joined
    straight through (see `trace_skeleton`'s ``depth``).

    References
    ----------
    .. [1] T. Y. Zhang and C. Y. Suen, "A fast parallel algorithm for
       thinning digital patterns", Comm. ACM 27(3), 1984.
    .. [2] T.-C. Lee, R. L. Kashyap and C.-N. Chu, "Building skeleton models
       via 3-D medial surface/axis thinning algorithms", CVGIP 56(6), 1994.
    .. [3] J. Y. Chiang, S. C. Tue and Y. C. Leu, "A new algorithm for line
       image vectorization", Pattern Recognition 31(10), 1998 (the skeleton
       is distorted where strokes merge).

    Examples
    --------
    >>> import numpy as np
    >>> lum = np.ones((40, 60), np.float32)
    >>> lum[19:22, 5:55] = 0.0            # a line 3 px wide
    >>> strokes = centerline(lum, simplify=0)
    >>> len(strokes), bool(np.abs(strokes[0][:, 1] - 20).max() <= 1)
    (1, True)
    """
    o = _options.check("centerline", dict(pen_px=pen_px, threshold=threshold,
                                          min_length=min_length, prune=prune,
                                          smooth=smooth, simplify=simplify))
    ink = ink_mask(lum, o["threshold"])
    speck = max(2, int(round(0.5 * o["pen_px"] ** 2)))
    ink = _drop_small(ink, speck)
    ink = ~_drop_small(~ink, max(4, speck))   # fill pin holes
    skel = skeletonize(ink)
    if not skel.any():
        raise InkreachError("the centerline style found nothing to draw in this picture; "
                            "try another style or lower min_length")
    depth = ndimage.distance_transform_edt(ink)
    half = float(np.median(depth[skel]))
    if o["prune"] is None:
        prune = max(3.0, 2.5 * half)
    else:
        prune = o["prune"]
    ml = default_min_length(ink.shape) if o["min_length"] is None else o["min_length"]
    strokes = trace_skeleton(skel, prune=prune, smooth=o["smooth"], min_length=ml,
                             depth=depth, junction_span=_JUNCTION_SPAN * half)
    return finish(strokes, "centerline", ml, o["simplify"], 0.0, ink.shape)
