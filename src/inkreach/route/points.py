"""Visiting order for a cloud of points (dots, stipples)."""

import numpy as np

from ..errors import InkreachError
from ._greedy import greedy_path
from ._nearest import nearest_walk
from ._search import default_budget, improve_path
from .strokes import _check_start

__all__ = ["order_points"]


def _as_points(points):
    p = np.asarray(points, dtype=float)
    if p.ndim != 2 or p.shape[1] != 2:
        raise InkreachError(f"points must have shape (N, 2), got {p.shape}; pass an array of x, y rows")
    if not np.all(np.isfinite(p)):
        raise InkreachError("points contain NaN or infinity; drop those rows first")
    return p


def order_points(points, start=None, time_budget=None):
    """Short open path through points: greedy edges, then local search and kicks.

    Parameters
    ----------
    points : array_like, shape (N, 2)
        Points to visit (any length unit).
    start : array_like of shape (2,), optional
        Where the pen is before the first point. The path then minimises
        the approach from ``start`` plus the travel between points, so it
        begins near ``start``. Without it both ends of the path are free.
    time_budget : float, optional
        Seconds of improvement after the construction (default
        100 us per point, but at least 1.2 ms per point up to 0.3 s,
        and at most 10 s). The budget is counted in
        machine-independent work units, so the result is reproducible.

    Returns
    -------
    ndarray of int, shape (N,)
        A permutation of ``range(N)``: the visiting order.

    References
    ----------
    .. [1] G. A. Croes, "A method for solving traveling-salesman problems",
       Operations Research 6(6), 1958 (2-opt).
    .. [2] I. Or, "Traveling salesman-type combinatorial problems and their
       relation to the logistics of regional blood banking", PhD thesis,
       Northwestern University, 1976 (Or-opt).
    .. [3] J. L. Bentley, "Fast algorithms for geometric traveling salesman
       problems", ORSA J. Computing 4(4), 1992 (neighbour lists,
       don't-look bits).

    Examples
    --------
    >>> import numpy as np
    >>> pts = np.array([[0, 0], [3, 0], [1, 0], [2, 0]])
    >>> order_points(pts, start=(0, 0)).tolist()
    [0, 2, 3, 1]
    """
    p = _as_points(points)
    n = len(p)
    if n == 0:
        return np.zeros(0, dtype=np.int64)
    start = _check_start(start)
    if n < 3:
        order = nearest_walk(p, np.arange(n), np.arange(n), n, start=start)
        return _small_best(p, start, order)
    order = greedy_path(p, np.arange(n), start)
    budget = default_budget(n) if time_budget is None else float(time_budget)
    search, _ = improve_path(p, np.arange(n), order, start, budget, seed=0, kicks=30 * n)
    return search.path()


def _small_best(p, start, order):
    order = np.asarray(order, dtype=np.int64)
    if len(order) == 2 and start is not None:
        d = np.hypot(*(p[order] - start).T)
        if d[1] < d[0]:
            order = order[::-1]
    return order

