"""From ordered strokes in arm mm to a timed, checked joint stream."""

import numpy as np

from ..errors import InkreachError
from ..place._geometry import _ccw, _inside_convex, _point_segment_offset
from .check import check_stream, _step_rates, _stream_violations, _written_limits
from .stream import JointStream
from .subdivide import _drop_repeats, _subdivide_many
from .timing import _forward_backward, _position_in_segment, _segment_profiles

__all__ = ["plan_motion"]

_TRAVEL_JOINT, _TRAVEL_CART, _DWELL, _STROKE = 0, 1, 2, 3
_CHECK_STEP = np.deg2rad(0.25)   # joint step when probing a pen-up joint-space move
_LINE_STEP = 0.5                 # mm step when probing a pen-up straight line
_NORMAL_SHARE = 0.6              # share of the acceleration budget spent turning corners
_REVERSAL_SHARE = 0.5            # the same where the joint direction turns back by over 120 deg
_PATH_SHARE = 0.6                # share of chord_tol the subdivided path may stray
_CORNER_SHARE = 0.6              # share of chord_tol a corner may be cut between two rows
_STOP_BELOW = 0.5                # put a row on a corner passed slower than this x the on-row speed
#: Default pen-tip speed limit while drawing, mm/s. A bound we chose for
#: fibre-tip and gel pens on light hobby arms, well under the ~380 mm/s of
#: classic pen plotters (HP 7475A, from memory): common practice for a
#: clean, even line.
TIP_SPEED = 80.0
_CUT_GAP = 1.0                   # least distance between cuts, in periods at the tip speed
_BLEND_GAP = 0.25                # the same with the corner blend
_CUT_ANGLE = np.deg2rad(5.0)     # only vertices turning more than this get a row of their own
_CUT_COST = 0.4                  # what a cut costs on average, in periods (see _corner_stops)
_ACC_SHARE = 0.1                 # share of a period's speed change counted in the corner rule
_SLOWDOWN = 0.95                 # a repair's factor on the limits near a row off the stroke
_SLOW_RANGE = (0.8, 0.99)        # the same near a row over a joint limit: bounds of ...
_SLOW_EXP = 0.6                  # ... the excess to this power, inverted (see _limit_factors)
_MAX_REPAIRS = 120
_JOIN_STEP = (0.6, 0.97)         # bounds of a repair's factor on the speed at a join vertex
_JOIN_FLOOR = 0.5                # below this the segments around are slowed too
_TIP_STEP = 2.0                  # longest piece the timing sees on a stroke, mm
_BLEND_REPAIRS = 30              # repair rounds a blended stroke gets before falling back (finer
                                 # repair factors need more: at 12 the emblem wave lost the blend)
_REACH = 1.65                    # share of the cut reach a row at a blended vertex may lie
_SHIFT = 0.85                    # share of chord_tol two rows around a vertex may be moved
_AFTER = 0.9                     # ... until the vertex lies this share of it from their chord


def _as_strokes(strokes):
    out = []
    for i, s in enumerate(strokes):
        a = np.asarray(s, dtype=float)
        if a.ndim != 2 or a.shape[1] != 2 or len(a) == 0:
            raise InkreachError(f"stroke {i} must be an (N, 2) array of points in mm with "
                                f"N >= 1, got shape {a.shape}")
        if not np.all(np.isfinite(a)):
            raise InkreachError(f"stroke {i} has NaN or infinite coordinates; drop those points")
        out.append(_drop_repeats(a))
    return out


def _posture(arm, q, what):
    q = np.asarray(q, dtype=float).reshape(2)
    ok = bool(arm.within_limits(q)) and bool(np.all(np.isfinite(arm.fk(q))))
    c = float(arm.conditioning(q)) if ok else float("nan")
    if not ok:
        raise InkreachError(f"the {what} posture ({np.rad2deg(q[0]):.2f}, "
                            f"{np.rad2deg(q[1]):.2f}) deg is outside the joint limits or "
                            "does not assemble; give angles inside the limits")
    if not c >= arm.limits.min_conditioning:
        raise InkreachError(f"the {what} posture ({np.rad2deg(q[0]):.2f}, "
                            f"{np.rad2deg(q[1]):.2f}) deg has conditioning {c:.3f}, below "
                            f"the floor {arm.limits.min_conditioning:g}; pick a rest posture "
                            "in the well-conditioned region")
    return q


def _joint_moves_ok(arm, qa, qb):
    """For each pen-up move qa[i] -> qb[i], True if the joint-space line is usable."""
    n = len(qa)
    span = np.max(np.abs(qb - qa), axis=1)
    counts = np.maximum(2, np.ceil(span / _CHECK_STEP).astype(int) + 1)
    offs = np.concatenate([[0], np.cumsum(counts)[:-1]])
    which = np.repeat(np.arange(n), counts)
    u = (np.arange(counts.sum()) - offs[which]) / (counts[which] - 1)
    q = qa[which] + u[:, None] * (qb - qa)[which]
    with np.errstate(invalid="ignore"):
        x = arm.fk(q)
        back = arm.ik(x)
        ok = arm.within_limits(q) & np.all(np.isfinite(x), axis=1)
        ok &= np.all(np.abs(back - q) <= 1e-6, axis=1)
        ok &= arm.conditioning(q) >= arm.limits.min_conditioning
    return np.logical_and.reduceat(ok, offs)


def _line_ok(arm, pa, pb):
    n = max(2, int(np.ceil(np.hypot(*(pb - pa)) / _LINE_STEP)) + 1)
    u = np.linspace(0.0, 1.0, n)[:, None]
    return bool(np.all(arm.reachable(pa + u * (pb - pa))))


def _cartesian_moves(arm, qa, qb, region, chord_tol):
    """Straight pen-up moves for the travels whose joint-space line is unsafe."""
    pa, pb = arm.fk(qa), arm.fk(qb)
    if region is not None:
        region = _ccw(region)
        # Rounding slack on the edge cross products, as a distance (mm).
        edge = np.hypot(*(np.roll(region, -1, axis=0) - region).T).max()
        tol = 1e-9 * max(1.0, float(np.abs(region).max())) / max(float(edge), 1e-300)
    for i in range(len(qa)):
        ends = np.stack([pa[i], pb[i]])
        back = arm.ik(ends)
        same = np.all(np.abs(back - np.stack([qa[i], qb[i]])) <= 1e-6)
        inside = region is not None and bool(np.all(_inside_convex(region, ends, tol)))
        if not (same and (inside or _line_ok(arm, pa[i], pb[i]))):
            raise InkreachError(
                f"the pen-up move from ({pa[i, 0]:.1f}, {pa[i, 1]:.1f}) to ({pb[i, 0]:.1f}, "
                f"{pb[i, 1]:.1f}) mm leaves the usable region both as a joint-space and as a "
                "straight move; place the drawing in the well-conditioned region or change "
                "the rest posture")
    pts = np.empty((2 * len(qa), 2))
    pts[0::2], pts[1::2] = pa, pb
    active = np.zeros(len(pts) - 1, bool)
    active[0::2] = True
    P, Q, origin = _subdivide_many(pts, active, arm, chord_tol, "pen-up move")
    pos = np.flatnonzero(origin >= 0)
    out = []
    for i in range(len(qa)):
        a, b = pos[2 * i], pos[2 * i + 1]
        Qi = Q[a:b + 1].copy()
        Qi[0], Qi[-1] = qa[i], qb[i]
        out.append((P[a:b + 1], Qi))
    return out


def _split_for_timing(P, Q, origin, active, arm, step):
    """Cut the joint-linear segments of subdivided strokes into pieces of at most ``step`` mm.

    The path stays the same (the new vertices lie on each segment's joint
    line, their pen positions from forward kinematics); only the timing
    sees it finer. A segment's speed is held under the tip limit at its
    worse end, which on a 6 mm segment whose pen-speed gain changes by a
    few per cent costs that much along its whole length.

    Parameters
    ----------
    P, Q, origin : ndarray
        As returned by ``_subdivide_many`` for the concatenated strokes.
    active : ndarray of bool
        The ``active`` given to ``_subdivide_many``: the jumps from one
        stroke's last point to the next one's first are left whole.
    arm : FiveBar or SerialArm
    step : float
        Longest piece, mm.

    Returns
    -------
    P, Q, origin : ndarray
        The same, with the new vertices' origin -1.
    """
    if len(P) < 2:
        return P, Q, origin
    seg = np.hypot(*np.diff(P, axis=0).T)
    m = np.maximum(1, np.ceil(seg / step).astype(int))
    ends = np.flatnonzero((origin[:-1] >= 0) & (origin[1:] >= 0))
    m[ends[~active[origin[ends]]]] = 1
    w = np.repeat(np.arange(len(seg)), m)
    k = np.arange(m.sum()) - np.repeat(np.cumsum(m) - m, m)
    u = (k / m[w])[:, None]
    Qn = np.concatenate([Q[:-1][w] + u * (Q[1:] - Q[:-1])[w], Q[-1:]])
    Pn = arm.fk(Qn)
    whole = np.concatenate([k == 0, [True]])
    Pn[whole] = P
    On = np.full(len(Qn), -1)
    On[whole] = origin
    return Pn, Qn, On


