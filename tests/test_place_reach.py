"""Every placed point is drawable: exact reachability on the built-in arms."""

import functools

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from inkreach.arms import default_arm, load_arm, workspace_map
from inkreach.place import place_drawing

ARMS = {"default": default_arm, "wide": lambda: load_arm("wide"), "serial": lambda: load_arm("serial")}


@functools.lru_cache(maxsize=None)
def _arm(name):
    arm = ARMS[name]()
    return arm, workspace_map(arm)


@st.composite
def drawings(draw):
    """A few random polylines inside a random picture size (invented data)."""
    w = draw(st.integers(20, 800))
    h = draw(st.integers(20, 800))
    n_strokes = draw(st.integers(1, 4))
    rng = np.random.default_rng(draw(st.integers(0, 2**32 - 1)))
    strokes = []
    for _ in range(n_strokes):
        n = draw(st.integers(1, 12))
        strokes.append(rng.uniform([0, 0], [w - 1, h - 1], size=(n, 2)))
    return strokes


def _dense(strokes, spacing_mm=0.25):
    """Points every quarter millimetre along each stroke (arm mm)."""
    out = []
    for s in strokes:
        out.append(s)
        for a, b in zip(s[:-1], s[1:]):
            n = max(int(np.ceil(np.hypot(*(b - a)) / spacing_mm)), 1)
            t = np.linspace(0, 1, n + 1)[:, None]
            out.append(a + t * (b - a))
    return np.concatenate(out)


@pytest.mark.parametrize("name", sorted(ARMS))
@settings(max_examples=12, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(strokes=drawings(), upright=st.booleans())
def test_every_placed_point_and_pen_up_move_passes_arm_reachable(name, strokes, upright):
    # Reference: the arm's own exact test arm.reachable (IK exists in the configured
    # mode, inside the limits, FK round-trips, conditioning at or above the floor).
    arm, wmap = _arm(name)
    p = place_drawing(strokes, arm, wmap=wmap, rotations=[0.0] if upright else None)
    placed = p.apply_all(strokes)
    assert arm.reachable(np.concatenate(placed)).all()
    assert arm.reachable(_dense(placed)).all()
    # straight pen-up moves between any two points of the drawing stay reachable
    pts = np.concatenate(placed)
    rng = np.random.default_rng(0)
    i, j = rng.integers(0, len(pts), size=(2, 200))
    t = rng.random((200, 1))
    assert arm.reachable(pts[i] + t * (pts[j] - pts[i])).all()
    assert arm.limits.min_conditioning <= p.worst_conditioning <= arm.conditioning_at(pts).min() + 1e-12


@pytest.mark.parametrize("name", sorted(ARMS))
def test_single_dot_and_straight_line_are_placed_reachably(name):
    arm, wmap = _arm(name)
    dot = [np.array([[12.0, 30.0]])]
    line = [np.array([[0.0, 0.0], [50.0, 25.0], [100.0, 50.0]])]
    for strokes in (dot, line):
        p = place_drawing(strokes, arm, wmap=wmap, image_size=(120, 80))
        assert arm.reachable(np.concatenate(p.apply_all(strokes))).all()
