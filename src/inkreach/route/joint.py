"""Pen-up time in joint space, and reordering under it."""

import numpy as np

from ..errors import InkreachError
from ..motion import trapezoid_time
from ._search import default_budget, improve_path
from .stats import travel_stats
from .strokes import Route, _as_strokes, _check_pair, _Items

__all__ = ["pen_up_time", "reorder_joint_space"]


def _angles(arm, points):
    q = arm.ik(np.asarray(points, dtype=float).reshape(-1, 2))
    q = np.asarray(q, dtype=float).reshape(-1, 2)
    if not np.all(np.isfinite(q)):
        bad = int(np.count_nonzero(~np.all(np.isfinite(q), axis=1)))
        raise InkreachError(f"{bad} stroke end(s) are out of the arm's reach; "
                            "place the drawing inside the workspace first")
    return q


def _start(start_q):
    return _check_pair(start_q, "start_q must be two finite joint angles in radians, or None")


def pen_up_time(strokes, arm, start_q=None):
    """Seconds the arm spends on pen-up moves between strokes.

    Each move between one stroke's end and the next stroke's start is a
    rest-to-rest joint move: each motor turns through its angle change with
    a trapezoidal velocity profile (``d/v + v/a`` when it reaches
    ``max_speed``, else ``2 sqrt(d/a)``), the slower motor sets the time,
    and the pen lifts and lowers (``2 * pen.lift_s``). With ``start_q`` the
    approach to the first stroke counts too: the joint move plus lowering
    the pen once (it starts lifted).

    Parameters
    ----------
    strokes : list of array_like, shape (N_i, 2)
        Strokes in drawing order and direction, in arm mm.
    arm : inkreach.arms.Arm
        Gives ``ik``, ``limits.max_speed``, ``limits.max_accel`` and
        ``pen.lift_s``.
    start_q : array_like of shape (2,), optional
        Joint angles before the first stroke, radians.

    Returns
    -------
    float
        Seconds.

    Raises
    ------
    InkreachError
        If a stroke end is out of the arm's reach.

    References
    ----------
    .. [1] J. J. Craig, *Introduction to Robotics: Mechanics and Control*,
       3rd ed., Pearson, 2005, section 7.3 (linear function with parabolic
       blends).

    Examples
    --------
    >>> import numpy as np
    >>> from inkreach.arms import SerialArm, Limits, PenSpec
    >>> arm = SerialArm(upper=100, lower=100, limits=Limits(max_speed=1.0, max_accel=2.0),
    ...                 pen=PenSpec(lift_s=0.1))
    >>> a = arm.fk(np.array([[0.5, 1.0], [0.5, 2.0]]))
    >>> round(pen_up_time([a[:1], a[1:]], arm), 6)   # 1 rad: d/v + v/a + 2 lifts
    1.7
    """
    strokes = _as_strokes(strokes)
    start = _start(start_q)
    if not strokes:
        return 0.0
    first = _angles(arm, [s[0] for s in strokes])
    last = _angles(arm, [s[-1] for s in strokes])
    v, a, lift = arm.limits.max_speed, arm.limits.max_accel, arm.pen.lift_s
    d = np.abs(first[1:] - last[:-1]).max(axis=1) if len(strokes) > 1 else np.zeros(0)
    total = float(trapezoid_time(d, v, a).sum() + 2.0 * lift * len(d))
    if start is not None:
        total += float(trapezoid_time(np.abs(first[0] - start).max(), v, a)) + lift
    return total


def reorder_joint_space(route_or_strokes, arm, start_q=None, time_budget=None, seed=0,
                        min_gain=0.0):
    """Improve a drawing order under joint-space pen-up time instead of mm.

    The stroke ends are mapped to joint angles once (vectorised ``ik``);
    2-opt and Or-opt then run with the time of the slower joint as the
    distance, over candidate lists from a Chebyshev KD-tree in joint space
    (the time grows with the larger angle change). Strokes may turn round;
    closed strokes keep their entry vertex.

    Parameters
    ----------
    route_or_strokes : Route or list of array_like
        A route from :func:`order_strokes`, or strokes in drawing order, in
        arm mm.
    arm : inkreach.arms.Arm
    start_q : array_like of shape (2,), optional
        Joint angles before the first stroke, radians.
    time_budget : float, optional
        Seconds of improvement, as in :func:`order_strokes`.
    seed : int
        Seed of the kicks.
    min_gain : float
        Seconds: the kicks stop after three rounds in a row each save less
        than this;
        0 spends the whole budget.

    Returns
    -------
    Route
        Indices refer to the strokes the input route was made from (or the
        given list). The input route itself (or the list as a route) when
        nothing got faster.

    References
    ----------
    .. [1] G. A. Croes, "A method for solving traveling-salesman problems",
       Operations Research 6(6), 1958.
    .. [2] I. Or, PhD thesis, Northwestern University, 1976.
    .. [3] J. J. Craig, *Introduction to Robotics*, 3rd ed., 2005, section
       7.3.
    """
    if isinstance(route_or_strokes, Route):
        base = route_or_strokes
        strokes = base.strokes
    else:
        strokes = _as_strokes(route_or_strokes)
        n0 = len(strokes)
        base = Route([s.copy() for s in strokes], np.arange(n0), np.zeros(n0, bool),
                     np.zeros(n0, np.int64), travel_stats(strokes))
    start = _start(start_q)
    start_mm = None if start is None else np.asarray(arm.fk(start), dtype=float)
    if start is not None and base.stats.approach_mm == 0.0 and strokes:
        base = Route(base.strokes, base.order, base.reversed, base.entry,
                     travel_stats(base.strokes, start_mm))
    n = len(strokes)
    if n < 2:
        return base
    items = _Items(strokes)
    q = _angles(arm, items.xy)
    v, a = arm.limits.max_speed, arm.limits.max_accel
    seq = np.arange(len(q))
    budget = default_budget(n) if time_budget is None else float(time_budget)
    search, before = improve_path(q, items.partner, seq, start, budget, seed, kicks=30 * n,
                                  min_gain=float(min_gain), kind="joint", vmax=v, amax=a)
    if not search.cost < before - 1e-9:
        return base
    r = items.route(search.path(), start_mm)
    order = base.order[r.order]
    closed = items.closed[r.order]
    rev = np.where(closed, base.reversed[r.order], base.reversed[r.order] ^ r.reversed)
    return Route(r.strokes, order, rev, base.entry[r.order], r.stats)
