"""check_stream refuses deliberately broken streams, naming the broken limit."""

import numpy as np
import pytest

from inkreach.arms import load_arm
from inkreach.errors import InkreachError
from inkreach.motion import JointStream, StreamReport, check_stream, plan_motion

ARM = load_arm("default")
LINE = [np.array([[-30.0, 150.0], [30.0, 150.0]])]
GOOD = plan_motion(LINE, ARM)


def _with(stream, q=None, pen=None, xy=None, t=None, stroke="same"):
    q = stream.q.copy() if q is None else q
    return JointStream(t=stream.t.copy() if t is None else t, q=q,
                       pen=stream.pen.copy() if pen is None else pen,
                       xy=ARM.fk(q) if xy is None else xy, period=stream.period,
                       stroke=stream.stroke.copy() if stroke == "same" else stroke)


def _dwell_row(stream):
    """A pen-down row in the middle of the lowering dwell (the arm at rest)."""
    k = int(np.flatnonzero(stream.pen == 1)[0])
    return k + 2


def test_good_stream_passes_with_a_report():
    r = check_stream(GOOD, ARM, strokes=LINE)
    assert isinstance(r, StreamReport)
    assert r.rows == len(GOOD) and r.duration == pytest.approx(GOOD.duration)
    assert max(r.max_speed_deg_s) <= np.rad2deg(ARM.limits.max_speed)
    assert max(r.max_accel_deg_s2) <= np.rad2deg(ARM.limits.max_accel)
    assert r.min_conditioning >= ARM.limits.min_conditioning
    assert r.max_deviation_mm <= 0.05


def test_row_outside_the_joint_limits_is_caught():
    q = GOOD.q.copy()
    q[5, 0] = ARM.limits.upper[0] + 0.01
    with pytest.raises(InkreachError, match=r"row 5 \(t = 0\.10 s\): theta1 = .* outside the limits"):
        check_stream(_with(GOOD, q), ARM)


def test_speed_spike_is_caught():
    q = GOOD.q.copy()
    k = _dwell_row(GOOD)
    q[k, 1] += np.deg2rad(5.0)  # 5 deg in one 20 ms period = 250 deg/s > 180 deg/s
    with pytest.raises(InkreachError, match=rf"row {k} .*theta2 speed 250\.0 deg/s exceeds "
                                            r"the limit 180 deg/s; lower tip_speed"):
        check_stream(_with(GOOD, q), ARM)


def test_acceleration_spike_is_caught():
    q = GOOD.q.copy()
    k = _dwell_row(GOOD)
    q[k, 0] += np.deg2rad(0.8)  # 40 deg/s, but 0.8 deg / (20 ms)^2 = 2000 deg/s^2 > 1500
    with pytest.raises(InkreachError, match=r"theta1 acceleration 2000\.0 deg/s\^2 exceeds"):
        check_stream(_with(GOOD, q), ARM)


def test_row_off_its_stroke_is_caught():
    q = GOOD.q.copy()
    k = _dwell_row(GOOD)
    q[k] += np.deg2rad([0.1, 0.1])  # about 0.3 mm away, slow enough for the limits
    with pytest.raises(InkreachError, match=rf"row {k} .*: the pen is .* mm off stroke 0, more "
                                            r"than chord_tol"):
        check_stream(_with(GOOD, q), ARM, strokes=LINE)
    # Without strokes there is nothing to compare with, so it passes.
    check_stream(_with(GOOD, q), ARM)


def test_row_near_a_singularity_is_caught():
    # A posture inside the limits whose conditioning is below the floor.
    g = np.deg2rad(np.stack(np.meshgrid(np.arange(30, 211, 2.0), np.arange(-30, 151, 2.0)),
                            -1).reshape(-1, 2))
    c = ARM.conditioning(g)
    ok = np.isfinite(ARM.fk(g)[:, 0]) & (c < 0.05)
    q0 = g[np.flatnonzero(ok)[0]]
    q = np.repeat(q0[None], 3, axis=0)
    s = JointStream(t=np.arange(3) * 0.02, q=q, pen=np.zeros(3, np.int8), xy=ARM.fk(q),
                    period=0.02, stroke=np.full(3, -1))
    with pytest.raises(InkreachError, match=r"row 0 .*conditioning 0\.0.* is below the floor 0\.3"):
        check_stream(s, ARM)


def test_xy_that_disagrees_with_the_angles_is_caught():
    xy = GOOD.xy.copy()
    xy[7, 0] += 0.01
    with pytest.raises(InkreachError, match=r"row 7 .*the angles put the pen at"):
        check_stream(_with(GOOD, xy=xy), ARM)


def test_uneven_periods_are_caught():
    t = GOOD.t.copy()
    t[10:] += 0.005
    with pytest.raises(InkreachError, match=r"row 10 .*off the fixed period"):
        check_stream(_with(GOOD, t=t), ARM)


def test_pen_down_row_without_a_stroke_is_caught():
    pen = GOOD.pen.copy()
    pen[0] = 1
    with pytest.raises(InkreachError, match=r"row 0 .*belongs to no stroke"):
        check_stream(_with(GOOD, pen=pen), ARM, strokes=LINE)


def test_stroke_labels_are_inferred_from_pen_runs_when_missing():
    r = check_stream(_with(GOOD, stroke=None), ARM, strokes=LINE)
    assert r.max_deviation_mm <= 0.05
    with pytest.raises(InkreachError, match="stroke 1 is never drawn"):
        check_stream(_with(GOOD, stroke=None), ARM, strokes=LINE + LINE)


