"""The corner blend: rows may cut a sharp vertex, never by more than the tolerance."""

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from inkreach.arms import default_arm, load_arm
from inkreach.errors import InkreachError
from inkreach.motion import check_stream, plan_motion
from inkreach.motion.plan import _cut_reach


def _dist_to_polyline(x, poly):
    """Plane point-to-polyline distance, written out from the projection onto
    each segment clamped to [0, 1] (elementary vector geometry), for checking."""
    a, b = poly[:-1], poly[1:]
    ab = b - a
    n2 = np.einsum("kj,kj->k", ab, ab)
    t = np.einsum("...kj,kj->...k", x[..., None, :] - a, ab) / np.where(n2 > 0, n2, 1.0)
    foot = a + np.clip(t, 0.0, 1.0)[..., None] * ab
    return np.hypot(*np.moveaxis(x[..., None, :] - foot, -1, 0)).min(axis=-1)


def _corner(turn_deg, leg=10.0):
    th = np.deg2rad(turn_deg)
    return np.array([[-leg, 0.0], [0.0, 0.0], [leg * np.cos(th), leg * np.sin(th)]])


def test_right_angle_reach_is_the_closed_form():
    # Closed form for a 90 deg turn: rows at e before and d >= e after the
    # vertex along the two legs, (-e, 0) and (0, d). The vertex lies
    # e d / sqrt(e^2 + d^2) from their chord (twice the triangle's area over
    # the hypotenuse), which grows towards e as d grows; the chord's
    # midpoint (-e/2, d/2) lies e / 2 from the legs (plane geometry). The
    # reach is where the first can reach chord_tol: e = chord_tol.
    tol = 0.05
    poly = _corner(90.0)
    e = _cut_reach(poly[1:2] - poly[:1], poly[2:] - poly[1:2], tol)[0]
    assert e == pytest.approx(tol, rel=1e-12)
    for d in (e, 2 * e, 10 * e, 100 * e):
        chord = np.array([[-e, 0.0], [0.0, d]])
        miss = _dist_to_polyline(poly[1], chord)
        assert miss == pytest.approx(e * d / np.hypot(e, d), rel=1e-12)
        assert miss <= tol
        mid = chord.mean(axis=0)
        assert _dist_to_polyline(mid, poly) == pytest.approx(e / 2, rel=1e-12)
    # and it is tight: a row 2 % further with the other far away misses the vertex
    chord = np.array([[-1.02 * e, 0.0], [0.0, 100 * e]])
    assert _dist_to_polyline(poly[1], chord) > tol


@settings(max_examples=300, deadline=None)
@given(turn=st.floats(5.0, 179.0), frac=st.floats(0.0, 1.0), far=st.floats(1.0, 20.0),
       before=st.booleans())
def test_rows_within_reach_keep_the_vertex_and_the_chord_within_the_tolerance(
        turn, frac, far, before):
    # Invariant of the chord blend: whichever row is the nearer one, within
    # the reach of the vertex, the vertex lies within chord_tol of the chord
    # between the two rows (the drawn path), and the chord's midpoint within
    # chord_tol of the two legs (both by the written-out distance). Beyond a
    # right angle the nearer row itself bounds the first, so the reach there
    # is chord_tol whatever the turn: the tip of a hairpin is not cut off.
    tol = 0.05
    poly = _corner(turn)
    ua = poly[1] - poly[0]
    ua /= np.hypot(*ua)
    ub = poly[2] - poly[1]
    ub /= np.hypot(*ub)
    r = _cut_reach(ua[None], ub[None], tol)[0]
    if turn >= 90.0:
        assert r == pytest.approx(tol, rel=1e-12)
    r = min(r, 2.0)               # legs are 10 mm: keep both rows on them
    e = frac * r
    d = min(far * max(e, 1e-3), 9.0)
    if before:
        pa, pb = -e * ua, d * ub
    else:
        pa, pb = -d * ua, e * ub
    chord = np.stack([pa, pb])
    assert _dist_to_polyline(poly[1], chord) <= tol * (1 + 1e-9)
    assert _dist_to_polyline(0.5 * (pa + pb), poly) <= tol * (1 + 1e-9)


