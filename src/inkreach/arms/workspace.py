"""Where an arm can draw: reachability and conditioning maps, the best rectangle."""

from dataclasses import dataclass

import numpy as np
from numpy.lib.stride_tricks import sliding_window_view

__all__ = ["WorkspaceMap", "Rectangle", "workspace_map", "largest_rectangle"]


@dataclass(frozen=True, eq=False)
class WorkspaceMap:
    """Reachability and conditioning sampled on a square grid over the plane.

    Attributes
    ----------
    x, y : ndarray
        Grid cell centres along each axis, mm (``y`` increasing: row 0 is the
        row nearest the motors).
    step : float
        Grid spacing, mm.
    reach : ndarray of bool, shape (ny, nx)
        Inverse kinematics exists in the configured mode.
    in_limits : ndarray of bool
        ... and the angles lie inside the joint limits.
    conditioning : ndarray of float
        Inverse condition number where reachable, NaN elsewhere.
    usable : ndarray of bool
        Reachable, inside the limits and at or above the conditioning floor.
    """

    x: np.ndarray
    y: np.ndarray
    step: float
    reach: np.ndarray
    in_limits: np.ndarray
    conditioning: np.ndarray
    usable: np.ndarray

    @property
    def reach_area(self):
        """Area the pen can reach in the configured mode inside the limits, mm^2."""
        return float(self.in_limits.sum()) * self.step ** 2

    @property
    def usable_area(self):
        """Area that is also at or above the conditioning floor, mm^2."""
        return float(self.usable.sum()) * self.step ** 2

    @property
    def extent(self):
        """(xmin, xmax, ymin, ymax) of the grid's outer cell edges, mm."""
        h = self.step / 2
        return (self.x[0] - h, self.x[-1] + h, self.y[0] - h, self.y[-1] + h)

    def best_point(self):
        """The usable grid point of highest conditioning, (x, y) in mm."""
        c = np.where(self.usable, self.conditioning, -1.0)
        i, j = np.unravel_index(np.argmax(c), c.shape)
        return np.array([self.x[j], self.y[i]])


@dataclass(frozen=True)
class Rectangle:
    """An axis-aligned rectangle in the arm frame, mm.

    Attributes
    ----------
    x0, y0 : float
        Lower-left corner.
    width, height : float
        Size.
    worst_conditioning : float
        Lowest conditioning of the map cells it covers (NaN if unknown).
    """

    x0: float
    y0: float
    width: float
    height: float
    worst_conditioning: float = float("nan")

    @property
    def area(self):
        return self.width * self.height

    @property
    def center(self):
        return np.array([self.x0 + self.width / 2, self.y0 + self.height / 2])

    def corners(self):
        """The four corners, counter-clockwise from the lower left, (4, 2)."""
        x0, y0, x1, y1 = self.x0, self.y0, self.x0 + self.width, self.y0 + self.height
        return np.array([[x0, y0], [x1, y0], [x1, y1], [x0, y1]], dtype=float)


