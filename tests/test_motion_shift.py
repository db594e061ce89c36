"""The rows around a blended vertex stepped towards it, and the repairs' factors.

The geometry is checked against plane geometry worked out here: the
distance from a point to a segment, and that translating a segment by a
vector ``c`` pointing from its nearest point to the point brings it
``|c|`` nearer. The factors against their written definition.
"""

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import inkreach.motion.plan as plan_module
from inkreach.arms import default_arm
from inkreach.motion import check_stream, plan_motion
from inkreach.motion.plan import _STROKE, _Path, _shift_rows

TOL = 0.05


def _seg_dist(p, a, b):
    """Distance from point p to segment ab (plane geometry)."""
    d = b - a
    u = np.clip(np.dot(p - a, d) / np.dot(d, d), 0.0, 1.0)
    return float(np.hypot(*(p - (a + u * d))))


def _corner(arm, turn, x, d, spin=0.0, fixed=None):
    """A two-piece stroke turning by ``turn`` at V, rows ``x`` before and ``d`` after V.

    Four rows: one 2 mm before V, the two around it, one 2 mm after.
    Returns the vertex and the rows' pen positions before and after
    :func:`_shift_rows`.
    """
    V = arm.fk(arm.home())
    ua = np.array([np.cos(spin), np.sin(spin)])
    ub = np.array([np.cos(spin + turn), np.sin(spin + turn)])
    P0 = np.stack([V - 4.0 * ua, V])
    P1 = np.stack([V, V + 4.0 * ub])
    path = _Path([(_STROKE, P0, arm.ik(P0), 1, 0), (_STROKE, P1, arm.ik(P1), 1, 0)])
    tv = np.array([0.0, 1.0, 1.0, 2.0])
    xy = np.stack([V - 2.0 * ua, V - x * ua, V + d * ub, V + 2.0 * ub])
    q = arm.ik(xy)
    tau = np.array([0.5, 1.0 - x / 4, 1.0 + d / 4, 1.5])
    rp = np.array([0, 0, 1, 1])
    fixed = np.zeros(4, bool) if fixed is None else fixed
    _shift_rows(q, tau, rp, path, tv, np.ones(2, bool), fixed, arm, TOL)
    return V, xy, arm.fk(q)


def test_a_right_angle_missed_by_more_than_the_share_is_brought_to_it():
    # Rows 0.1 mm either side of a right angle: their chord passes
    # 0.1 / sqrt(2) = 0.0707 mm from the vertex (plane geometry), over
    # _AFTER (0.9) x 0.05 = 0.045 mm; both rows step 0.0257 mm towards it
    # and the chord then passes 0.045 mm from it.
    arm = default_arm()
    V, before, after = _corner(arm, np.pi / 2, 0.1, 0.1)
    assert _seg_dist(V, before[1], before[2]) == pytest.approx(0.1 / np.sqrt(2), abs=1e-9)
    assert _seg_dist(V, after[1], after[2]) == pytest.approx(plan_module._AFTER * TOL, abs=1e-8)
    step = np.hypot(*(after - before).T)
    assert step[1] == pytest.approx(0.1 / np.sqrt(2) - 0.045, abs=1e-8)
    assert step[2] == pytest.approx(step[1], abs=1e-6)
    # the rows further away stay where they were
    assert step[0] < 1e-12 and step[3] < 1e-12


def test_the_step_is_at_most_the_shift_share_of_the_tolerance():
    # 0.15 mm either side: the chord misses by 0.106 mm; the step stops at
    # _SHIFT (0.85) x 0.05 = 0.0425 mm, leaving 0.0636 mm for the check to
    # judge (a bound chosen here: a row moves at most that far off its place).
    arm = default_arm()
    V, before, after = _corner(arm, np.pi / 2, 0.15, 0.15)
    step = np.hypot(*(after - before).T)
    assert step[1] == pytest.approx(plan_module._SHIFT * TOL, abs=1e-8)
    assert _seg_dist(V, after[1], after[2]) == pytest.approx(
        0.15 / np.sqrt(2) - plan_module._SHIFT * TOL, abs=1e-8)


def test_rows_near_enough_or_fixed_are_left_alone():
    arm = default_arm()
    # 0.06 mm either side: 0.042 mm, already within 0.045 mm
    _, before, after = _corner(arm, np.pi / 2, 0.06, 0.06)
    assert np.abs(after - before).max() < 1e-12
    # a row on a piece's end (fixed) is never moved, nor its partner
    _, before, after = _corner(arm, np.pi / 2, 0.1, 0.1, fixed=np.array([0, 0, 1, 0], bool))
    assert np.abs(after - before).max() < 1e-12


