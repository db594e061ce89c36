"""The registry of drawing styles and one checked way to call them."""

from ..errors import InkreachError
from . import _options
from .centerline import centerline
from .contour import contour
from .hatch import hatch
from .outline import outline
from .stipple import stipple
from .wave import wave

__all__ = ["STYLES", "STYLE_RENDERS", "trace", "style_options"]

STYLES = {
    "outline": outline,
    "centerline": centerline,
    "hatch": hatch,
    "stipple": stipple,
    "contour": contour,
    "wave": wave,
}

#: What each style renders: ``"tone"`` (ink that adds up to the picture's
#: tone when seen from a distance) or ``"lines"`` (edges, centre lines,
#: tone boundaries drawn as lines).
STYLE_RENDERS = {
    "outline": "lines",
    "centerline": "lines",
    "hatch": "tone",
    "stipple": "tone",
    "contour": "lines",
    "wave": "tone",
}


def _check_style(style):
    if style not in STYLES:
        raise InkreachError(f"style {style!r} is unknown; use one of " + ", ".join(STYLES))


def style_options(style):
    """Options of a style with their defaults and a one-line help.

    Parameters
    ----------
    style : str
        A key of `STYLES`.

    Returns
    -------
    dict
        option name -> ``(default, help text)``.

    Examples
    --------
    >>> style_options("contour")["levels"][0]
    6
    """
    _check_style(style)
    return {k: (v[0], _with_range(v[1], v[2])) for k, v in _options.OPTIONS[style].items()}


def _with_range(help_, check):
    """The help text with the valid values appended (``range: ...``)."""
    describe = getattr(check, "describe", None)
    if describe is not None:
        return f"{help_}; range: {describe()}"
    choices = getattr(check, "choices", None)
    return f"{help_}; one of {', '.join(choices)}" if choices else help_


def trace(lum, style="outline", **options):
    """Turn a picture into pen strokes in one of the styles.

    Parameters
    ----------
    lum : ndarray, shape (H, W), or Picture
        Linear luminance in [0, 1] (1 = white paper).
    style : str, optional
        One of ``outline``, ``centerline``, ``hatch``, ``stipple``,
        ``contour``, ``wave``.
    **options
        The style's options, see `style_options`.

    Returns
    -------
    list of ndarray, shape (N, 2)
        Strokes in working pixels, x = column, y = row.

    Raises
    ------
    InkreachError
        For an unknown style or option, a value out of range, or a picture
        with nothing to draw.

    Examples
    --------
    >>> import numpy as np
    >>> lum = np.ones((50, 50), np.float32); lum[10:40, 10:40] = 0.1
    >>> len(trace(lum, "outline"))
    1
    """
    _check_style(style)
    _options.check(style, options)
    return STYLES[style](lum, **options)