def test_touch_down_away_from_the_stroke_start_is_caught():
    shifted = [LINE[0] + [0.0, 0.03]]  # within chord_tol, but the touch-down must be exact
    with pytest.raises(InkreachError, match=r"touches down 0\.0300 mm from the start of stroke 0"):
        check_stream(GOOD, ARM, strokes=shifted)


def _rest(deg, n=3):
    q = np.repeat(np.deg2rad([deg]), n, axis=0)
    return JointStream(t=np.arange(n) * 0.02, q=q, pen=np.zeros(n, np.int8), xy=ARM.fk(q),
                       period=0.02, stroke=np.full(n, -1))


@pytest.mark.parametrize("deg,name", [
    # 1e-3 deg past each limit of the desk arm (theta1 [30, 210], theta2 [-30, 150]):
    # far above the 1e-8 rad rounding allowance, far below any real mistake
    ((120.0, -30.0 - 1e-3), "theta2"), ((140.0, 150.0 + 1e-3), "theta2"),
    ((30.0 - 1e-3, 60.0), "theta1"), ((210.0 + 1e-3, 100.0), "theta1")])
def test_each_joint_just_past_its_limit_is_caught(deg, name):
    with pytest.raises(InkreachError, match=rf"row 0 .*: {name} = .* outside the limits"):
        check_stream(_rest(deg), ARM)
    # and the same posture on the limit passes the joint test
    on = np.clip(deg, np.rad2deg(ARM.limits.lower), np.rad2deg(ARM.limits.upper))
    try:
        check_stream(_rest(on), ARM)
    except InkreachError as e:       # a limit posture may fail a later rule, not this one
        assert "outside the limits" not in str(e)


def test_conditioning_just_below_the_floor_is_caught():
    # Bisect along theta2 from a well-conditioned posture towards the folded
    # singularity for a posture whose conditioning is 1e-3 under the floor.
    floor = ARM.limits.min_conditioning
    lo, hi = 60.0, 150.0               # conditioning above / below the floor
    assert ARM.conditioning(np.deg2rad([120.0, lo])) > floor
    assert ARM.conditioning(np.deg2rad([120.0, hi])) < floor - 1e-3
    for _ in range(60):
        mid = 0.5 * (lo + hi)
        c = ARM.conditioning(np.deg2rad([120.0, mid]))
        lo, hi = (mid, hi) if c > floor - 1e-3 else (lo, mid)
    c = ARM.conditioning(np.deg2rad([120.0, hi]))
    assert floor - 2e-3 < c < floor
    with pytest.raises(InkreachError, match=r"conditioning 0\.299 is below the floor 0\.3"):
        check_stream(_rest((120.0, hi)), ARM)


def test_lift_away_from_the_stroke_end_is_caught():
    # The end moved 0.03 mm further along the line: every row is still on the
    # stroke and the touch-down exact, but the pen lifts short of the end.
    longer = [np.array([[-30.0, 150.0], [30.03, 150.0]])]
    with pytest.raises(InkreachError, match=r"lifts 0\.0300 mm from the end of stroke 0"):
        check_stream(GOOD, ARM, strokes=longer)


# --- cases found by mutation testing (tests/MUTATION.md) ---------------------

def test_empty_and_ragged_streams_are_refused_with_their_own_lines():
    empty = JointStream(t=np.zeros(0), q=np.zeros((0, 2)), pen=np.zeros(0, np.int8),
                        xy=np.zeros((0, 2)), period=0.02)
    with pytest.raises(InkreachError, match="the stream has no rows"):
        check_stream(empty, ARM)
    ragged = JointStream(t=GOOD.t, q=GOOD.q[:-1], pen=GOOD.pen, xy=GOOD.xy, period=0.02)
    with pytest.raises(InkreachError, match="columns disagree in length"):
        check_stream(ragged, ARM)


def test_a_pen_value_other_than_zero_or_one_is_refused():
    pen = GOOD.pen.copy()
    pen[4] = 2
    with pytest.raises(InkreachError, match=r"row 4 \(t = 0\.08 s\): pen is 2; it must be 0"):
        check_stream(_with(GOOD, pen=pen), ARM)


def test_a_posture_where_the_linkage_cannot_close_is_refused():
    # Lower links of 50 mm: at (120, 60) deg the elbows stand 180 mm apart
    # (by hand: (-90, 86.6) and (90, 86.6)), more than 50 + 50 can bridge.
    import dataclasses
    arm = dataclasses.replace(ARM, left_lower=50.0, right_lower=50.0)
    q = np.repeat(np.deg2rad([[120.0, 60.0]]), 3, axis=0)
    s = JointStream(t=np.arange(3) * 0.02, q=q, pen=np.zeros(3, np.int8), xy=np.zeros((3, 2)),
                    period=0.02)
    with pytest.raises(InkreachError, match=r"row 0 .*the linkage does not close at "
                                            r"\(120\.00, 60\.00\) deg"):
        check_stream(s, arm)


def test_limit_messages_say_what_to_do():
    with pytest.raises(InkreachError, match="keep the drawing inside the usable region"):
        check_stream(_rest((120.0, -31.0)), ARM)
    with pytest.raises(InkreachError, match="place the drawing in the well-conditioned region"):
        check_stream(_rest((120.0, 140.0)), ARM)


def test_two_rows_too_far_apart_are_a_speed_violation():
    q = np.deg2rad([[120.0, 60.0], [124.0, 60.0]])      # 4 deg in 20 ms = 200 deg/s > 180
    s = JointStream(t=np.arange(2) * 0.02, q=q, pen=np.zeros(2, np.int8), xy=ARM.fk(q),
                    period=0.02)
    with pytest.raises(InkreachError, match=r"theta1 speed 200\.0 deg/s exceeds"):
        check_stream(s, ARM)