class _Path:
    """All pieces (pen-up moves, dwells, strokes) of a drawing as one vertex list."""

    def __init__(self, pieces):
        # pieces: list of (kind, P or None, Q, pen, stroke[, key])
        sizes = np.array([len(p[2]) for p in pieces])
        # key: a name for each vertex that stays the same when the pieces
        # of a stroke are cut differently (see plan_motion's repairs)
        self.key = np.concatenate([p[5] if len(p) > 5 else np.full(len(p[2]), -1)
                                   for p in pieces])
        self.kind = np.array([p[0] for p in pieces])
        self.pen = np.array([p[3] for p in pieces], dtype=np.int8)
        self.stroke = np.array([p[4] for p in pieces])
        self.Q = np.concatenate([p[2] for p in pieces])
        self.P = np.concatenate([p[1] if p[1] is not None else np.full((len(p[2]), 2), np.nan)
                                 for p in pieces])
        self.first = np.concatenate([[0], np.cumsum(sizes)[:-1]])
        self.last = self.first + sizes - 1
        self.vpiece = np.repeat(np.arange(len(pieces)), sizes)
        # A join: piece p and p + 1 are consecutive parts of one stroke, cut
        # at a sharp vertex so that a row lands exactly on it.
        self.join = np.zeros(len(pieces), bool)
        if len(pieces) > 1:
            self.join[:-1] = ((self.kind[:-1] == _STROKE) & (self.kind[1:] == _STROKE)
                              & (self.stroke[:-1] == self.stroke[1:]))


def _geometry(path, arm, margin, tip_speed, period):
    """Per-segment lengths, joint tangents and base limits; per-vertex geometry."""
    Q, P = path.Q, path.P
    vk = path.kind[path.vpiece]
    same = path.vpiece[1:] == path.vpiece[:-1]
    dq = np.diff(Q, axis=0)
    dp = np.diff(P, axis=0)
    cart = same & (vk[:-1] != _TRAVEL_JOINT)
    with np.errstate(invalid="ignore"):
        length = np.where(cart, np.hypot(dp[:, 0], dp[:, 1]), np.hypot(dq[:, 0], dq[:, 1]))
    length = np.where(same & np.isfinite(length), length, 0.0)
    with np.errstate(invalid="ignore", divide="ignore"):
        qp = np.where(length[:, None] > 0, dq / length[:, None], 0.0)
    qpm = np.abs(qp).max(axis=1)
    vmax, amax = _written_limits(arm, period)
    with np.errstate(divide="ignore"):
        vseg = np.where(qpm > 0, margin * vmax / qpm, np.inf)
        acc = np.where(qpm > 0, margin * amax / qpm, np.inf)
    drawing = same & (vk[:-1] == _STROKE)
    tipped = drawing | (same & (vk[:-1] == _TRAVEL_CART))
    if np.any(tipped):
        # Joint-linear motion does not move the pen at a constant speed: bound
        # the pen speed per unit path speed by |J dq/ds| at both segment ends.
        # The limit binds straight pen-up moves too.
        k = np.flatnonzero(tipped)
        J0 = arm.jacobian(Q[k])
        J1 = arm.jacobian(Q[k + 1])
        g0 = np.hypot(*np.einsum("nij,nj->ni", J0, qp[k]).T)
        g1 = np.hypot(*np.einsum("nij,nj->ni", J1, qp[k]).T)
        gain = np.maximum(np.maximum(g0, g1), 1.0)
        vseg[k] = np.minimum(vseg[k], tip_speed / gain)
    return {"same": same, "dq": dq, "dp": dp, "length": length, "qp": qp,
            "vseg": vseg, "acc": acc, "drawing": drawing}


def _corner_speed(a, b, acc, period, chord_tol):
    """Largest speed through a vertex without cutting it between two rows.

    Two rows straddling a vertex where the path turns by ``th`` lie at most
    ``(v + acc T) T`` apart when the vertex is passed at speed ``v``; the
    chord between them misses the vertex by at most half that times
    ``sin(th / 2)``. On a finely sampled curve the chord's sagitta bounds it
    too. The result may be negative: the path must stop there.

    Parameters
    ----------
    a, b : ndarray, shape (M, 2)
        The segments before and after each vertex, mm.
    acc : ndarray, shape (M,)
        Largest path acceleration next to the vertex, mm/s^2.
    """
    la = np.hypot(a[:, 0], a[:, 1])
    lb = np.hypot(b[:, 0], b[:, 1])
    tol = _CORNER_SHARE * chord_tol
    with np.errstate(divide="ignore", invalid="ignore"):
        c = np.clip(np.einsum("ij,ij->i", a, b) / (la * lb), -1.0, 1.0)
        th = np.arccos(c)
        sbar = 0.5 * (la + lb)
        vc = np.minimum(2 * tol / (period * np.sin(th / 2)) - _ACC_SHARE * acc * period,
                        np.sqrt(8 * tol * sbar / th) / period)
    return np.where(th > 1e-12, vc, np.inf)


def _cut_reach(a, b, chord_tol):
    """How far from a vertex the nearest row may lie when the rows straddle it.

    Two rows at path distances ``e`` before and ``d >= e`` after a vertex
    (or the other way round) where the path turns by ``th`` draw the chord
    from ``-e u_a`` to ``d u_b``. The vertex lies
    ``e d sin(th) / |d u_b + e u_a|`` from that chord's line; over all
    ``d >= e`` that is at most ``e sin(th)`` for ``th <= 90`` degrees and at
    most ``e`` beyond (the largest of ``1 / |u_b + x u_a|`` over
    ``0 < x <= 1`` is ``1 / sin(th)`` at ``x = -cos(th)``, where the foot
    leaves the chord and the nearer row, ``e`` away, is the nearest point).
    The chord's midpoint lies ``min(e, d) sin(th) / 2`` from the two
    segments, half as far. So the vertex stays within
    ``chord_tol`` of the drawn path, and the path within that of the
    stroke, when the row nearest the vertex lies within
    ``chord_tol / sin(min(th, 90 deg))`` of it (plane geometry):
    a chord blend of the corner inside the tolerance.

    Parameters
    ----------
    a, b : ndarray, shape (M, 2)
        The segments before and after each vertex, mm.

    Returns
    -------
    ndarray, shape (M,)
        Path distance, mm (infinite where the path does not turn).
    """
    la = np.hypot(a[:, 0], a[:, 1])
    lb = np.hypot(b[:, 0], b[:, 1])
    with np.errstate(divide="ignore", invalid="ignore"):
        sn = np.abs(a[:, 0] * b[:, 1] - a[:, 1] * b[:, 0]) / (la * lb)
        # beyond a right angle the bound is the distance to the nearer row
        sn = np.where(np.einsum("ij,ij->i", a, b) < 0, 1.0, sn)
        e = chord_tol / sn
    # Never further than a quarter of either segment, so the rows' feet stay
    # on the two segments next to the vertex.
    return np.minimum(np.where(sn > 1e-12, e, np.inf), 0.25 * np.minimum(la, lb))