def _square(c, h):
    return np.array([[c[0] - h, c[1] - h], [c[0] + h, c[1] - h], [c[0] + h, c[1] + h],
                     [c[0] - h, c[1] + h], [c[0] - h, c[1] - h]])


def _zigzag(c, n, w, h):
    x = c[0] + np.linspace(-w, w, n)
    y = c[1] + np.where(np.arange(n) % 2 == 0, -h, h)
    return np.column_stack([x, y])


def _pen_down_deviation(s, strokes, arm):
    """Largest distance of a pen-down row, or of the joint-space midpoint of two
    pen-down rows of one stroke, from its stroke (forward kinematics)."""
    worst = 0.0
    for i, poly in enumerate(strokes):
        k = np.flatnonzero((s.pen == 1) & (s.stroke == i))
        pair = k[:-1][np.diff(k) == 1]
        x = np.concatenate([arm.fk(s.q[k]), arm.fk(0.5 * (s.q[pair] + s.q[pair + 1]))])
        worst = max(worst, float(_dist_to_polyline(x, poly).max()))
    return worst


def _vertex_miss(s, strokes, arm):
    """Largest distance of a stroke vertex from the drawn path: the polyline
    through the stroke's pen-down rows and the joint-space midpoints between
    them (the stroke is drawn whole)."""
    worst = 0.0
    for i, poly in enumerate(strokes):
        k = np.flatnonzero((s.pen == 1) & (s.stroke == i))
        x = arm.fk(s.q[k])
        xm = arm.fk(0.5 * (s.q[k[:-1]] + s.q[k[1:]]))
        path = np.empty((2 * len(k) - 1, 2))
        path[0::2], path[1::2] = x, xm
        worst = max(worst, float(_dist_to_polyline(poly, path).max()))
    return worst


@pytest.mark.parametrize("arm_name", ["default", "serial"])
def test_blended_corners_stay_within_the_tolerance_and_save_time(arm_name):
    arm = load_arm(arm_name)
    c = arm.fk(arm.home()) if arm.home() is not None else np.array([-60.0, 180.0])
    # the third: two sharp corners 0.24 mm apart, as centerline traces have
    close = c + np.array([[-11.4, 0.0], [-5.7, 3.5], [-0.2, 0.07], [0.0, 0.0], [0.0, 0.32],
                          [-1.6, 6.5], [3.4, 10.6]])
    strokes = [_square(c, 15.0), _zigzag(c, 25, 20.0, 4.0), close]
    assert np.all(arm.reachable(np.concatenate(strokes)))
    q0 = arm.ik(c)
    tol = 0.05
    on = plan_motion(strokes, arm, chord_tol=tol, start=q0, end=q0)
    off = plan_motion(strokes, arm, chord_tol=tol, start=q0, end=q0, corner_blend=False)
    for s in (on, off):
        # the safety check, as strict as ever, passes on both
        check_stream(s, arm, strokes=strokes, chord_tol=tol, tip_speed=80.0)
        assert _pen_down_deviation(s, strokes, arm) <= tol
        # every vertex within the tolerance of the drawn path (the stroke is
        # drawn whole), with the blend on and off: two sharp corners 0.24 mm
        # apart were once cut 0.065 mm deep with the blend off
        assert _vertex_miss(s, strokes, arm) <= tol
    # Bound chosen by us: the blend must not be slower (it only removes
    # stretching of the row clock and cuts that cost more than they save).
    assert on.duration <= off.duration + 1e-9


def test_blend_off_puts_a_row_exactly_on_every_square_corner():
    arm = default_arm()
    c = arm.fk(arm.home())
    sq = _square(c, 15.0)
    s = plan_motion([sq], arm, corner_blend=False)
    x = s.xy[s.pen == 1]
    for v in sq[1:-1]:
        assert np.hypot(*(x - v).T).min() < 1e-9


def _polygon(c, r, n):
    a = np.linspace(0.0, 2 * np.pi, n + 1)
    return c + r * np.column_stack([np.cos(a), np.sin(a)])