def test_a_steady_acceleration_above_the_limit_is_refused():
    # q = a t^2 / 2 has second differences a T^2 exactly and third differences
    # 0: the check must use the second difference (Craig 2005, ch. 7).
    a = np.deg2rad(1500.0) * 1.01
    for n in (3, 5):
        t = np.arange(n) * 0.02
        q = np.deg2rad([120.0, 60.0]) + np.column_stack([0.5 * a * t ** 2, np.zeros(n)])
        s = JointStream(t=t, q=q, pen=np.zeros(n, np.int8), xy=ARM.fk(q), period=0.02)
        with pytest.raises(InkreachError, match=r"row 1 .*theta1 acceleration 1515\.0 deg/s"):
            check_stream(s, ARM)


def test_a_pen_down_row_labelled_past_the_last_stroke_is_refused():
    lab = np.where(GOOD.pen == 1, 1, -1)
    s = JointStream(t=GOOD.t, q=GOOD.q, pen=GOOD.pen, xy=GOOD.xy, period=GOOD.period,
                    stroke=lab)
    with pytest.raises(InkreachError, match=r"belongs to no stroke \(stroke index 1, 1 strokes\)"):
        check_stream(s, ARM, strokes=LINE)


def test_the_pen_between_two_rows_is_checked_on_its_own():
    # Two pen-down rows exactly at the ends of a 40 mm straight stroke, ten
    # seconds apart (slow): both rows lie on the stroke, but the joint-space
    # path between them bows away from the straight line (five-bar).
    line = [np.array([[-20.0, 150.0], [20.0, 150.0]])]
    q = ARM.ik(line[0])
    s = JointStream(t=np.array([0.0, 10.0]), q=q, pen=np.ones(2, np.int8), xy=ARM.fk(q),
                    period=10.0, stroke=np.zeros(2, int))
    with pytest.raises(InkreachError, match=r"row 0 .*the pen between this row and the next "
                                            r"is .* mm off stroke 0"):
        check_stream(s, ARM, strokes=line)


def test_a_row_past_the_stroke_end_along_its_line_is_off_the_stroke():
    shorter = [np.array([[-30.0, 150.0], [29.7, 150.0]])]   # the rows go on to x = 30
    with pytest.raises(InkreachError, match=r"0\.300 mm off stroke 0"):
        check_stream(GOOD, ARM, strokes=shorter)


def test_two_strokes_and_a_dot_pass_with_exact_ends_and_a_full_report():
    strokes = [np.array([[-30.0, 150.0], [0.0, 150.0]]), np.array([[10.0, 160.0]]),
               np.array([[20.0, 170.0], [20.0, 140.0], [-10.0, 140.0]])]
    s = plan_motion(strokes, ARM)
    r = check_stream(s, ARM, strokes=strokes)
    r2 = check_stream(_with(s, stroke=None), ARM, strokes=strokes)
    assert r2 == r and r.pen_down_rows == int((s.pen == 1).sum())
    v = np.rad2deg(np.abs(np.diff(s.q, axis=0)).max(axis=0)) / s.period
    a = np.rad2deg(np.abs(np.diff(s.q, n=2, axis=0)).max(axis=0)) / s.period ** 2
    np.testing.assert_allclose(r.max_speed_deg_s, v)
    np.testing.assert_allclose(r.max_accel_deg_s2, a)
    one = check_stream(_rest((120.0, 60.0), n=1), ARM)
    assert one.max_speed_deg_s == (0.0, 0.0) and one.max_accel_deg_s2 == (0.0, 0.0)
    # a stream that starts with the pen down: its first run is stroke 0
    k = int(np.flatnonzero(s.pen == 1)[0])
    cut = JointStream(t=s.t[:-k], q=s.q[k:], pen=s.pen[k:], xy=s.xy[k:], period=s.period)
    assert check_stream(cut, ARM, strokes=strokes).rows == len(s) - k


# --- cases found by mutation testing after the tip-speed check and the repair
# function were added (tests/MUTATION.md) -----------------------------------

def test_the_tip_speed_rule_its_message_and_its_figure():
    # Pen speed = |x[k+1] - x[k]| / T over pen-down pairs of one stroke (finite
    # differences, Craig 2005, ch. 7), measured here from the stream's xy.
    down = (GOOD.pen[1:] == 1) & (GOOD.pen[:-1] == 1) & (GOOD.stroke[1:] == GOOD.stroke[:-1])
    sp = np.hypot(*np.diff(ARM.fk(GOOD.q), axis=0).T) / GOOD.period
    worst = float(sp[down].max())
    r = check_stream(GOOD, ARM, strokes=LINE, tip_speed=worst)     # exactly at the limit
    assert r.max_tip_speed_mm_s == pytest.approx(worst, rel=1e-12)
    limit = 0.5 * worst
    k = int(np.flatnonzero(down & (sp > limit * (1 + 1e-9)))[0])
    with pytest.raises(InkreachError) as err:
        check_stream(GOOD, ARM, strokes=LINE, tip_speed=limit)
    # pair (k, k + 1) is reported at its second row, k + 1
    assert str(err.value) == (f"row {k + 1} (t = {(k + 1) * GOOD.period:.2f} s): pen speed "
                              f"{sp[k]:.2f} mm/s exceeds the tip limit {limit:g} mm/s; lower "
                              "tip_speed and plan again"), str(err.value)


