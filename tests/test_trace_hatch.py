import numpy as np
import pytest

from _cv_render import cv_coverage
from inkreach.trace import hatch, render_strokes
from inkreach.trace.hatch import layer_fraction


# A grey step wedge: bands of known linear reflectance Y.
_YS = np.array([0.92, 0.8, 0.65, 0.5, 0.35, 0.22, 0.12, 0.05])
_BAND = 64


def _wedge(height=160):
    return np.repeat(_YS, _BAND)[None, :].repeat(height, 0).astype(np.float32)


@pytest.mark.parametrize("pen_px", [1.5, 2.0, 3.0])
def test_hatch_ink_coverage_matches_tone_on_a_step_wedge(pen_px):
    # Murray-Davies (Murray 1936): black ink covering a fraction a of white
    # paper reflects Y = 1 - a, so each band needs coverage 1 - Y.  Coverage
    # measured by drawing the strokes with a round pen of the same width with
    # OpenCV's filled polygons and discs at 24 sub-pixels a pixel (not the
    # project's renderer).  0.03: the bound this project promises.
    lum = _wedge()
    strokes = hatch(lum, pen_px=pen_px)
    cov = cv_coverage(strokes, lum.shape, pen_px)
    m = 10   # stay clear of the joins along band edges
    for i, y in enumerate(_YS):
        band = cov[m:-m, i * _BAND + m:(i + 1) * _BAND - m]
        assert band.mean() == pytest.approx(1 - y, abs=0.03), (i, y)


def test_crossed_layer_relation():
    # k layers of ink fraction f laid independently (each covers a fraction f
    # of what the others leave bare) cover 1 - (1 - f)**k: the
    # independent-overlap assumption, worked by hand for these values.
    assert layer_fraction(0.75, 2) == pytest.approx(0.5)
    assert layer_fraction(1 - 0.6 ** 3, 3) == pytest.approx(0.4)


def test_render_strokes_gives_the_pen_width():
    cov = render_strokes([np.array([[-5.0, 20.3], [60.0, 20.3]])], (40, 50), 3.0)
    assert cov.sum(axis=0).mean() == pytest.approx(3.0, abs=0.05)
    dot = render_strokes([np.array([[25.0, 20.0]])], (40, 50), 6.0)
    assert dot.sum() == pytest.approx(np.pi * 9, rel=0.03)
    # the OpenCV renderer used above draws the same widths (geometry: a band
    # of width w crosses w pixels of each column; a disc of diameter d has
    # area pi d^2 / 4)
    for pen in (1.5, 2.0, 3.0):
        line = cv_coverage([np.array([[-5.0, 20.3], [60.0, 20.3]])], (40, 50), pen)
        assert line.sum(axis=0).mean() == pytest.approx(pen, abs=0.02)
    assert cv_coverage([np.array([[25.0, 20.0]])], (40, 50), 6.0).sum() == \
        pytest.approx(np.pi * 9, rel=0.03)


def test_hatch_of_a_flat_grey_is_a_few_long_strokes():
    lum = np.full((200, 200), 0.5, np.float32)
    strokes = hatch(lum)
    total = sum(len(s) for s in strokes)
    # bound chosen here: one zig-zag field per layer direction (at most 4 at
    # this tone) with a few breaks; thousands of vertices means long lines
    assert len(strokes) <= 8 and total > 100


def test_darker_tones_get_more_crossing_directions():
    def directions(y):
        strokes = hatch(np.full((120, 120), y, np.float32))
        segs = np.concatenate([np.diff(s, axis=0) for s in strokes])
        segs = segs[np.hypot(*segs.T) > 40]                 # hatch lines, not joins
        ang = np.round(np.degrees(np.arctan2(-segs[:, 1], segs[:, 0])) % 180)
        return len(set(ang.tolist()))
    # one layer inks at most 0.7 (hatch._MAX_FRACTION, our choice): ink 0.2 takes one
    # direction, ink 0.8 (Y = 0.2) needs a second, crossing one
    assert directions(0.8) == 1 < directions(0.2) <= directions(0.05)


def test_hatch_with_fixed_spacing_steps_through_layers():
    # Lines 2 px wide every 6 px ink f = 1/3 a layer; k crossed layers ink
    # 1 - (2/3)**k = 0, 0.33, 0.56, 0.70, 0.80 (the independent-overlap
    # assumption for crossed layers; Murray-Davies turns ink into tone).
    # The lightest band (ink 0.08) is nearest 0 layers and stays bare; the
    # darkest (ink 0.95) is nearest all four, so all four directions appear.
    strokes = hatch(_wedge(), spacing=6.0, layers=4)
    assert strokes and all(s.shape[1] == 2 for s in strokes)
    pts = np.concatenate(strokes)
    assert pts[:, 0].min() > _BAND - 2
    segs = np.concatenate([np.diff(s, axis=0) for s in strokes])
    segs = segs[np.hypot(*segs.T) > 40]                 # hatch lines, not joins
    ang = np.round(np.degrees(np.arctan2(-segs[:, 1], segs[:, 0])) % 180) % 180
    assert set(ang.tolist()) == {0.0, 45.0, 90.0, 135.0}


def test_hatch_lines_stay_inside_dark_regions():
    lum = np.ones((100, 100), np.float32)
    lum[20:80, 30:70] = 0.3
    pts = np.concatenate(hatch(lum, pen_px=2.0))
    assert pts[:, 0].min() > 28 and pts[:, 0].max() < 72
    assert pts[:, 1].min() > 18 and pts[:, 1].max() < 82


def test_hatch_of_the_demo_still_life_is_a_few_hundred_strokes():
    # The demo picture at the default pen: fields of long zig-zags, not
    # thousands of crumbs (a bound chosen here: 1,500 is about four times the
    # few hundred strokes the style gives, far below a crumb-per-edge count).
    from pathlib import Path
    from inkreach.trace import load_image
    path = Path(__file__).resolve().parents[1] / "demo_images" / "still-life.png"
    if not path.exists():
        pytest.skip("demo picture not built")
    lum = load_image(path).luminance
    strokes = hatch(lum)
    assert len(strokes) < 1500
    cov = cv_coverage(strokes, lum.shape, 2.0)                     # OpenCV renders
    assert cov.mean() == pytest.approx(1 - lum.mean(), abs=0.05)   # Murray-Davies overall
