"""Reading a picture into linear luminance on a working grid."""

import os
import warnings
from dataclasses import dataclass, field

import cv2
import numpy as np
from PIL import Image, ImageOps, UnidentifiedImageError

from ..errors import InkreachError
from .srgb import luminance_from_linear_rgb, srgb_to_linear

__all__ = ["Picture", "load_image"]

MIN_SIDE = 8

_LUT8 = srgb_to_linear(np.arange(256, dtype=np.float64) / 255.0).astype(np.float32)


@dataclass(frozen=True, eq=False)
class Picture:
    """A picture as linear luminance on the working grid.

    Attributes
    ----------
    luminance : ndarray, shape (H, W), float32
        Linear relative luminance Y in [0, 1] (1 = white paper), after
        transparency was composited onto white.
    scale : float
        Working pixels per original pixel along the long side (<= 1).
    original_size : tuple of int
        ``(width, height)`` of the picture as given, after its EXIF
        orientation was applied but before any downscaling.
    name : str
        A short label: the file name, or what the caller passed.
    scale_xy : tuple of float
        Exact per-axis factors ``(W_work / W_orig, H_work / H_orig)``.
    """

    luminance: np.ndarray
    scale: float
    original_size: tuple
    name: str = "picture"
    scale_xy: tuple = field(default=(1.0, 1.0))

    @property
    def ink(self):
        """Ink darkness ``1 - luminance`` (0 = white paper, 1 = black)."""
        return 1.0 - self.luminance

    @property
    def shape(self):
        """``(H, W)`` of the working grid."""
        return self.luminance.shape

    def to_original(self, points):
        """Map working pixels ``(col, row)`` to pixels of the original.

        Pixel centres sit at whole numbers on both grids, so
        ``u_orig = (u_work + 0.5) / sx - 0.5``.

        Parameters
        ----------
        points : array_like, shape (N, 2)
            Working-grid positions, x = column, y = row.

        Returns
        -------
        ndarray, shape (N, 2)

        Examples
        --------
        >>> import numpy as np
        >>> p = Picture(np.ones((10, 20), np.float32), 0.5, (40, 20),
        ...             scale_xy=(0.5, 0.5))
        >>> p.to_original([[0.0, 0.0], [19.0, 9.0]]).tolist()
        [[0.5, 0.5], [38.5, 18.5]]
        """
        p = np.asarray(points, dtype=float)
        s = np.asarray(self.scale_xy, dtype=float)
        return (p + 0.5) / s - 0.5


def _fail(name, what):
    raise InkreachError(f"{name}: {what}")


def _open_path(path, max_pixels):
    name = os.path.basename(os.fspath(path)) or os.fspath(path)
    if not os.path.exists(path):
        _fail(name, "no such file; check the path")
    if os.path.isdir(path):
        _fail(name, "is a folder, not a picture; give the path of an image file")
    if os.path.getsize(path) == 0:
        _fail(name, "the file is empty; give a PNG, JPEG, WebP, TIFF, BMP or GIF picture")
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("error", Image.DecompressionBombWarning)
            im = Image.open(path)
    except (Image.DecompressionBombError, Image.DecompressionBombWarning):
        _fail(name, "the picture is far too large; shrink it below "
                    f"{max_pixels // 1_000_000} megapixels")
    except UnidentifiedImageError:
        _fail(name, "is not a picture that can be read; give a PNG, JPEG, WebP, "
                    "TIFF, BMP or GIF file")
    except OSError as exc:
        _fail(name, f"could not be read ({exc}); check the file")
    return im, name


def _check_size(width, height, name, max_pixels):
    if width * height > max_pixels:
        _fail(name, f"the picture is {width}x{height} pixels, more than "
                    f"{max_pixels:,} allowed; shrink it first")
    if min(width, height) < MIN_SIDE:
        _fail(name, f"the picture is {width}x{height} pixels, too small to trace; "
                    f"give one at least {MIN_SIDE} pixels a side")