def _ramp(speed, n=6):
    """Rows of joint 1 moving at a constant ``speed`` rad/s from 120 deg (joint 2 at 60)."""
    q = np.tile(np.radians([120.0, 60.0]), (n, 1))
    q[:, 0] += speed * 0.02 * np.arange(n)
    return q


def test_the_repair_rows_include_speeds_within_the_rounding_margin():
    # _stream_violations tightens each limit by what rounding the angles to 1e-4 deg
    # can add to a finite difference (r / T for a speed, 2 r / T^2 for an
    # acceleration, r = 1e-4 deg: the bound on the sum of rounded values,
    # common practice), so its limit-passing rows are found before writing.
    from inkreach.motion.check import _stream_violations
    r = np.radians(1e-4)
    vmax, amax = ARM.limits.max_speed, ARM.limits.max_accel
    # a constant speed half the rounding margin under the limit: every row
    assert _stream_violations(_ramp(vmax - 0.5 * r / 0.02), 0.02, ARM).tolist() == [0, 1, 2, 3,
                                                                                    4, 5]
    assert _stream_violations(_ramp(vmax - 2.0 * r / 0.02), 0.02, ARM).tolist() == []
    # two rows too far apart are both named; one row alone has no difference
    q2 = _ramp(1.01 * vmax, n=2)
    assert _stream_violations(q2, 0.02, ARM).tolist() == [0, 1]
    assert _stream_violations(q2[:1], 0.02, ARM).tolist() == []
    # one row pushed by delta at rest: second differences delta, -2 delta,
    # delta (over T^2) at rows 2, 3, 4 centred on 1, 2, 3; only the middle one,
    # 1.5 amax, passes amax, so rows 2 to 4 are named
    q = np.tile(np.radians([120.0, 60.0]), (7, 1))
    q[3, 0] += 0.75 * amax * 0.02 ** 2
    assert _stream_violations(q, 0.02, ARM).tolist() == [2, 3, 4]


def test_no_strokes_and_no_pen_down_rows_is_no_deviation():
    # Nothing drawn and nothing to draw: the worst distance is 0 mm (a maximum
    # over no rows, taken as 0 so the report stays a number).
    r = check_stream(_rest((120.0, 60.0)), ARM, strokes=[])
    assert r.max_deviation_mm == 0.0 and r.pen_down_rows == 0
    assert np.isnan(r.max_tip_speed_mm_s)            # no pen-down pair to measure


def test_stroke_vertex_cut_off_by_the_rows_is_caught():
    # A thin spike 1 mm high on a straight stroke: rows along the base pass
    # within chord_tol of the stroke everywhere (every row and midpoint lies
    # on its base) but never reach the spike's tip, so the stroke is not
    # drawn whole; the rule of `inkreach check` (check/plancheck.py).
    c = ARM.fk(ARM.home())
    base = c + np.array([[-5.0, 0.0], [5.0, 0.0]])
    spike = c + np.array([[-5.0, 0.0], [0.0, 0.0], [0.0, 1.0], [0.02, 0.0], [5.0, 0.0]])
    xs = np.concatenate([np.linspace(-5.0, 0.0, 251), np.linspace(0.02, 5.0, 250)])
    q = ARM.ik(c + np.column_stack([xs, np.zeros_like(xs)]))
    n = len(q)
    s = JointStream(t=np.arange(n) * 0.02, q=q, pen=np.ones(n, np.int8), xy=ARM.fk(q),
                    period=0.02, stroke=np.zeros(n, int))
    r = check_stream(s, ARM, strokes=[base])
    assert r.max_vertex_miss_mm <= 1e-9
    assert r.max_deviation_mm <= 0.05
    with pytest.raises(InkreachError, match=r"point 2 of stroke 0 .* from the drawn path, "
                                            r"more than chord_tol 0\.05 mm"):
        check_stream(s, ARM, strokes=[spike])
    # a vertex a little inside the tolerance passes: the distance is exact up to it
    low = spike.copy()
    low[2, 1] = c[1] + 0.045
    assert check_stream(s, ARM, strokes=[low]).max_vertex_miss_mm == pytest.approx(0.045,
                                                                                   abs=1e-6)


def test_good_stream_reports_its_vertex_miss():
    r = check_stream(GOOD, ARM, strokes=LINE)
    assert 0.0 <= r.max_vertex_miss_mm <= 0.05


# --- cases found by mutation testing after the straight-move tip-speed rule and
# the vertex-miss rule joined the check (tests/MUTATION.md) ----------------------

def _straight_run(step, n=6):
    """Pen-up rows along +x from the home pen position, ``step`` mm apart (row 0 at home)."""
    c = ARM.fk(ARM.home())
    q = ARM.ik(c + np.column_stack([step * np.arange(n), np.zeros(n)]))
    return q


def _up_stream(q, straight):
    n = len(q)
    return JointStream(t=np.arange(n) * 0.02, q=q, pen=np.zeros(n, np.int8), xy=ARM.fk(q),
                       period=0.02, stroke=np.full(n, -1), straight=straight)


