"""The route stage's entry point: strokes in arm mm to their drawing order."""

import numpy as np

from .joint import reorder_joint_space
from .strokes import order_strokes

__all__ = ["route_strokes", "start_posture", "joint_order_budget"]


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


def route_strokes(strokes, arm, start_q, joint_order=True):
    """Order and orient strokes (arm mm) for drawing, from a start posture.

    The order is built in millimetres (:func:`order_strokes`), then, with
    ``joint_order``, refined by joint-space travel time
    (:func:`reorder_joint_space`) within :func:`joint_order_budget`.

    Parameters
    ----------
    strokes : list of ndarray, shape (N, 2)
        Polylines in arm mm.
    arm : FiveBar or SerialArm
    start_q : array_like, shape (2,)
        The posture the pen starts from, rad.
    joint_order : bool
        Refine the order by joint-space time.

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
    route = order_strokes(strokes, start=arm.fk(start_q))
    if joint_order:
        route = reorder_joint_space(route, arm, start_q=start_q,
                                    time_budget=joint_order_budget(len(route.strokes)))
    return route
