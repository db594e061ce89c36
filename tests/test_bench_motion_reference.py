"""The bench's time-optimal reference path stays within the chord tolerance."""

import os
import sys

import numpy as np
import pytest

sys.path.insert(0, os.path.join(os.path.dirname(__file__), "..", "bench"))
from bench_motion import rounded_corners  # noqa: E402


def _distance_to_polyline(p, poly):
    a, b = poly[:-1][None], poly[1:][None]
    ab = b - a
    u = np.clip(((p[:, None] - a) * ab).sum(-1) / (ab * ab).sum(-1), 0.0, 1.0)
    return np.hypot(*(p[:, None] - (a + u[..., None] * ab)).transpose(2, 0, 1)).min(axis=1)


@pytest.mark.parametrize("turn_deg", [15.0, 90.0, 150.0])
def test_a_corner_is_rounded_by_the_tangent_arc_passing_the_tolerance_from_it(turn_deg):
    # Plane geometry: the circle of radius R tangent to both legs of a corner
    # turning by th has its centre R / cos(th / 2) from the vertex on the
    # bisector, so its nearest point lies R (1 / cos(th / 2) - 1) from the
    # vertex, and it touches each leg R tan(th / 2) from the vertex.
    tol = 0.05
    th = np.radians(turn_deg)
    poly = np.array([[-20.0, 0.0], [0.0, 0.0], 20.0 * np.array([np.cos(th), np.sin(th)])])
    pts = rounded_corners(poly, tol)
    assert np.allclose(pts[[0, -1]], poly[[0, -1]])
    d = _distance_to_polyline(pts, poly)
    assert d.max() <= tol * (1 + 1e-9)
    assert np.hypot(*pts.T).min() == pytest.approx(tol, rel=1e-9)    # the arc's middle
    R = tol * np.cos(th / 2) / (1 - np.cos(th / 2))
    on_leg = pts[(np.abs(pts[:, 1]) < 1e-12) & (pts[:, 0] <= 0)]
    assert -on_leg[:, 0].min() == pytest.approx(20.0)
    assert -on_leg[:, 0].max() == pytest.approx(R * np.tan(th / 2), rel=1e-9)


def test_a_corner_between_short_legs_is_rounded_tighter_inside_the_tolerance():
    # Legs of 0.2 mm: the tangent points are held to half of each leg, so the
    # arc passes closer to the vertex than the tolerance.
    poly = np.array([[-0.2, 0.0], [0.0, 0.0], [0.0, 0.2]])
    pts = rounded_corners(poly, 0.05)
    assert _distance_to_polyline(pts, poly).max() < 0.05
    assert np.hypot(*pts.T).min() == pytest.approx(0.1 * (np.sqrt(2) - 1), rel=1e-9)
