"""The route stage's entry point: strokes in arm mm to their drawing order."""

import numpy as np

from ..motion import TIP_SPEED

from .joint import pen_up_time, reorder_joint_space
from .strokes import greedy_order, order_strokes

__all__ = ["route_strokes", "start_posture", "joint_order_budget", "GAIN_SHARE", "gain_bounds"]

# The route's kicks stop after three rounds each gain less than this share
# of the estimated drawing time (our choice: 0.2 % of a 10-minute drawing is 1.2 s,
# the time of ten pen lifts, below what a user notices).
GAIN_SHARE = 0.002


def joint_order_budget(n_strokes):
    """Time budget (s) of the joint-space reordering pass for ``n_strokes``.

    The pass refines an order that is already good in millimetres, so a
    small budget gets nearly all of its gain (our own choice, measured in
    bench/).
    """
    return min(1.0, 0.05 + 20e-6 * n_strokes)


def start_posture(arm, placement, start_deg=None):
    """Where the pen rests before and after drawing, joint angles (rad).

    ``start_deg`` if given, else the arm's rest posture, else (no rest
    posture) over the middle of the drawing: its hull is convex and usable,
    so its centroid is too.

    Parameters
    ----------
    arm : FiveBar or SerialArm
    placement : Placement
    start_deg : array_like of 2 floats, optional
        Joint angles, degrees.

    Returns
    -------
    ndarray, shape (2,)
    """
    q = arm.home() if start_deg is None else np.deg2rad(np.asarray(start_deg, float))
    if q is None:
        q = arm.ik(placement.hull.mean(0))
    return q


def gain_bounds(nearest, arm, start_q, gain_share=GAIN_SHARE, tip_speed=TIP_SPEED):
    """Least gain per round of kicks worth searching for, in mm and in seconds.

    ``gain_share`` of the estimated drawing time: the nearest-neighbour
    route's pen-up time (:func:`pen_up_time`) plus its pen-down length at
    ``tip_speed``; in mm at that route's pen-up seconds (lifts
    left out) per pen-up millimetre.

    Parameters
    ----------
    nearest : Route
        The nearest-neighbour route (:func:`greedy_order`) from the start.
    arm : FiveBar or SerialArm
    start_q : array_like, shape (2,)
    gain_share : float
    tip_speed : float
        Pen speed while drawing, mm/s (the planner's, default 80).

    Returns
    -------
    (float, float)
        Millimetres, seconds.
    """
    share = float(gain_share)
    up_s = pen_up_time(nearest.strokes, arm, start_q)
    est_s = up_s + nearest.stats.pen_down_mm / float(tip_speed)
    lifts = arm.pen.lift_s * (2 * len(nearest.strokes) - 1)
    mm = nearest.stats.pen_up_mm
    s_per_mm = max(up_s - lifts, 0.0) / mm if mm > 0 else 0.0
    return (share * est_s / s_per_mm if s_per_mm > 0 else 0.0), share * est_s


def route_strokes(strokes, arm, start_q, joint_order=True, gain_share=GAIN_SHARE,
                  tip_speed=TIP_SPEED):
    """Order and orient strokes (arm mm) for drawing, from a start posture.

    The order is built in millimetres (:func:`order_strokes`), then, with
    ``joint_order``, refined by joint-space travel time
    (:func:`reorder_joint_space`) within :func:`joint_order_budget`.

    Both searches are bounded by the value they add in drawing seconds:
    the drawing time is estimated by the nearest-neighbour order's pen-up
    time (:func:`pen_up_time`, trapezoid moves at the arm's joint limits,
    lifts) plus its pen-down length at ``tip_speed``, and the
    kicks stop after three rounds in a row each save less than
    ``gain_share`` of it (in the millimetre search converted to mm at that
    order's pen-up seconds per millimetre). The result is never longer in
    pen-up millimetres than the nearest-neighbour order.

    Parameters
    ----------
    strokes : list of ndarray, shape (N, 2)
        Polylines in arm mm.
    arm : FiveBar or SerialArm
    start_q : array_like, shape (2,)
        The posture the pen starts from, rad.
    joint_order : bool
        Refine the order by joint-space time.
    gain_share : float
        Share of the estimated drawing time below which a round of kicks
        is not worth its computing time; 0 spends the whole budgets.
    tip_speed : float
        The planner's pen speed while drawing, mm/s, for that estimate.

    Returns
    -------
    Route

    References
    ----------
    .. [1] D. J. Rosenkrantz, R. E. Stearns and P. M. Lewis, "An analysis of
       several heuristics for the traveling salesman problem", SIAM J.
       Comput. 6(3), 1977 (nearest neighbour).
    .. [2] G. A. Croes, "A method for solving traveling-salesman problems",
       Operations Research 6(6), 1958 (2-opt).
    """
    start_mm = arm.fk(start_q)
    nearest = greedy_order(strokes, start=start_mm)
    if not nearest.strokes:
        return nearest
    min_gain_mm, min_gain_s = gain_bounds(nearest, arm, start_q, gain_share, tip_speed)
    route = order_strokes(strokes, start=start_mm, min_gain=min_gain_mm)
    if route.stats.pen_up_mm > nearest.stats.pen_up_mm:
        route = nearest
    if joint_order:
        route = reorder_joint_space(route, arm, start_q=start_q,
                                    time_budget=joint_order_budget(len(route.strokes)),
                                    min_gain=min_gain_s)
    return route
