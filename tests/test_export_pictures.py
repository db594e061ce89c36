import io
import xml.etree.ElementTree as ET

import numpy as np
import pytest
from PIL import Image

from inkreach.arms import default_arm, largest_rectangle, load_arm, workspace_map
from inkreach.export import (arm_map_png, order_ramp, pen_down_paths, png_bytes, preview_png,
                             preview_svg, simulated_png)
from inkreach.export._colour import oklab_to_srgb, srgb_to_oklab
from inkreach.signals import StepperConfig, quantised_angles, stepper_steps

from _streams import line_stream

SVG = "{http://www.w3.org/2000/svg}"


@pytest.fixture(scope="module")
def arm():
    return default_arm()


@pytest.fixture(scope="module")
def wmap(arm):
    return workspace_map(arm, cells=80)


def _strokes():
    t = np.linspace(0, 2 * np.pi, 40)
    return [np.c_[15 * np.cos(t) + dx, 15 * np.sin(t) + 160] for dx in (-30, 0, 30)] + \
        [np.array([[0.0, 130.0]])]


STATS = {"strokes": 4, "pen_lifts": 3, "pen_down_mm": 282.7, "pen_up_mm": 95.0,
         "estimated_s": 12.5, "min_conditioning": 0.45}


def test_preview_svg_parses_as_xml_in_millimetres_with_y_up(arm, wmap):
    # Reference: Python's xml.etree parser (W3C XML 1.0).
    svg = preview_svg(_strokes(), arm=arm, wmap=wmap, start=arm.fk(arm.home()),
                      placement_hull=np.array([[-50, 140], [50, 140], [50, 180], [-50, 180]]),
                      stats=STATS)
    root = ET.fromstring(svg.encode("utf-8"))
    assert root.tag == SVG + "svg"
    w, h = root.get("width"), root.get("height")
    assert w.endswith("mm") and h.endswith("mm")
    vb = [float(v) for v in root.get("viewBox").split()]
    assert vb[2] == pytest.approx(float(w[:-2]), abs=1e-3)
    assert vb[3] == pytest.approx(float(h[:-2]), abs=1e-3)
    flipped = [g for g in root.iter(SVG + "g") if g.get("transform") == "scale(1,-1)"]
    assert len(flipped) == 1
    lines = [e for e in root.iter(SVG + "polyline") if e.get("class") is None]
    assert len(lines) == 3  # three circles; the dot is a <circle>
    colours = [e.get("stroke") for e in lines]
    assert len(set(colours)) == 3
    # the first stroke's first point is written as given, in mm
    x, y = (float(v) for v in lines[0].get("points").split()[0].split(","))
    assert (x, y) == pytest.approx((-15.0, 160.0), abs=1e-3)
    # the viewBox covers y = 160 after the flip: -y lies inside [vb1, vb1 + vb3]
    assert vb[1] <= -160.0 <= vb[1] + vb[3]
    assert any(e.get("class") == "usable" for e in root.iter(SVG + "polyline"))
    assert any(e.get("class") == "travel" for e in root.iter(SVG + "path"))
    assert len([e for e in root.iter(SVG + "circle") if e.get("class") == "motor"]) == 2
    assert "strokes 4" in [t.text for t in root.iter(SVG + "text")]


def test_preview_svg_without_arm_or_strokes_still_parses():
    # Reference: xml.etree.
    ET.fromstring(preview_svg([]).encode())
    ET.fromstring(preview_svg([np.array([[1.0, 2.0]])], travel=False).encode())


def test_preview_png_opens_with_pillow_and_shows_the_strokes(arm, wmap):
    # Reference: Pillow's PNG decoder reads the bytes back.
    img = preview_png(_strokes(), arm=arm, wmap=wmap, stats=STATS, size=500)
    back = Image.open(io.BytesIO(png_bytes(img)))
    back.load()
    assert back.format == "PNG" and back.mode == "RGB" and max(back.size) == 500
    a = np.asarray(back).astype(int)
    first = order_ramp(0.0).astype(int)
    # some pixel is close to the first stroke's colour (dark indigo)
    assert np.min(np.abs(a - first).sum(axis=2)) < 60
    assert a[0, -1].tolist() == [255, 255, 255]  # white paper in a corner


