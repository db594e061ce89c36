"""The last word before the motors: an independent check of a finished stream."""

from dataclasses import dataclass

import numpy as np
from scipy.spatial import cKDTree

from ..errors import InkreachError
from ..place._geometry import _point_segment_distance

__all__ = ["StreamReport", "check_stream"]

_ANGLE_TOL = 1e-8       # rad: room for angles printed with 6 decimals of a degree
_REL_TOL = 1e-9
# Planning headroom so the stream still passes after its angles are rounded to
# 1e-4 degree: the first difference moves by at most 1e-4 deg, the second by 2e-4.
_ROUND_DEG = 1e-4


@dataclass(frozen=True)
class StreamReport:
    """Figures of a stream that passed :func:`check_stream`.

    Attributes
    ----------
    rows : int
        Number of rows.
    duration : float
        Time of the last row, seconds.
    period : float
        Sample period, seconds.
    max_speed_deg_s : tuple of float
        Largest finite-difference speed of (theta1, theta2), deg/s.
    max_accel_deg_s2 : tuple of float
        Largest second-difference acceleration of (theta1, theta2), deg/s^2.
    min_conditioning : float
        Lowest conditioning over all rows.
    max_deviation_mm : float
        Largest distance of a pen-down row, or of the joint-space midpoint of
        two consecutive pen-down rows, from its stroke (NaN when no strokes
        were given).
    pen_down_rows : int
        Rows with the pen on the paper.
    max_tip_speed_mm_s : float
        Largest finite-difference pen speed ``|xy[k+1] - xy[k]| / period``
        (forward kinematics) over consecutive pen-down rows of one stroke,
        mm/s (NaN when there are no such rows).
    max_vertex_miss_mm : float
        Largest distance of a stroke vertex from the drawn path of its
        stroke (NaN when no strokes were given).
    """

    rows: int
    duration: float
    period: float
    max_speed_deg_s: tuple
    max_accel_deg_s2: tuple
    min_conditioning: float
    max_deviation_mm: float
    pen_down_rows: int
    max_tip_speed_mm_s: float = float("nan")
    max_vertex_miss_mm: float = float("nan")


def _where(k, period):
    return f"row {k} (t = {k * period:.2f} s)"


def _fail(msg):
    raise InkreachError(msg)


def _first(bad):
    """Index of the first True in ``bad`` (a tuple for 2-D), or None if there is none."""
    if not bad.any():
        return None
    k = np.unravel_index(int(np.argmax(bad)), bad.shape)
    return int(k[0]) if bad.ndim == 1 else tuple(int(i) for i in k)


def _written_limits(arm, period):
    """Joint speed and acceleration limits less what writing the angles can add.

    Rounding each angle to the nearest ``r = _ROUND_DEG`` moves it by at
    most ``r / 2``, so a first difference by at most ``r`` (a speed by
    ``r / period``) and a second difference by at most ``2 r`` (an
    acceleration by ``2 r / period^2``). The planner times against these, so
    that what it plans at the limit still passes once written.
    """
    lim = arm.limits
    r = np.deg2rad(_ROUND_DEG)
    return lim.max_speed - r / period, lim.max_accel - 2 * r / period ** 2


def _stream_violations(q, period, arm):
    """Rows involved in a finite-difference speed or acceleration beyond the limits.

    The limits are tightened by what rounding the angles to 1e-4 degree can
    add, so a stream without violations still passes after being written.

    Returns
    -------
    ndarray of int
        Sorted row indices (empty when everything is within the limits).
    """
    vlim, alim = _written_limits(arm, period)
    if len(q) < 2:
        return np.zeros(0, int)
    v, a = _step_rates(q, period)
    rows = [np.flatnonzero(v > vlim)]
    rows.append(rows[0] + 1)
    ka = np.flatnonzero(a > alim)
    rows += [ka, ka + 1, ka + 2]
    return np.unique(np.concatenate(rows))


