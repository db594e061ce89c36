"""Line likeness: shares of the picture's lines drawn and of the strokes on them,
checked against plane geometry and scikit-image's drawing functions."""

import numpy as np
import pytest
from PIL import Image, ImageDraw
from skimage.draw import rectangle_perimeter

import inkreach
from inkreach.likeness import line_likeness_images, picture_lines


def _box_lines(shape=(120, 160), top_left=(30, 40), size=(60, 80)):
    m = np.zeros(shape, bool)
    rr, cc = rectangle_perimeter(top_left, extent=size, shape=shape)
    m[rr, cc] = True
    return m


def _box_path(top_left=(30, 40), size=(60, 80), dx=0.0):
    # rectangle_perimeter draws the outline one pixel outside the extent (scikit-image
    # documentation), so its rows run from r0 - 1 to r0 + h and columns c0 - 1 .. c0 + w
    r0, c0 = top_left[0] - 1, top_left[1] - 1
    r1, c1 = top_left[0] + size[0], top_left[1] + size[1]
    return np.array([[c0, r0], [c1, r0], [c1, r1], [c0, r1], [c0, r0]], float) + [dx, 0]


def test_the_drawn_outline_of_a_box_scores_one_and_a_far_one_zero():
    lines = _box_lines()
    on = line_likeness_images([_box_path()], lines, 2.0)
    assert on.lines_drawn == pytest.approx(1.0) and on.strokes_on_lines == pytest.approx(1.0)
    off = line_likeness_images([_box_path(dx=6.0)], lines, 2.0)
    # shifted 6 px sideways, only the top and bottom sides stay on the lines, less 6 px
    # at one end each: (2 * (82 - 6)) of the perimeter 2 * (82 + 62) - 4 pixels
    assert off.lines_drawn == pytest.approx(2 * 76 / (2 * 144 - 4), abs=0.03)


def test_half_the_outline_drawn_is_half_the_lines_and_a_stray_stroke_halves_the_rest():
    lines = _box_lines()
    p = _box_path()
    half = line_likeness_images([p[:3]], lines, 1.5)   # top and right: 81 + 61 of 284 px
    assert half.lines_drawn == pytest.approx(142 / 284, abs=0.02)
    assert half.strokes_on_lines == pytest.approx(1.0)
    L = float(np.hypot(*np.diff(p, axis=0).T).sum())     # 2 * (81 + 61) = 284
    stray = np.array([[5.0, 110.0], [5.0 + L / 2, 110.0]])   # far from every line ...
    stray2 = np.array([[5.0, 5.0], [5.0 + L / 2, 5.0]])
    mixed = line_likeness_images([p, stray, stray2], lines, 1.5)  # ... as long as the box
    assert mixed.strokes_on_lines == pytest.approx(0.5, abs=0.02)
    assert mixed.lines_drawn == pytest.approx(1.0)


def test_picture_lines_follow_the_edges_of_a_dark_square_and_the_middle_of_a_line():
    lum = np.ones((100, 100))
    lum[30:70, 20:80] = 0.05
    edges = picture_lines(lum, "outline")
    rr, cc = np.nonzero(edges)
    # plane geometry: the square's boundary runs at rows 29.5 / 69.5, columns 19.5 / 79.5
    d = np.minimum.reduce([np.abs(rr - 29.5), np.abs(rr - 69.5), np.abs(cc - 19.5),
                           np.abs(cc - 79.5)])
    assert len(rr) > 150 and d.max() <= 1.5
    img = Image.new("L", (100, 60), 255)
    ImageDraw.Draw(img).line([(10, 30), (90, 30)], fill=0, width=5)   # rows 28..32
    mid = picture_lines(np.asarray(img) / 255.0, "centerline")
    rr, cc = np.nonzero(mid)
    assert abs(rr.mean() - 30) <= 0.5 and np.ptp(cc) >= 70


@pytest.fixture(scope="module")
def square_png(tmp_path_factory):
    p = tmp_path_factory.mktemp("lines") / "square.png"
    img = Image.new("L", (200, 150), 255)
    ImageDraw.Draw(img).rectangle([40, 30, 160, 120], outline=0, width=4)
    img.save(p)
    return p


def test_line_styles_report_line_likeness_and_tone_styles_ssim(square_png):
    for style in ("outline", "centerline"):
        fid = inkreach.plan(square_png, style=style).stats["fidelity"]
        assert fid["measure"] == "lines" and "ssim" not in fid and "tone_error" not in fid
        assert fid["lines_drawn"] >= 0.9 and fid["strokes_on_lines"] >= 0.9
    fid = inkreach.plan(square_png, style="hatch").stats["fidelity"]
    assert "ssim" in fid and "lines_drawn" not in fid