@settings(max_examples=60, deadline=None, derandomize=True)
@given(turn=st.floats(np.deg2rad(5.0), np.deg2rad(175.0)),
       x=st.floats(0.005, 0.3), d=st.floats(0.005, 0.3),
       spin=st.floats(0.0, 2 * np.pi), side=st.sampled_from([-1.0, 1.0]))
def test_the_miss_shrinks_by_the_step_and_rows_move_at_most_the_share(turn, x, d, spin, side):
    # For any turn, either hand, any spacing: the vertex ends within
    # max(_AFTER tol, e - _SHIFT tol) of the chord, never further than it
    # was, and no row moves more than _SHIFT tol (to 1e-8 mm: the joint step
    # comes from Newton steps on forward kinematics).
    arm = default_arm()
    V, before, after = _corner(arm, side * turn, x, d, spin)
    e0 = _seg_dist(V, before[1], before[2])
    e1 = _seg_dist(V, after[1], after[2])
    want = max(plan_module._AFTER * TOL, e0 - plan_module._SHIFT * TOL)
    assert e1 <= min(e0, want) + 1e-8
    assert np.hypot(*(after - before).T).max() <= plan_module._SHIFT * TOL + 1e-8


def test_the_window_widens_only_where_the_step_can_close_the_miss(monkeypatch):
    # Turns up to 90 degrees: the share of the cut reach is _REACH (1.65),
    # 0.9 without the step (_SHIFT 0) and beyond 90 degrees.
    from inkreach.motion.plan import _geometry, _join_windows

    arm = default_arm()
    V = arm.fk(arm.home())

    def windows(turn):
        ua, ub = np.array([1.0, 0.0]), np.array([np.cos(turn), np.sin(turn)])
        P0 = np.stack([V - 1.0 * ua, V])
        P1 = np.stack([V, V + 1.0 * ub])
        path = _Path([(_STROKE, P0, arm.ik(P0), 1, 0), (_STROKE, P1, arm.ik(P1), 1, 0)])
        g = _geometry(path, arm, 1.0, 80.0, 0.02)
        w = np.zeros(len(path.Q))      # from rest: t = sqrt(2 R / a)
        return _join_windows(path, g, w, np.ones(len(path.Q) - 1), 0.02, TOL)[0]

    on = {t: windows(np.deg2rad(t)) for t in (60.0, 90.0, 120.0)}
    monkeypatch.setattr(plan_module, "_SHIFT", 0.0)
    off = {t: windows(np.deg2rad(t)) for t in (60.0, 90.0, 120.0)}
    # (from rest the time goes with the square root of the distance)
    for t in (60.0, 90.0):
        assert on[t] / off[t] == pytest.approx(np.sqrt(plan_module._REACH / 0.9), rel=1e-9)
    assert on[120.0] == pytest.approx(off[120.0], rel=1e-12)


@pytest.mark.parametrize("arm_name", ["default", "serial"])
def test_a_stream_with_stepped_rows_passes_the_check(arm_name, monkeypatch):
    # A star of sharp and gentle corners: with the step the rows differ from
    # those without it, and the stream passes the full safety check, the
    # chord tolerance and every stroke vertex included.
    from inkreach.arms import load_arm

    arm = load_arm(arm_name)
    c = arm.fk(arm.home()) if arm.home() is not None else np.array([-60.0, 180.0])
    a = np.linspace(0.0, 2 * np.pi, 11)
    r = np.where(np.arange(11) % 2 == 0, 12.0, 6.0)
    star = c + r[:, None] * np.column_stack([np.cos(a), np.sin(a)])
    q0 = arm.ik(c)
    stepped = plan_motion([star], arm, start=q0, end=q0)
    check_stream(stepped, arm, strokes=[star], chord_tol=TOL, tip_speed=80.0)
    monkeypatch.setattr(plan_module, "_SHIFT", 0.0)
    plain = plan_motion([star], arm, start=q0, end=q0)
    assert stepped.q.shape != plain.q.shape or np.abs(stepped.q - plain.q).max() > 1e-9


