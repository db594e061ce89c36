"""The trace stage's entry point: a loaded picture to strokes in its own pixels."""

from .load import Picture, load_image
from .styles import trace

__all__ = ["trace_picture", "merge_tolerance"]


def trace_picture(picture, style="outline", pen_px=2.0, **options):
    """Trace a picture in a drawing style, in the input picture's pixels.

    The style runs on the working grid (``picture.luminance``) and its
    strokes are mapped back to the pixels of the picture as given, so
    they can be placed with the picture's own size.

    Parameters
    ----------
    picture : Picture or anything :func:`load_image` accepts
        The picture; anything but a :class:`Picture` is loaded with the
        loader's defaults.
    style : str
        One of :data:`inkreach.trace.STYLES`.
    pen_px : float
        Pen width on the working grid, pixels.
    **options
        The style's options (see :func:`inkreach.trace.style_options`).

    Returns
    -------
    list of ndarray, shape (N, 2)
        Polylines, x = column, y = row of the input picture, pixel centres
        at whole numbers.

    Examples
    --------
    >>> import numpy as np
    >>> img = np.full((40, 60), 255, np.uint8); img[10:30, 20:40] = 0
    >>> strokes = trace_picture(img, "outline", pen_px=1.0)
    >>> len(strokes) > 0
    True
    """
    if not isinstance(picture, Picture):
        picture = load_image(picture)
    strokes = trace(picture.luminance, style, pen_px=pen_px, **options)
    return [picture.to_original(s) for s in strokes]


def merge_tolerance(picture):
    """Gap (input pixels) below which traced strokes are joined: half a working pixel.

    Parameters
    ----------
    picture : Picture

    Returns
    -------
    float
    """
    return 0.5 / max(min(picture.scale_xy), 1e-9)
