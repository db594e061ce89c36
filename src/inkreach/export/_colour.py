"""Colour ramps for previews, interpolated in the OKLab perceptual space."""

import numpy as np

__all__ = ["order_ramp", "conditioning_ramp", "hex_colour", "usable_colour", "USABLE_TINT"]

#: How much of the conditioning colour shows in the usable region (the rest is white).
USABLE_TINT = 0.30

# Linear sRGB -> LMS -> OKLab, the matrices published by B. Ottosson, "A
# perceptual color space for image processing" (2020).
_M1 = np.array([[0.4122214708, 0.5363325363, 0.0514459929],
                [0.2119034982, 0.6806995451, 0.1073969566],
                [0.0883024619, 0.2817188376, 0.6299787005]])
_M2 = np.array([[0.2104542553, 0.7936177850, -0.0040720468],
                [1.9779984951, -2.4285922050, 0.4505937099],
                [0.0259040371, 0.7827717662, -0.8086757660]])
_M1_INV = np.linalg.inv(_M1)
_M2_INV = np.linalg.inv(_M2)

# Our own anchors (sRGB 0-255). Drawing order: deep indigo, teal, olive
# green, amber, brick red: every step differs in hue and lightness, and all
# stay dark enough to read on white paper.
_ORDER_ANCHORS = np.array([[44, 30, 110], [20, 120, 140], [90, 140, 50],
                           [215, 140, 20], [180, 45, 40]], float)
# Conditioning, poor to good: warm grey-rose, pale sand, soft sage, clear sea blue.
_COND_ANCHORS = np.array([[150, 90, 95], [235, 215, 180], [170, 210, 170],
                          [70, 150, 200]], float)


def _to_linear(c):
    c = np.asarray(c, float) / 255.0
    return np.where(c <= 0.04045, c / 12.92, ((c + 0.055) / 1.055) ** 2.4)


def _from_linear(c):
    c = np.clip(c, 0.0, 1.0)
    s = np.where(c <= 0.0031308, 12.92 * c, 1.055 * np.power(c, 1 / 2.4) - 0.055)
    return s * 255.0


def srgb_to_oklab(rgb):
    """sRGB (0-255, shape (..., 3)) to OKLab (L, a, b)."""
    lms = _to_linear(rgb) @ _M1.T
    return np.cbrt(lms) @ _M2.T


def oklab_to_srgb(lab):
    """OKLab (..., 3) to sRGB floats 0-255."""
    lms = (np.asarray(lab, float) @ _M2_INV.T) ** 3
    return _from_linear(lms @ _M1_INV.T)


def _ramp(anchors, t):
    t = np.clip(np.nan_to_num(np.asarray(t, float), nan=0.0), 0.0, 1.0)
    lab = srgb_to_oklab(anchors)
    pos = np.linspace(0.0, 1.0, len(anchors))
    out = np.stack([np.interp(t, pos, lab[:, i]) for i in range(3)], axis=-1)
    return np.rint(oklab_to_srgb(out)).astype(np.uint8)


def order_ramp(t):
    """Colours for drawing order, ``t`` in [0, 1] -> uint8 sRGB, shape (..., 3).

    Examples
    --------
    >>> order_ramp([0.0, 1.0]).tolist()
    [[44, 30, 110], [180, 45, 40]]
    """
    return _ramp(_ORDER_ANCHORS, t)


def conditioning_ramp(t):
    """Colours for conditioning, 0 (poor) to 1 (isotropic) -> uint8 sRGB (..., 3)."""
    return _ramp(_COND_ANCHORS, t)


def usable_colour(conditioning=0.85):
    """The usable region's colour at a conditioning: the ramp mixed with white paper.

    The previews shade the region with it; keys, the SVG and the web page use
    its value at 0.85 as the region's one swatch colour.

    Examples
    --------
    >>> hex_colour(usable_colour())
    '#d5e8eb'
    """
    c = conditioning_ramp(conditioning).astype(float)
    return np.rint((1 - USABLE_TINT) * 255.0 + USABLE_TINT * c).astype(np.uint8)


def hex_colour(rgb):
    """``#rrggbb`` text of one sRGB triple."""
    r, g, b = (int(v) for v in rgb)
    return f"#{r:02x}{g:02x}{b:02x}"