@pytest.mark.parametrize("arm_name", ["default", "serial"])
def test_blend_falls_back_for_the_failing_stroke_only(arm_name, monkeypatch):
    import inkreach.motion.plan as plan_module

    # Blend cuts as far apart as plain ones: the two close corners then get
    # one cut between them, which the blend cannot repair in one round.
    monkeypatch.setattr(plan_module, "_BLEND_GAP", plan_module._CUT_GAP)
    # Missed vertices repaired by slowing down only (no cut given to them),
    # so that the close corners keep failing under the blend.
    monkeypatch.setattr(plan_module, "_cut_missed", lambda missed, *a: np.zeros(len(missed), bool))
    arm = load_arm(arm_name)
    c = arm.fk(arm.home()) if arm.home() is not None else np.array([-60.0, 180.0])
    close = c + np.array([[-11.4, 0.0], [-5.7, 3.5], [-0.2, 0.07], [0.0, 0.0], [0.0, 0.32],
                          [-1.6, 6.5], [3.4, 10.6]])
    # a twelve-sided polygon, which the blend draws with other rows than
    # plain rows do, with no repair on either arm
    strokes = [_polygon(c, 10.0, 12), close]
    q0 = arm.ik(c)
    on = plan_motion(strokes, arm, start=q0, end=q0)
    off = plan_motion(strokes, arm, start=q0, end=q0, corner_blend=False)
    # The two close corners need more than one round of blend repairs; with
    # one round allowed that stroke alone is timed without the blend.
    monkeypatch.setattr(plan_module, "_BLEND_REPAIRS", 1)
    mixed = plan_motion(strokes, arm, start=q0, end=q0)
    check_stream(mixed, arm, strokes=strokes, chord_tol=0.05, tip_speed=80.0)
    assert _vertex_miss(mixed, strokes, arm) <= 0.05

    def rows(s, i):
        return s.q[(s.pen == 1) & (s.stroke == i)]

    def differ(a, b):
        return a.shape != b.shape or np.abs(a - b).max() > 1e-6

    # (so that which rows the polygon got can be told apart)
    assert differ(rows(on, 0), rows(off, 0))
    # the polygon keeps the blend (its rows as in the all-blend plan) ...
    # (to rounding: the backward pass sums from the drawing's end)
    assert rows(mixed, 0).shape == rows(on, 0).shape
    assert np.allclose(rows(mixed, 0), rows(on, 0), rtol=0, atol=1e-9)
    # ... and the close corners are drawn as without it
    assert rows(mixed, 1).shape == rows(off, 1).shape
    assert np.allclose(rows(mixed, 1), rows(off, 1), rtol=0, atol=1e-9)


@pytest.mark.parametrize("blend", [True, False])
def test_hatch_passing_its_own_sharp_corner_again_is_planned_whole(blend):
    # Cut down from a hatch stroke of the still life: the pen stops at the
    # sharp corner (8.58, 131.09) after another one 0.79 mm before it, and
    # the stroke's second-last leg passes 0.053 mm from that corner later,
    # just outside the tolerance. The rows nearest the corner are then on
    # the later leg; slowing those down never repaired the corner (the plan
    # failed in both modes). The check must pass and the corner be drawn.
    arm = default_arm()
    hatch = np.array([[-3.2018, 130.3755], [8.2452, 130.3755], [8.5821, 131.0854],
                      [-12.9708, 131.0854], [-13.4761, 131.7953], [8.7505, 131.7953],
                      [8.0768, 129.6656], [-10.0, 129.6656]])
    s = plan_motion([hatch], arm, corner_blend=blend)
    check_stream(s, arm, strokes=[hatch], chord_tol=0.05, tip_speed=80.0)
    assert _vertex_miss(s, [hatch], arm) <= 0.05


def test_blend_cuts_two_sharp_corners_closer_than_a_period_apart():
    # Two 30-degree turns 0.6 mm apart, less than the 1.6 mm one period
    # covers at 80 mm/s. Plain rows keep only the first cut (a piece shorter
    # than a period would be stretched to a whole one); with the blend the
    # pieces share the stroke's row clock and both corners get their row.
    from inkreach.motion.plan import _corner_stops
    from inkreach.motion.subdivide import subdivide

    arm = load_arm("default")
    c = arm.fk(arm.home())
    a = np.deg2rad([30.0, 60.0])
    u = np.c_[np.cos(a), np.sin(a)]
    s = c + np.array([[-10.0, 0.0], [0.0, 0.0], 0.6 * u[0], 0.6 * u[0] + 10.0 * u[1]])
    P, Q = subdivide(s, arm, 0.03)
    corners = [int(np.argmin(np.hypot(*(P - v).T))) for v in s[1:3]]
    plain = _corner_stops(P, Q, arm, 1.0, 0.02, 0.05, 80.0, blend=False)
    blend = _corner_stops(P, Q, arm, 1.0, 0.02, 0.05, 80.0, blend=True)
    assert list(plain) == corners[:1]
    assert list(blend) == corners
    for on in (False, True):
        st_ = plan_motion([s], arm, corner_blend=on)
        check_stream(st_, arm, strokes=[s], chord_tol=0.05, tip_speed=80.0)