def _step_rates(q, period):
    """Largest joint speed of each step and acceleration of each inner row, by finite differences.

    Returns ``|q[k+1] - q[k]| / period`` (N - 1 values) and
    ``|q[k+2] - 2 q[k+1] + q[k]| / period^2`` (N - 2, none for fewer than
    three rows), each the larger over the two joints.
    """
    v = np.abs(np.diff(q, axis=0)).max(axis=1) / period
    if len(q) < 3:
        return v, np.zeros(0)
    return v, np.abs(np.diff(q, n=2, axis=0)).max(axis=1) / period ** 2


def _stroke_labels(pen):
    """Stroke index of each pen-down row, counting runs of pen-down rows."""
    down = pen == 1
    starts = down & ~np.concatenate([[False], down[:-1]])
    lab = np.cumsum(starts) - 1
    return np.where(down, lab, -1)


def _distance_to_strokes(x, lab, strokes, chord_tol):
    """Distance of points ``x`` to stroke ``lab`` (upper bound, exact in practice).

    Strokes are cut into pieces no longer than ``4 * chord_tol``; a k-d tree
    over the piece midpoints, with the stroke index as a far-apart third
    coordinate, gives each point's nearest candidate pieces of its own stroke,
    and the exact point-to-segment distance to those is taken.
    """
    h = 4.0 * chord_tol
    a_list, b_list, id_list = [], [], []
    for i, s in enumerate(strokes):
        s = np.asarray(s, dtype=float)
        if len(s) == 1:
            a_list.append(s)
            b_list.append(s)
            id_list.append(np.full(1, i))
            continue
        seg = np.hypot(*np.diff(s, axis=0).T)
        m = np.maximum(1, np.ceil(seg / h).astype(int))
        which = np.repeat(np.arange(len(seg)), m)
        k = np.arange(m.sum()) - np.repeat(np.cumsum(m) - m, m)
        u0 = (k / m[which])[:, None]
        u1 = ((k + 1) / m[which])[:, None]
        d = s[1:] - s[:-1]
        a_list.append(s[which] + u0 * d[which])
        b_list.append(s[which] + u1 * d[which])
        id_list.append(np.full(len(which), i))
    A = np.concatenate(a_list)
    B = np.concatenate(b_list)
    sid = np.concatenate(id_list)
    big = 1e7
    tree = cKDTree(np.column_stack([0.5 * (A + B), sid * big]))
    k = min(8, len(A))
    _, idx = tree.query(np.column_stack([x, lab * big]), k=k)
    idx = idx.reshape(len(x), k)
    dist = _point_segment_distance(x[:, None, :], A[idx], B[idx])
    dist = np.where(sid[idx] == lab[:, None], dist, np.inf)
    return dist.min(axis=1)


