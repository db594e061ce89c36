"""Where to put the calibration dots: spread out, inside the usable region, short travel."""

import math

import numpy as np
from scipy import ndimage

from ..arms import workspace_map
from ..errors import InkreachError

__all__ = ["calibration_targets"]


def calibration_targets(arm, n=12, seed=0, margin_mm=5.0, cells=150):
    """Commanded joint angles for calibration dots, spread over the usable region.

    The usable region of the arm's workspace map (reachable, inside the
    joint limits, at or above the conditioning floor) is shrunk by
    ``margin_mm`` so that a mis-built arm still lands its dots inside it.
    ``n`` of its grid points are then picked by farthest-point sampling
    (each new point is the one farthest from those already picked), which
    spreads the dots evenly and out to the region's edges, where they tell
    the most about the geometry. The points are ordered into a short open
    path (nearest neighbour from the rest posture, then 2-opt) and mapped
    to joint angles with the arm's inverse kinematics.

    Parameters
    ----------
    arm : FiveBar or SerialArm
        The arm as it is believed to be built (its nominal model).
    n : int
        Number of dots.
    seed : int
        Chooses the first sampled point; other seeds give other spreads.
    margin_mm : float
        Distance kept from the edge of the usable region, mm.
    cells : int
        Resolution of the workspace map (cells along its longer side).

    Returns
    -------
    ndarray, shape (n, 2)
        Commanded joint angles ``(theta1, theta2)``, radians, in drawing order.

    Raises
    ------
    InkreachError
        If the usable region has fewer than ``n`` grid points.

    References
    ----------
    .. [1] T. F. Gonzalez, "Clustering to minimize the maximum intercluster
       distance", Theoretical Computer Science 38, 1985 (farthest-point
       sampling, a 2-approximation of the k-centre problem).
    .. [2] G. A. Croes, "A method for solving traveling-salesman problems",
       Operations Research 6(6), 1958 (2-opt).

    Examples
    --------
    >>> from inkreach.arms import default_arm
    >>> arm = default_arm()
    >>> q = calibration_targets(arm, n=8)
    >>> q.shape, bool(arm.reachable(arm.fk(q)).all())
    ((8, 2), True)
    """
    n = int(n)
    if n < 1:
        raise InkreachError(f"the number of calibration dots must be at least 1, got {n}")
    wmap = workspace_map(arm, cells=cells)
    usable = wmap.usable
    k = int(math.ceil(margin_mm / wmap.step)) if margin_mm > 0 else 0
    if k:
        shrunk = ndimage.binary_erosion(usable, iterations=k)
        if shrunk.sum() >= n:
            usable = shrunk
    iy, ix = np.nonzero(usable)
    pts = np.stack([wmap.x[ix], wmap.y[iy]], axis=1)
    # keep only points whose round trip is exact in the configured mode
    pts = pts[arm.reachable(pts)] if len(pts) else pts
    if len(pts) < n:
        raise InkreachError(f"the arm's usable region holds only {len(pts)} grid points, "
                            f"fewer than the {n} dots asked for; ask for fewer dots or "
                            "check the arm file")
    rng = np.random.default_rng(seed)
    chosen = _farthest_points(pts, n, int(rng.integers(len(pts))))
    P = pts[chosen]
    home = arm.home()
    start_xy = arm.fk(home) if home is not None else None
    order = _short_path(P, start_xy)
    return arm.ik(P[order])


def _farthest_points(pts, n, first):
    """Indices of ``n`` points picked by farthest-point sampling from ``first``."""
    chosen = [first]
    d = np.hypot(*(pts - pts[first]).T)
    for _ in range(n - 1):
        i = int(np.argmax(d))
        chosen.append(i)
        d = np.minimum(d, np.hypot(*(pts - pts[i]).T))
    return np.array(chosen)


def _short_path(P, start_xy=None):
    """An open path through all points, from the one nearest ``start_xy``.

    The route stage's point ordering (greedy construction, 2-opt, Or-opt
    and kicks) does the work.
    """
    from ..route import order_points

    P = np.asarray(P, dtype=float)
    if len(P) <= 2:
        return np.arange(len(P))
    start = start_xy if start_xy is not None and np.all(np.isfinite(start_xy)) else P[0]
    return np.asarray(order_points(P, start=np.asarray(start, dtype=float)), dtype=int)