def test_a_vertex_the_rows_miss_gets_a_row_instead_of_a_slower_pass(monkeypatch):
    # Two sharp corners 0.2 mm apart, blended, with blend cuts kept as far
    # apart as plain ones so that only the first gets a row: the rows miss
    # the second in the first timing. It is given a row of its own (a cut,
    # costing at most the wait for a row near it) rather than repaired by
    # slowing down; the result passes the check, draws every vertex within
    # the tolerance, and takes no longer than repairing by slowing only.
    import inkreach.motion.plan as plan_module

    monkeypatch.setattr(plan_module, "_BLEND_GAP", plan_module._CUT_GAP)

    arm = load_arm("default")
    c = arm.fk(arm.home())
    close = c + np.array([[-11.4, 0.0], [-5.7, 3.5], [-0.2, 0.07], [0.0, 0.0], [0.0, 0.32],
                          [-1.6, 6.5], [3.4, 10.6]])
    q0 = arm.ik(c)
    given = []
    real = plan_module._cut_missed
    monkeypatch.setattr(plan_module, "_cut_missed",
                        lambda *a: given.append(int(np.sum(r := real(*a)))) or r)
    cut = plan_motion([close], arm, start=q0, end=q0)
    assert sum(given) >= 1
    check_stream(cut, arm, strokes=[close], chord_tol=0.05, tip_speed=80.0)
    assert _vertex_miss(cut, [close], arm) <= 0.05
    monkeypatch.setattr(plan_module, "_cut_missed", lambda missed, *a: np.zeros(len(missed), bool))
    slowed = plan_motion([close], arm, start=q0, end=q0)
    assert cut.duration <= slowed.duration


def test_a_joint_direction_turning_back_gets_the_smaller_turning_share():
    # cos(120 deg) = -1/2 (plane geometry) is where a turn counts as turning
    # back: there the speed also changes fast around the vertex row.
    from inkreach.motion.plan import _NORMAL_SHARE, _REVERSAL_SHARE, _normal_share

    a = np.radians([90.0, 119.0, 121.0, 180.0])
    qa = np.tile([1.0, 0.0], (4, 1))
    qb = np.c_[np.cos(a), np.sin(a)]
    assert _normal_share(qa, qb).tolist() == [_NORMAL_SHARE, _NORMAL_SHARE,
                                               _REVERSAL_SHARE, _REVERSAL_SHARE]
    assert _REVERSAL_SHARE < _NORMAL_SHARE
    arm = load_arm("serial")
    c = arm.fk(arm.ik(np.array([-60.0, 180.0])))
    z = _zigzag(c, 9, 20.0, 3.0)
    check_stream(plan_motion([z], arm), arm, strokes=[z], chord_tol=0.05, tip_speed=80.0)


def test_rounds_running_out_after_a_cut_is_given_refuse_the_plan(monkeypatch):
    # One timing round only: the miss of the close corners is answered with a
    # new cut, which is never timed, so the planner must refuse rather than
    # hand the untimed rows on.
    import inkreach.motion.plan as plan_module

    monkeypatch.setattr(plan_module, "_BLEND_GAP", plan_module._CUT_GAP)
    monkeypatch.setattr(plan_module, "_MAX_REPAIRS", 1 - plan_module._BLEND_REPAIRS)
    arm = load_arm("default")
    c = arm.fk(arm.home())
    close = c + np.array([[-11.4, 0.0], [-5.7, 3.5], [-0.2, 0.07], [0.0, 0.0], [0.0, 0.32],
                          [-1.6, 6.5], [3.4, 10.6]])
    q0 = arm.ik(c)
    with pytest.raises(InkreachError, match="cannot be timed within the joint limits"):
        plan_motion([close], arm, start=q0, end=q0)


