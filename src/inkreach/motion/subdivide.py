"""Chord subdivision: where joint-linear motion keeps the pen on a straight line."""

import numpy as np

from ..errors import InkreachError
from ..place._geometry import _point_segment_distance

__all__ = ["subdivide"]

_PROBES = np.array([0.25, 0.5, 0.75])
_MAX_ROUNDS = 40
_MIN_LENGTH = 1e-6


def _drop_repeats(points):
    """The points without consecutive duplicates."""
    keep = np.ones(len(points), bool)
    keep[1:] = np.any(np.diff(points, axis=0) != 0, axis=1)
    return points[keep]


def _chord_deviation(arm, pa, pb, qa, qb):
    """Largest distance of the joint-linear chord ``qa -> qb`` from ``pa -> pb``.

    The chord is probed at its quarter points and midpoint through forward
    kinematics; NaN (the linkage does not close) counts as infinite.

    Parameters
    ----------
    arm : FiveBar or SerialArm
    pa, pb : ndarray, shape (M, 2)
        Segment ends, mm.
    qa, qb : ndarray, shape (M, 2)
        Joint angles at the segment ends, radians.

    Returns
    -------
    ndarray, shape (M,)
    """
    m = len(pa)
    if m == 0:
        return np.zeros(0)
    u = _PROBES[None, :, None]
    q = qa[:, None, :] + u * (qb - qa)[:, None, :]
    x = arm.fk(q.reshape(-1, 2)).reshape(m, len(_PROBES), 2)
    d = _point_segment_distance(x, pa[:, None, :], pb[:, None, :])
    d = np.where(np.isfinite(d), d, np.inf)
    return d.max(axis=1)


def _subdivide_many(points, active, arm, chord_tol, what="stroke"):
    """Subdivide the active segments of a point sequence (see :func:`subdivide`).

    Parameters
    ----------
    points : ndarray, shape (N, 2)
        Every point, already usable (checked by the caller).
    active : ndarray of bool, shape (N - 1,)
        Which consecutive pairs are segments to subdivide; the others
        (jumps between separate polylines) are left alone.

    Returns
    -------
    points, q : ndarray, shape (K, 2)
    origin : ndarray of int, shape (K,)
        Index of the input point each output point equals, or -1 for an
        inserted point.
    """
    P = np.asarray(points, dtype=float)
    Q = arm.ik(P)
    origin = np.arange(len(P))
    pending = np.asarray(active, dtype=bool).copy()
    for _ in range(_MAX_ROUNDS):
        idx = np.flatnonzero(pending)
        if idx.size == 0:
            break
        dev = _chord_deviation(arm, P[idx], P[idx + 1], Q[idx], Q[idx + 1])
        fail = ~(dev <= chord_tol)
        bad = idx[fail]
        pending[:] = False
        if bad.size == 0:
            break
        seg_len = np.hypot(*(P[bad + 1] - P[bad]).T)
        if np.any(seg_len < _MIN_LENGTH):
            k = bad[np.argmax(seg_len < _MIN_LENGTH)]
            raise InkreachError(
                f"the {what} near ({P[k, 0]:.2f}, {P[k, 1]:.2f}) mm cannot be followed "
                f"within {chord_tol:g} mm (too close to a singularity); move the drawing "
                "into the well-conditioned region")
        mid = 0.5 * (P[bad] + P[bad + 1])
        ok = arm.reachable(mid)
        if not np.all(ok):
            k = int(np.argmin(ok))
            raise InkreachError(
                f"the {what} passes through ({mid[k, 0]:.2f}, {mid[k, 1]:.2f}) mm, which the "
                "arm cannot reach safely; place the drawing inside the usable region")
        P = np.insert(P, bad + 1, mid, axis=0)
        Q = np.insert(Q, bad + 1, arm.ik(mid), axis=0)
        origin = np.insert(origin, bad + 1, -1)
        # Both halves of each failed segment are pending; the rest have passed.
        pending = np.insert(pending, bad + 1, False)
        newpos = bad + np.arange(bad.size)  # position of each failed segment's first half
        pending[newpos] = True
        pending[newpos + 1] = True
    else:  # pragma: no cover - 2**40 halvings never happen before the length test
        raise InkreachError(f"the {what} cannot be subdivided within {chord_tol:g} mm; "
                            "raise chord_tol")
    return P, Q, origin


def subdivide(polyline, arm, chord_tol=0.05):
    """Subdivide a polyline so joint-linear motion between samples stays on it.

    Moving both motors at proportional speeds (linearly in joint space)
    between two postures draws a curve, not a straight line. Each segment is
    halved, in Cartesian space, until the joint-linear chord between its
    ends, probed through forward kinematics at its midpoint and quarter
    points, lies within ``chord_tol`` of the straight segment. All failing
    segments are halved together in each round.

    Parameters
    ----------
    polyline : array_like, shape (N, 2)
        Points in arm mm. Consecutive duplicates are dropped.
    arm : FiveBar or SerialArm
    chord_tol : float
        Largest allowed distance of the drawn chord from the segment, mm.

    Returns
    -------
    points : ndarray, shape (K, 2)
        The polyline with inserted points; the input points are kept exactly.
    q : ndarray, shape (K, 2)
        Joint angles of each point, radians.

    Raises
    ------
    InkreachError
        If a point or an inserted point cannot be reached safely (outside the
        joint limits or below the conditioning floor).

    References
    ----------
    .. [1] R. H. Taylor, "Planning and execution of straight line manipulator
       trajectories", IBM J. Research and Development 23(4), 1979 (bounded
       deviation joint paths by recursive midpoint subdivision).

    Examples
    --------
    >>> import numpy as np
    >>> from inkreach.arms import default_arm
    >>> arm = default_arm()
    >>> p, q = subdivide(np.array([[-50.0, 120.0], [50.0, 120.0]]), arm, 0.05)
    >>> len(p) > 2, bool(np.allclose(arm.fk(q), p))
    (True, True)
    """
    P = np.asarray(polyline, dtype=float)
    if P.ndim != 2 or P.shape[1] != 2 or len(P) == 0:
        raise InkreachError("a polyline must be an (N, 2) array of points in mm with N >= 1")
    if not np.all(np.isfinite(P)):
        raise InkreachError("a polyline has NaN or infinite coordinates; drop those points")
    if not chord_tol > 0:
        raise InkreachError(f"chord_tol must be greater than zero, got {chord_tol!r}")
    P = _drop_repeats(P)
    ok = arm.reachable(P)
    if not np.all(ok):
        k = int(np.argmin(ok))
        raise InkreachError(f"point ({P[k, 0]:.2f}, {P[k, 1]:.2f}) mm cannot be reached "
                            "safely; place the drawing inside the usable region")
    P, Q, _ = _subdivide_many(P, np.ones(len(P) - 1, bool), arm, chord_tol, "polyline")
    return P, Q