def _vertex_misses(x, xm, kd, lab, pair, strokes, chord_tol):
    """Distance of every stroke vertex from the drawn path of its stroke.

    The drawn path of a stroke is the polyline through its pen-down rows
    ``x[kd]`` and, between two consecutive rows, their joint-space midpoint
    ``xm`` (in row order). It is cut into pieces no longer than
    ``h = 2 * chord_tol``; every piece within ``chord_tol`` of a vertex has
    its midpoint within ``chord_tol + h / 2`` of it, so a k-d tree ball
    search over the piece midpoints (the stroke index as a far-apart third
    coordinate) finds all of them, and the exact point-to-segment distance
    is taken to those. The result is exact up to ``chord_tol``; a vertex
    with no piece that close reads infinite.

    Parameters
    ----------
    x : ndarray, shape (N, 2)
        Pen position of every row, mm.
    xm : ndarray, shape (M, 2)
        Joint-space midpoints of the row pairs ``pair``, mm.
    kd : ndarray of int
        Pen-down rows, increasing.
    lab : ndarray of int, shape (N,)
        Stroke of each row.
    pair : ndarray of int, shape (M,)
        First rows of consecutive pen-down row pairs of one stroke.
    strokes : list of ndarray

    Returns
    -------
    ndarray, shape (sum of stroke lengths,)
        Distances in the order of the concatenated strokes.
    """
    h = 2.0 * chord_tol
    # the drawn path in order: row kd[i], then the midpoint after it if any
    has_mid = np.isin(kd, pair)
    mid_at = np.searchsorted(pair, kd[has_mid])
    n_pts = kd.size + int(has_mid.sum())
    slot = np.arange(kd.size) + np.concatenate([[0], np.cumsum(has_mid)[:-1]])
    pts = np.empty((n_pts, 2))
    plab = np.empty(n_pts, int)
    pts[slot], plab[slot] = x[kd], lab[kd]
    pts[slot[has_mid] + 1], plab[slot[has_mid] + 1] = xm[mid_at], lab[kd[has_mid]]
    same = plab[1:] == plab[:-1]
    a, b, sl = pts[:-1][same], pts[1:][same], plab[:-1][same]
    with np.errstate(invalid="ignore"):
        m = np.maximum(1, np.ceil(np.hypot(*(b - a).T) / h)).astype(int)
    w = np.repeat(np.arange(len(a)), m)
    k = np.arange(m.sum()) - np.repeat(np.cumsum(m) - m, m)
    u0, u1 = (k / m[w])[:, None], ((k + 1) / m[w])[:, None]
    # every row is also a piece of its own (a stroke drawn on one row)
    A = np.concatenate([a[w] + u0 * (b - a)[w], x[kd]])
    B = np.concatenate([a[w] + u1 * (b - a)[w], x[kd]])
    alab = np.concatenate([sl[w], lab[kd]])
    V = np.concatenate(strokes)
    vlab = np.repeat(np.arange(len(strokes)), [len(s) for s in strokes])
    big = 1e7
    tree_p = cKDTree(np.column_stack([0.5 * (A + B), alab * big]))
    tree_v = cKDTree(np.column_stack([V, vlab * big]))
    near = tree_v.sparse_distance_matrix(tree_p, chord_tol + 0.5 * h, output_type="ndarray")
    iv, ip = near["i"].astype(int), near["j"].astype(int)
    d = _point_segment_distance(V[iv], A[ip], B[ip])
    out = np.full(len(V), np.inf)
    np.minimum.at(out, iv, d)
    return out