def test_limit_factors_follow_the_excess_within_bounds():
    # Near a row over a joint limit by r the factor is 0.999 r^-0.6 within
    # (0.8, 0.99); near a row that breaks another rule it is _SLOWDOWN.
    from inkreach.motion.check import _written_limits
    from inkreach.motion.plan import _limit_factors, _row_excess

    arm = default_arm()
    T = 0.02
    amax = _written_limits(arm, T)[1]
    # joint 0 accelerated by a[k] x the limit over period k (second
    # difference at row k - 1): 1.1, 3 and 1.02 x the limit, each undone
    a = np.array([0, 0, 0, 1.1, -1.1, 0, 0, 3.0, -3.0, 0, 0, 1.02, -1.02, 0, 0])
    q = np.zeros((len(a), 2))
    q[:, 0] = np.cumsum(np.cumsum(a) * amax * T * T)
    over = np.array([2, 6, 10])
    ex = _row_excess(q, over, T, arm)
    assert ex.min() > 1.0                # (the rows are over a limit)
    want = np.clip(0.999 * ex ** -plan_module._SLOW_EXP, *plan_module._SLOW_RANGE)
    # the offending rows need not be all of those over a limit, nor in order
    rows = np.array([10, 13, 2])
    got = _limit_factors(rows, over, ex)
    assert np.allclose(got[[0, 2]], want[[2, 0]], rtol=0, atol=1e-12)
    assert got[1] == plan_module._SLOWDOWN
    assert plan_module._SLOW_RANGE[0] < got[2] < got[0] < plan_module._SLOW_RANGE[1]
    # 3x over: the lower bound
    assert _limit_factors(np.array([6]), over, ex)[0] == plan_module._SLOW_RANGE[0]


def test_slow_down_takes_the_smallest_factor_near_each_segment():
    from inkreach.motion.plan import _slow_down

    tv = np.arange(11) * 0.02            # ten segments of one period
    f = np.ones(10)
    tau = np.array([0.05, 0.07, 0.15])
    assert _slow_down(f, tv, tau, np.arange(3), 0.02, fac=np.array([0.9, 0.8, 0.95]))
    # each row reaches the segments within a period of it: the row at
    # 0.05 s segments 1-3 (0.02-0.08 s), the one at 0.07 s segments 2-4,
    # which take the smaller 0.8; the row at 0.15 s segments 6-8
    assert f[0] == 1.0 and f[5] == 1.0 and f[9] == 1.0
    assert f[1] == 0.9
    assert np.allclose(f[2:5], 0.8, rtol=0, atol=1e-15)
    assert np.allclose(f[6:9], 0.95, rtol=0, atol=1e-15)


def test_a_row_between_two_stepped_pairs_takes_both_steps():
    # Two right angles 0.3 mm apart, one row before the first, one between,
    # one after the second, each 0.15 mm from its vertex: both chords miss
    # by 0.106 mm and step 0.0425 mm; the row between takes the sum of the
    # two steps (which the check then judges, as any row).
    arm = default_arm()
    V1 = arm.fk(arm.home())
    V2 = V1 + np.array([0.0, 0.3])
    P = np.stack([V1 - np.array([4.0, 0.0]), V1, V2, V2 + np.array([4.0, 0.0])])
    path = _Path([(_STROKE, P, arm.ik(P), 1, 0)])
    tv = np.array([0.0, 1.0, 1.3, 2.0])
    xy = np.stack([V1 - np.array([0.15, 0.0]), V1 + np.array([0.0, 0.15]),
                   V2 + np.array([0.15, 0.0])])
    q = arm.ik(xy)
    tau = np.array([0.9, 1.15, 1.4])
    _shift_rows(q, tau, np.zeros(3, int), path, tv, np.ones(1, bool), np.zeros(3, bool),
                arm, TOL)
    moved = arm.fk(q) - xy

    def step(v, a, b):
        # towards v from its nearest point on chord ab, by the share rule
        d = b - a
        f = a + np.clip(np.dot(v - a, d) / np.dot(d, d), 0, 1) * d
        e = np.hypot(*(v - f))
        s = np.clip(e - plan_module._AFTER * TOL, 0, plan_module._SHIFT * TOL)
        return s / e * (v - f)

    c1, c2 = step(V1, xy[0], xy[1]), step(V2, xy[1], xy[2])
    assert np.hypot(*c1) == pytest.approx(plan_module._SHIFT * TOL, abs=1e-12)
    assert np.allclose(moved, [c1, c1 + c2, c2], rtol=0, atol=1e-8)
