"""Timing along a path: velocity limits, the forward-backward pass, sampling."""

import numpy as np

__all__ = ["trapezoid_time"]


def trapezoid_time(distance, vmax, amax):
    """Shortest rest-to-rest time of one joint under speed and acceleration limits.

    The textbook bang-coast-bang move: accelerate at ``amax``, cruise at
    ``vmax``, decelerate at ``amax``. When ``distance > vmax**2 / amax`` the
    profile is a trapezoid with ``t = distance / vmax + vmax / amax``;
    otherwise the cruise speed is never reached and the profile is a
    triangle with ``t = 2 sqrt(distance / amax)``.

    Parameters
    ----------
    distance : float or array_like
        Distance to travel (its sign is ignored), e.g. radians.
    vmax : float
        Speed limit, distance per second.
    amax : float
        Acceleration limit, distance per second squared.

    Returns
    -------
    float or ndarray
        Move time, seconds.

    References
    ----------
    .. [1] L. Biagiotti and C. Melchiorri, *Trajectory Planning for
       Automatic Machines and Robots*, Springer, 2008, section 3.2.2
       (trajectory with constant acceleration, trapezoidal velocity).
    .. [2] J. J. Craig, *Introduction to Robotics: Mechanics and Control*,
       3rd ed., Pearson, 2005, chapter 7 (linear function with parabolic
       blends).

    Examples
    --------
    >>> trapezoid_time(10.0, 2.0, 1.0)   # trapezoid: 10/2 + 2/1
    7.0
    >>> trapezoid_time(1.0, 2.0, 1.0)    # triangle: 2 sqrt(1/1)
    2.0
    """
    d = np.abs(np.asarray(distance, dtype=float))
    vmax = float(vmax)
    amax = float(amax)
    t = np.where(d > vmax * vmax / amax, d / vmax + vmax / amax,
                 2.0 * np.sqrt(d / amax))
    return float(t) if t.ndim == 0 else t


def _forward_backward(cap2, d):
    """Largest squared path speeds under vertex caps and segment accelerations.

    Solves ``w[i+1] <= w[i] + d[i]``, ``w[i] <= w[i+1] + d[i]`` and
    ``w <= cap2`` for the largest ``w`` (the discretised phase-plane
    forward and backward integration). Both passes are closed forms: with
    ``D = cumsum(d)`` the forward recursion ``w[i+1] = min(cap2[i+1], w[i] +
    d[i])`` becomes ``w - D = minimum.accumulate(cap2 - D)``.

    Parameters
    ----------
    cap2 : ndarray, shape (K,)
        Squared speed cap at each vertex (0 where the path must stop).
    d : ndarray, shape (K - 1,)
        ``2 * a * length`` of each segment.

    Returns
    -------
    ndarray, shape (K,)

    References
    ----------
    .. [1] J. E. Bobrow, S. Dubowsky and J. S. Gibson, "Time-optimal control
       of robotic manipulators along specified paths", Int. J. Robotics
       Research 4(3), 1985.
    """
    D = np.concatenate([[0.0], np.cumsum(d)])
    w = np.minimum.accumulate(cap2 - D) + D
    Db = np.concatenate([[0.0], np.cumsum(d[::-1])])
    wb = np.minimum.accumulate(w[::-1] - Db) + Db
    return np.clip(wb[::-1], 0.0, None)


def _segment_profiles(w, length, vseg, acc):
    """Per-segment accelerate, cruise, decelerate profile between vertex speeds.

    Parameters
    ----------
    w : ndarray, shape (K,)
        Squared vertex speeds from :func:`_forward_backward`.
    length, vseg, acc : ndarray, shape (K - 1,)
        Segment length, speed cap and acceleration limit (path units).

    Returns
    -------
    dict of ndarray, each (K - 1,)
        ``v0``, ``v1``, ``vp`` (start, end and peak speed), ``acc``,
        ``t1``, ``t2``, ``t3`` (phase durations), ``s1``, ``s2`` (phase
        lengths) and ``dt`` (total).
    """
    v = np.sqrt(w)
    v0, v1 = v[:-1], v[1:]
    real = length > 0
    a = np.where(real, acc, 1.0)
    peak = np.sqrt(np.maximum(0.5 * (2 * a * length + w[:-1] + w[1:]), 0.0))
    vp = np.maximum(np.minimum(vseg, peak), np.maximum(v0, v1))
    t1 = (vp - v0) / a
    t3 = (vp - v1) / a
    s1 = (vp * vp - w[:-1]) / (2 * a)
    s3 = (vp * vp - w[1:]) / (2 * a)
    s2 = np.maximum(length - s1 - s3, 0.0)
    with np.errstate(invalid="ignore", divide="ignore"):
        t2 = np.where(vp > 0, s2 / vp, 0.0)
    z = ~real
    for arr in (t1, t2, t3, s1, s2):
        arr[z] = 0.0
    return {"v0": v0, "v1": v1, "vp": vp, "acc": a, "t1": t1, "t2": t2, "t3": t3,
            "s1": s1, "s2": s2, "dt": t1 + t2 + t3, "length": length}


def _position_in_segment(prof, seg, tau):
    """Distance travelled along segment ``seg`` after time ``tau`` in it."""
    v0 = prof["v0"][seg]
    vp = prof["vp"][seg]
    a = prof["acc"][seg]
    t1 = prof["t1"][seg]
    t2 = prof["t2"][seg]
    L = prof["length"][seg]
    ta = np.minimum(tau, t1)
    s = v0 * ta + 0.5 * a * ta * ta
    tc = np.clip(tau - t1, 0.0, t2)
    s = s + vp * tc
    td = np.clip(tau - t1 - t2, 0.0, None)
    s = s + vp * td - 0.5 * a * td * td
    with np.errstate(invalid="ignore", divide="ignore"):
        u = np.where(L > 0, s / L, 0.0)
    return np.clip(u, 0.0, 1.0)