def check_stream(stream, arm, *, strokes=None, chord_tol=0.05, atol=1e-6, tip_speed=None):
    """Check a finished joint stream against every limit of the arm.

    Independent of how the stream was made: forward kinematics of every row
    must exist and match its ``xy``; every row must lie inside the joint
    limits and at or above the conditioning floor; finite-difference speeds
    ``|dq| / period`` and accelerations ``|d2q| / period**2`` must stay within
    the limits; the periods must be constant; and, when ``strokes`` are
    given, every pen-down row and the joint-space midpoint of every two
    consecutive pen-down rows must lie within ``chord_tol`` of its stroke,
    every vertex of a stroke must lie within ``chord_tol`` of the path its
    rows draw (rows and midpoints in order: the stroke is drawn whole),
    each stroke must start and end exactly at a row and be drawn in one go
    (no lift inside it), and the pen must lift between two strokes.

    Parameters
    ----------
    stream : JointStream
    arm : FiveBar or SerialArm
    strokes : list of array_like, optional
        The strokes in arm mm, in drawing order. ``stream.stroke`` names the
        stroke of each pen-down row; when it is None, the n-th run of
        pen-down rows is taken to be stroke n.
    chord_tol : float
        Largest allowed distance from a stroke, mm.
    atol : float
        Tolerance on positions that must be exact (``xy`` against forward
        kinematics, stroke ends), mm.
    tip_speed : float, optional
        Pen-tip speed limit, mm/s: the finite-difference speed of the forward
        kinematics of every two consecutive pen-down rows of one stroke, and
        of every step of a straight pen-up move (``stream.straight``), must
        not exceed it. Not checked when None.

    Returns
    -------
    StreamReport

    Raises
    ------
    InkreachError
        On the first broken rule, naming the row, its time, the limit and
        what to do.

    References
    ----------
    .. [1] J. J. Craig, *Introduction to Robotics: Mechanics and Control*,
       3rd ed., Pearson, 2005, chapter 7 (joint-space trajectories and their
       speed and acceleration limits).
    .. [2] C. Gosselin and J. Angeles, "Singularity analysis of closed-loop
       kinematic chains", IEEE Trans. Robotics and Automation 6(3), 1990.

    Examples
    --------
    >>> import numpy as np
    >>> from inkreach.arms import default_arm
    >>> from inkreach.motion import plan_motion
    >>> arm = default_arm()
    >>> line = [np.array([[-20.0, 150.0], [20.0, 150.0]])]
    >>> report = check_stream(plan_motion(line, arm), arm, strokes=line)
    >>> report.max_deviation_mm <= 0.05
    True
    """
    q = np.asarray(stream.q, dtype=float)
    t = np.asarray(stream.t, dtype=float)
    pen = np.asarray(stream.pen)
    xy = np.asarray(stream.xy, dtype=float)
    T = float(stream.period)
    N = len(t)
    if N == 0:
        _fail("the stream has no rows; plan the motion again")
    if q.shape != (N, 2) or xy.shape != (N, 2) or pen.shape != (N,):
        _fail(f"the stream's columns disagree in length (t {N}, q {q.shape}, pen "
              f"{pen.shape}, xy {xy.shape}); rebuild it with plan_motion")
    if not T > 0:
        _fail(f"the stream's period is {T!r}; it must be greater than zero")
    if (k := _first(~np.isin(pen, (0, 1)))) is not None:
        _fail(f"{_where(k, T)}: pen is {pen[k].item()!r}; it must be 0 (lifted) or 1 (down)")
    dt_err = np.abs(t - np.arange(N) * T)
    if (k := _first(~(dt_err <= 1e-6 + 1e-9 * np.abs(t)))) is not None:
        _fail(f"{_where(k, T)}: time {t[k]:.6f} s is off the fixed period {T:g} s; "
              "the rows must be evenly spaced from t = 0")

    lim = arm.limits
    names = ("theta1", "theta2")
    # Joint limits.
    lo, hi = lim.lower - _ANGLE_TOL, lim.upper + _ANGLE_TOL
    if (kj := _first(~((q >= lo) & (q <= hi)))) is not None:
        k, j = kj
        _fail(f"{_where(k, T)}: {names[j]} = {np.rad2deg(q[k, j]):.2f} deg is outside the "
              f"limits [{np.rad2deg(lim.lower[j]):g}, {np.rad2deg(lim.upper[j]):g}] deg; "
              "keep the drawing inside the usable region")
    # Forward kinematics exists and matches.
    x = arm.fk(q)
    with np.errstate(invalid="ignore"):
        err = np.hypot(*(x - xy).T)
    if (k := _first(~np.isfinite(x).all(axis=1))) is not None:
        _fail(f"{_where(k, T)}: the linkage does not close at ({np.rad2deg(q[k, 0]):.2f}, "
              f"{np.rad2deg(q[k, 1]):.2f}) deg; plan the motion again inside the usable region")
    if (k := _first(~(err <= atol))) is not None:
        _fail(f"{_where(k, T)}: x, y = ({xy[k, 0]:.4f}, {xy[k, 1]:.4f}) mm but the angles "
              f"put the pen at ({x[k, 0]:.4f}, {x[k, 1]:.4f}) mm; rebuild xy from the angles")
    # Conditioning.
    c = arm.conditioning(q)
    if (k := _first(~(c >= lim.min_conditioning - 1e-12))) is not None:
        _fail(f"{_where(k, T)}: conditioning {c[k]:.3f} is below the floor "
              f"{lim.min_conditioning:g} (near a singularity); place the drawing in the "
              "well-conditioned region")
    # Speed and acceleration by finite differences.
    vmax = lim.max_speed * (1 + _REL_TOL)
    amax = lim.max_accel * (1 + _REL_TOL)
    v = np.abs(np.diff(q, axis=0)) / T if N > 1 else np.zeros((0, 2))
    a = np.abs(np.diff(q, n=2, axis=0)) / T ** 2 if N > 2 else np.zeros((0, 2))
    if (kj := _first(v > vmax)) is not None:
        k, j = kj
        _fail(f"{_where(k + 1, T)}: {names[j]} speed {np.rad2deg(v[k, j]):.1f} deg/s exceeds "
              f"the limit {np.rad2deg(lim.max_speed):g} deg/s; lower tip_speed or margin and "
              "plan again")
    if (kj := _first(a > amax)) is not None:
        k, j = kj
        _fail(f"{_where(k + 1, T)}: {names[j]} acceleration {np.rad2deg(a[k, j]):.1f} deg/s^2 "
              f"exceeds the limit {np.rad2deg(lim.max_accel):g} deg/s^2; lower margin and "
              "plan again")

    down = pen == 1
    lab0 = _stroke_labels(pen) if stream.stroke is None else np.asarray(stream.stroke)
    # The pen lifts between strokes: a pen-down row of another stroke straight
    # after a pen-down row would drag ink between them that no rule below sees.
    if (k := _first(down[1:] & down[:-1] & (lab0[1:] != lab0[:-1]))) is not None:
        _fail(f"{_where(k + 1, T)}: stroke {lab0[k + 1]} follows stroke {lab0[k]} with the pen "
              "down; the pen must lift between strokes; plan the motion again")
    both = np.flatnonzero(down[1:] & down[:-1] & (lab0[1:] == lab0[:-1])) if N > 1 else \
        np.zeros(0, int)
    tip = np.hypot(*(x[both + 1] - x[both]).T) / T
    max_tip = float(tip.max()) if tip.size else float("nan")
    if tip_speed is not None and tip.size:
        vt = float(tip_speed) * (1 + _REL_TOL)
        if (k := _first(tip > vt)) is not None:
            _fail(f"{_where(int(both[k]) + 1, T)}: pen speed {tip[k]:.2f} mm/s exceeds the tip "
                  f"limit {float(tip_speed):g} mm/s; lower tip_speed and plan again")
    straight = getattr(stream, "straight", None)
    if straight is not None:
        straight = np.asarray(straight, dtype=bool)
        if straight.shape != (N,):
            _fail(f"the stream's straight-move column has shape {straight.shape}, not ({N},); "
                  "rebuild it with plan_motion")
        ks = np.flatnonzero(straight[1:]) + 1
        up = np.hypot(*(x[ks] - x[ks - 1]).T) / T
        if tip_speed is not None and up.size:
            if (k := _first(up > float(tip_speed) * (1 + _REL_TOL))) is not None:
                _fail(f"{_where(int(ks[k]), T)}: pen speed {up[k]:.2f} mm/s on a straight "
                      f"pen-up move exceeds the tip limit {float(tip_speed):g} mm/s; lower "
                      "tip_speed and plan again")

    deviation = vertex_miss = float("nan")
    if strokes is not None:
        S = [np.asarray(s, dtype=float).reshape(-1, 2) for s in strokes]
        lab = lab0
        if (k := _first(down & ((lab < 0) | (lab >= len(S))))) is not None:
            _fail(f"{_where(k, T)}: the pen is down but the row belongs to no stroke "
                  f"(stroke index {lab[k]}, {len(S)} strokes); plan the motion again")
        present = np.zeros(len(S), bool)
        present[lab[down]] = True
        if (i := _first(~present)) is not None:
            _fail(f"stroke {i} is never drawn (no pen-down row); plan the motion again")
        deviation = vertex_miss = 0.0
        kd = np.flatnonzero(down)
        # Each stroke is drawn in one go: its pen-down rows follow each other.
        # A lift inside a stroke would leave a gap that the rules below, which
        # follow a stroke's pen-down rows in order, would bridge.
        gap = (np.diff(kd) > 1) & (lab[kd[1:]] == lab[kd[:-1]])
        if (k := _first(gap)) is not None:
            _fail(f"{_where(int(kd[k + 1]), T)}: stroke {lab[kd[k]]} goes on after the pen "
                  f"lifted at row {int(kd[k]) + 1}; draw each stroke in one go and plan the "
                  "motion again")
        if kd.size:
            pair = kd[:-1][(np.diff(kd) == 1) & (lab[kd[1:]] == lab[kd[:-1]])]
            xm = arm.fk(0.5 * (q[pair] + q[pair + 1]))
            pts = np.concatenate([x[kd], xm])
            plab = np.concatenate([lab[kd], lab[pair]])
            prow = np.concatenate([kd, pair])
            dist = _distance_to_strokes(pts, plab, S, chord_tol)
            worst = int(np.argmax(dist))
            deviation = float(dist[worst])
            if not deviation <= chord_tol:
                k = int(prow[worst])
                what = "the pen" if worst < kd.size else "the pen between this row and the next"
                _fail(f"{_where(k, T)}: {what} is {deviation:.3f} mm off stroke {lab[k]}, more "
                      f"than chord_tol {chord_tol:g} mm; plan the motion again")
            # Exact touch-down and lift: each stroke's first and last pen-down row.
            first = np.full(len(S), len(q))
            np.minimum.at(first, lab[kd], kd)
            last = np.full(len(S), -1)
            np.maximum.at(last, lab[kd], kd)
            want0 = np.array([s[0] for s in S])
            want1 = np.array([s[-1] for s in S])
            e0 = np.hypot(*(x[first] - want0).T)
            e1 = np.hypot(*(x[last] - want1).T)
            if (i := _first(~(e0 <= atol))) is not None:
                _fail(f"{_where(int(first[i]), T)}: the pen touches down {e0[i]:.4f} mm from "
                      f"the start of stroke {i}; plan the motion again")
            if (i := _first(~(e1 <= atol))) is not None:
                _fail(f"{_where(int(last[i]), T)}: the pen lifts {e1[i]:.4f} mm from the end "
                      f"of stroke {i}; plan the motion again")
            # The stroke is drawn whole: no vertex is cut off.
            miss = _vertex_misses(x, xm, kd, lab, pair, S, chord_tol)
            worst = int(np.argmax(miss))
            vertex_miss = float(miss[worst])
            if not vertex_miss <= chord_tol:
                sid = np.repeat(np.arange(len(S)), [len(s) for s in S])
                i = int(sid[worst])
                j = worst - int(np.searchsorted(sid, i))
                far = f"{vertex_miss:.3f} mm" if np.isfinite(vertex_miss) else "too far"
                _fail(f"{_where(int(first[i]), T)}: point {j} of stroke {i} at "
                      f"({S[i][j, 0]:.3f}, {S[i][j, 1]:.3f}) mm is {far} from the drawn "
                      f"path, more than chord_tol {chord_tol:g} mm; the stroke is not drawn "
                      "whole; plan the motion again")

    return StreamReport(
        rows=N, duration=float(t[-1]), period=T,
        max_speed_deg_s=tuple(float(u) for u in np.rad2deg(v.max(axis=0) if len(v) else
                                                           np.zeros(2))),
        max_accel_deg_s2=tuple(float(u) for u in np.rad2deg(a.max(axis=0) if len(a) else
                                                            np.zeros(2))),
        min_conditioning=float(c.min()), max_deviation_mm=deviation,
        pen_down_rows=int(down.sum()), max_tip_speed_mm_s=max_tip,
        max_vertex_miss_mm=vertex_miss)
