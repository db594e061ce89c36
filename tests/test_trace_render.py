"""Ink coverage of pen dots drawn by ``render_strokes``."""

import numpy as np
import pytest

from inkreach.trace import render_strokes


@pytest.mark.parametrize("pen", [1.0, 1.5, 2.0, 3.0, 4.3, 6.0])
def test_a_dot_holds_the_area_of_a_disc_of_the_pen_width(pen):
    # Reference: the area of a disc, pi d^2 / 4. Dots on a 12 px grid do not
    # overlap; their centres sit anywhere inside a pixel. The 1.5 % bound is
    # ours: dot centres are rounded to a quarter pixel and the disc's
    # sub-pixel shares are sampled 8 x 8, which moves the area by less.
    rng = np.random.default_rng(3)
    g = np.stack(np.meshgrid(np.arange(10, 190, 12.0), np.arange(10, 190, 12.0)), -1)
    g = g.reshape(-1, 2) + rng.uniform(-0.5, 0.5, (len(g.reshape(-1, 2)), 2))
    cov = render_strokes([p[None] for p in g], (200, 200), pen)
    assert cov.sum() / len(g) == pytest.approx(np.pi * pen ** 2 / 4, rel=0.015)
    assert cov.max() <= 1.0


def test_overlapping_dots_never_exceed_full_ink_and_a_dot_off_the_edge_still_shows():
    pen = 4.0
    same = render_strokes([np.array([[20.0, 20.0]])] * 5, (40, 40), pen)
    assert same.max() == pytest.approx(1.0)
    one = render_strokes([np.array([[20.0, 20.0]])], (40, 40), pen)
    np.testing.assert_allclose(same, one, atol=1e-6)     # five dots on one spot are one dot
    # centre 0.125 px inside the picture's left edge (x = -0.5), on a sub-pixel
    # centre: the ink on the picture is the disc less the circular segment cut
    # off beyond the edge, r^2 acos(d / r) - d sqrt(r^2 - d^2) (the area of a
    # circular segment)
    edge = render_strokes([np.array([[-0.375, 20.0]])], (40, 40), pen)
    r, d = pen / 2, 0.125
    inside = np.pi * r * r - (r * r * np.arccos(d / r) - d * np.sqrt(r * r - d * d))
    assert edge.sum() == pytest.approx(inside, rel=0.015)
