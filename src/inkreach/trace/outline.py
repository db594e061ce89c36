"""The outline style: edges of the picture, traced into strokes."""

import cv2
import numpy as np
from skimage.morphology import skeletonize

from . import _options
from ._common import as_luminance, finish, perceptual8
from .graph import trace_skeleton

__all__ = ["outline", "outline_edges", "edge_thresholds", "noise_sigma"]


def noise_sigma(image8):
    """Standard deviation of the picture's pixel noise, on its own scale.

    The median absolute finest-scale diagonal (Haar) wavelet coefficient
    over 0.6745, Donoho and Johnstone's robust estimate [1]_ (the one
    ``skimage.restoration.estimate_sigma`` makes with other wavelets).

    References
    ----------
    .. [1] D. L. Donoho and I. M. Johnstone, "Ideal spatial adaptation by
       wavelet shrinkage", Biometrika 81(3), 1994.

    Examples
    --------
    >>> import numpy as np
    >>> img = np.random.default_rng(0).normal(128, 5, (256, 256))
    >>> round(noise_sigma(img))
    5
    """
    a = np.asarray(image8, dtype=np.float64)
    h, w = (a.shape[0] // 2) * 2, (a.shape[1] // 2) * 2
    a = a[:h, :w]
    hh = (a[0::2, 0::2] - a[0::2, 1::2] - a[1::2, 0::2] + a[1::2, 1::2]) / 2.0
    return float(np.median(np.abs(hh)) / 0.6745)


def _default_blur(shape, noise=0.0):
    # Common practice: a little more smoothing for larger pictures, so the
    # edges follow shapes and not film grain or JPEG blocks; and about one
    # pixel of blur per grey level of noise (on the 0-255 scale), which
    # brings grain under the edge thresholds.
    return max(1.0, max(shape) / 600.0, min(0.9 * noise, 4.0))


def _outline_min_length(shape, pen_px):
    # Edges of texture and shading come as short crumbs; 2.5 % of the long
    # side (and at least 8 pen widths) keeps shapes and drops them (common
    # practice, tuned on the demo still life and scikit-image's photos).
    return max(8.0 * pen_px, 0.025 * max(shape))


def edge_thresholds(image8, detail=0.5):
    """Hysteresis thresholds for Canny edges chosen from the picture.

    Parameters
    ----------
    image8 : ndarray of uint8, shape (H, W)
        The (smoothed) picture the edges are found on.
    detail : float, optional
        In [0, 1]; higher keeps fainter edges.

    Returns
    -------
    low, high : float
        On the L2 gradient-magnitude scale of ``cv2.Canny`` with a 3 x 3
        Sobel aperture.

    Notes
    -----
    ``high`` is the gradient magnitude exceeded by a fraction
    ``0.04 + 0.26 * detail`` of the pixels and ``low = 0.4 * high``;
    percentile-based thresholds with a 0.4 ratio are common practice
    (MATLAB's ``edge`` uses the same ratio, recalled from memory).
    """
    gx = cv2.Sobel(image8, cv2.CV_32F, 1, 0, ksize=3)
    gy = cv2.Sobel(image8, cv2.CV_32F, 0, 1, ksize=3)
    mag = np.hypot(gx, gy)
    frac = 0.04 + 0.26 * float(detail)
    high = float(np.quantile(mag, 1.0 - frac))
    high = max(high, 20.0)   # never chase sensor noise on a flat picture
    return 0.4 * high, high


def outline_edges(lum, *, pen_px=2.0, detail=0.5, low=None, high=None, blur=None):
    """Edge map of a picture by Canny's detector.

    Parameters
    ----------
    lum : ndarray, shape (H, W)
        Linear luminance in [0, 1].
    pen_px : float, optional
        Pen width in pixels (unused here; kept so all options pass through).
    detail : float, optional
        Sets the automatic thresholds, see `edge_thresholds`.
    low, high : float, optional
        Hysteresis thresholds on the L2 gradient scale; chosen from the
        picture when not given.
    blur : float, optional
        Gaussian sigma in pixels applied to the sRGB-encoded 8-bit picture
        first; 0 for none.  By default the larger of 1, the long side / 600
        and 0.9 times the noise level (`noise_sigma`, in grey levels), at
        most 4.

    Returns
    -------
    ndarray of bool, shape (H, W)
        ``cv2.Canny(image, low, high, L2gradient=True)`` of the perceptual
        (sRGB-encoded) picture.

    References
    ----------
    .. [1] J. Canny, "A computational approach to edge detection", IEEE
       Trans. PAMI 8(6), 1986.

    Examples
    --------
    >>> import numpy as np
    >>> lum = np.ones((40, 40), np.float32); lum[10:30, 10:30] = 0.0
    >>> bool(outline_edges(lum).any())
    True
    """
    o = _options.check("outline", dict(pen_px=pen_px, detail=detail, low=low, high=high,
                                       blur=blur))
    img = perceptual8(as_luminance(lum))
    blur = _default_blur(img.shape, noise_sigma(img)) if o["blur"] is None else o["blur"]
    if blur > 0:
        img = cv2.GaussianBlur(img, (0, 0), float(blur))
    lo, hi = edge_thresholds(img, o["detail"])
    lo = lo if o["low"] is None else o["low"]
    hi = hi if o["high"] is None else o["high"]
    if lo > hi:
        lo, hi = hi, lo
    return cv2.Canny(img, lo, hi, L2gradient=True) > 0


def outline(lum, *, pen_px=2.0, detail=0.5, low=None, high=None, blur=None,
            min_length=None, smooth=2.0, simplify=1.0):
    """Draw the edges of a picture.

    Parameters
    ----------
    lum : ndarray, shape (H, W)
        Linear luminance in [0, 1].
    pen_px : float, optional
        Pen width in working pixels.
    detail, low, high, blur
        See `outline_edges`.
    min_length : float, optional
        Strokes shorter than this many pixels are dropped; default 2.5 % of
        the picture's long side and at least 8 pen widths, which drops the
        crumbs that texture and soft shadows leave.
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

    References
    ----------
    .. [1] J. Canny, "A computational approach to edge detection", IEEE
       Trans. PAMI 8(6), 1986.
    .. [2] T. Y. Zhang and C. Y. Suen, "A fast parallel algorithm for
       thinning digital patterns", Comm. ACM 27(3), 1984.

    Examples
    --------
    >>> import numpy as np
    >>> lum = np.ones((60, 60), np.float32); lum[15:45, 15:45] = 0.05
    >>> strokes = outline(lum)
    >>> len(strokes), bool(np.allclose(strokes[0][0], strokes[0][-1]))
    (1, True)
    """
    o = _options.check("outline", dict(pen_px=pen_px, detail=detail, low=low, high=high,
                                       blur=blur, min_length=min_length, smooth=smooth,
                                       simplify=simplify))
    edges = outline_edges(lum, pen_px=pen_px, detail=detail, low=low, high=high, blur=blur)
    skel = skeletonize(edges)
    ml = _outline_min_length(edges.shape, o["pen_px"]) if o["min_length"] is None \
        else o["min_length"]
    prune = max(2.0 * o["pen_px"], 3.0)
    strokes = trace_skeleton(skel, prune=prune, smooth=o["smooth"], min_length=ml)
    return finish(strokes, "outline", ml, o["simplify"], 0.0, edges.shape)