@settings(max_examples=200, deadline=None)
@given(dist=st.floats(1e-4, 10.0), v=st.floats(0.0, 200.0), acc=st.floats(0.0, 5e4))
def test_time_to_cover_solves_the_constant_acceleration_equation(dist, v, acc):
    # Distance under constant acceleration, s = v t + a t^2 / 2 (textbook
    # kinematics): the time found covers exactly the distance.
    from inkreach.motion.plan import _time_to_cover

    t = float(_time_to_cover(dist, v, acc))
    if v == 0.0 and acc == 0.0:
        assert t == np.inf
        return
    assert t > 0
    assert v * t + 0.5 * acc * t * t == pytest.approx(dist, rel=1e-9)


def test_a_broken_acceleration_at_a_sharp_vertex_is_repaired_by_lowering_its_speed(monkeypatch):
    # A zigzag's rows on its sharp vertices break the acceleration limit in
    # the first timing round (the change of joint direction is an estimate).
    # Lowering those vertices' speeds alone must give a plan that passes and
    # is shorter than slowing every segment around them, which is what a
    # join factor floor of 1 (never lowered) leaves.
    import inkreach.motion.plan as plan_module

    arm = default_arm()
    c = arm.fk(arm.home())
    strokes = [_zigzag(c, 25, 20.0, 3.0)]
    q0 = arm.ik(c)
    fast = plan_motion(strokes, arm, start=q0, end=q0)
    check_stream(fast, arm, strokes=strokes, chord_tol=0.05, tip_speed=80.0)
    monkeypatch.setattr(plan_module, "_JOIN_FLOOR", 1.0)
    slow = plan_motion(strokes, arm, start=q0, end=q0)
    assert fast.duration < slow.duration


def test_rows_are_put_down_to_the_join_within_one_and_a_half_periods():
    # Two pieces of one stroke meet at a join (its vertex key 11) at path
    # time 0.10 s; rows at 0.10 +- 0.029 s belong to it, rows 0.031 s or
    # more away (past 1.5 periods of 20 ms), and rows with no path time
    # (dwells), do not.
    from inkreach.motion.plan import _STROKE, _Path, _row_join_keys

    P = np.array([[0.0, 150.0], [5.0, 150.0], [5.0, 155.0]])
    Q = np.zeros((3, 2))
    path = _Path([(_STROKE, P[:2], Q[:2], 1, 0, np.array([10, 11])),
                  (_STROKE, P[1:], Q[1:], 1, 0, np.array([11, 12]))])
    assert path.join.tolist() == [True, False]
    tv = np.array([0.0, 0.10, 0.10, 0.2])
    tau = np.array([0.071, 0.129, 0.069, 0.131, np.nan, 0.10])
    keys = _row_join_keys(path, tv, tau, np.arange(6), 0.02)
    assert keys.tolist() == [11, 11, -1, -1, -1, 11]


def test_row_excess_is_the_worst_ratio_of_the_differences_around_a_row():
    # Finite differences written out: speed |q[k+1] - q[k]| / T and
    # acceleration |q[k+1] - 2 q[k] + q[k-1]| / T^2 over the arm's limits
    # less the rounding allowance of the written angles.
    from inkreach.motion.check import _written_limits
    from inkreach.motion.plan import _row_excess

    arm = default_arm()
    T = 0.02
    vlim, alim = _written_limits(arm, T)
    q = np.zeros((6, 2))
    q[3, 0] = 1.5 * alim * T * T          # a spike: second differences a, -2a, a
    ex = _row_excess(q, np.arange(6), T, arm)
    v = np.abs(np.diff(q, axis=0)).max(axis=1) / T / vlim
    a = np.abs(np.diff(q, n=2, axis=0)).max(axis=1) / T ** 2 / alim
    want = []
    for k in range(6):
        cands = [v[j] for j in (k - 1, k) if 0 <= j < len(v)]
        cands += [a[j] for j in (k - 2, k - 1, k) if 0 <= j < len(a)]
        want.append(max(cands))
    assert ex == pytest.approx(want, rel=1e-12)
    assert ex.max() == pytest.approx(3.0, rel=1e-12)
