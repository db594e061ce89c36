"""What the other stages need from the placement: pen width in pixels, the drawing's region."""

from .place import provisional_scale

__all__ = ["pen_width_px", "drawing_region"]


def pen_width_px(picture, arm, wmap=None, paper=None, margin=5.0, size=None):
    """The arm's pen width on a picture's working grid, pixels, before tracing.

    Uses the provisional scale (:func:`provisional_scale`): the traced
    drawing is placed at that scale or larger, so the pen is never wider on
    paper than the styles assumed.

    Parameters
    ----------
    picture : Picture
        The loaded picture (its ``original_size`` and ``scale_xy``).
    arm : FiveBar or SerialArm
    wmap : WorkspaceMap, optional
    paper, margin, size
        As for :func:`place_drawing`.

    Returns
    -------
    float

    References
    ----------
    .. [1] F. C. Crow, "Summed-area tables for texture mapping", SIGGRAPH
       1984 (via :func:`provisional_scale`).
    """
    s0 = provisional_scale(tuple(picture.original_size), arm, wmap=wmap, paper=paper,
                           margin=margin, size=size)
    return arm.pen.width_mm / (s0 / min(picture.scale_xy))


def drawing_region(placement):
    """The convex region (arm mm) the pen may cross between strokes, or None.

    The placement's hull; a flat drawing (one straight line) has a
    two-point hull and so no region.

    Parameters
    ----------
    placement : Placement

    Returns
    -------
    ndarray, shape (K, 2), or None
    """
    return placement.hull if len(placement.hull) >= 3 else None