def _corner_stops(P, Q, arm, margin, period, chord_tol, tip_speed, blend=True):
    """Interior vertices of a subdivided stroke that get a row of their own.

    A vertex is cut (a row is put exactly on it) where passing it between
    two rows would have to be much slower, under the corner rule, than
    passing it on a row, where only the change of joint direction within
    one period limits the speed; and where it turns by more than
    ``_CUT_ANGLE``, so smooth curves are not cut into many short pieces.
    """
    if len(P) < 3:
        return np.zeros(0, int)
    dp = np.diff(P, axis=0)
    dq = np.diff(Q, axis=0)
    L = np.hypot(dp[:, 0], dp[:, 1])
    qp = dq / L[:, None]
    qpm = np.abs(qp).max(axis=1)
    vmax, amax = _written_limits(arm, period)
    with np.errstate(divide="ignore"):
        acc = margin * amax / qpm
    at = np.maximum(acc[:-1], acc[1:])
    vc = _corner_speed(dp[:-1], dp[1:], at, period, chord_tol)
    jump = np.abs(qp[1:] - qp[:-1]).max(axis=1)
    with np.errstate(divide="ignore"):
        vk = np.minimum(_normal_share(qp[:-1], qp[1:]) * margin * amax * period / jump,
                        tip_speed)
    c = np.einsum("ij,ij->i", dp[:-1], dp[1:]) / (L[:-1] * L[1:])
    sharp = c < np.cos(_CUT_ANGLE)
    cuts = (vc < _STOP_BELOW * vk) & sharp
    if blend:
        # A cut costs the wait for a row to land near the vertex: with the
        # row allowed a window of w either side, (T - 2 w)^2 / (2 T) on
        # average over the phase, about 0.4 period at the median windows of
        # 1.6-2.2 ms on photo outlines (measured: 7.2 and 6.1 ms a cut); passing the vertex
        # uncut at vc instead of vf costs the dip (vf - vc)^2 / (a vf) of
        # braking and speeding up again at the path acceleration a. Cut only
        # where the dip costs more. (Stepping the rows towards the vertex,
        # _shift_rows, widens the windows and shortens the wait, yet 0.3
        # measured slower on the camera outlines of both arms than 0.4: the
        # extra cuts cost repairs the formula does not count.)
        with np.errstate(divide="ignore", invalid="ignore"):
            vf = np.minimum(vk, margin * vmax / np.maximum(qpm[:-1], qpm[1:]))
            a = np.minimum(acc[:-1], acc[1:])
            dip = (vf - np.clip(vc, 0.0, vf)) ** 2 / (a * vf)
        cuts &= ~(dip <= _CUT_COST * period)
    cuts = np.flatnonzero(cuts) + 1
    if cuts.size < 2:
        return cuts
    # Pieces shorter than what one period covers would each be stretched to
    # a whole period: keep cuts at least that far apart along the stroke.
    # With the blend the pieces share one row clock and a short piece costs
    # only the wait for a row near its vertex: a quarter of that will do.
    sP = np.concatenate([[0.0], np.cumsum(L)])[cuts]
    gap = (_BLEND_GAP if blend else _CUT_GAP) * tip_speed * period
    keep = [0]
    for j in range(1, len(cuts)):    # a loop over the cuts only, few per stroke
        if sP[j] - sP[keep[-1]] >= gap:
            keep.append(j)
    return cuts[keep]


def _normal_share(qa, qb):
    """Share of the acceleration limit a change of joint direction qa -> qb may use.

    Where the direction turns back (by more than 120 degrees, as at the
    turns of a hatch) the speed also changes fast around the row on the
    vertex, so less is left for the turn.
    """
    with np.errstate(invalid="ignore", divide="ignore"):
        c = np.einsum("ij,ij->i", qa, qb) / (np.hypot(*qa.T) * np.hypot(*qb.T))
    return np.where(c < -0.5, _REVERSAL_SHARE, _NORMAL_SHARE)


def _vertex_caps(path, g, arm, margin, period, chord_tol, f):
    """Squared speed cap of every vertex.

    Zero at the ends of every piece except at joins (see :class:`_Path`),
    where a row lands on or near the vertex: there the only rule is that the
    change of joint direction fits in one period within the share
    :func:`_normal_share` of the acceleration limit, or within the whole
    limit braking in and speeding away at the full path acceleration
    (:func:`_row_on_vertex_speed`), whichever allows more. Inside a piece the corner
    rule of :func:`_corner_speed` applies too; where it asks for a stop
    (a negative speed) the cap is zero.
    """
    K = len(path.Q)
    cap = np.zeros(K)
    amax = margin * _written_limits(arm, period)[1]

    def kink(i_in, i_out, on_row=False):
        fi = np.minimum(f[i_in], f[i_out])
        vs = np.minimum(g["vseg"][i_in] * f[i_in], g["vseg"][i_out] * f[i_out])
        sbar = 0.5 * (g["length"][i_in] + g["length"][i_out])
        jump = np.abs(g["qp"][i_out] - g["qp"][i_in]).max(axis=1)
        an = _normal_share(g["qp"][i_in], g["qp"][i_out]) * amax
        with np.errstate(divide="ignore", invalid="ignore"):
            vj = np.where(jump > 0, np.minimum(an * period / jump, np.sqrt(an * sbar / jump)),
                          np.inf) * fi
        if on_row:
            # The share is an estimate; where the pen brakes into the vertex
            # and speeds away at the full path acceleration the exact bound
            # may be higher (gentle turns): take the higher of the two.
            a = np.maximum(g["acc"][i_in] * f[i_in] ** 2, g["acc"][i_out] * f[i_out] ** 2)
            vj = np.maximum(vj, _row_on_vertex_speed(jump, amax * fi * fi,
                                                     np.where(np.isfinite(a), a, 0.0), period))
        return np.minimum(vs, vj)

    inner = np.zeros(K, bool)
    inner[1:-1] = g["same"][:-1] & g["same"][1:]
    i = np.flatnonzero(inner)
    if i.size:
        vs = kink(i - 1, i)
        dr = g["drawing"][i - 1] & g["drawing"][i]
        if np.any(dr):
            at = np.maximum(g["acc"][i - 1] * f[i - 1] ** 2, g["acc"][i] * f[i] ** 2)
            vc = _corner_speed(g["dp"][i - 1], g["dp"][i], at, period, chord_tol)
            vs = np.where(dr, np.minimum(vs, vc), vs)
        cap[i] = np.maximum(vs, 0.0)
    p = np.flatnonzero(path.join)
    if p.size:
        L, R = path.last[p], path.first[p + 1]
        vs = np.maximum(kink(L - 1, R, on_row=True), 0.0)
        cap[L] = vs
        cap[R] = vs
    return cap * cap


def _row_on_vertex_speed(jump, amax, acc, period):
    """Fastest pass of a vertex with a row on it, braking into it and speeding away at ``acc``.

    The rows one period either side lie ``s = v T + acc T^2 / 2`` from the
    vertex along the two joint-linear legs (constant acceleration), so the
    second difference at the vertex row is ``s (q'_out - q'_in)``, ``q'``
    the joint direction per mm. It stays within ``amax T^2`` on every joint
    when ``v <= amax T / jump - acc T / 2``, ``jump`` the largest joint
    component of ``q'_out - q'_in``. Negative where that leaves nothing.

    Examples
    --------
    >>> float(_row_on_vertex_speed(0.01, 20.0, 1000.0, 0.02))   # 40 - 10 mm/s
    30.0
    """
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        return np.where(jump > 0, amax * period / jump - 0.5 * acc * period, np.inf)


def _join_windows(path, g, w, f, period, chord_tol):
    """Per piece ending at a join: how far in time a row may miss the vertex.

    The time the pen takes to cover a share of :func:`_cut_reach` from
    the vertex, starting at its speed ``v`` there and speeding up at most
    at the path acceleration ``a``: the root of ``v t + a t^2 / 2 = R``.
    The share is 0.9, a tenth kept back for the rows' rounding and the bow
    of joint-space motion, or, where the turn is at most 90 degrees and
    the rows around a vertex are stepped towards it (:func:`_shift_rows`),
    ``_REACH`` = 1.65: the miss ``e <= R sin(th)`` is then at most
    1.65 ``chord_tol``, and a step of at most ``_SHIFT`` = 0.85 of it brings
    the vertex within ``_AFTER`` = 0.9 of it from the chord, the same tenth
    kept back.
    """
    win = np.zeros(len(path.kind))
    p = np.flatnonzero(path.join)
    if p.size == 0:
        return win
    L, R = path.last[p], path.first[p + 1]
    a, b = g["dp"][L - 1], g["dp"][R]
    share = np.where(np.einsum("ij,ij->i", a, b) >= 0, _REACH if _SHIFT > 0 else 0.9, 0.9)
    reach = share * _cut_reach(a, b, chord_tol)
    acc = np.maximum(g["acc"][L - 1] * f[L - 1] ** 2, g["acc"][R] * f[R] ** 2)
    win[p] = _time_to_cover(reach, np.sqrt(w[L]), np.where(np.isfinite(acc), acc, 0.0))
    return win


def _time_to_cover(dist, v, acc):
    """Time to cover ``dist`` from speed ``v`` at constant acceleration ``acc``.

    The positive root of ``v t + acc t^2 / 2 = dist``, written as
    ``2 dist / (v + sqrt(v^2 + 2 acc dist))`` so it holds at ``acc = 0``
    (infinite where nothing moves).

    Examples
    --------
    >>> float(_time_to_cover(1.0, 0.0, 2.0))   # from rest: sqrt(2 d / a)
    1.0
    """
    with np.errstate(divide="ignore", invalid="ignore"):
        root = v + np.sqrt(v * v + 2 * acc * dist)
        return np.where(root > 0, 2 * dist / root, np.inf)


