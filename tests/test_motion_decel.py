"""Deceleration into a stroke's end: spread over the approach, never a stop short of it."""

import numpy as np

from inkreach.arms import default_arm
from inkreach.motion import check_stream, plan_motion


def test_a_fast_smooth_stroke_slows_down_into_its_end_without_stopping_early():
    # A 270-degree arc of radius 40 mm cut into 600 short chords, with a
    # tip speed high enough that the joint limits govern: the stop at its end
    # must be prepared over many chords (the backward pass of the phase-plane
    # timing, Bobrow, Dubowsky & Gibson 1985). If it is not, the pen reaches
    # the end too fast, and only a global slow-down or a stop short of the end
    # keeps the stream within the acceleration limit.
    arm = default_arm()
    th = np.linspace(0.0, 1.5 * np.pi, 600)
    arc = [np.column_stack([40 * np.cos(th), 150 + 40 * np.sin(th)])]
    s = plan_motion(arc, arm, tip_speed=300.0)
    check_stream(s, arm, strokes=arc)
    n_lift = int(np.ceil(arm.pen.lift_s / s.period - 1e-9))
    down = np.flatnonzero(s.pen == 1)
    a, b = down[0], down[-1]
    step = np.abs(np.diff(s.q[a + n_lift - 1:b + 1], axis=0)).max(axis=1)
    # every row after the lowering dwell moves, up to the stroke's last row
    assert np.all(step > 0), np.flatnonzero(step == 0)
    # and the last few rows decelerate within the limit (finite differences)
    acc = np.abs(np.diff(s.q[b - 10:b + 3], n=2, axis=0)) / s.period ** 2
    assert acc.max() <= arm.limits.max_accel * (1 + 1e-9)
    # the slowest chord speed in the middle of the arc stays well above zero:
    # a smooth curve needs no stop (a quarter of the median, a bound chosen here to
    # tell "slowed for a corner" from "stopped")
    mid = step[len(step) // 4: 3 * len(step) // 4]
    assert mid.min() > 0.25 * np.median(mid)