def test_preview_png_draws_pen_up_rows_of_a_stream(arm, wmap):
    # Rows 0-10 are pen-up, 11-29 draw the stroke: with the stream given, the
    # pen-up rows' path shows (darker than without the stream) near row 5.
    s = line_stream(arm, 30, pen=np.arange(30) > 10)
    strokes = [s.xy[11:]]
    with_rows = np.asarray(preview_png(strokes, arm=arm, wmap=wmap, stream=s, size=300))
    without = np.asarray(preview_png(strokes, arm=arm, wmap=wmap, size=300))
    assert with_rows.shape == without.shape and max(with_rows.shape[:2]) == 300
    from inkreach.export.picture import _Canvas
    cv = _Canvas(_scene_box_for_test(arm, wmap, strokes), 300)
    u, v = np.rint(cv.px(s.xy[5])).astype(int)
    near = (slice(v - 2, v + 3), slice(u - 2, u + 3))
    assert with_rows[near].astype(int).sum(axis=2).min() < \
        without[near].astype(int).sum(axis=2).min() - 20


def test_png_bytes_are_the_same_for_the_same_picture(arm, wmap):
    a = png_bytes(preview_png(_strokes(), arm=arm, wmap=wmap, size=300))
    b = png_bytes(preview_png(_strokes(), arm=arm, wmap=wmap, size=300))
    assert a == b


@pytest.mark.parametrize("name", ["default", "serial"])
def test_arm_map_png_opens_with_pillow(name):
    # Reference: Pillow's PNG decoder.
    arm = load_arm(name)
    m = workspace_map(arm, cells=70)
    rect = largest_rectangle(m, aspect=1.4)
    img = arm_map_png(arm, m, [("postcard", rect), largest_rectangle(m)], size=400)
    back = Image.open(io.BytesIO(png_bytes(img)))
    assert back.format == "PNG" and max(back.size) == 400


def test_simulated_png_draws_a_line_of_the_pen_width():
    # Reference: OpenCV draws the line (cv2.polylines, LINE_AA); we measure its
    # width across: a 1 mm pen at 10 px/mm covers about 10 px.
    seg = [np.array([[0.0, 0.0], [40.0, 0.0]])]
    img = simulated_png(seg, 1.0, px_per_mm=10, bounds=(-5, 45, -5, 5))
    a = np.asarray(img)
    assert img.size == (500, 100)
    col = a[:, 250]
    dark = np.flatnonzero(col < 128)
    assert 9 <= len(dark) <= 11
    assert abs(dark.mean() - 50) <= 1  # y = 0 is the middle row


def test_simulated_png_puts_positive_y_up():
    img = simulated_png([np.array([[0.0, 8.0], [1.0, 8.0]])], 0.5, px_per_mm=10,
                        bounds=(-1, 2, 0, 10))
    a = np.asarray(img)
    rows = np.flatnonzero(a.min(axis=1) < 128)
    assert rows.mean() < 30  # near the top: y = 8 of 0..10


def test_simulated_png_from_quantised_stream_rows_joins_pen_down_runs():
    arm = default_arm()
    s = line_stream(arm, 60, pen=(np.arange(60) < 20) | (np.arange(60) >= 30))
    reached = arm.fk(quantised_angles(s, stepper_steps(s, StepperConfig(microsteps=1))))
    assert len(pen_down_paths(reached, s.pen)) == 2
    img = simulated_png(reached, s.pen, arm.pen.width_mm, px_per_mm=4)
    assert img.mode == "L" and np.asarray(img).min() < 100


