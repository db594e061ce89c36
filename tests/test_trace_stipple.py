"""Stippling with filled dots: Secord's density rule, and ink that matches the tone."""

import numpy as np
import pytest
from scipy.spatial import cKDTree

from _cv_render import cv_coverage
from inkreach.trace import stipple
from inkreach.trace.stipple import dot_zigzag, hex_disc_coverage


def test_dot_density_follows_darkness_as_secords_rule_says():
    # Secord (2002), "Weighted Voronoi stippling", NPAR: centroidal Voronoi dots spread with
    # density proportional to the density function, here the darkness 1 - Y.  A ramp of
    # darkness from 0.1 to 0.9 across the picture: dots per column band follow it.
    h, w = 120, 360
    dark = np.linspace(0.1, 0.9, w)
    lum = np.tile((1 - dark).astype(np.float32), (h, 1))
    x = np.concatenate(stipple(lum, dots=2400, iterations=40, mode="touch"))[:, 0]
    counts = np.bincount((x // 60).astype(int), minlength=6)[:6].astype(float)
    want = dark.reshape(6, 60).sum(1)
    # the four inner bands (the outer two feel the picture's edge): 8 %, an allowance of
    # our own for 400 dots a band
    got, exp = counts[1:5] / counts[1:5].sum(), want[1:5] / want[1:5].sum()
    np.testing.assert_allclose(got, exp, rtol=0.08)
    assert counts[5] > 3.0 * counts[0]            # the darkest band has 4.4x the lightest


def test_hex_disc_coverage_matches_the_lattice_geometry():
    # touching discs on a hexagonal lattice cover pi / (2 sqrt 3) = 0.9069 (Fejes Toth 1953);
    # below touching, one disc per cell of area sqrt(3)/2 a^2
    assert float(hex_disc_coverage(0.5, 1.0)) == pytest.approx(np.pi / (2 * np.sqrt(3)), abs=1e-9)
    assert float(hex_disc_coverage(0.3, 1.0)) == pytest.approx(np.pi * 0.09 / (np.sqrt(3) / 2))
    # between touching and full cover: check against a Monte Carlo estimate on the lattice
    rng = np.random.default_rng(0)
    pts = rng.uniform(0, 1, (200_000, 2)) * [1.0, np.sqrt(3)]
    lat = np.array([[i + 0.5 * (j % 2), j * np.sqrt(3) / 2] for i in range(-2, 4)
                    for j in range(-2, 5)])
    d, _ = cKDTree(lat).query(pts)
    assert float(hex_disc_coverage(0.55, 1.0)) == pytest.approx((d < 0.55).mean(), abs=0.005)


def test_a_filled_dot_inks_its_disc():
    # ink of one dot, measured with OpenCV fills: close to pi R^2 (12 % up to four pens across,
    # 5 % from seven: our allowance for the scalloped rim of the back-and-forth fill)
    for r, tol in ((2.0, 0.12), (3.0, 0.12), (5.0, 0.05)):
        cov = cv_coverage([dot_zigzag((15.0, 15.0), r, 1.4)], (31, 31), 1.4, scale=8)
        assert cov.sum() == pytest.approx(np.pi * r * r, rel=tol)


@pytest.mark.parametrize("y", [0.2, 0.5, 0.8])
def test_filled_dots_reach_the_murray_davies_coverage_of_a_flat_grey(y):
    # Murray-Davies (A. Murray 1936): grey Y needs coverage 1 - Y; measured with OpenCV fills
    pen, n = 1.5, 160
    strokes = stipple(np.full((n, n), y, np.float32), pen_px=pen)
    cov = cv_coverage(strokes, (n, n), pen, scale=6)[16:-16, 16:-16].mean()
    assert cov == pytest.approx(1.0 - y, abs=0.06)      # an allowance of our own


def test_dark_dots_are_chained_into_few_strokes():
    pen = 1.5
    lum = np.full((150, 150), 0.15, np.float32)
    strokes = stipple(lum, pen_px=pen)
    dots = sum(1 for s in strokes for _ in [0])
    assert len(strokes) < 0.1 * stipple(lum, pen_px=pen, mode="touch").__len__() + 10
    assert dots == len(strokes)


def test_filled_dots_close_up_into_black_for_the_darkest_tones():
    # a near-black patch (Y = 0.03, coverage 0.97 by Murray-Davies): the dots must close up
    # rather than leave the gaps of a loose packing (0.907 at best for touching discs)
    pen, n = 1.5, 160
    strokes = stipple(np.full((n, n), 0.03, np.float32), pen_px=pen)
    cov = cv_coverage(strokes, (n, n), pen, scale=6)[16:-16, 16:-16].mean()
    assert cov >= 0.95


@pytest.mark.parametrize("y", [0.3, 0.15, 0.05, 0.01])
def test_the_line_fill_of_dark_areas_reaches_the_murray_davies_coverage(y):
    # Murray-Davies (A. Murray 1936): grey Y needs coverage 1 - Y; measured with OpenCV fills,
    # also with a pen 4 % narrower than planned (the final placement's scale may differ a
    # little from the one the picture was traced at); 0.06 is an allowance of our own
    from inkreach.trace.hatch import _line_fill
    pen, n = 1.5, 160
    strokes = _line_fill(np.full((n, n), 1.0 - y), pen)
    for width in (pen, 0.96 * pen):
        cov = cv_coverage(strokes, (n, n), width, scale=6)[16:-16, 16:-16].mean()
        assert cov == pytest.approx(1.0 - y, abs=0.06)


def test_light_parts_get_dots_and_dark_parts_lines_each_at_its_tone():
    # a light half (Y = 0.8) and a dark half (Y = 0.2): dots on the light half, long lines on
    # the dark half, each half inked to 1 - Y (Murray-Davies) within an allowance of our own
    pen, h, w = 1.5, 120, 240
    lum = np.full((h, w), 0.8, np.float32)
    lum[:, w // 2:] = 0.2
    strokes = stipple(lum, pen_px=pen)
    # segments longer than two pens: the dots' fills run along rows (dy = 0), the lines at
    # 45 degrees (|dx| = |dy|)
    a = np.concatenate([s[:-1] for s in strokes if len(s) > 1])
    b = np.concatenate([s[1:] for s in strokes if len(s) > 1])
    d = b - a
    long = np.hypot(*d.T) > 2 * pen
    flat = np.abs(d[:, 1]) < 1e-6
    slant = np.abs(np.abs(d[:, 0]) - np.abs(d[:, 1])) < 0.05 * np.hypot(*d.T)
    light = long & (np.maximum(a[:, 0], b[:, 0]) < w // 2 - 4 * pen)
    dark = long & (np.minimum(a[:, 0], b[:, 0]) > w // 2 + 4 * pen)
    # (the rest on the light half: hops between chained dots)
    assert light.sum() > 50 and flat[light].mean() > 0.3     # dots on the light half
    assert dark.sum() > 50 and slant[dark].mean() > 0.5      # lines on the dark half (and
    #                                                          the turns joining them)
    assert flat[dark].mean() < 0.05
    cov = cv_coverage(strokes, (h, w), pen, scale=6)
    assert cov[16:-16, 16:w // 2 - 16].mean() == pytest.approx(0.2, abs=0.06)
    assert cov[16:-16, w // 2 + 16:-16].mean() == pytest.approx(0.8, abs=0.06)
