"""Hatch lines joined into long strokes: far fewer pen lifts for the same tone."""

import importlib

import numpy as np
from skimage import data

from inkreach.likeness import tone_likeness_images
from inkreach.trace import hatch as hatch_style
from inkreach.trace import load_image, render_strokes
hatch_mod = importlib.import_module("inkreach.trace.hatch")   # the module, not the function


def _figures(lum, pen, blur):
    strokes = hatch_style(lum, pen_px=pen)
    cov = render_strokes(strokes, lum.shape, pen)
    return len(strokes), tone_likeness_images(1.0 - cov, lum, blur)


def test_joined_hatch_lifts_the_pen_three_times_less_at_equal_tone(monkeypatch):
    # scikit-image's shipped 'camera' photo; a 0.5 mm pen on a 186 mm drawing (1.38 px),
    # the tone compared at a 1.5 mm blur (4.1 px).
    lum = load_image(data.camera(), max_side=512).luminance
    pen, blur = 1.38, 4.1
    after, t_after = _figures(lum, pen, blur)
    # before: zig-zags only between runs at most three lattice lines apart, no hops
    monkeypatch.setattr(hatch_mod, "_REACH", 3)
    monkeypatch.setattr(hatch_mod, "_join_ends", lambda strokes, gap, region: strokes)
    before, t_before = _figures(lum, pen, blur)
    assert after * 3 <= before, (before, after)
    # equal tone: within a lightness step and an SSIM of 0.02 (bounds of our own)
    assert abs(t_after.delta_lightness - t_before.delta_lightness) < 1.5
    assert t_after.ssim > t_before.ssim - 0.02
    assert t_after.meets(), t_after


def test_hops_never_leave_the_layer_region():
    # two dark squares far apart on white: a hop between them would cross bare paper
    lum = np.ones((120, 240), np.float32)
    lum[20:100, 20:100] = 0.3
    lum[20:100, 140:220] = 0.3
    strokes = hatch_style(lum, pen_px=2.0)
    for s in strokes:
        assert not ((s[:, 0] > 104) & (s[:, 0] < 136)).any()


def test_join_ends_makes_paths_nearest_first():
    region = np.ones((50, 50), bool)
    a = np.array([[0.0, 0.0], [10.0, 0.0]])
    b = np.array([[12.0, 0.0], [20.0, 0.0]])
    c = np.array([[20.0, 3.0], [0.0, 4.0]])
    out = hatch_mod._join_ends([a, b, c], 5.0, region)
    assert len(out) == 1 and len(out[0]) == 6           # one path through all three
    ends = {tuple(out[0][0]), tuple(out[0][-1])}
    assert ends == {(0.0, 0.0), (0.0, 4.0)}              # no cycle: the farthest pair stays open