def _row_times(path, dur, period, win):
    """Where each piece starts and ends on the row clock of its stroke.

    A piece not joined to another is stretched to a whole number of
    periods. The pieces of a stroke cut at sharp vertices share one clock:
    a piece is stretched only as far as needed for a row to land within
    ``win`` of the vertex it ends at (zero: exactly on it), and the last
    one to a whole number of periods. A loop over the joined pieces only.
    """
    n = np.where(dur > 0, np.ceil(dur / period - 1e-9), 0.0)
    S = np.zeros(len(dur))
    E = n * period
    join = path.join
    member = join.copy()
    member[1:] |= join[:-1]
    clock = 0.0
    for p in np.flatnonzero(member):
        S[p] = clock
        t = clock + dur[p]
        if join[p]:
            ph = t - np.floor(t / period) * period
            hit = ph <= win[p] or period - ph <= win[p]
            t = t if hit else t + (period - ph - win[p])
            clock = t
        else:
            t = max(t, np.ceil(t / period - 1e-9) * period)
            clock = 0.0
        E[p] = t
    return S, E


def _time_path(path, g, arm, margin, period, chord_tol, f, n_dwell, blend=True, vf=None):
    """Time every piece, put it on the row clock, sample the rows.

    ``blend`` (a bool, or one per piece) says where a row need only land
    near the vertex a piece ends at, rather than exactly on it; ``vf``, one
    per vertex, scales the speed cap of each vertex (repairs at joins).
    """
    cap2 = _vertex_caps(path, g, arm, margin, period, chord_tol, f)
    if vf is not None:
        cap2 = cap2 * vf * vf
    vseg = g["vseg"] * f
    acc = g["acc"] * f * f
    with np.errstate(invalid="ignore"):
        d = np.where(g["length"] > 0, 2 * acc * g["length"], 0.0)
    w = _forward_backward(cap2, d)
    prof = _segment_profiles(w, g["length"], vseg, np.where(np.isfinite(acc), acc, 1.0))
    tv = np.concatenate([[0.0], np.cumsum(prof["dt"])])
    t0 = tv[path.first]
    dur = tv[path.last] - t0
    win = np.where(blend, _join_windows(path, g, w, f, period, chord_tol), 1e-9 * period)
    S, E = _row_times(path, dur, period, win)
    lo = np.floor(S / period + 1e-9).astype(int)
    hi = np.floor(E / period + 1e-9).astype(int)
    n = hi - lo
    dwell = path.kind == _DWELL
    n[dwell] = n_dwell
    lo[dwell] = 0
    # Zero-order hold: the pen is commanded down on the row where the pen-up
    # move arrives at rest, so that row is the first of the lowering dwell.
    lower = np.flatnonzero(dwell & (path.pen == 1))
    early = lower[n[lower - 1] > 0] if lower.size else lower
    n[early] -= 1
    with np.errstate(divide="ignore", invalid="ignore"):
        r = np.where(E > S, dur / (E - S), 0.0)
    rp = np.repeat(np.arange(len(n)), n)
    offs = np.concatenate([[0], np.cumsum(n)[:-1]])
    k = np.arange(n.sum()) - offs[rp] + 1
    tk = (lo[rp] + k) * period
    tau = t0[rp] + (tk - S[rp]) * r[rp]
    seg = np.searchsorted(tv, tau, side="right") - 1
    seg = np.clip(seg, path.first[rp], np.maximum(path.last[rp] - 1, path.first[rp]))
    seg = np.clip(seg, 0, max(len(g["length"]) - 1, 0))
    snap = (np.abs(tk - E[rp]) <= 1e-9 * period) | (k == n[rp]) & ~path.join[rp] | dwell[rp]
    if len(g["length"]):
        u = _position_in_segment(prof, seg, tau - tv[seg])
        q = path.Q[seg] + u[:, None] * g["dq"][seg]
    else:
        q = np.repeat(path.Q[:1], len(rp), axis=0)
    q[snap] = path.Q[path.last[rp[snap]]]
    if _SHIFT > 0:
        on = np.broadcast_to(np.asarray(blend, bool), path.kind.shape)
        _shift_rows(q, tau, rp, path, tv, on, snap, arm, chord_tol)
    tau[dwell[rp]] = np.nan
    q = np.concatenate([path.Q[:1], q])
    pen = np.concatenate([[0], path.pen[rp]]).astype(np.int8)
    stroke = np.concatenate([[-1], path.stroke[rp]])
    arrive = offs[early - 1] + n[early - 1]
    pen[arrive] = 1
    stroke[arrive] = path.stroke[early]
    tau = np.concatenate([[np.nan], tau])
    straight = np.concatenate([[False], path.kind[rp] == _TRAVEL_CART])
    return q, pen, stroke, tau, tv, straight


def _shift_rows(q, tau, rp, path, tv, blend, fixed, arm, chord_tol):
    """Move the two rows around each stroke vertex they pass too far from towards it, in place.

    Rows that straddle a vertex at path distances up to ``x`` from it draw a
    chord that misses the vertex by ``e <= x sin(min(th, 90 deg))``
    (:func:`_cut_reach`). Moving both rows by the same small step ``d`` at
    right angles to their chord, towards the vertex, moves the chord by
    ``d`` and keeps its direction: the miss becomes ``e - d``, while each
    row leaves the stroke by at most ``d``. With
    ``d = clip(e - _AFTER chord_tol, 0, _SHIFT chord_tol)`` the vertex lies
    within ``_AFTER chord_tol`` of the chord whenever the rows lie within
    ``(_AFTER + _SHIFT) chord_tol / sin(th)`` of it along the path, nearly
    twice the reach without the step, and the two rows within ``_SHIFT
    chord_tol`` of where they were. The Cartesian step becomes a joint
    step through each row's Jacobian, with one Newton step more (the
    first leaves about 1e-5 mm on a step of 0.04 mm). Where the foot of
    the vertex on the chord's line falls beyond a row (only for turns over
    90 degrees: up to that the triangle's angles at the rows are acute)
    the nearest point of the chord is that row, and the same step brings
    it ``d`` nearer too. A pair of rows around several vertices steps
    towards the one it misses most; a row shared by two pairs that step
    (vertices on either side of it) takes both steps, so it may move up to
    twice ``_SHIFT chord_tol`` (measured: letting only one of the two
    pairs step instead cost 0.2 % of the pen-down time on the camera
    outlines). Only on blended strokes, and never a row on a vertex or at
    a piece's end. The check after timing judges the moved rows like any
    other (distance to the stroke, joint speed and acceleration, tip
    speed).

    Parameters
    ----------
    q : ndarray, shape (K, 2)
        Sampled rows (without the leading rest row), changed in place.
    tau : ndarray, shape (K,)
        Path time of each row.
    rp : ndarray, shape (K,)
        Piece of each row.
    path : _Path
    tv : ndarray
        Path time of each vertex.
    blend : ndarray of bool
        Per piece: its rows may be moved.
    fixed : ndarray of bool
        Rows that stay where they are (on a vertex, or a piece's end).
    arm : FiveBar or SerialArm
    chord_tol : float

    References
    ----------
    .. [1] R. H. Taylor, "Planning and execution of straight line
       manipulator trajectories", IBM J. Research and Development 23(4),
       1979 (joint steps from Cartesian ones through the Jacobian).
    """
    if len(q) < 2:
        return
    vk = path.kind[path.vpiece]
    w = np.flatnonzero((vk == _STROKE) & blend[path.vpiece])
    a = np.searchsorted(tau, tv[w], side="right") - 1
    ok = (a >= 0) & (a < len(q) - 1)
    w, a = w[ok], a[ok]
    b = a + 1
    ok = (~fixed[a] & ~fixed[b] & (path.kind[rp[a]] == _STROKE) & (path.kind[rp[b]] == _STROKE)
          & (path.stroke[rp[a]] == path.stroke[rp[b]]) & blend[rp[a]] & blend[rp[b]])
    w, a, b = w[ok], a[ok], b[ok]
    if w.size == 0:
        return
    rows, at = np.unique(np.concatenate([a, b]), return_inverse=True)
    X = arm.fk(q[rows])                  # each row's pen position, once
    ia, ib = at[:len(a)], at[len(a):]
    off = _point_segment_offset(path.P[w], X[ia], X[ib])
    e = np.hypot(off[:, 0], off[:, 1])
    step = np.clip(e - _AFTER * chord_tol, 0.0, _SHIFT * chord_tol)
    go = step > 0
    # one step per pair of rows: for the vertex they miss the most
    order = np.lexsort((-e, a))
    first = order[np.concatenate([[True], a[order][1:] != a[order][:-1]])]
    one = np.zeros(len(a), bool)
    one[first] = True
    go &= one
    if not np.any(go):
        return
    c = (step[go] / e[go])[:, None] * off[go]
    move = np.zeros_like(X)
    np.add.at(move, ia[go], c)
    np.add.at(move, ib[go], c)
    k = np.flatnonzero(np.any(move != 0, axis=1))
    r, want = rows[k], X[k] + move[k]
    for _ in range(2):                   # Newton steps: the first is exact to ~1e-5 mm
        J = arm.jacobian(q[r])
        q[r] += np.linalg.solve(J, (want - arm.fk(q[r]))[..., None])[..., 0]