def test_straight_pen_up_steps_are_held_to_the_tip_limit():
    # Speed of a step = |x[k] - x[k-1]| / T (finite differences, Craig 2005,
    # ch. 7); the rows are placed 1 mm apart along x, so every step is 50 mm/s.
    q = _straight_run(1.0)
    n = len(q)
    sp = np.hypot(*np.diff(ARM.fk(q), axis=0).T) / 0.02
    np.testing.assert_allclose(sp, 50.0, rtol=1e-9)
    every = np.ones(n, bool)
    # exactly at the limit passes (the rule is "must not exceed")
    check_stream(_up_stream(q, every), ARM, tip_speed=float(sp.max()))
    # without a tip limit nothing is checked, with no straight rows neither
    check_stream(_up_stream(q, every), ARM)
    check_stream(_up_stream(q, np.zeros(n, bool)), ARM, tip_speed=40.0)
    # row k marks the step from row k - 1: row 0 has no step before it
    only0 = np.zeros(n, bool)
    only0[0] = True
    check_stream(_up_stream(q, only0), ARM, tip_speed=40.0)
    # one marked step, the one into row k, named at row k with its own speed
    for k in (1, 3, n - 1):
        one = np.zeros(n, bool)
        one[k] = True
        with pytest.raises(InkreachError) as err:
            check_stream(_up_stream(q, one), ARM, tip_speed=40.0)
        assert str(err.value) == (f"row {k} (t = {k * 0.02:.2f} s): pen speed {sp[k - 1]:.2f} "
                                  "mm/s on a straight pen-up move exceeds the tip limit 40 mm/s; "
                                  "lower tip_speed and plan again"), str(err.value)


def test_straight_steps_of_different_lengths_name_the_first_too_fast():
    # steps of 0.5, 0.5, 1.2, 0.5, 2.0 mm (25, 25, 60, 25, 100 mm/s at T = 20 ms);
    # against 50 mm/s the first too fast is the step into row 3
    c = ARM.fk(ARM.home())
    xs = np.cumsum([0.0, 0.5, 0.5, 1.2, 0.5, 2.0])
    q = ARM.ik(c + np.column_stack([xs, np.zeros_like(xs)]))
    with pytest.raises(InkreachError, match=r"^row 3 \(t = 0\.06 s\): pen speed 60\.00 mm/s on a "
                                            r"straight pen-up move"):
        check_stream(_up_stream(q, np.ones(len(q), bool)), ARM, tip_speed=50.0)


def test_a_straight_column_of_the_wrong_length_is_refused():
    q = _straight_run(0.5)
    n = len(q)
    with pytest.raises(InkreachError) as err:
        check_stream(_up_stream(q, np.zeros(n - 1, bool)), ARM)
    assert str(err.value) == (f"the stream's straight-move column has shape ({n - 1},), not "
                              f"({n},); rebuild it with plan_motion")


def test_vertex_miss_is_exact_between_rows_far_apart():
    # Rows 2 mm apart (pieces of up to 2 * chord_tol are cut from each half
    # step); a vertex 0.04 mm off the base line, near the middle of a step,
    # has its miss equal to the point-to-segment distance (elementary
    # geometry) to the polyline of rows and joint-space midpoints.
    c = ARM.fk(ARM.home())
    xs = np.arange(-6.0, 6.0 + 1e-9, 2.0)
    q = ARM.ik(c + np.column_stack([xs, np.zeros_like(xs)]))
    n = len(q)
    s = JointStream(t=np.arange(n) * 0.02, q=q, pen=np.ones(n, np.int8), xy=ARM.fk(q),
                    period=0.02, stroke=np.zeros(n, int))
    v = c + np.array([0.7, 0.04])
    stroke = np.array([c + [-6.0, 0.0], v, c + [6.0, 0.0]])
    x = ARM.fk(q)
    xm = ARM.fk(0.5 * (q[:-1] + q[1:]))
    path = np.empty((2 * n - 1, 2))
    path[0::2], path[1::2] = x, xm
    a, b = path[:-1], path[1:]
    u = np.clip(np.einsum("ij,ij->i", v - a, b - a) / np.einsum("ij,ij->i", b - a, b - a), 0, 1)
    want = float(np.hypot(*(v - (a + u[:, None] * (b - a))).T).min())
    r = check_stream(s, ARM, strokes=[stroke], chord_tol=0.05)
    assert r.max_vertex_miss_mm == pytest.approx(want, abs=1e-9)


def _distance_to_polyline(p, poly):
    """Exact distance of points to a polyline (elementary geometry: the
    nearest point of each segment is the projection clamped to its ends)."""
    a, b = poly[:-1][None], poly[1:][None]
    d = b - a
    t = np.clip(np.einsum("nki,nki->nk", p[:, None] - a, d) / np.einsum("nki,nki->nk", d, d),
                0.0, 1.0)
    return np.hypot(*(p[:, None] - (a + t[..., None] * d)).transpose(2, 0, 1)).min(axis=1)


def test_vertex_misses_equal_the_exact_distance_to_the_drawn_path_through_its_midpoints():
    # Cases found by mutation testing of the vertex rule: the drawn path of a
    # stroke runs through its rows and the joint-space midpoints between them
    # in order, cut into short pieces; two strokes never join. Hand-made rows
    # (no kinematics): stroke 0 rows (0, 0) and (10, 0) with their midpoint at
    # (5, 3), then rows (10.19, 0) and (10.38, 0) without a midpoint between
    # them (not a pair); stroke 1 two rows 8 mm apart with a midpoint on their
    # chord. Every vertex within chord_tol of its own stroke's path must read
    # the exact distance (reference: point-to-polyline distance above); one
    # farther must read more than chord_tol.
    from inkreach.motion.check import _vertex_misses
    tol = 0.05
    x = np.array([[0.0, 0.0], [10.0, 0.0], [10.19, 0.0], [10.38, 0.0],
                  [0.0, 20.0], [8.0, 20.0]])
    lab = np.array([0, 0, 0, 0, 1, 1])
    kd = np.arange(6)
    pair = np.array([0, 4])                       # rows 0-1 and 4-5 have midpoints
    xm = np.array([[5.0, 3.0], [4.0, 20.0]])
    path0 = np.array([[0.0, 0.0], [5.0, 3.0], [10.0, 0.0], [10.19, 0.0], [10.38, 0.0]])
    path1 = np.array([[0.0, 20.0], [4.0, 20.0], [8.0, 20.0]])
    rng = np.random.default_rng(7)

    def near(path, n):
        seg = rng.integers(0, len(path) - 1, n)
        u = rng.uniform(-0.02, 1.02, n)[:, None]
        p = path[seg] + u * (path[seg + 1] - path[seg])
        return p + rng.uniform(-0.08, 0.08, (n, 2))

    s0 = np.concatenate([path0, near(path0, 400), [[10.45, 0.0], [10.0, 0.04], [5.0, 3.04]]])
    s1 = np.concatenate([path1, near(path1, 200), [[4.0, 20.03], [8.06, 20.0]]])
    got = _vertex_misses(x, xm, kd, lab, pair, [s0, s1], tol)
    want = np.concatenate([_distance_to_polyline(s0, path0), _distance_to_polyline(s1, path1)])
    close = want <= tol
    assert close.sum() > 200 and (~close).sum() > 50           # both kinds are tested
    np.testing.assert_allclose(got[close], want[close], atol=1e-9)
    assert np.all(got[~close] > tol)