def workspace_map(arm, step=None, cells=400):
    """Sample reachability and conditioning of an arm over the plane.

    Parameters
    ----------
    arm : FiveBar or SerialArm
    step : float, optional
        Grid spacing, mm. By default the arm's reach box is cut into about
        ``cells`` cells along its longer side.
    cells : int
        Resolution when ``step`` is not given.

    Returns
    -------
    WorkspaceMap

    References
    ----------
    .. [1] X.-J. Liu, J. Wang and G. Pritschow, "Kinematics, singularity and
       workspace of planar 5R symmetrical parallel mechanisms", Mechanism and
       Machine Theory 41(2), 2006 (the well-conditioned workspace).

    Examples
    --------
    >>> from inkreach.arms import default_arm
    >>> m = workspace_map(default_arm(), cells=100)
    >>> m.usable_area > 0
    True
    """
    x0, y0, x1, y1 = arm.reach_box()
    if step is None:
        step = max(x1 - x0, y1 - y0) / cells
    x = np.arange(x0 + step / 2, x1, step)
    y = np.arange(y0 + step / 2, y1, step)
    X, Y = np.meshgrid(x, y)
    pts = np.stack([X.ravel(), Y.ravel()], 1)
    q = arm.ik(pts)
    with np.errstate(invalid="ignore"):
        back = arm.fk(q)
        reach = np.all(np.isfinite(q), 1) & (np.hypot(*(back - pts).T) <= 1e-6)
        lim = reach & arm.within_limits(q)
        cond = np.where(reach, arm.conditioning(q), np.nan)
        usable = lim & (cond >= arm.limits.min_conditioning)
    shape = X.shape
    return WorkspaceMap(x=x, y=y, step=float(step), reach=reach.reshape(shape),
                        in_limits=lim.reshape(shape), conditioning=cond.reshape(shape),
                        usable=usable.reshape(shape))


def _fits(S, h, w):
    """Window-sum test: True at top-left cells where an h x w window is full."""
    tot = S[h:, w:] - S[:-h, w:] - S[h:, :-w] + S[:-h, :-w]
    return tot == h * w


def largest_rectangle(wmap, aspect=1.0, mask=None):
    """Largest axis-aligned rectangle of a given aspect ratio in the usable region.

    The rectangle is made of whole grid cells, all usable. The search is a
    binary search on the height, with a summed-area table (Crow 1984) testing
    every position of a size at once; among the positions that fit, the one
    whose worst conditioning is highest is kept.

    Parameters
    ----------
    wmap : WorkspaceMap
    aspect : float
        Width over height.
    mask : ndarray of bool, optional
        Use this mask instead of ``wmap.usable``.

    Returns
    -------
    Rectangle or None
        None when not even one cell is usable.

    References
    ----------
    .. [1] F. C. Crow, "Summed-area tables for texture mapping", SIGGRAPH
       1984.
    """
    M = wmap.usable if mask is None else mask
    ny, nx = M.shape
    S = np.zeros((ny + 1, nx + 1), dtype=np.int64)
    S[1:, 1:] = np.cumsum(np.cumsum(M, 0), 1)

    def size(h):
        return h, max(1, int(round(aspect * h)))

    def ok(h):
        hh, ww = size(h)
        return hh <= ny and ww <= nx and bool(_fits(S, hh, ww).any())

    if not M.any():
        return None
    lo, hi = 0, ny  # ok(lo) is True for lo=0 by convention
    while lo < hi:
        mid = (lo + hi + 1) // 2
        if ok(mid):
            lo = mid
        else:
            hi = mid - 1
    h, w = size(lo) if lo else (1, 1)
    fit = _fits(S, h, w)
    cond = np.where(M, np.nan_to_num(wmap.conditioning, nan=0.0), 0.0)
    worst = _window_min(cond, h, w)
    score = np.where(fit, worst, -1.0)
    i, j = np.unravel_index(np.argmax(score), score.shape)
    e = wmap.extent
    return Rectangle(x0=float(e[0] + j * wmap.step), y0=float(e[2] + i * wmap.step),
                     width=float(w * wmap.step), height=float(h * wmap.step),
                     worst_conditioning=float(score[i, j]))


def _window_min(a, h, w):
    """Minimum over every h x w window, indexed by the window's first cell."""
    m = _forward_min(a, h, 0)
    m = _forward_min(m, w, 1)
    return m[: a.shape[0] - h + 1, : a.shape[1] - w + 1]


def _forward_min(a, n, axis):
    """out[i] = min(a[i : i + n]) along an axis (padded with +inf at the end)."""
    pad = [(0, 0)] * a.ndim
    pad[axis] = (0, n - 1)
    b = np.pad(a, pad, constant_values=np.inf)
    return sliding_window_view(b, n, axis=axis).min(axis=-1)
