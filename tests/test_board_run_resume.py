"""Where an interrupted run stands and the stream that finishes it (pure functions)."""

import numpy as np
import pytest
from hypothesis import given, settings, strategies as st

from inkreach.arms import default_arm
from inkreach.board.resume import (Cursor, arc_position, cursor_after_row, cut_stroke,
                                   resume_stream, stroke_runs)
from inkreach.motion import check_stream, plan_motion

_POLY = np.array([[0.0, 0.0], [10.0, 0.0], [10.0, 5.0], [4.0, 5.0]])   # 21 mm long


def _length(p):
    return float(np.hypot(*np.diff(p, axis=0).T).sum()) if len(p) > 1 else 0.0


@settings(max_examples=100, deadline=None)
@given(st.floats(0.0, 21.0))
def test_cut_stroke_keeps_exactly_the_rest(s):
    # Invariant: what is left after arc length s is L - s long, starts at the
    # point at s, and ends where the stroke ends.
    rest = cut_stroke(_POLY, s)
    assert _length(rest) == pytest.approx(21.0 - s, abs=1e-9)
    assert arc_position(_POLY, rest[0]) == pytest.approx(s, abs=1e-9)
    assert np.allclose(rest[-1], _POLY[-1])


def test_stroke_runs_follow_pen_down_runs():
    pen = np.array([0, 0, 1, 1, 1, 0, 0, 1, 0, 1, 1])
    assert stroke_runs(pen).tolist() == [[2, 4], [7, 7], [9, 10]]
    assert stroke_runs(np.zeros(4)).shape == (0, 2)


def test_cursor_after_a_row():
    pen = np.array([0, 1, 1, 1, 0, 0, 1, 1, 0])
    xy = np.array([[0, 0], [0, 0], [3, 0], [6, 0], [6, 0], [9, 9], [9, 9], [9, 12], [9, 12]],
                  float)
    strokes = [np.array([[0.0, 0.0], [6.0, 0.0]]), np.array([[9.0, 9.0], [9.0, 12.0]])]
    assert cursor_after_row(-1, pen, xy, strokes) == Cursor(0)
    assert cursor_after_row(2, pen, xy, strokes) == Cursor(0, 3.0)   # mid-stroke
    assert cursor_after_row(3, pen, xy, strokes) == Cursor(1)        # stroke 0 finished
    assert cursor_after_row(5, pen, xy, strokes) == Cursor(1)        # on the way to 1
    assert cursor_after_row(7, pen, xy, strokes) == Cursor(-1)       # all drawn