# --- whole lines and report fields, from a full mutation run of check_stream
# (tests/MUTATION.md): a ``match=`` on part of a line lets a garbled line pass --

def _line(stream, **kw):
    with pytest.raises(InkreachError) as err:
        check_stream(stream, ARM, **kw)
    return str(err.value)


def test_every_refusal_is_its_whole_line():
    empty = JointStream(t=np.zeros(0), q=np.zeros((0, 2)), pen=np.zeros(0, np.int8),
                        xy=np.zeros((0, 2)), period=0.02)
    assert _line(empty) == "the stream has no rows; plan the motion again"
    # only the angles are short: every column must agree, not just some
    short_q = JointStream(t=GOOD.t, q=GOOD.q[:-1], pen=GOOD.pen, xy=GOOD.xy, period=0.02)
    n = len(GOOD.t)
    assert _line(short_q) == (f"the stream's columns disagree in length (t {n}, q ({n - 1}, 2), "
                              f"pen ({n},), xy ({n}, 2)); rebuild it with plan_motion")
    zero = JointStream(t=np.zeros(3), q=_rest((120.0, 60.0)).q, pen=np.zeros(3, np.int8),
                       xy=_rest((120.0, 60.0)).xy, period=0.0)
    assert _line(zero) == "the stream's period is 0.0; it must be greater than zero"
    t = GOOD.t.copy()
    t[3] += 0.001
    assert _line(_with(GOOD, t=t)) == ("row 3 (t = 0.06 s): time 0.061000 s is off the fixed "
                                       "period 0.02 s; the rows must be evenly spaced from t = 0")
    assert _line(_rest((120.0, -31.0))) == (
        "row 0 (t = 0.00 s): theta2 = -31.00 deg is outside the limits [-30, 150] deg; "
        "keep the drawing inside the usable region")
    xy = GOOD.xy.copy()
    xy[2] += [0.01, 0.02]
    x = ARM.fk(GOOD.q[2:3])[0]
    assert _line(_with(GOOD, xy=xy)) == (
        f"row 2 (t = 0.04 s): x, y = ({xy[2, 0]:.4f}, {xy[2, 1]:.4f}) mm but the angles put "
        f"the pen at ({x[0]:.4f}, {x[1]:.4f}) mm; rebuild xy from the angles")
    q = np.deg2rad([[120.0, 60.0], [124.0, 60.0]])
    s = JointStream(t=np.arange(2) * 0.02, q=q, pen=np.zeros(2, np.int8), xy=ARM.fk(q),
                    period=0.02)
    assert _line(s) == ("row 1 (t = 0.02 s): theta1 speed 200.0 deg/s exceeds the limit "
                        "180 deg/s; lower tip_speed or margin and plan again")


def test_the_acceleration_line_is_whole():
    # 1 deg then 2 deg steps: a second difference of 1 deg in 20 ms, 2500 deg/s^2
    q = np.deg2rad([[120.0, 60.0], [121.0, 60.0], [123.0, 60.0]])
    s = JointStream(t=np.arange(3) * 0.02, q=q, pen=np.zeros(3, np.int8), xy=ARM.fk(q),
                    period=0.02)
    # named at the middle row of the three (the second difference centred on it)
    assert _line(s) == ("row 1 (t = 0.02 s): theta1 acceleration 2500.0 deg/s^2 exceeds the "
                        "limit 1500 deg/s^2; lower margin and plan again")


def test_speed_and_acceleration_exactly_at_their_limits_pass():
    # Steps of exactly max_speed * T (the finite-difference speed, Craig 2005,
    # ch. 7): a stream at the limit is allowed, one a part in 10^6 over is not.
    vmax, amax, T = ARM.limits.max_speed, ARM.limits.max_accel, 0.02
    n = 8
    q = np.tile(np.deg2rad([120.0, 60.0]), (n, 1))
    q[:, 0] -= 0.3
    q[:, 0] += vmax * T * np.arange(n)
    s = JointStream(t=np.arange(n) * T, q=q, pen=np.zeros(n, np.int8), xy=ARM.fk(q), period=T)
    r = check_stream(s, ARM)
    assert r.max_speed_deg_s[0] == pytest.approx(np.rad2deg(vmax), rel=1e-12)
    q2 = q.copy()
    q2[:, 0] = q[0, 0] + vmax * (1 + 1e-6) * T * np.arange(n)
    with pytest.raises(InkreachError, match="speed"):
        check_stream(JointStream(t=s.t, q=q2, pen=s.pen, xy=ARM.fk(q2), period=T), ARM)
    # constant acceleration exactly amax from rest (q = a t^2 / 2 at the rows;
    # five rows keep the speed under its limit)
    n = 5
    k = np.arange(n)
    qa = np.tile(np.deg2rad([120.0, 60.0]), (n, 1))
    qa[:, 0] += 0.5 * amax * (k * T) ** 2
    ra = check_stream(JointStream(t=k * T, q=qa, pen=np.zeros(n, np.int8), xy=ARM.fk(qa),
                                  period=T), ARM)
    assert ra.max_accel_deg_s2[0] == pytest.approx(np.rad2deg(amax), rel=1e-9)
    assert ra.period == T and ra.rows == n and ra.duration == pytest.approx((n - 1) * T)