def _limit_factors(rows, over, excess):
    """A repair's factor on the limits near each offending row.

    ``_SLOWDOWN`` near a row that breaks a rule of the path (off the
    stroke, tip speed); near a row in ``over`` (sorted: the rows where a
    joint speed or acceleration is broken, ``excess`` the worst ratio to
    its limit around each, :func:`_row_excess`) that excess ``r`` to the
    power ``-_SLOW_EXP``, within ``_SLOW_RANGE``. Joint speeds scale with
    the factor, path accelerations and the acceleration of turning with its
    square, so ``r^-1`` to ``r^-1/2`` would just mend a lone row; the power
    between (0.6, measured on the bench plans) lands most rows within the
    limit in one round without slowing them further than that needs, as a
    fixed factor does.
    """
    fac = np.full(len(rows), _SLOWDOWN)
    hit = np.isin(rows, over)
    if np.any(hit):
        r = np.maximum(excess[np.searchsorted(over, rows[hit])], 1.0)
        fac[hit] = np.clip(0.999 * r ** -_SLOW_EXP, *_SLOW_RANGE)
    return fac


def _slow_down(f, tv, tau, rows, period, times=None, fac=None):
    """Scale down the limits of every segment within a period of the offending rows (and times).

    ``fac`` gives each row's factor (default ``_SLOWDOWN``, as for the
    times); a segment near several takes the smallest.
    """
    t = tau[rows]
    fr = np.full(len(rows), _SLOWDOWN) if fac is None else np.asarray(fac, float)
    if times is not None:
        t = np.concatenate([t, times])
        fr = np.concatenate([fr, np.full(len(times), _SLOWDOWN)])
    keep = np.isfinite(t)
    t, fr = t[keep], fr[keep]
    if t.size == 0:
        return False
    lo = np.searchsorted(tv[1:], t - period, side="left")
    hi = np.searchsorted(tv[:-1], t + period, side="right")
    cnt = np.maximum(hi - lo, 0)
    if not cnt.any():
        return False
    seg = np.repeat(lo, cnt) + np.arange(cnt.sum()) - np.repeat(np.cumsum(cnt) - cnt, cnt)
    scale = np.ones(len(f))
    np.minimum.at(scale, seg, np.repeat(fr, cnt))
    f *= scale
    return True


def _row_excess(q, rows, period, arm):
    """Largest ratio of speed or acceleration to its limit in the differences around each row."""
    vlim, alim = _written_limits(arm, period)
    n = len(q)
    rate_v, rate_a = _step_rates(q, period)
    v = np.zeros(n + 1)
    v[1:n] = rate_v / vlim
    a = np.zeros(n + 2)
    a[2:n] = rate_a / alim
    # the second difference centred on row k is a[k + 1]; rows k-1..k+1 touch it
    return np.maximum.reduce([v[rows], v[rows + 1], a[rows], a[rows + 1], a[rows + 2]])


def _row_join_keys(path, tv, tau, rows, period):
    """The vertex key of the join each row is next to, or -1.

    A row within one and a half periods of a join's vertex (in path time)
    is put down to the pass of that vertex: the second difference at the
    row on the vertex, or at the rows either side, carries the change of
    joint direction there. Lowering that vertex's speed alone repairs it at
    less cost than slowing every segment around it.
    """
    out = np.full(rows.size, -1)
    p = np.flatnonzero(path.join)
    if p.size == 0 or rows.size == 0:
        return out
    tj = tv[path.last[p]]
    t = tau[rows]
    i = np.clip(np.searchsorted(tj, t), 0, len(tj) - 1)
    j = np.clip(i - 1, 0, len(tj) - 1)
    with np.errstate(invalid="ignore"):
        i = np.where(np.abs(tj[j] - t) < np.abs(tj[i] - t), j, i)
        near = np.abs(tj[i] - t) <= 1.5 * period
    out[near] = path.key[path.last[p[i[near]]]]
    return out


def _servo_frame_check(arm, period):
    """Refuse a period that is not a whole number of the arm's servo frames."""
    servo = (arm.hardware or {}).get("servo") if hasattr(arm, "hardware") else None
    if not servo:
        return
    hz = float(servo.get("frame_hz", 50.0))
    frames = period * hz
    if abs(frames - round(frames)) > 1e-6 or round(frames) < 1:
        f = 1.0 / hz
        raise InkreachError(
            f"period {period:g} s is not a whole number of servo frames ({f * 1000:g} ms at "
            f"{hz:g} Hz); use {f:g}, {2 * f:g} or {3 * f:g} s")


def _tip_violations(q, pen, stroke, period, arm, tip_speed, straight=None):
    """Rows of pen-down row pairs, or of steps of straight pen-up moves, too fast at the tip."""
    if len(q) < 2:
        return np.zeros(0, int)
    x = arm.fk(q)
    both = (pen[1:] == 1) & (pen[:-1] == 1) & (stroke[1:] == stroke[:-1])
    if straight is not None:
        both |= straight[1:]
    sp = np.hypot(*np.diff(x, axis=0).T) / period
    k = np.flatnonzero(both & (sp > tip_speed * (1 - 1e-9)))
    return np.unique(np.concatenate([k, k + 1]))


class _StrokeIndex:
    """Strokes cut into short pieces under a k-d tree, built once, queried per re-timing.

    The same distance as the final check uses (``check._distance_to_strokes``:
    pieces no longer than ``4 * chord_tol``, the stroke index as a far-apart
    third coordinate, exact point-to-segment distance to the nearest pieces).
    """

    def __init__(self, strokes, chord_tol):
        from scipy.spatial import cKDTree

        h = 4.0 * chord_tol
        pts = np.concatenate(strokes)
        sid = np.repeat(np.arange(len(strokes)), [len(x) for x in strokes])
        one = np.array([len(x) == 1 for x in strokes])
        same = sid[1:] == sid[:-1]
        a, b, ls = pts[:-1][same], pts[1:][same], sid[:-1][same]
        m = np.maximum(1, np.ceil(np.hypot(*(b - a).T) / h).astype(int))
        w = np.repeat(np.arange(len(a)), m)
        k = np.arange(m.sum()) - np.repeat(np.cumsum(m) - m, m)
        u0, u1 = (k / m[w])[:, None], ((k + 1) / m[w])[:, None]
        dots = np.flatnonzero(one)
        dp = pts[np.searchsorted(sid, dots)] if dots.size else np.zeros((0, 2))
        self.A = np.concatenate([a[w] + u0 * (b - a)[w], dp])
        self.B = np.concatenate([a[w] + u1 * (b - a)[w], dp])
        self.sid = np.concatenate([ls[w], dots])
        self.big = 1e7
        self.tree = cKDTree(np.column_stack([0.5 * (self.A + self.B), self.sid * self.big]))

    def distance(self, x, lab):
        from ..place._geometry import _point_segment_distance

        k = min(8, len(self.A))
        _, idx = self.tree.query(np.column_stack([x, lab * self.big]), k=k)
        idx = idx.reshape(len(x), k)
        d = _point_segment_distance(x[:, None, :], self.A[idx], self.B[idx])
        return np.where(self.sid[idx] == lab[:, None], d, np.inf).min(axis=1)


