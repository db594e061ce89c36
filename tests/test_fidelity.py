"""The drawing-fidelity score, checked against SSIM as published and as in scikit-image."""

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy import ndimage
from skimage.metrics import structural_similarity

from inkreach.errors import InkreachError
from inkreach.trace import linear_to_srgb
from inkreach.likeness import (Fidelity, drawn_polylines, fidelity, fidelity_images,
                               plan_fidelity, render_coverage)

# SSIM constants of Wang, Bovik, Sheikh & Simoncelli (2004), IEEE TIP 13(4), eq. (7)-(9):
# K1 = 0.01, K2 = 0.03, C_i = (K_i L)^2 with dynamic range L = 1 for reflectance.
C1 = (0.01 * 1.0) ** 2


def _wedge(levels=(0.9, 0.75, 0.6, 0.45, 0.3), band=48, height=240):
    """A grey wedge: vertical bands of constant linear reflectance."""
    ys = np.asarray(levels, float)
    return np.repeat(np.repeat(ys[None, :], height, 0), band, 1), ys


def _parallel_hatch(levels, band, height, spacing):
    """Horizontal lines every `spacing` px, pen width (1 - Y) * spacing in each band."""
    h, w = height, band * len(levels)
    cov = np.zeros((h, w), np.float32)
    rows = (np.arange(h // spacing) + 0.5) * spacing - 0.5
    lines = [np.array([[-5.0, r], [w + 5.0, r]]) for r in rows]
    for k, y in enumerate(levels):
        c = render_coverage(lines, (h, w), (1.0 - y) * spacing)
        cov[:, k * band:(k + 1) * band] = c[:, k * band:(k + 1) * band]
    return cov


def test_identical_pictures_score_one():
    rng = np.random.default_rng(0)
    y = ndimage.gaussian_filter(rng.uniform(0, 1, (96, 128)), 3)
    f = fidelity_images(y, y, blur_px=2.0)
    assert isinstance(f, Fidelity)
    assert f.ssim == pytest.approx(1.0, abs=1e-12)
    assert f.tone_error == 0.0
    assert f.shape == (96, 128) and f.blur_px == 2.0


def test_blank_drawing_of_dark_picture_scores_low():
    target = np.full((64, 64), 0.1)
    f = fidelity_images(np.ones_like(target), target, blur_px=3.0)
    assert f.tone_error == pytest.approx(0.9, abs=1e-6)          # the mean ink, 1 - 0.1
    # Two flat images: the contrast-structure term is C2/C2 = 1 and SSIM is the
    # luminance term (2 mu_x mu_y + C1) / (mu_x^2 + mu_y^2 + C1), Wang et al. 2004 eq. (13).
    expected = (2 * 1.0 * 0.1 + C1) / (1.0 + 0.01 + C1)
    assert f.ssim == pytest.approx(expected, abs=1e-6)
    assert f.ssim < 0.25


def test_score_improves_as_hatch_spacing_is_refined_on_a_grey_wedge():
    # Murray-Davies (A. Murray 1936, J. Franklin Inst. 221:721): black lines covering a
    # fraction a = w/s of the paper reflect 1 - a, so at pen width (1 - Y) s the hatch
    # matches the tone Y; once blurred at a fixed sigma, finer spacing leaves less ripple.
    levels, band, height = (0.9, 0.75, 0.6, 0.45, 0.3), 48, 240
    target, ys = _wedge(levels, band, height)
    scores = []
    for s in (16, 12, 8, 6):
        cov = _parallel_hatch(levels, band, height, s)
        means = (1.0 - cov).reshape(height, len(levels), band).mean(axis=(0, 2))
        np.testing.assert_allclose(means, ys, atol=0.02)            # Murray-Davies tone
        scores.append(fidelity_images(1.0 - cov, target, blur_px=3.0))
    tone = [f.tone_error for f in scores]
    ssim = [f.ssim for f in scores]
    assert all(a > b for a, b in zip(tone, tone[1:])), tone
    assert all(a < b for a, b in zip(ssim, ssim[1:])), ssim
    # the finest hatch is about a pen width apart and nearly flat once blurred; the
    # bounds are an allowance of this project (not from a source)
    assert tone[-1] < 0.01 and ssim[-1] > 0.98


def test_score_improves_as_the_hatch_style_gets_finer_on_a_grey_wedge():
    # The hatch style sets its spacing from the pen width so that coverage w/s equals
    # 1 - Y (Murray-Davies, A. Murray 1936); a finer pen means finer spacing, and at a
    # fixed viewing blur the drawing must come closer to the wedge.
    from inkreach.trace import hatch

    levels, band, height = (0.85, 0.7, 0.55, 0.4, 0.25), 64, 256
    target, _ = _wedge(levels, band, height)
    target = target.astype(np.float32)
    scores = []
    for pen in (6.0, 4.0, 3.0, 2.0):
        cov = render_coverage(hatch(target, pen_px=pen), target.shape, pen)
        scores.append(fidelity_images(1.0 - cov, target, blur_px=4.0))
    tone = [f.tone_error for f in scores]
    ssim = [f.ssim for f in scores]
    assert all(a > b for a, b in zip(tone, tone[1:])), tone
    assert all(a < b for a, b in zip(ssim, ssim[1:])), ssim


def test_ssim_is_scikit_image_structural_similarity_of_the_blurred_images():
    rng = np.random.default_rng(1)
    a = rng.uniform(0, 1, (80, 100))
    b = np.clip(a + rng.normal(0, 0.2, a.shape), 0, 1)
    f = fidelity_images(a, b, blur_px=2.5)
    # Reference: scipy.ndimage.gaussian_filter (mode 'reflect', truncate 4 sigma) then
    # skimage.metrics.structural_similarity with the settings Wang et al. 2004 recommend
    # (Gaussian window sigma 1.5, population covariance, data_range 1).
    ab = ndimage.gaussian_filter(a, 2.5, mode="reflect")
    bb = ndimage.gaussian_filter(b, 2.5, mode="reflect")
    ref = structural_similarity(ab, bb, data_range=1.0, gaussian_weights=True, sigma=1.5,
                                use_sample_covariance=False)
    assert f.ssim == pytest.approx(ref, abs=2e-4)
    assert f.tone_error == pytest.approx(np.mean(np.abs(ab - bb)), abs=2e-4)


def test_no_blur_gives_plain_ssim_of_the_pictures():
    rng = np.random.default_rng(2)
    a = rng.uniform(0, 1, (40, 40))
    b = rng.uniform(0, 1, (40, 40))
    ref = structural_similarity(a, b, data_range=1.0, gaussian_weights=True, sigma=1.5,
                                use_sample_covariance=False)     # scikit-image reference
    assert fidelity_images(a, b, 0.0).ssim == pytest.approx(ref, abs=1e-5)


@settings(max_examples=25, deadline=None)
@given(st.integers(0, 2**32 - 1), st.floats(0.0, 1.0))
def test_scores_equal_scikit_image_on_any_pair(seed, mix):
    # Any pair of pictures (b drawn towards a by ``mix``), no blur: SSIM as
    # scikit-image computes it with Wang et al.'s settings, tone error the
    # mean absolute difference (its definition). A range check could not fail.
    rng = np.random.default_rng(seed)
    a, n = rng.uniform(0, 1, (2, 24, 30))
    b = mix * a + (1 - mix) * n
    f = fidelity_images(a, b, 0.0)
    ref = structural_similarity(a, b, data_range=1.0, gaussian_weights=True, sigma=1.5,
                                use_sample_covariance=False)
    assert f.ssim == pytest.approx(ref, abs=1e-5)
    assert f.tone_error == pytest.approx(np.mean(np.abs(a - b)), abs=1e-6)


def test_mismatched_shapes_are_refused():
    with pytest.raises(InkreachError):
        fidelity_images(np.ones((10, 10)), np.ones((10, 11)), 1.0)


def test_a_long_line_covers_one_pen_width_per_column():
    # Geometry: a band of width w crossing a column of unit pixels covers w pixels.
    for pen in (0.6, 1.0, 1.5, 1.7, 2.0, 2.5, 3.0, 5.0):
        cov = render_coverage([np.array([[-5.0, 19.3], [45.0, 19.3]])], (40, 40), pen)
        assert cov.sum(axis=0).mean() == pytest.approx(pen, rel=0.01)
        assert 0.0 <= cov.min() and cov.max() <= 1.0


def test_a_dot_covers_the_area_of_the_pen_disc():
    # Geometry: a disc of diameter d has area pi d^2 / 4.
    for pen in (2.0, 4.0, 8.0):
        cov = render_coverage([np.array([[20.0, 20.0]])], (40, 40), pen)
        assert cov.sum() == pytest.approx(np.pi * pen ** 2 / 4, rel=0.1)


def _stream(q, pen, stroke, arm):
    """A joint stream (the motion stage's value type) from rows of angles."""
    from inkreach.motion import JointStream

    q = np.asarray(q, float)
    return JointStream(t=np.arange(len(q)) * 0.02, q=q, pen=np.asarray(pen, np.int8),
                       xy=arm.fk(q), period=0.02, stroke=np.asarray(stroke, np.int64))


def _placement(matrix):
    """A placement (the place stage's value type) for a given image-to-arm affine."""
    from inkreach.place import Placement

    m = np.asarray(matrix, float)
    scale = float(np.sqrt(abs(np.linalg.det(m[:, :2]))))
    return Placement(m, scale, 0.0, np.zeros((1, 2)), (0.0, 0.0, 1.0, 1.0), 1.0)


def _stream_along(arm, paths_mm, step=0.3):
    """Pen-down rows along each path and one pen-up row between paths."""
    q, pen, sid = [], [], []
    for i, p in enumerate(paths_mm):
        seg = np.linalg.norm(np.diff(p, axis=0), axis=1)
        s = np.concatenate([[0.0], np.cumsum(seg)])
        t = np.linspace(0, s[-1], max(2, int(s[-1] / step) + 1))
        pts = np.column_stack([np.interp(t, s, p[:, 0]), np.interp(t, s, p[:, 1])])
        q.append(arm.ik(pts))
        pen += [1] * len(pts)
        sid += [i] * len(pts)
        q.append(arm.ik(pts[-1:]))
        pen.append(0)
        sid.append(-1)
    return _stream(np.vstack(q), pen, sid, arm)


def test_drawn_paths_split_at_pen_lifts_and_stroke_changes():
    from inkreach.arms import default_arm

    arm = default_arm()
    c = np.array([0.0, 150.0])
    q = arm.ik(c + np.array([[0, 0], [1, 0], [2, 0], [3, 0], [4, 0], [5, 0]], float))
    s = _stream(q, [1, 1, 0, 1, 1, 1], [0, 0, -1, 1, 1, 2], arm)
    paths = drawn_polylines(s, arm)
    assert [len(p) for p in paths] == [2, 2, 1]
    np.testing.assert_allclose(paths[1], arm.fk(q[3:5]), atol=1e-9)


def test_drawing_from_the_angles_lands_back_on_the_picture():
    # The stream is made by the arm's own IK of the placed lines; FK of those angles
    # mapped by the inverse placement must redraw the lines where the picture has them.
    from inkreach.arms import default_arm

    arm = default_arm()
    h, w = 120, 160
    lines_px = [np.array([[20.0, 30.0], [140.0, 30.0]]), np.array([[30.0, 20.0], [80.0, 100.0]]),
                np.array([[100.0, 60.0], [140.0, 100.0], [100.0, 100.0]])]
    scale = 0.4                                             # mm per pixel, rows flipped
    cx, cy = arm.fk(arm.ik(np.array([0.0, 160.0])))
    m = np.array([[scale, 0.0, cx - scale * w / 2], [0.0, -scale, cy + scale * h / 2]])
    placement = _placement(m)
    paths_mm = [p @ m[:, :2].T + m[:, 2] for p in lines_px]
    assert np.all(np.isfinite(arm.ik(np.vstack(paths_mm))))
    stream = _stream_along(arm, paths_mm)
    pen_px = arm.pen.width_mm / scale
    target = 1.0 - render_coverage(lines_px, (h, w), pen_px)
    img = linear_to_srgb(np.clip(target, 0, 1))     # pictures come sRGB-encoded
    f = fidelity((stream, arm, placement), img)
    # near-identity: the bounds allow for the IK/FK round trip, the 0.3 mm samples and
    # the resampling onto the comparison grid (an allowance of this project, not sourced)
    assert f.tone_error < 0.01 and f.ssim > 0.97
    empty = _stream(stream.q, np.zeros(len(stream.q)), -np.ones(len(stream.q)), arm)
    g = fidelity((empty, arm, placement), img)
    assert g.ssim < f.ssim and g.tone_error > f.tone_error


def test_fidelity_needs_the_picture():
    with pytest.raises(InkreachError):
        fidelity(object(), None)


@pytest.mark.parametrize("style", ["centerline", "hatch"])
def test_real_plan_of_the_demo_picture_scores_in_range(style):
    from inkreach.cli.demo import demo_picture
    from inkreach.plan import plan

    path, _ = demo_picture("emblem")
    p = plan(path, style=style, max_side=400)
    d = plan_fidelity(p, path)
    if style == "centerline":   # a line style: line likeness, no tone figures
        assert set(d) == {"measure", "lines_drawn", "strokes_on_lines"}
        assert 0.9 <= d["lines_drawn"] <= 1.0 and 0.9 <= d["strokes_on_lines"] <= 1.0
        return
    assert {"ssim", "tone_error"} <= set(d)
    if style == "hatch":                 # a tone style: the L* figures come too
        assert {"tone_range_ratio", "lightness_diff"} <= set(d)
    assert d["ssim"] == round(d["ssim"], 4)
    # The figures the plan records are the ones recomputed from its files.
    assert p.stats["fidelity"]["ssim"] == pytest.approx(d["ssim"], abs=1e-4)
    # Drawing the picture scores better than leaving the paper blank (the
    # figure must respond to the drawing, not merely lie in its range).
    blank = fidelity_images(np.ones((50, 50)), np.full((50, 50), 0.5), 2.0)
    assert d["tone_error"] < 0.5 and d["ssim"] > blank.ssim


@pytest.mark.parametrize("style", ["centerline", "hatch"])
def test_stage_outputs_of_the_demo_picture_score_in_range(style):
    # The real stages in turn (trace, place, route, motion) without the planner.
    from inkreach.arms import default_arm, workspace_map
    from inkreach.cli.demo import demo_picture
    from inkreach.motion import plan_motion
    from inkreach.place import place_drawing, provisional_scale
    from inkreach.route import order_strokes
    from inkreach.trace import load_image, trace

    path, _ = demo_picture("emblem")
    arm = default_arm()
    wmap = workspace_map(arm)
    pic = load_image(path, max_side=300)
    s0 = provisional_scale(pic.original_size, arm, wmap=wmap)
    strokes = [pic.to_original(s) for s in
               trace(pic.luminance, style, pen_px=arm.pen.width_mm / (s0 / min(pic.scale_xy)))]
    placement = place_drawing(strokes, arm, wmap=wmap, image_size=pic.original_size)
    q0 = arm.home() if arm.home() is not None else arm.ik(placement.hull.mean(0))
    route = order_strokes(placement.apply_all(strokes), start=arm.fk(q0))
    stream = plan_motion(route.strokes, arm, start=q0, end=q0, region=placement.hull)
    f = fidelity((stream, arm, placement), path)
    blank = _stream(stream.q, np.zeros(len(stream)), -np.ones(len(stream)), arm)
    g = fidelity((blank, arm, placement), path)
    assert f.tone_error < g.tone_error          # drawing it beats leaving the paper blank
    assert f.ssim > g.ssim