def test_oklab_white_is_lightness_one_and_conversion_round_trips():
    # Reference: B. Ottosson, "A perceptual color space for image processing"
    # (2020): white has L = 1, a = b = 0.
    np.testing.assert_allclose(srgb_to_oklab(np.array([255.0, 255.0, 255.0])), [1, 0, 0],
                               atol=1e-6)
    rgb = np.random.default_rng(1).integers(0, 256, (50, 3)).astype(float)
    np.testing.assert_allclose(oklab_to_srgb(srgb_to_oklab(rgb)), rgb, atol=1e-6)


def test_auto_resolution_draws_the_pen_three_pixels_wide_within_2000_px():
    # Rule of thumb (common practice): an anti-aliased line needs about 1.5 px
    # or more to show its width; 3 px reads clearly.
    from inkreach.export import auto_px_per_mm
    assert auto_px_per_mm(170.0, 0.5) * 0.5 == pytest.approx(3.0)
    assert auto_px_per_mm(400.0, 0.5) * 400.0 == pytest.approx(2000.0)
    assert auto_px_per_mm(400.0, 0.1) * 0.1 == pytest.approx(1.5)
    img = simulated_png([np.array([[0.0, 0.0], [300.0, 200.0]])], 0.4)
    assert max(img.size) <= 2000
    a = np.asarray(img)
    assert np.count_nonzero(a[:, img.size[0] // 2] < 128) >= 1


def test_figure_rows_name_size_time_conditioning_and_fidelity():
    from inkreach.export._scene import figure_rows
    rows = dict(figure_rows({**STATS, "drawing_mm": [171.06, 128.4], "estimated_s": 783.0,
                             "fidelity": {"ssim": 0.612, "tone_error": 0.081}}))
    assert rows["strokes"] == "4" and rows["pen lifts"] == "3"
    assert rows["pen down"] == "283 mm" and rows["pen up"] == "95 mm"
    assert rows["drawing time"] == "13 min 03 s"
    assert rows["drawing size"] == "171 x 128 mm"
    assert rows["worst conditioning"] == "0.45"
    assert rows["likeness (SSIM)"] == "0.61" and rows["tone error"] == "0.08"
    assert "likeness (SSIM)" not in dict(figure_rows(STATS))


def test_preview_png_shades_the_usable_region_and_draws_pen_up_moves_faint(arm, wmap):
    dots = [np.array([[-40.0, 175.0]]), np.array([[40.0, 175.0]])]
    img = preview_png(dots, arm=arm, wmap=wmap, size=500)
    a = np.asarray(img).astype(int)
    assert (a.reshape(-1, 3) != 255).any(axis=1).mean() > 0.2  # the region is shaded
    from inkreach.export.picture import _Canvas
    cv = _Canvas(_scene_box_for_test(arm, wmap, dots), 500)
    u, v = np.rint(cv.px(np.array([-20.0, 175.0]))).astype(int)
    column = a[v - 3:v + 4, u].sum(axis=1)  # across the pen-up move's line
    background = a[v - 12, u].sum()
    assert column.min() < background - 20  # the move shows ...
    assert column.min() > 3 * 150  # ... but faint, far lighter than ink


def _scene_box_for_test(arm, wmap, strokes):
    from inkreach.export._scene import posture
    from inkreach.export.picture import _scene_box
    return _scene_box(arm, wmap, strokes, posture(arm, strokes))


def test_preview_png_of_a_large_size_stays_within_a_few_canvases_of_memory(arm, wmap):
    # A 3000 px preview: the drawing works on uint8 canvases of the final size.
    import tracemalloc
    tracemalloc.start()
    img = preview_png(_strokes(), arm=arm, wmap=wmap, stats=STATS, size=3000)
    peak = tracemalloc.get_traced_memory()[1]
    tracemalloc.stop()
    canvas = img.size[0] * img.size[1] * 3
    assert peak < 6 * canvas