def _decode(im, name, max_pixels):
    """Fully decode a lazily opened Pillow image, turning failures into errors."""
    _check_size(im.width, im.height, name, max_pixels)
    try:
        im.seek(0)
    except (EOFError, AttributeError, ValueError):
        pass
    try:
        im.load()
        im = ImageOps.exif_transpose(im)
    except (OSError, SyntaxError, ValueError, EOFError) as exc:
        _fail(name, f"the file is damaged or cut short ({exc}); save it again and retry")
    return im


def _linear_from_pil(im):
    """Linear luminance (H, W) float32 from a decoded Pillow image."""
    mode = im.mode
    if mode == "P" or (mode in ("L", "RGB", "1") and "transparency" in im.info):
        im = im.convert("RGBA")
        mode = "RGBA"
    if mode in ("I;16", "I;16L", "I;16B", "I;16N", "I", "F"):
        a = np.asarray(im).astype(np.float64)
        if mode == "I" and a.max(initial=0) > 65535:
            a = a / max(float(a.max()), 1.0)
        elif mode != "F":
            a = a / 65535.0
        a = np.clip(a, 0.0, 1.0)
        return srgb_to_linear(a.astype(np.float32))
    if mode in ("1", "L"):
        return _LUT8[np.asarray(im.convert("L"))]
    if mode in ("LA", "La", "PA"):
        im = im.convert("RGBA")
    elif mode not in ("RGB", "RGBA"):
        im = im.convert("RGBA" if "A" in mode or "a" in mode else "RGB")
    return _linear_from_array(np.asarray(im))


def _linear_from_rgb8(a, rows=256):
    """Linear luminance of 8-bit sRGB(A), a band of rows at a time.

    Decoding a whole 12-megapixel colour picture to floating point at once
    would hold several times its size in memory; a band of rows keeps the
    working set small and gives the same values.
    """
    h, w = a.shape[:2]
    out = np.empty((h, w), dtype=np.float32)
    for r0 in range(0, h, rows):
        band = a[r0:r0 + rows]
        y = luminance_from_linear_rgb(_LUT8[band[..., :3]])
        if a.shape[2] == 4:
            alpha = band[..., 3].astype(np.float32) / 255.0
            y = alpha * y + (1.0 - alpha)
        out[r0:r0 + rows] = np.clip(y, 0.0, 1.0)
    return out


def _linear_from_array(a):
    """Linear luminance from an sRGB-encoded array, alpha composited on white."""
    if a.ndim == 3 and a.shape[2] == 1:
        a = a[..., 0]
    if a.dtype == np.uint8:
        if a.ndim == 3:
            return _linear_from_rgb8(a)
        return _LUT8[a]
    f = a.astype(np.float32)
    if a.dtype == np.uint16:
        f /= 65535.0
    if f.ndim == 2:
        return np.clip(srgb_to_linear(f), 0.0, 1.0)
    lin = luminance_from_linear_rgb(srgb_to_linear(f[..., :3]))
    if f.shape[2] == 4:
        alpha = f[..., 3]
        lin = alpha * lin + (1.0 - alpha)
    return np.clip(lin, 0.0, 1.0).astype(np.float32, copy=False)


def _check_array(a, name):
    if a.ndim not in (2, 3) or (a.ndim == 3 and a.shape[2] not in (1, 3, 4)):
        _fail(name, f"an array picture must be (H, W) or (H, W, 3 or 4), not {a.shape}")
    if a.dtype == bool or a.dtype == np.uint8 or a.dtype == np.uint16:
        return a
    if not np.issubdtype(a.dtype, np.floating) and not np.issubdtype(a.dtype, np.integer):
        _fail(name, f"an array picture must be numeric, not {a.dtype}")
    if np.issubdtype(a.dtype, np.integer):
        if a.min(initial=0) < 0 or a.max(initial=0) > 255:
            _fail(name, "an integer array picture must be uint8 or uint16; convert it first")
        return a.astype(np.uint8)
    if not np.all(np.isfinite(a)):
        _fail(name, "the array picture has NaN or infinite values; fix them first")
    if a.size and (a.min() < 0.0 or a.max() > 1.0):
        _fail(name, "a float array picture must hold values in [0, 1]; rescale it first")
    return a