def _off_stroke_rows(q, pen, stroke, arm, index, chord_tol):
    """Pen-down rows that, or whose joint-space midpoint with the next row, stray too far.

    The rows of :func:`_chord_violations` before the row after each is
    added; a row may come twice (its own pen and its midpoint).
    """
    kd = np.flatnonzero(pen == 1)
    if kd.size == 0:
        return np.zeros(0, int)
    pair = kd[:-1][(np.diff(kd) == 1) & (stroke[kd[1:]] == stroke[kd[:-1]])]
    pts = np.concatenate([arm.fk(q[kd]), arm.fk(0.5 * (q[pair] + q[pair + 1]))])
    lab = np.concatenate([stroke[kd], stroke[pair]])
    row = np.concatenate([kd, pair])
    # Headroom of 1 % of the tolerance for rounding the angles when written.
    return row[index.distance(pts, lab) > 0.99 * chord_tol]


def _chord_violations(q, pen, stroke, arm, index, chord_tol):
    """Rows whose pen, or whose joint-space midpoint with the next row, strays too far.

    The same rule as :func:`check_stream`, so the corner rule may be
    optimistic: rows it lets cut a corner too deeply are slowed down.
    """
    return _with_next(_off_stroke_rows(q, pen, stroke, arm, index, chord_tol))


def _with_next(rows):
    """The rows and the row after each: a stray row or midpoint is slowed on both sides."""
    return np.unique(np.concatenate([rows, rows + 1]))


def _around(rows, n):
    """The rows from one before to two after each (of ``n``): around a missed vertex."""
    return np.unique(np.concatenate([rows - 1, rows, rows + 1, rows + 2]).clip(0, n - 1))


def _missed_vertices(q, pen, stroke, arm, strokes, chord_tol):
    """Stroke vertices too far from the drawn path, and the row nearest each.

    The rule of :func:`_vertex_misses`. Returns the missed vertices (as
    indices into the concatenated strokes of two or more points) and, for
    each, the row that starts the piece of the drawn path nearest to it.
    Only the vertices of strokes with pen-down rows are looked at: the
    others have no drawn path to miss by.
    """
    from scipy.spatial import cKDTree

    from ..place._geometry import _point_segment_distance

    none = np.zeros(0, int), np.zeros(0, int)
    kd = np.flatnonzero(pen == 1)
    sizes = np.array([len(x) for x in strokes], int)
    lab = stroke[kd]
    drawn = np.isin(np.arange(len(strokes)), lab)
    lines = np.flatnonzero((sizes > 1) & drawn)
    if kd.size < 2 or not lines.size:
        return none
    pair = (np.diff(kd) == 1) & (lab[1:] == lab[:-1])
    xm = arm.fk(0.5 * (q[kd[:-1]] + q[kd[1:]])[pair])
    pts = np.concatenate([arm.fk(q[kd]), xm])
    order = np.argsort(np.concatenate([2 * np.arange(kd.size), 2 * np.flatnonzero(pair) + 1]),
                       kind="stable")
    pts = pts[order]
    plab = np.concatenate([lab, lab[:-1][pair]])[order]
    prow = np.concatenate([kd, kd[:-1][pair]])[order]
    # pieces of the drawn path, without the zero-length ones of the dwells
    same = (plab[1:] == plab[:-1]) & np.any(pts[1:] != pts[:-1], axis=1)
    if not np.any(same):
        return none
    A, B = pts[:-1][same], pts[1:][same]
    slab, srow = plab[:-1][same], prow[:-1][same]
    big = 1e7
    tree = cKDTree(np.column_stack([0.5 * (A + B), slab * big]))
    V = np.concatenate([strokes[i] for i in lines])
    # where each vertex sits among the vertices of all strokes of two or more points
    vsid = np.repeat(np.flatnonzero(sizes > 1), sizes[sizes > 1])
    vidx = np.flatnonzero(drawn[vsid])
    vlab = vsid[vidx]
    k = min(8, len(A))
    _, idx = tree.query(np.column_stack([V, vlab * big]), k=k)
    idx = idx.reshape(len(V), k)
    d = _point_segment_distance(V[:, None, :], A[idx], B[idx])
    d = np.where(slab[idx] == vlab[:, None], d, np.inf)
    # (a stroke whose rows never move has no pieces: nothing to slow down)
    bad = np.flatnonzero((d.min(axis=1) > 0.99 * chord_tol) & np.isin(vlab, slab))
    if bad.size == 0:
        return none
    return vidx[bad], srow[idx[bad, np.argmin(d[bad], axis=1)]]


def _vertex_misses(q, pen, stroke, arm, strokes, chord_tol):
    """Rows next to which a stroke vertex lies too far from the drawn path.

    The drawn path of a stroke runs through its pen-down rows and the
    joint-space midpoints between them, in order; every vertex of the
    stroke must lie within ``chord_tol`` of it (the stroke is drawn whole,
    the rule of ``inkreach check``). Rows that cut a corner, or two close
    corners at once, too deeply are returned, and the missed vertices (as
    indices into the concatenated strokes of two or more points): a stroke
    that passes near its own vertex again later (hatching) may have its
    nearest rows elsewhere in time, so the time around the vertex itself is
    slowed down too.
    """
    bad, r = _missed_vertices(q, pen, stroke, arm, strokes, chord_tol)
    return _around(r, len(q)), bad


def _cut_missed(missed, vsid, vloc, drawn, cut_memo, forced, blend):
    """Give each missed, not yet cut, interior stroke vertex a cut; True where one was given.

    ``missed`` indexes the vertices of the strokes of two or more points
    (``vsid`` their stroke, ``vloc`` their place in its subdivided path);
    the new cuts go into ``forced``. A loop over the missed vertices only.
    """
    done = np.zeros(len(missed), bool)
    for k, v in enumerate(missed):
        i, j = int(vsid[v]), int(vloc[v])
        have = forced.setdefault(i, set())
        if 0 < j < len(drawn[i][0]) - 1 and j not in have \
                and j not in cut_memo.get((i, bool(blend[i])), ()):
            have.add(j)
            done[k] = True
    return done


#: Check again, each repair round, only the strokes whose rows changed
#: (False: every stroke, every round; the same result, for tests).
_INCREMENTAL = True


class _PathChecks:
    """The chord and vertex rules of the repair rounds, kept from round to round.

    Both rules judge each stroke by its own pen-down rows alone (their
    angles and spacing), and a repair round changes the rows of only the
    strokes it slowed down: every stroke starts and ends at rest on a row,
    so an untouched stroke's pen-down rows come out the same, only shifted
    in row index. Each round checks again only the strokes whose pen-down
    rows differ (bit for bit) from the previous round's, and keeps the
    other strokes' verdicts, as row offsets from the stroke's first
    pen-down row. The result is that of :func:`_chord_violations` and
    :func:`_vertex_misses` over the whole stream.
    """

    def __init__(self, strokes, index, arm, chord_tol):
        self.S, self.index, self.arm, self.chord_tol = strokes, index, arm, chord_tol
        sizes = np.array([len(x) for x in strokes], int)
        lines = np.flatnonzero(sizes > 1)
        self.vsid = np.repeat(lines, sizes[lines])
        self.prev = None

    def __call__(self, q, pen, stroke):
        """Rows to slow down for either rule, and the missed vertices."""
        n = len(self.S)
        kd = np.flatnonzero(pen == 1)
        lab = stroke[kd]
        if not _INCREMENTAL or np.any(lab < 0):
            rows = _chord_violations(q, pen, stroke, self.arm, self.index, self.chord_tol)
            vrows, missed = _vertex_misses(q, pen, stroke, self.arm, self.S, self.chord_tol)
            self.prev = None
            return rows, vrows, missed
        o = np.argsort(lab, kind="stable")           # pen-down rows by stroke, then row
        kd, lab = kd[o], lab[o]
        cnt = np.bincount(lab, minlength=n)
        start = np.concatenate([[0], np.cumsum(cnt)[:-1]])
        first = kd[start.clip(0, max(kd.size - 1, 0))] if kd.size else np.zeros(n, int)
        off = kd - first[lab]
        bits = np.ascontiguousarray(q[kd]).view(np.uint64)
        flag = np.zeros(kd.size, bool)              # off its stroke, itself or its midpoint
        vbad = np.zeros(len(self.vsid), bool)
        vrow = np.zeros(len(self.vsid), int)         # from the stroke's first pen-down row
        changed = np.ones(n, bool)
        p = self.prev
        # (each stroke's pen-down rows in one run, as the planner lays them
        # out; otherwise a stroke's path would depend on the rows between)
        if p is not None and np.all(off == np.arange(kd.size) - start[lab]):
            keep = np.flatnonzero(cnt[lab] == p["cnt"][lab])
            old = p["start"][lab[keep]] + (keep - start[lab[keep]])
            diff = (off[keep] != p["off"][old]) | np.any(bits[keep] != p["bits"][old], axis=1)
            changed = (cnt != p["cnt"]) | (np.bincount(lab[keep], weights=diff, minlength=n) > 0)
            same = keep[~changed[lab[keep]]]
            flag[same] = p["flag"][p["start"][lab[same]] + (same - start[lab[same]])]
            v = ~changed[self.vsid]
            vbad[v], vrow[v] = p["vbad"][v], p["vrow"][v]
        if np.any(changed):
            sub = np.zeros_like(pen)
            sub[kd[changed[lab]]] = 1
            at = np.full(len(q), -1)
            at[kd] = np.arange(kd.size)
            flag[at[_off_stroke_rows(q, sub, stroke, self.arm, self.index, self.chord_tol)]] = True
            vb, r = _missed_vertices(q, sub, stroke, self.arm, self.S, self.chord_tol)
            vbad[vb] = True
            vrow[vb] = r - first[self.vsid[vb]]
        self.prev = dict(cnt=cnt, start=start, off=off, bits=bits, flag=flag, vbad=vbad,
                         vrow=vrow)
        missed = np.flatnonzero(vbad)
        r = first[self.vsid[missed]] + vrow[missed]
        return _with_next(kd[flag]), _around(r, len(q)), missed


