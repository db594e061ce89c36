"""Small pieces shared by the drawing styles."""

import numpy as np

from ..errors import InkreachError
from .simplify import polyline_lengths, simplify_polylines
from .smooth import smooth_polylines
from .srgb import linear_to_srgb


def as_luminance(lum):
    """Validate a luminance image (or a Picture) and return float32 (H, W)."""
    lum = getattr(lum, "luminance", lum)
    a = np.asarray(lum)
    if a.ndim != 2 or min(a.shape) < 2:
        raise InkreachError(
            f"the picture must be a 2-D luminance array, not shape {a.shape}; "
            "load it with load_image first")
    if not np.issubdtype(a.dtype, np.number) and a.dtype != bool:
        raise InkreachError("the picture must hold numbers; load it with load_image first")
    a = a.astype(np.float32)
    if not np.all(np.isfinite(a)):
        raise InkreachError("the picture has NaN or infinite values; load it with load_image")
    return np.clip(a, 0.0, 1.0)


def perceptual8(lum):
    """sRGB-encoded 8-bit image of linear luminance (for edge finding)."""
    return np.round(linear_to_srgb(lum) * 255.0).astype(np.uint8)


def default_min_length(shape):
    """Strokes shorter than about 1 % of the long side are crumbs (our choice: under a pen
    width or two on paper at the usual sizes, too short to read as a line)."""
    return max(3.0, 0.01 * max(shape))


def finish(strokes, style, min_length=0.0, simplify=0.0, smooth=0.0, shape=None):
    """Smooth, simplify, filter short strokes, and refuse an empty drawing.

    With ``shape`` (H, W) the strokes are kept on the picture.
    """
    strokes = [np.asarray(s, dtype=float).reshape(-1, 2) for s in strokes]
    if smooth > 0:
        strokes = smooth_polylines(strokes, smooth)
    if shape is not None:
        hi = np.array([shape[1] - 1, shape[0] - 1], dtype=float)
        strokes = [np.clip(s, 0.0, hi) for s in strokes]
    if simplify > 0:
        strokes = simplify_polylines(strokes, simplify)
    if min_length > 0 and strokes:
        lengths = polyline_lengths(strokes)
        strokes = [s for s, L in zip(strokes, lengths) if L >= min_length]
    if not strokes:
        raise InkreachError(
            f"the {style} style found nothing to draw in this picture; "
            "try another style or lower min_length")
    return strokes
