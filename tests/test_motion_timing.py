"""Move times against the textbook trapezoidal-velocity formulas."""

import numpy as np
import pytest

from inkreach.arms import default_arm, load_arm
from inkreach.motion import check_stream, plan_motion, trapezoid_time


# Biagiotti & Melchiorri, "Trajectory Planning for Automatic Machines and
# Robots" (2008), sec. 3.2.2: a rest-to-rest move of length h with limits
# vmax, amax takes T = h/vmax + vmax/amax when h >= vmax^2/amax (trapezoid),
# otherwise T = 2 sqrt(h/amax) (triangle). Same in Craig, "Introduction to
# Robotics", ch. 7 (linear segments with parabolic blends).
def test_trapezoid_time_matches_textbook_trapezoid():
    assert trapezoid_time(10.0, 2.0, 1.0) == pytest.approx(10.0 / 2.0 + 2.0 / 1.0)
    assert trapezoid_time(np.pi, np.deg2rad(180), np.deg2rad(1500)) == pytest.approx(
        np.pi / np.deg2rad(180) + np.deg2rad(180) / np.deg2rad(1500))


def test_trapezoid_time_matches_textbook_triangle():
    assert trapezoid_time(1.0, 2.0, 1.0) == pytest.approx(2.0 * np.sqrt(1.0))
    assert trapezoid_time(0.1, 1.0, 4.0) == pytest.approx(2.0 * np.sqrt(0.1 / 4.0))


def test_trapezoid_time_is_continuous_where_the_cruise_vanishes():
    # At h = vmax^2/amax both textbook formulas give 2 vmax/amax.
    v, a = 3.0, 2.0
    h = v * v / a
    assert trapezoid_time(h * (1 - 1e-12), v, a) == pytest.approx(2 * v / a)
    assert trapezoid_time(h * (1 + 1e-12), v, a) == pytest.approx(2 * v / a)


def test_trapezoid_time_ignores_the_sign_and_takes_arrays():
    t = trapezoid_time(np.array([-1.0, 0.0, 10.0]), 2.0, 1.0)
    np.testing.assert_allclose(t, [2.0, 0.0, 7.0])


@pytest.mark.parametrize("joint, deg", [(0, 8.0), (1, -12.0), (0, 40.0), (1, -60.0)])
def test_single_joint_stream_lasts_the_textbook_time(joint, deg):
    # Textbook single-joint move (Biagiotti & Melchiorri 2008, sec. 3.2.2)
    # with the planning limits (margin x the arm's); whole periods and the
    # fixed-period sampling may add one or two periods.
    arm = default_arm()
    start = arm.home()
    end = start.copy()
    end[joint] += np.deg2rad(deg)
    margin = 0.97
    s = plan_motion([], arm, start=start, end=end, margin=margin)
    check_stream(s, arm)
    lim = arm.limits
    want = trapezoid_time(np.deg2rad(abs(deg)), margin * lim.max_speed, margin * lim.max_accel)
    assert abs(s.duration - want) <= 2 * s.period + 1e-9
    # Never faster than the true limits allow (up to the sampling).
    assert s.duration >= trapezoid_time(np.deg2rad(abs(deg)), lim.max_speed, lim.max_accel) - s.period
    # Only the one joint moves.
    other = 1 - joint
    np.testing.assert_allclose(s.q[:, other], start[other], atol=1e-12)
    assert np.all(s.pen == 0)


def test_single_joint_stream_starts_and_ends_exactly_at_rest():
    arm = load_arm("serial")
    start = np.deg2rad([90.0, 90.0])
    end = np.deg2rad([60.0, 90.0])
    s = plan_motion([], arm, start=start, end=end)
    np.testing.assert_allclose(s.q[0], start, atol=1e-12)
    np.testing.assert_allclose(s.q[-1], end, atol=1e-12)
    np.testing.assert_allclose(s.t, np.arange(len(s)) * s.period)


# Case found by mutation testing: a move shorter than vmax^2/amax but longer
# than 1/amax (and than vmax/amax) is still a triangle (Biagiotti &
# Melchiorri 2008, sec. 3.2.2: the cruise speed is reached only when
# h >= vmax^2/amax); its peak speed is sqrt(h amax), below vmax.
def test_trapezoid_time_short_of_the_cruise_is_a_triangle_at_any_speed_scale():
    h, v, a = 3.0, 2.0, 1.0                   # vmax^2/amax = 4 > h > vmax/amax = 2
    assert np.sqrt(h * a) < v
    assert trapezoid_time(h, v, a) == pytest.approx(2.0 * np.sqrt(h / a))   # 2 sqrt(3)
    assert trapezoid_time(h, v, a) != pytest.approx(h / v + v / a)          # not 3.5
    # and in joint units: 20 deg at 180 deg/s, 1500 deg/s^2 (21.6 deg to cruise)
    h, v, a = np.deg2rad(20.0), np.deg2rad(180.0), np.deg2rad(1500.0)
    assert trapezoid_time(h, v, a) == pytest.approx(2.0 * np.sqrt(h / a))
