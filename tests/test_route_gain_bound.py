"""The route's kicks stop when a round of them is worth too few drawing seconds."""

import numpy as np
from hypothesis import given, settings, strategies as st

from inkreach.arms import default_arm
from inkreach.route import greedy_order, route_strokes
from inkreach.route._search import PathSearch


class _Counting(PathSearch):
    kicks = 0

    def run(self, active=None, *a, **k):
        if active is not None:
            self.kicks += 1
        return super().run(active, *a, **k)


def _points(n, seed):
    return np.random.default_rng(seed).uniform(0, 100, (n, 2))


def _kicks(min_gain, n=300):
    xy = _points(n, 1)
    s = _Counting(xy, np.arange(n), np.arange(n), start=(0.0, 0.0), k=8)
    s.run()
    before = s.cost
    s.kick_search(np.random.default_rng(0), kicks=20 * n, min_gain=min_gain)
    return s.kicks, before, s.cost


def test_kicks_stop_after_three_rounds_that_gain_less_than_min_gain():
    # A gain no round can reach: the search stops after three rounds
    # (151 kicks each for 302 nodes: one per two nodes, at least 100).
    kicks, before, after = _kicks(min_gain=1e9)
    assert 0.98 * 3 * 151 <= kicks <= 3 * 151   # a draw on a fixed edge is skipped
    assert after <= before + 1e-9


def test_kicks_keep_going_while_rounds_pay():
    # Without a bound every kick is tried (a few draws that fall on fixed
    # edges are skipped); with a bound of (almost) zero gain only a round
    # three rounds that gain nothing stop it, later than the first three.
    kicks_all, before, after_all = _kicks(min_gain=-np.inf)
    kicks_zero, _, after_zero = _kicks(min_gain=1e-12)
    assert kicks_all > 0.99 * 20 * 300
    assert 3 * 151 < kicks_zero <= kicks_all
    assert after_all < before and after_zero < before


def _endpoint_sets(draw_n, seed):
    rng = np.random.default_rng(seed)
    out = []
    for _ in range(draw_n):
        a = rng.uniform(-60, 60, 2) + np.array([0.0, 200.0])
        out.append(np.vstack([a, a + rng.uniform(-8, 8, 2)]))
    return out


@settings(max_examples=15, deadline=None)
@given(st.integers(2, 60), st.integers(0, 10_000), st.sampled_from([0.0, 0.002, 0.5]))
def test_route_is_never_longer_than_nearest_neighbour(n, seed, share):
    # Nearest neighbour (Rosenkrantz, Stearns and Lewis 1977) is the baseline
    # the route must never lose to, whatever the gain bound.
    arm = default_arm()
    strokes = _endpoint_sets(n, seed)
    q0 = arm.ik(np.array([0.0, 200.0]))
    if not np.all(np.isfinite(arm.ik(np.vstack(strokes)))):
        return
    r = route_strokes(strokes, arm, q0, joint_order=False, gain_share=share)
    nn = greedy_order(strokes, start=arm.fk(q0))
    assert r.stats.pen_up_mm <= nn.stats.pen_up_mm + 1e-9


def test_gain_bounds_are_the_share_of_the_estimated_drawing_time():
    # Drawing time = pen-up time (trapezoid moves, Craig 2005 section 7.3,
    # through pen_up_time) + pen-down length at the planner's tip speed.
    from inkreach.motion import TIP_SPEED
    from inkreach.route import gain_bounds, pen_up_time

    arm = default_arm()
    centre = np.array([0.0, 200.0])
    strokes = [centre + 0.3 * (p - centre) for p in _endpoint_sets(30, 5)]
    assert np.all(np.isfinite(arm.ik(np.vstack(strokes))))
    q0 = arm.ik(np.array([0.0, 200.0]))
    nn = greedy_order(strokes, start=arm.fk(q0))
    mm, s = gain_bounds(nn, arm, q0, 0.01)
    est = pen_up_time(nn.strokes, arm, q0) + nn.stats.pen_down_mm / TIP_SPEED
    assert np.isclose(s, 0.01 * est)
    move_s = pen_up_time(nn.strokes, arm, q0) - arm.pen.lift_s * (2 * 30 - 1)
    assert np.isclose(mm, 0.01 * est * nn.stats.pen_up_mm / move_s)
    assert gain_bounds(nn, arm, q0, 0.0) == (0.0, 0.0)
    # a plan drawn at another tip speed estimates its pen-down time at that speed
    slow = gain_bounds(nn, arm, q0, 0.01, tip_speed=20.0)[1]
    assert np.isclose(slow, 0.01 * (pen_up_time(nn.strokes, arm, q0)
                                    + nn.stats.pen_down_mm / 20.0))