def test_resume_stream_draws_the_rest_once_and_passes_the_check():
    arm = default_arm()
    strokes = [np.array([[-20.0, 150.0], [20.0, 150.0]]),
               np.array([[-20.0, 170.0], [20.0, 170.0]])]
    plan = plan_motion(strokes, arm)
    q, pen = plan.q, plan.pen
    runs = stroke_runs(pen)
    row = int(runs[0, 0] + (runs[0, 1] - runs[0, 0]) // 2)       # half way along stroke 0
    cur = cursor_after_row(row, pen, plan.xy, strokes)
    assert cur.stroke == 0 and 5.0 < cur.s < 35.0
    # The board braked past the last sample: somewhere near it, at rest.
    posture = q[row] + np.deg2rad([0.3, -0.2])
    prefix, tail_from, k, s0, qq, pp = resume_stream(cur, posture, arm, q, pen, strokes,
                                                     plan.period)
    assert np.allclose(qq[0], posture) and tail_from == runs[0, 1] + 1
    # The prefix draws from the resume point to the stroke's end (pen down), and
    # the plan's own rows follow unchanged.
    down = prefix.xy[prefix.pen == 1]
    assert np.hypot(*(down[0] - plan.xy[row])) < 0.06             # chord tolerance + rounding
    assert np.allclose(down[-1], strokes[0][-1], atol=1e-6)
    assert np.all(prefix.pen[:np.argmax(prefix.pen)] == 0)        # approach with the pen up
    assert np.array_equal(qq[len(prefix.q):], q[tail_from:])
    # Stroke 0's pen-down x range is covered once: before (plan rows) and after
    # (prefix) meet at the resume point without overlap beyond the tolerance.
    before = plan.xy[runs[0, 0]:row + 1, 0]
    assert before.max() <= down[:, 0].min() + 0.06
    # Independent of the function's own check, run the final check again.
    from inkreach.motion import JointStream
    whole = JointStream(t=np.arange(len(qq)) * plan.period, q=qq, pen=pp, xy=arm.fk(qq),
                        period=plan.period)
    check_stream(whole, arm, strokes=[cut_stroke(strokes[0], s0), strokes[1]], chord_tol=0.051,
                 atol=1e-3)


@pytest.mark.parametrize("tip", [20.0, 40.0])
def test_the_rest_of_a_stroke_keeps_the_plans_own_tip_speed(tip):
    # The re-timed rest of an interrupted stroke is drawn under the plan's
    # tip_speed (plan.json options), measured here as the finite-difference
    # speed of the forward kinematics of consecutive pen-down rows (Craig 2005,
    # ch. 7). Planned without the plan's options, the rest of a 40 mm straight
    # stroke on the default arm runs at the default 80 mm/s instead.
    arm = default_arm()
    strokes = [np.array([[-20.0, 150.0], [20.0, 150.0]])]
    plan = plan_motion(strokes, arm, tip_speed=tip)
    runs = stroke_runs(plan.pen)
    row = int(runs[0, 0] + 3)
    cur = cursor_after_row(row, plan.pen, plan.xy, strokes)
    posture = plan.q[row] + np.deg2rad([0.3, -0.2])

    def top_speed(motion):
        prefix = resume_stream(cur, posture, arm, plan.q, plan.pen, strokes, plan.period,
                               motion=motion)[0]
        both = (prefix.pen[1:] == 1) & (prefix.pen[:-1] == 1)
        return (np.hypot(*np.diff(arm.fk(prefix.q), axis=0).T)[both] / prefix.period).max()

    got = top_speed({"tip_speed": tip, "chord_tol": 0.05, "corner_blend": True})
    assert 0.9 * tip <= got <= tip * (1 + 1e-6)         # the long straight rest reaches it
    assert top_speed(None) > 1.5 * tip                  # the default limit is not the plan's


def test_the_joined_stream_keeps_the_prefixs_straight_moves_under_the_tip_limit():
    # A prefix whose straight pen-up step runs at 60 mm/s (1.2 mm in 20 ms,
    # finite differences of the forward kinematics) is refused under a 40 mm/s
    # plan; without its straight marks the joined stream would not be held to
    # the limit there. The plan's own rows carry no marks.
    from inkreach.board.resume import _check_joined, _straight_marks
    from inkreach.errors import InkreachError
    from inkreach.motion import JointStream
    arm = default_arm()
    c = arm.fk(arm.home())
    q = arm.ik(c + np.array([[0.0, 0.0], [0.0, 0.0], [1.2, 0.0], [1.2, 0.0]]))
    pen = np.zeros(4, np.int8)
    prefix = JointStream(t=np.arange(3) * 0.02, q=q[:3], pen=pen[:3], xy=arm.fk(q[:3]),
                         period=0.02, straight=np.array([False, False, True]))
    marks = _straight_marks(prefix, 1)
    assert marks.tolist() == [False, False, True, False]
    opts = {"chord_tol": 0.05, "tip_speed": 40.0, "corner_blend": True}
    with pytest.raises(InkreachError, match="on a straight pen-up move exceeds the tip limit"):
        _check_joined(q, pen, arm, 0.02, None, opts, marks)
    _check_joined(q, pen, arm, 0.02, None, opts, None)         # unmarked: joint limits only