def plan_motion(strokes, arm, *, start=None, end=None, chord_tol=0.05, period=0.02,
                tip_speed=None, region=None, margin=1.0, corner_blend=True):
    """Plan the joint stream that draws ordered strokes.

    Pen-down moves follow the strokes: each is subdivided (:func:`subdivide`)
    so joint-linear motion between samples stays within ``chord_tol`` of
    the straight segments. Pen-up moves are straight in joint space where
    every posture on the way is usable (inside the limits, assembling, at
    or above the conditioning floor), otherwise straight in Cartesian space.
    Every move, dwell and stroke starts and ends at rest. Each stroke is
    timed as one path by the phase-plane forward-backward pass (exact
    time-optimal on the joint-linear pieces between vertices, which the
    timing sees at most 2 mm long so the tip limit holds at each piece's
    worse end without costing the rest of a long piece) under
    per-joint speed and acceleration limits (``margin`` times the arm's,
    1 by default: no blanket margin, less only what writing the angles to
    1e-4 degree can add to a finite difference), the tip-speed limit and
    discrete-time corner limits: a corner may not be cut by more than
    ``0.6 chord_tol`` between two rows, and a change of joint direction
    must fit in one period within 0.6 of the acceleration limit (0.5 where
    the direction turns back by more than 120 degrees). A sharp
    vertex, where the corner rule would force a near stop, gets a row
    on it instead and is passed at the speed the joint direction change
    allows (the higher of that estimate and the exact bound when braking
    in and speeding away at the full path acceleration), without
    stopping. With ``corner_blend`` (the default) the row need only land
    near the vertex: near enough that the vertex stays within 0.9
    ``chord_tol`` of the chord between the two rows around it once those
    rows are stepped towards it by at most 0.85 ``chord_tol``, at right
    angles to their chord (a chord blend inside the tolerance,
    :func:`_cut_reach`, :func:`_shift_rows`; the step is taken at every
    vertex of a blended stroke the rows miss by more than that), so the
    stroke's row clock is stretched only as far as that needs, and only vertices whose
    slow-down would cost more than the mean wait for such a row (about 0.4
    period) are treated so; a stroke
    whose rows cannot be repaired within a few rounds is timed again
    without the blend, the other strokes keep it. Without it the row lands
    exactly on the vertex and the stroke's time between such vertices is
    stretched to a whole number of periods. These rules are estimates, and
    the rows are checked against the real ones: a stroke vertex that lies
    further than ``chord_tol`` from the drawn path (rows and joint-space
    midpoints) while passed between two rows is given a row of its own;
    a joint speed or acceleration broken next to a vertex with a row on it
    lowers that vertex's speed, down to half; rows whose finite
    differences still break a limit (joint speed, acceleration, or the tip
    speed from forward kinematics), that stray too far, or next to a
    vertex already given a row and still missed, are slowed down locally
    and re-timed, with the blend or without: by a factor that follows the
    excess over a joint limit (:func:`_limit_factors`), by 0.95 for the
    other rules.
    The stream is executed by holding each row for one period (zero-order
    hold): the pen is commanded down on the row where a pen-up move arrives
    at rest, and up on the row after a stroke's last row, and in both cases
    the next move is commanded ``ceil(lift_s / period)`` periods later. The
    finished stream is checked by :func:`check_stream`, tip speed included.

    Parameters
    ----------
    strokes : list of array_like, each (N, 2)
        Ordered, oriented polylines in arm mm; a single point is a dot.
    arm : FiveBar or SerialArm
    start, end : array_like, shape (2,), optional
        Rest posture before and after drawing, radians. By default
        ``arm.home()``, or if that is None, the posture at the first
        stroke's start.
    chord_tol : float
        Largest distance of the pen from a stroke while drawing, mm.
    period : float
        Sample period, seconds.
    tip_speed : float, optional
        Largest pen speed while drawing, mm/s (default :data:`TIP_SPEED`,
        80), applied to every pen-down row pair and to every step of a
        straight pen-up move.
    region : array_like, shape (M, 2), optional
        A convex polygon (mm) where straight pen-up moves are known to be
        safe, e.g. the hull of the placed drawing.
    margin : float
        Fraction of the arm's speed and acceleration limits used when
        planning, in (0, 1] (default 1).
    corner_blend : bool
        Let the rows cut a sharp vertex within the chord tolerance instead
        of landing exactly on it (default True); it never loosens a check.

    Returns
    -------
    JointStream

    Raises
    ------
    InkreachError
        If a stroke or a pen-up move cannot be carried out safely.

    References
    ----------
    .. [1] J. E. Bobrow, S. Dubowsky and J. S. Gibson, "Time-optimal control
       of robotic manipulators along specified paths", Int. J. Robotics
       Research 4(3), 1985.
    .. [2] R. H. Taylor, "Planning and execution of straight line
       manipulator trajectories", IBM J. Research and Development 23(4),
       1979.
    .. [3] L. Biagiotti and C. Melchiorri, *Trajectory Planning for
       Automatic Machines and Robots*, Springer, 2008.

    Examples
    --------
    >>> import numpy as np
    >>> from inkreach.arms import default_arm
    >>> arm = default_arm()
    >>> s = plan_motion([np.array([[-20.0, 150.0], [20.0, 150.0]])], arm)
    >>> int(s.pen.max()), bool(np.allclose(s.xy[s.pen == 1][[0, -1]],
    ...                                    [[-20, 150], [20, 150]]))
    (1, True)
    """
    period = float(period)
    if not period > 0:
        raise InkreachError(f"period must be greater than zero, got {period!r}")
    if not chord_tol > 0:
        raise InkreachError(f"chord_tol must be greater than zero, got {chord_tol!r}")
    if not 0 < margin <= 1:
        raise InkreachError(f"margin must be in (0, 1], got {margin!r}; 1 (the default) uses "
                            "the arm's limits as they are")
    _servo_frame_check(arm, period)
    tip_speed = TIP_SPEED if tip_speed is None else float(tip_speed)
    if not tip_speed > 0:
        raise InkreachError(f"tip_speed must be greater than zero, got {tip_speed!r}")
    if region is not None:
        region = np.asarray(region, dtype=float)
        if region.ndim != 2 or region.shape[1] != 2 or len(region) < 3:
            raise InkreachError("region must be an (M, 2) convex polygon with M >= 3")

    S = _as_strokes(strokes)
    n = len(S)
    firsts = np.array([s[0] for s in S]).reshape(-1, 2)
    lasts = np.array([s[-1] for s in S]).reshape(-1, 2)

    if n:
        allp = np.concatenate(S)
        ok = arm.reachable(allp)
        if not np.all(ok):
            k = int(np.argmin(ok))
            sid = np.repeat(np.arange(n), [len(s) for s in S])
            j = k - int(np.searchsorted(sid, sid[k]))
            raise InkreachError(
                f"stroke {sid[k]}, point {j} at ({allp[k, 0]:.2f}, {allp[k, 1]:.2f}) mm cannot "
                "be reached safely (outside the joint limits or the well-conditioned region); "
                "place the drawing inside the usable region")
    home = arm.home()
    if home is None and n:
        home = arm.ik(firsts[0])
    if start is None:
        start = home
    if end is None:
        end = home
    if start is None or end is None:
        raise InkreachError("nothing to draw and no rest posture; give start or set [home] "
                            "in the arm file")
    start = _posture(arm, start, "start")
    end = _posture(arm, end, "end")

    # Pen-down paths.
    lines = [i for i in range(n) if len(S[i]) > 1]
    sq_first = arm.ik(firsts) if n else np.zeros((0, 2))
    sq_last = arm.ik(lasts) if n else np.zeros((0, 2))
    drawn, vloc = {}, {}
    if lines:
        pts = np.concatenate([S[i] for i in lines])
        sizes = np.array([len(S[i]) for i in lines])
        active = np.ones(len(pts) - 1, bool)
        active[np.cumsum(sizes)[:-1] - 1] = False
        P, Q, origin = _subdivide_many(pts, active, arm, _PATH_SHARE * chord_tol)
        P, Q, origin = _split_for_timing(P, Q, origin, active, arm, _TIP_STEP)
        pos = np.flatnonzero(origin >= 0)
        ends = np.cumsum(sizes)
        begins = ends - sizes
        for j, i in enumerate(lines):
            a, b = pos[begins[j]], pos[ends[j] - 1]
            drawn[i] = (P[a:b + 1], Q[a:b + 1])
            vloc[i] = pos[begins[j]:ends[j]] - a

    # Pen-up moves.
    qa = np.vstack([start[None], sq_last])
    qb = np.vstack([sq_first, end[None]])
    joint_ok = _joint_moves_ok(arm, qa, qb)
    bad = np.flatnonzero(~joint_ok)
    cart = dict(zip(bad, _cartesian_moves(arm, qa[bad], qb[bad], region,
                                             _PATH_SHARE * chord_tol))) \
        if bad.size else {}

    n_travel = [len(cart[i][1]) if i in cart else 2 for i in range(n + 1)]
    base_travel = np.concatenate([[0], np.cumsum(n_travel)])
    base_dwell = base_travel[-1] + 2 * np.arange(n)
    drawn_rows = np.array([len(drawn[i][0]) if i in drawn else 0 for i in range(n)], int)
    base_stroke = base_dwell[-1] + 2 + np.concatenate([[0], np.cumsum(drawn_rows)[:-1]]) if n \
        else np.zeros(0, int)
    n_keys = int(base_travel[-1] + 2 * n + drawn_rows.sum())
    # key and stroke of every vertex of the strokes of two or more points
    vkey = np.concatenate([base_stroke[i] + vloc[i] for i in lines]) if lines else \
        np.zeros(0, int)
    vsid = np.repeat(lines, [len(S[i]) for i in lines]).astype(int)
    vplace = vkey - base_stroke[vsid]      # ... and its place in its subdivided stroke

    def travel(i):
        key = base_travel[i] + np.arange(n_travel[i])
        if i in cart:
            P, Q = cart[i]
            return (_TRAVEL_CART, P, Q, 0, -1, key)
        return (_TRAVEL_JOINT, None, np.stack([qa[i], qb[i]]), 0, -1, key)

    n_dwell = max(1, int(np.ceil(arm.pen.lift_s / period - 1e-9)))
    index = _StrokeIndex(S, chord_tol) if n else None
    checks = _PathChecks(S, index, arm, chord_tol) if n else None
    cut_memo = {}
    forced = {}                 # stroke -> vertices given a row after a miss

    parts = {}                  # the pieces of one stroke, by its blend and forced cuts
    travels = [travel(i) for i in range(n + 1)]

    def stroke_pieces(i, on):
        key = (i, on, frozenset(forced.get(i, ())))
        if key not in parts:
            out = [travels[i], (_DWELL, firsts[i:i + 1], sq_first[i:i + 1], 1, i,
                                base_dwell[i:i + 1])]
            if i in drawn:
                P, Q = drawn[i]
                if (i, on) not in cut_memo:
                    cut_memo[i, on] = _corner_stops(P, Q, arm, margin, period, chord_tol,
                                                    tip_speed, on)
                cuts = np.union1d(cut_memo[i, on], sorted(key[2])).astype(int)
                ends = np.concatenate([[0], cuts, [len(P) - 1]])
                for a, b in zip(ends[:-1], ends[1:]):
                    out.append((_STROKE, P[a:b + 1], Q[a:b + 1], 1, i,
                                base_stroke[i] + np.arange(a, b + 1)))
            out.append((_DWELL, lasts[i:i + 1], sq_last[i:i + 1], 0, -1,
                        base_dwell[i:i + 1] + 1))
            parts[key] = out
        return parts[key]

    def build(blend):
        pieces = []
        for i in range(n):
            pieces.extend(stroke_pieces(i, bool(blend[i])))
        pieces.append(travels[n])
        path = _Path(pieces)
        at = np.full(n_keys, -1)            # where each vertex key sits in this path
        at[path.key] = np.arange(len(path.key))
        return path, _geometry(path, arm, margin, tip_speed, period), at

    # The blend first, on every stroke; a stroke whose rows still break a
    # rule after a few rounds of repairs (tiny closed marks, e.g. stipple
    # dots) is timed again with plain rows on every sharp vertex, its own
    # slow-downs forgotten, while the others keep theirs and the blend.
    blend = np.full(n, bool(corner_blend))
    tries = np.zeros(n, int)
    fkey = np.ones(n_keys)
    jkey = np.ones(n_keys)              # speed factor of each vertex, lowered at joins
    path, g, at = build(blend)
    f = fkey[path.key[:-1]]
    timed = False
    for _ in range(_MAX_REPAIRS + (_BLEND_REPAIRS if corner_blend else 0)):
        q, pen, stroke, tau, tv, straight = _time_path(
            path, g, arm, margin, period, chord_tol, f, n_dwell,
            np.r_[blend, False][path.stroke], jkey[path.key])
        srows = _stream_violations(q, period, arm)
        rows = np.union1d(srows, _tip_violations(q, pen, stroke, period, arm, tip_speed,
                                                 straight))
        missed = vrows = np.zeros(0, int)
        if index is not None:
            crows, vrows, missed = checks(q, pen, stroke)
            rows = np.union1d(rows, crows)
        if rows.size == 0 and missed.size == 0:
            timed = True
            break
        every = rows
        # A joint speed or acceleration broken next to a join: lower that
        # vertex's speed first (down to a floor), not the segments around.
        jk = _row_join_keys(path, tv, tau, srows, period)
        excess = _row_excess(q, srows, period, arm)
        lowered = np.unique(jk[jk >= 0])
        lowered = lowered[jkey[lowered] > _JOIN_FLOOR]
        if lowered.size:
            # by the square of the worst excess next to it, within bounds
            worst = np.ones(n_keys)
            np.maximum.at(worst, jk[jk >= 0], excess[jk >= 0])
            jkey[lowered] *= np.clip(worst[lowered] ** -2.0, _JOIN_STEP[0], _JOIN_STEP[1])
        rows = np.setdiff1d(rows, srows[np.isin(jk, lowered)])
        # A stroke vertex the rows miss, passed between two rows, gets a row
        # of its own (a cut) rather than a slower pass: that costs at most
        # the wait for a row near it. One already cut is slowed down around.
        cut_now = _cut_missed(missed, vsid, vplace, drawn, cut_memo, forced, blend)
        missed = missed[~cut_now]
        if not cut_now.any():
            rows = np.union1d(rows, vrows)
        fac = _limit_factors(rows, srows, excess)
        slowed = _slow_down(f, tv, tau, rows, period, tv[at[vkey[missed]]], fac) \
            or lowered.size > 0
        hit = np.union1d(stroke[every], vsid[missed])
        hit = hit[hit >= 0]
        tries[hit] += 1
        drop = hit[blend[hit] & (tries[hit] >= _BLEND_REPAIRS)]
        if drop.size or cut_now.any():
            inside = g["same"]
            fkey[path.key[:-1][inside]] = f[inside]
            for i in drop:
                fkey[base_stroke[i]:base_stroke[i] + drawn_rows[i]] = 1.0
                jkey[base_stroke[i]:base_stroke[i] + drawn_rows[i]] = 1.0
                forced.pop(i, None)
            blend[drop] = False
            path, g, at = build(blend)
            f = fkey[path.key[:-1]]
        elif not slowed:
            break
    if not timed:
        # (a round that gave cuts leaves the vertex rows out of rows)
        k = int(np.union1d(every, vrows)[0])
        raise InkreachError(f"the motion near t = {k * period:.2f} s cannot be timed "
                            "within the joint limits; lower tip_speed or margin")
    stream = JointStream(t=np.arange(len(q)) * period, q=q, pen=pen, xy=arm.fk(q),
                         period=period, stroke=stroke, execution="hold",
                         tip_speed=tip_speed, straight=straight if straight.any() else None)
    check_stream(stream, arm, strokes=S, chord_tol=chord_tol, tip_speed=tip_speed)
    return stream
