"""Where a polygon fits inside a mask: FFT correlation and a search on the scale."""

import cv2
import numpy as np
from scipy import fft as _fft
from scipy import ndimage

__all__ = []

_SHIFT = 4  # fractional bits for cv2 polygon vertices


class _MaskFit:
    """Every translation at which a polygon lies inside a grid mask, at once.

    A polygon (in mm) is rasterised on the grid; it fits at a translation
    when its footprint covers no cell outside the mask. The count of bad
    cells under the footprint for every translation is one correlation of
    the complement mask with the footprint, done by FFT.

    Parameters
    ----------
    mask : ndarray of bool, shape (ny, nx)
        Allowed cells; row i has centre ``y0 + i * step``, column j
        ``x0 + j * step``.
    x0, y0, step : float
        Centre of cell (0, 0) and the grid spacing, mm.
    """

    def __init__(self, mask, x0, y0, step):
        self.mask = np.asarray(mask, dtype=bool)
        self.shape = self.mask.shape
        self.fshape = tuple(_fft.next_fast_len(n, real=True) for n in self.shape)
        self.x0, self.y0, self.step = float(x0), float(y0), float(step)
        bad = np.ones(self.fshape)
        bad[: self.shape[0], : self.shape[1]] = ~self.mask
        self._fbad = _fft.rfft2(bad)
        self.any = bool(self.mask.any())

    def footprint(self, poly):
        """Cells the polygon covers, its offset, and the kernel, or None if too big."""
        k = (poly - poly.min(0)) / self.step
        kw = int(np.floor(k[:, 0].max() + 1e-9)) + 1
        kh = int(np.floor(k[:, 1].max() + 1e-9)) + 1
        if kh > self.shape[0] or kw > self.shape[1]:
            return None
        K = np.zeros((kh, kw), dtype=np.uint8)
        pts = np.round(k * (1 << _SHIFT)).astype(np.int32).reshape(-1, 1, 2)
        if len(poly) >= 3:
            cv2.fillPoly(K, [pts], 1, cv2.LINE_8, _SHIFT)
        cv2.polylines(K, [pts], True, 1, 1, cv2.LINE_8, _SHIFT)
        r = np.clip(np.round(k).astype(int), 0, [kw - 1, kh - 1])
        K[r[:, 1], r[:, 0]] = 1
        return K

    def feasible(self, poly, mask_fft=None):
        """Bool array over top-left cell positions where the polygon fits.

        Returns None when the polygon is larger than the grid.
        """
        K = self.footprint(poly)
        if K is None:
            return None
        fk = _fft.rfft2(K.astype(float), s=self.fshape)
        fb = self._fbad if mask_fft is None else mask_fft
        C = _fft.irfft2(fb * np.conj(fk), s=self.fshape)
        kh, kw = K.shape
        return C[: self.shape[0] - kh + 1, : self.shape[1] - kw + 1] < 0.5

    def fits(self, poly):
        return _any(self.feasible(poly))

    def translation(self, poly, i, j):
        """Shift (mm) that puts the polygon's footprint at top-left cell (i, j)."""
        return np.array([self.x0 + j * self.step, self.y0 + i * self.step]) - poly.min(0)

    def sub(self, mask):
        """Complement-mask FFT of a sub-mask (for thresholded conditioning)."""
        bad = np.ones(self.fshape)
        bad[: self.shape[0], : self.shape[1]] = ~mask
        return _fft.rfft2(bad)


def _largest_scale(fit, unit, lo, hi, tol):
    """Largest scale s in [lo, hi] with ``unit * s`` fitting, by bisection.

    ``lo`` is assumed to fit (0 fits whenever the mask has a cell).
    """
    while hi - lo > tol:
        mid = 0.5 * (lo + hi)
        if fit.fits(unit * mid):
            lo = mid
        else:
            hi = mid
    return lo


def _scale_bounds(fit, unit):
    """An upper bound on the scale at which ``unit`` can fit the mask."""
    rows = np.flatnonzero(fit.mask.any(1))
    cols = np.flatnonzero(fit.mask.any(0))
    if len(rows) == 0:
        return 0.0
    W = (cols[-1] - cols[0] + 1) * fit.step
    H = (rows[-1] - rows[0] + 1) * fit.step
    ext = np.ptp(unit, axis=0)
    bounds = [W / ext[0] if ext[0] > 0 else np.inf, H / ext[1] if ext[1] > 0 else np.inf]
    return float(min(bounds))


def _level_search(fit, polys, conditioning, floor, iters):
    """Bisect on the conditioning level c at which some polygon still fits.

    The worst conditioning over a footprint is at least c exactly when the
    footprint fits the mask thresholded at c, so a bisection on c with the
    same correlation test finds the best level.

    Returns
    -------
    (c, F)
        The highest level found and the feasible top-left cells of the first
        polygon that fits there (``None`` when only the floor was reached).
    """
    cond = np.nan_to_num(conditioning, nan=-1.0)
    lo, hi = float(floor), 1.0
    best = None
    for _ in range(iters):
        mid = 0.5 * (lo + hi)
        fb = fit.sub(fit.mask & (cond >= mid))
        Fc = next((F for F in (fit.feasible(p, fb) for p in polys) if _any(F)), None)
        if Fc is not None:
            lo, best = mid, Fc
        else:
            hi = mid
    return lo, best


def _best_position(fit, poly, conditioning, floor, iters=7):
    """Top-left cell where the polygon fits with the highest worst conditioning.

    The level comes from :func:`_level_search`; among the positions at that
    level the one deepest inside the set of such positions is kept.

    Returns
    -------
    (i, j, c) or None
    """
    F = fit.feasible(poly)
    if not _any(F):
        return None
    best_c, Fc = _level_search(fit, [poly], conditioning, floor, iters)
    best = F if Fc is None else Fc
    depth = ndimage.distance_transform_edt(np.pad(best, 1))[1:-1, 1:-1]
    i, j = np.unravel_index(np.argmax(depth), depth.shape)
    return int(i), int(j), best_c


def _best_level(fit, polys, conditioning, floor, iters=7):
    """Highest c such that some polygon of ``polys`` fits the mask at level c."""
    return _level_search(fit, polys, conditioning, floor, iters)[0]


def _any(F):
    return F is not None and bool(F.any())