def test_without_strokes_the_deviation_and_vertex_miss_are_not_measured():
    r = check_stream(GOOD, ARM)
    assert np.isnan(r.max_deviation_mm) and np.isnan(r.max_vertex_miss_mm)


def test_a_two_row_pen_down_stream_is_held_to_the_tip_limit():
    # Two pen-down rows of one stroke 1 mm apart in 20 ms: 50 mm/s of pen
    # speed, above a 40 mm/s limit.
    c = ARM.fk(ARM.home())
    pts = c + np.array([[0.0, 0.0], [1.0, 0.0]])
    q = ARM.ik(pts)
    s = JointStream(t=np.arange(2) * 0.02, q=q, pen=np.ones(2, np.int8), xy=ARM.fk(q),
                    period=0.02, stroke=np.zeros(2, int))
    assert check_stream(s, ARM, tip_speed=60.0).max_tip_speed_mm_s == pytest.approx(50.0,
                                                                                    rel=1e-9)
    with pytest.raises(InkreachError, match="pen speed 50.00 mm/s exceeds the tip"):
        check_stream(s, ARM, tip_speed=40.0)


def test_each_strokes_midpoints_are_checked_on_their_own_stroke():
    # Stroke 1's rows sit on its stroke but their joint-space midpoint does not
    # (rows 40 mm apart): refused as the pen between two rows, on stroke 1. A
    # 1 s period keeps the speeds and accelerations inside their limits.
    c = ARM.fk(ARM.home())
    s0 = c + np.array([[-10.0, -20.0], [-10.0, -19.0]])
    s1 = c + np.array([[-20.0, 10.0], [20.0, 10.0]])
    q = ARM.ik(np.concatenate([s0, s0[-1:], s1[:1], s1]))
    s = JointStream(t=np.arange(6) * 1.0, q=q, pen=np.array([1, 1, 0, 0, 1, 1], np.int8),
                    xy=ARM.fk(q), period=1.0, stroke=np.array([0, 0, -1, -1, 1, 1]))
    line = _line(s, strokes=[s0, s1])
    assert line.startswith("row 4 (t = 4.00 s): the pen between this row and the next is "), line
    assert "mm off stroke 1, more than chord_tol 0.05 mm; plan the motion again" in line


def test_strokes_drawn_back_to_back_without_a_lift_are_refused():
    # Two strokes whose rows follow each other with the pen down (the second a
    # dot, then a lift): the move between them would draw a line that belongs
    # to neither.
    c = ARM.fk(ARM.home())
    s0 = c + np.array([[-10.0, -20.0], [-10.0, -19.9]])
    s1 = c + np.array([[-10.0, -19.8]])
    q = ARM.ik(np.concatenate([s0, s1, s1]))
    s = JointStream(t=np.arange(4) * 1.0, q=q, pen=np.array([1, 1, 1, 0], np.int8),
                    xy=ARM.fk(q), period=1.0, stroke=np.array([0, 0, 1, -1]))
    assert _line(s, strokes=[s0, s1]) == (
        "row 2 (t = 2.00 s): stroke 1 follows stroke 0 with the pen down; the pen must lift "
        "between strokes; plan the motion again")


def test_a_stroke_drawn_in_two_goes_is_refused():
    # Stroke 1 (after a stroke 0 elsewhere) drawn up to its middle, the pen
    # lifted for one row while the arm moves on, then lowered again: the gap
    # is never drawn, though every pen-down row lies on the stroke and its
    # ends are exact.
    c = ARM.fk(ARM.home())
    s0 = c + np.array([[10.0, -20.0], [10.0, -19.9]])
    s1 = c + np.array([[-10.0, -20.0], [-10.0, -19.0]])
    ys = np.linspace(-20.0, -19.0, 11)
    q1 = ARM.ik(c + np.column_stack([np.full(11, -10.0), ys]))
    q0 = ARM.ik(s0)
    q = np.concatenate([q0, q0[-1:], q1])
    pen = np.ones(len(q), np.int8)
    pen[2] = 0
    pen[3 + 4] = 0                                      # one row lifted inside stroke 1
    lab = np.r_[0, 0, -1, np.ones(11, int)]
    lab[pen == 0] = -1
    s = JointStream(t=np.arange(len(q)) * 1.0, q=q, pen=pen, xy=ARM.fk(q), period=1.0,
                    stroke=lab)
    assert _line(s, strokes=[s0, s1]) == (
        "row 8 (t = 8.00 s): stroke 1 goes on after the pen lifted at row 7; draw each "
        "stroke in one go and plan the motion again")


def test_a_short_xy_column_alone_is_refused():
    n = len(GOOD.t)
    s = JointStream(t=GOOD.t, q=GOOD.q, pen=GOOD.pen, xy=GOOD.xy[:-1], period=0.02)
    assert _line(s) == (f"the stream's columns disagree in length (t {n}, q ({n}, 2), "
                        f"pen ({n},), xy ({n - 1}, 2)); rebuild it with plan_motion")