def _grid_size(w, h, max_side):
    """``(width, height)`` of the working grid of a ``w`` x ``h`` original."""
    f = max_side / max(h, w)
    return max(1, int(round(w * f))), max(1, int(round(h * f)))


def _downscale(lum, max_side):
    h, w = lum.shape
    if max_side is None or max(h, w) <= max_side:
        return lum
    nw, nh = _grid_size(w, h, max_side)
    # Area averaging of linear light keeps the mean reflectance of each patch.
    return cv2.resize(lum, (nw, nh), interpolation=cv2.INTER_AREA)


def _regrid(pic, max_side):
    """A loaded picture on the grid its original would get at ``max_side``."""
    w0, h0 = pic.original_size
    h, w = pic.shape
    if max_side is None or max(h, w) <= max_side:
        return pic
    nw, nh = _grid_size(w0, h0, max_side)
    work = cv2.resize(pic.luminance, (nw, nh), interpolation=cv2.INTER_AREA)
    return Picture(np.clip(work, 0.0, 1.0), max(nh, nw) / max(h0, w0), (w0, h0), pic.name,
                   (nw / w0, nh / h0))


def load_image(source, *, max_side=1200, max_pixels=40_000_000, name=None):
    """Read a picture as linear luminance on a working grid.

    Parameters
    ----------
    source : str, os.PathLike, PIL.Image.Image, ndarray or Picture
        A file (PNG, JPEG, WebP, TIFF, BMP, GIF: first frame), a Pillow
        image, or an array ``(H, W)`` / ``(H, W, 3 | 4)`` of sRGB-encoded
        values (uint8, uint16, or float in [0, 1]). A `Picture` already
        loaded is not read again: it comes back on the grid that loading
        its original at ``max_side`` gives (shrunk from its own grid by area
        averaging), or as it is when its grid is already no larger.
    max_side : int or None, optional
        The working grid's long side is at most this many pixels; larger
        pictures are shrunk by area averaging in linear light.
    max_pixels : int, optional
        Pictures with more pixels are refused from their header, before any
        decoding.
    name : str, optional
        Label for messages; defaults to the file name.

    Returns
    -------
    Picture
        ``original_size`` is after the EXIF orientation and before
        downscaling.

    Raises
    ------
    InkreachError
        Missing, empty, damaged, unreadable, too large or too small pictures.

    Notes
    -----
    Colours are decoded with the sRGB transfer function [1]_ and combined
    into relative luminance with the Rec. 709 weights [2]_; transparency is
    composited onto white paper.

    References
    ----------
    .. [1] IEC 61966-2-1:1999, Default RGB colour space - sRGB.
    .. [2] Rec. ITU-R BT.709-6, item 3.2.

    Examples
    --------
    >>> import numpy as np
    >>> pic = load_image(np.full((20, 30), 255, np.uint8))
    >>> pic.luminance.shape, float(pic.luminance.max()), pic.original_size
    ((20, 30), 1.0, (30, 20))
    """
    if max_side is not None and max_side < MIN_SIDE:
        raise InkreachError(f"max_side must be at least {MIN_SIDE} pixels, not {max_side}")
    if isinstance(source, Picture):
        return _regrid(source, max_side)
    if isinstance(source, (str, os.PathLike)):
        im, default = _open_path(source, max_pixels)
        label = name or default
        with im:
            im = _decode(im, label, max_pixels)
            lin = _linear_from_pil(im)
    elif isinstance(source, Image.Image):
        label = name or "picture"
        im = _decode(source, label, max_pixels)
        lin = _linear_from_pil(im)
    elif isinstance(source, np.ndarray):
        label = name or "array"
        a = _check_array(source, label)
        _check_size(a.shape[1], a.shape[0], label, max_pixels)
        lin = _linear_from_array(a)
    else:
        raise InkreachError(
            f"cannot read a picture from a {type(source).__name__}; "
            "give a file path, a Pillow image or a numpy array")
    h, w = lin.shape
    work = _downscale(np.ascontiguousarray(lin, dtype=np.float32), max_side)
    hh, ww = work.shape
    sx, sy = ww / w, hh / h
    return Picture(np.clip(work, 0.0, 1.0), max(hh, ww) / max(h, w), (w, h), label, (sx, sy))
