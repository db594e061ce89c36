"""The contour style: lines of equal tone, like the height lines of a map."""

import numpy as np
from scipy import ndimage
from skimage.measure import find_contours

from . import _options
from ._common import as_luminance, default_min_length, finish, perceptual8
from .outline import noise_sigma

_LOOP_FLOOR = 2.0   # closed lines narrower than this many pen widths draw as blots
                    # with at most a pen-wide hole (our choice: two pen widths
                    # leave a hole no wider than the pen)


def _lightness(lum):
    """CIE 1976 lightness L* of linear luminance, scaled to 0..1."""
    y = np.asarray(lum, dtype=np.float64)
    eps = (6.0 / 29.0) ** 3
    f = np.where(y > eps, np.cbrt(y), y / (3 * (6.0 / 29.0) ** 2) + 4.0 / 29.0)
    return (116.0 * f - 16.0) / 100.0

__all__ = ["contour", "contour_levels"]


def contour_levels(img, levels):
    """``levels`` evenly spaced tone values strictly inside the range of ``img``.

    Examples
    --------
    >>> import numpy as np
    >>> contour_levels(np.array([0.0, 1.0]), 3).tolist()
    [0.25, 0.5, 0.75]
    """
    lo, hi = float(np.min(img)), float(np.max(img))
    return lo + (hi - lo) * np.arange(1, levels + 1) / (levels + 1)


def _default_smooth(shape, noise):
    """Blur for iso-tone lines: more for larger and for noisier pictures.

    Common practice: about one pixel per 500 of the long side, and 2
    pixels per grey level of noise (0-255 scale, `noise_sigma`), so the
    lines follow shapes and not grain; between 1 and 8 pixels.
    """
    return float(np.clip(max(max(shape) / 500.0, 2.0 * noise), 1.0, 8.0))


def _small_loop(c, floor):
    """Whether ``c`` is a closed line whose extent is below ``floor`` px."""
    return bool(np.allclose(c[0], c[-1]) and np.ptp(c, axis=0).max() < floor)


def contour(lum, *, pen_px=2.0, levels=6, smooth=None, min_length=None, simplify=0.5):
    """Draw iso-tone lines of a smoothed picture.

    Tones are compared on CIE lightness L* (CIE 15, 2004), not linear
    luminance, so the levels are evenly spaced in perceived lightness.

    Parameters
    ----------
    lum : ndarray, shape (H, W)
        Linear luminance in [0, 1].
    pen_px : float, optional
        Pen width in working pixels.
    levels : int, optional
        Number of tone levels, evenly spaced between the darkest and the
        lightest tone.
    smooth : float, optional
        Gaussian sigma in pixels applied first; by default chosen from the
        picture's size and its noise level (`noise_sigma`).
    min_length : float, optional
        Lines shorter than this are dropped; default about 1 % of the
        picture's long side.
    simplify : float, optional
        Ramer-Douglas-Peucker tolerance in pixels.

    Returns
    -------
    list of ndarray, shape (N, 2)
        Strokes in working pixels, x = column, y = row; closed lines end
        where they start.  Closed lines narrower than two pen widths
        (blots, mostly crumbs of grain) are left out.

    Raises
    ------
    InkreachError
        When nothing is left to draw (a flat picture).

    References
    ----------
    .. [1] W. E. Lorensen and H. E. Cline, "Marching cubes: a high resolution
       3D surface construction algorithm", SIGGRAPH 1987 (marching squares is
       its 2-D case, as in ``skimage.measure.find_contours``).
    .. [2] CIE 15:2004, *Colorimetry*, 3rd ed. (L* = 116 f(Y) - 16).

    Examples
    --------
    >>> import numpy as np
    >>> yy, xx = np.mgrid[:64, :64]
    >>> lum = np.clip(np.hypot(xx - 32, yy - 32) / 32, 0, 1).astype(np.float32)
    >>> len(contour(lum, levels=3))      # three rings
    3
    """
    o = _options.check("contour", dict(pen_px=pen_px, levels=levels, smooth=smooth,
                                       min_length=min_length, simplify=simplify))
    lum = as_luminance(lum)
    img = _lightness(lum)
    sigma = (_default_smooth(lum.shape, noise_sigma(perceptual8(lum))) if o["smooth"] is None
             else o["smooth"])
    if sigma > 0:
        img = ndimage.gaussian_filter(img, sigma, mode="nearest")
    floor = _LOOP_FLOOR * o["pen_px"]
    strokes = []
    if float(img.max() - img.min()) > 1e-3:
        for v in contour_levels(img, o["levels"]):
            for c in find_contours(img, v):
                if not _small_loop(c, floor):
                    strokes.append(c[:, ::-1])   # (row, col) -> (x, y)
    ml = default_min_length(lum.shape) if o["min_length"] is None else o["min_length"]
    return finish(strokes, "contour", ml, o["simplify"])
