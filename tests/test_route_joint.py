import numpy as np
import pytest

from inkreach.arms import Limits, PenSpec, SerialArm, default_arm
from inkreach.errors import InkreachError
from inkreach.route import order_strokes, pen_up_time, reorder_joint_space


def _arm(v=1.0, a=2.0, lift=0.1):
    return SerialArm(upper=100, lower=100, limits=Limits(max_speed=v, max_accel=a),
                     pen=PenSpec(lift_s=lift))


def _move(arm, q0, q1):
    p = arm.fk(np.array([q0, q1], float))
    return [p[:1], p[1:]]


def test_pen_up_time_of_a_long_move_follows_the_trapezoid():
    # Craig, Introduction to Robotics, sec. 7.3 (parabolic blends): a
    # rest-to-rest move d > v^2/a takes d/v + v/a. d = 1.2 rad, v = 1, a = 2:
    # 1.2 + 0.5 = 1.7 s, plus 2 x 0.1 s of pen lift.
    arm = _arm()
    t = pen_up_time(_move(arm, (0.5, 1.0), (0.5, 2.2)), arm)
    assert t == pytest.approx(1.7 + 0.2, abs=1e-6)


def test_pen_up_time_of_a_short_move_follows_the_triangle():
    # Craig sec. 7.3: d <= v^2/a never reaches full speed: t = 2 sqrt(d/a).
    # d = 0.3 rad, a = 2: 2 sqrt(0.15) s.
    arm = _arm()
    t = pen_up_time(_move(arm, (0.5, 1.0), (0.5, 1.3)), arm)
    assert t == pytest.approx(2 * np.sqrt(0.15) + 0.2, abs=1e-6)


def test_pen_up_time_is_set_by_the_slower_motor():
    arm = _arm()
    both = pen_up_time(_move(arm, (0.5, 1.0), (0.8, 2.2)), arm)
    one = pen_up_time(_move(arm, (0.5, 1.0), (0.5, 2.2)), arm)
    assert both == pytest.approx(one, abs=1e-6)


def test_pen_up_time_counts_the_approach_with_one_lowering():
    arm = _arm()
    s = [arm.fk(np.array([[0.5, 2.2]]))]
    assert pen_up_time(s, arm, start_q=(0.5, 1.0)) == pytest.approx(1.7 + 0.1, abs=1e-6)


def test_pen_up_time_refuses_strokes_out_of_reach():
    with pytest.raises(InkreachError, match="reach"):
        pen_up_time([np.array([[500.0, 0.0]]), np.array([[0.0, 50.0]])], _arm())


def _strokes_in_reach(n, seed):
    rng = np.random.default_rng(seed)
    a = np.column_stack([rng.uniform(-50, 50, n), rng.uniform(130, 210, n)])
    return [np.array([p, p + rng.normal(0, 3, 2)]) for p in a]


def test_reorder_joint_space_never_makes_pen_up_time_worse():
    arm = default_arm()
    q0 = arm.home()
    r = order_strokes(_strokes_in_reach(150, 0))
    j = reorder_joint_space(r, arm, start_q=q0)
    assert pen_up_time(j.strokes, arm, q0) <= pen_up_time(r.strokes, arm, q0) + 1e-9


def test_reorder_joint_space_keeps_indices_to_the_original_strokes():
    arm = default_arm()
    src = _strokes_in_reach(80, 1)
    j = reorder_joint_space(order_strokes(src), arm)
    assert sorted(j.order.tolist()) == list(range(len(src)))
    for i, out, rev in zip(j.order, j.strokes, j.reversed):
        assert np.array_equal(src[i][::-1] if rev else src[i], out)


def test_reorder_joint_space_returns_the_route_when_nothing_helps():
    arm = default_arm()
    r = order_strokes(_strokes_in_reach(1, 2))
    assert reorder_joint_space(r, arm) is r
    # and with several strokes that already run straight out from the rest
    # posture, one after the other (each pen-up hop 1 mm, every other order
    # longer): nothing helps, so the same route comes back
    p0 = arm.fk(arm.home())
    d = np.array([0.0, -1.0])
    row = [np.array([p0 + d * (3 * k + 1), p0 + d * (3 * k + 3)]) for k in range(6)]
    r = order_strokes(row, start=p0)
    assert [s.tolist() for s in r.strokes] == [s.tolist() for s in row]
    assert reorder_joint_space(r, arm, start_q=arm.home()) is r