def test_the_move_after_the_lift_row_is_not_held_to_the_tip_limit():
    # The tip limit binds pen-down pairs of one stroke (and straight pen-up
    # moves); the step from the lift row to the next, pen-up row is a pen-up
    # move: 1.2 mm in 20 ms (60 mm/s) there passes a 40 mm/s tip limit.
    c = ARM.fk(ARM.home())
    pts = c + np.array([[0.0, 0.0], [0.5, 0.0], [1.7, 0.0], [1.7, 0.0]])
    q = ARM.ik(pts)
    s = JointStream(t=np.arange(4) * 0.02, q=q, pen=np.array([1, 1, 0, 0], np.int8),
                    xy=ARM.fk(q), period=0.02, stroke=np.array([0, 0, -1, -1]))
    r = check_stream(s, ARM, tip_speed=40.0)
    assert r.max_tip_speed_mm_s == pytest.approx(25.0, rel=1e-9)
    # nor the move into the touch-down row (the pen lowers when it arrives)
    back = JointStream(t=s.t, q=q[::-1].copy(), pen=s.pen[::-1].copy(), xy=ARM.fk(q[::-1]),
                       period=0.02, stroke=s.stroke[::-1].copy())
    assert check_stream(back, ARM, tip_speed=40.0).max_tip_speed_mm_s == pytest.approx(
        25.0, rel=1e-9)


def test_the_vertex_line_names_the_point_its_distance_or_too_far():
    # Stroke 1 (the second, so its point is counted within its own stroke) is
    # a straight base with a thin spike at x = 0; the rows run along the base
    # (skipping x in (0, 0.02)), so every row and midpoint is on the stroke but
    # the spike's tip is not on the drawn path. A 0.08 mm spike is within the
    # search radius (chord_tol + h / 2 = 0.1 mm) and its distance is printed; a
    # 1 mm spike is beyond it: "too far". A 1 s period keeps every speed low.
    c = ARM.fk(ARM.home())
    xs = np.concatenate([np.linspace(-5.0, 0.0, 251), np.linspace(0.02, 5.0, 250)])
    q0 = ARM.ik(c + np.array([[-5.0, -20.0], [-5.0, -19.95]]))
    q1 = ARM.ik(c + np.column_stack([xs, np.zeros_like(xs)]))
    q = np.concatenate([q0, q0[-1:], q1])              # the pen lifts between the strokes
    n = len(q)
    pen = np.ones(n, np.int8)
    pen[2] = 0
    s = JointStream(t=np.arange(n) * 1.0, q=q, pen=pen, xy=ARM.fk(q),
                    period=1.0, stroke=np.r_[0, 0, -1, np.ones(len(q1), int)])
    s0 = ARM.fk(q0)
    for height, far in ((0.08, "0.080 mm"), (1.0, "too far")):
        s1 = c + np.array([[-5.0, 0.0], [0.0, 0.0], [0.0, height], [0.02, 0.0], [5.0, 0.0]])
        p = s1[2]
        assert _line(s, strokes=[s0, s1]) == (
            f"row 3 (t = 3.00 s): point 2 of stroke 1 at ({p[0]:.3f}, {p[1]:.3f}) mm is {far} "
            "from the drawn path, more than chord_tol 0.05 mm; the stroke is not drawn whole; "
            "plan the motion again")


def test_time_is_checked_from_t_zero_and_stays_exact_on_long_streams():
    # Every row at k * T from t = 0: a stream shifted by 1 ms is refused at
    # row 0; a 20-minute stream at rest (60,001 rows) passes.
    r = _rest((120.0, 60.0), n=5)
    shifted = JointStream(t=r.t + 0.001, q=r.q, pen=r.pen, xy=r.xy, period=0.02)
    assert _line(shifted) == ("row 0 (t = 0.00 s): time 0.001000 s is off the fixed period "
                              "0.02 s; the rows must be evenly spaced from t = 0")
    n = 60_001
    long = _rest((120.0, 60.0), n=n)
    assert check_stream(long, ARM).duration == pytest.approx(1200.0)


@pytest.mark.parametrize("arm_name", ["default", "serial"])
def test_a_move_timed_exactly_at_the_limit_needs_no_repair(arm_name, monkeypatch):
    # A single-joint rest-to-rest move of amax (5 T)^2 is the textbook triangle
    # of exactly 10 periods at amax (Biagiotti & Melchiorri 2008, sec. 3.2);
    # sampled, its second differences sit at the acceleration it was timed
    # with. The planner times against the limits less the rounding allowance
    # of _stream_violations, so its first timing already passes and needs no
    # slow-down round (timed at amax itself it would need one).
    import inkreach.motion.plan as plan_module
    from inkreach.motion.check import _written_limits

    arm = load_arm(arm_name)
    h = arm.home() if arm.home() is not None else arm.ik(np.array([-60.0, 180.0]))
    d = arm.limits.max_accel * (5 * 0.02) ** 2
    rounds = []
    real = plan_module._slow_down
    monkeypatch.setattr(plan_module, "_slow_down",
                        lambda *a, **k: rounds.append(1) or real(*a, **k))
    s = plan_motion([], arm, start=h, end=h + np.array([d, 0.0]))
    assert rounds == []
    acc = np.abs(np.diff(s.q, 2, axis=0)).max(axis=1) / s.period ** 2
    assert acc.max() <= _written_limits(arm, s.period)[1]
    check_stream(s, arm)
