"""The sRGB transfer function and relative luminance."""

import numpy as np

__all__ = ["srgb_to_linear", "linear_to_srgb", "luminance_from_linear_rgb"]

# IEC 61966-2-1:1999 (sRGB), section 5.2: the decoding breakpoint on the
# encoded side is 0.04045, on the linear side 0.04045 / 12.92 = 0.0031308.
_ENC_BREAK = 0.04045
_LIN_BREAK = 0.0031308

# Rec. ITU-R BT.709 primaries and D65 white, shared by sRGB: the Y row of the
# linear RGB -> XYZ matrix.
_Y_WEIGHTS = (0.2126, 0.7152, 0.0722)


def srgb_to_linear(c):
    """Decode sRGB-encoded values to linear light.

    Parameters
    ----------
    c : array_like
        Encoded values in [0, 1].

    Returns
    -------
    ndarray
        Linear values in [0, 1], same shape; float32 if ``c`` is float32,
        else float64.

    References
    ----------
    .. [1] IEC 61966-2-1:1999, *Multimedia systems and equipment - Colour
       measurement and management - Part 2-1: Default RGB colour space -
       sRGB*, section 5.2.

    Examples
    --------
    >>> round(float(srgb_to_linear(0.5)), 5)
    0.21404
    >>> float(srgb_to_linear(1.0))
    1.0
    """
    c = np.asarray(c)
    if c.dtype != np.float32:
        c = c.astype(np.float64)
    low = c / 12.92
    high = ((np.maximum(c, _ENC_BREAK) + 0.055) / 1.055) ** 2.4
    return np.where(c <= _ENC_BREAK, low, high).astype(c.dtype, copy=False)


def linear_to_srgb(y):
    """Encode linear light to sRGB values, the inverse of `srgb_to_linear`.

    Parameters
    ----------
    y : array_like
        Linear values in [0, 1].

    Returns
    -------
    ndarray
        Encoded values in [0, 1], same shape.

    References
    ----------
    .. [1] IEC 61966-2-1:1999, section 5.3 (encoding).

    Examples
    --------
    >>> round(float(linear_to_srgb(0.21404)), 4)
    0.5
    """
    y = np.asarray(y)
    if y.dtype != np.float32:
        y = y.astype(np.float64)
    low = 12.92 * y
    high = 1.055 * np.maximum(y, _LIN_BREAK) ** (1.0 / 2.4) - 0.055
    return np.where(y <= _LIN_BREAK, low, high).astype(y.dtype, copy=False)


def luminance_from_linear_rgb(rgb):
    """Relative luminance Y of linear sRGB colours.

    Parameters
    ----------
    rgb : ndarray, shape (..., 3)
        Linear red, green, blue.

    Returns
    -------
    ndarray, shape (...)
        ``Y = 0.2126 R + 0.7152 G + 0.0722 B``.

    References
    ----------
    .. [1] Rec. ITU-R BT.709-6, *Parameter values for the HDTV standards*,
       item 3.2 (derivation of luminance).

    Examples
    --------
    >>> float(luminance_from_linear_rgb([1.0, 1.0, 1.0]))
    1.0
    """
    rgb = np.asarray(rgb)
    r, g, b = _Y_WEIGHTS
    return r * rgb[..., 0] + g * rgb[..., 1] + b * rgb[..., 2]
