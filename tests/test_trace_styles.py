import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings, strategies as st
from skimage import data, transform

from inkreach.errors import InkreachError
from inkreach.trace import (STYLES, contour, load_image, stipple, style_options, trace)

# scikit-image's shipped sample images (only those that load offline).
_SAMPLES = ["camera", "astronaut", "coins", "moon", "page", "text", "horse", "coffee",
            "chelsea", "rocket", "checkerboard", "clock", "hubble_deep_field",
            "immunohistochemistry", "logo", "grass", "gravel", "brick", "cell",
            "colorwheel", "retina", "microaneurysms", "binary_blobs", "cat",
            "shepp_logan_phantom"]
_FAST = {"stipple": {"dots": 300, "iterations": 5}}


def _sample(name):
    try:
        im = getattr(data, name)()
    except Exception as exc:     # needs a download, or an optional package
        pytest.skip(f"{name} is not available offline: {exc}")
    im = np.asarray(im)
    if im.dtype == bool:
        im = im.astype(np.uint8) * 255
    elif im.dtype != np.uint8:
        im = np.clip(im, 0, 1)
    return load_image(im, max_side=160).luminance


@pytest.mark.parametrize("name", _SAMPLES)
@pytest.mark.parametrize("style", sorted(STYLES))
def test_every_style_runs_on_scikit_image_samples(style, name):
    lum = _sample(name)
    strokes = trace(lum, style, **_FAST.get(style, {}))
    assert strokes
    for s in strokes:
        assert s.ndim == 2 and s.shape[1] == 2 and np.isfinite(s).all()
        assert (s[:, 0] >= -1).all() and (s[:, 0] <= lum.shape[1]).all()
        assert (s[:, 1] >= -1).all() and (s[:, 1] <= lum.shape[0]).all()


@settings(max_examples=25, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.integers(8, 80), st.integers(8, 80), st.integers(0, 2**31 - 1),
       st.sampled_from(sorted(STYLES)))
def test_random_noise_never_crashes_a_style(h, w, seed, style):
    lum = np.random.default_rng(seed).random((h, w)).astype(np.float32)
    try:
        strokes = trace(lum, style, **_FAST.get(style, {}))
    except InkreachError as exc:
        assert "nothing to draw" in str(exc)
    else:
        assert all(s.shape[1] == 2 for s in strokes)


@pytest.mark.parametrize("style", sorted(STYLES))
def test_blank_paper_has_nothing_to_draw(style):
    with pytest.raises(InkreachError, match="nothing to draw.*another style"):
        trace(np.ones((40, 40), np.float32), style)


def test_unknown_style_lists_the_valid_ones():
    with pytest.raises(InkreachError, match="outline, centerline, hatch, stipple, contour"):
        trace(np.ones((20, 20)), "wavy")


def test_unknown_option_lists_the_valid_ones():
    with pytest.raises(InkreachError, match="no option wobble.*levels"):
        trace(np.ones((20, 20)), "contour", wobble=3)


@pytest.mark.parametrize("style, option, value, words", [
    ("hatch", "spacing", -2.0, "at least 0.5"),
    ("stipple", "dots", 0, "at least 1"),
    ("contour", "levels", 0, "at least 1"),
    ("outline", "detail", "lots", "a number"),
    ("centerline", "threshold", "bright", "'otsu'"),
    ("stipple", "mode", "spiral", "dots, touch, line"),
    ("hatch", "pen_px", float("nan"), "above 0"),
])
def test_bad_option_values_say_the_valid_range(style, option, value, words):
    with pytest.raises(InkreachError, match=words):
        trace(np.zeros((20, 20)), style, **{option: value})


def test_style_options_give_defaults_and_plain_help():
    for style in STYLES:
        opts = style_options(style)
        assert "pen_px" in opts
        for default, help_text in opts.values():
            assert isinstance(help_text, str) and help_text and "\n" not in help_text
    assert style_options("hatch")["angle"][0] == 45.0
    with pytest.raises(InkreachError):
        style_options("wavy")


def test_style_options_match_the_function_defaults():
    import inspect
    for style, fn in STYLES.items():
        sig = inspect.signature(fn)
        params = {k: p.default for k, p in sig.parameters.items() if k != "lum"}
        assert params == {k: v[0] for k, v in style_options(style).items()}


def test_trace_accepts_a_picture():
    pic = load_image(np.pad(np.zeros((20, 20), np.uint8), 10, constant_values=255))
    assert len(trace(pic, "outline")) == 1


def test_stipple_dots_are_single_points_and_follow_the_tone():
    lum = np.ones((100, 100), np.float32)
    lum[:, :50] = 0.0
    strokes = stipple(lum, dots=400, mode="touch")
    assert len(strokes) == 400 and all(s.shape == (1, 2) for s in strokes)
    x = np.concatenate(strokes)[:, 0]
    assert (x < 51).mean() > 0.95


def test_stipple_density_follows_ink_with_contrast_one():
    # Secord 2002: dot density proportional to the density function, here
    # the ink 1 - Y.  Two halves with ink 0.8 and 0.2 get dots 4 : 1.
    lum = np.full((120, 240), 0.2, np.float32)
    lum[:, 120:] = 0.8
    x = np.concatenate(stipple(lum, dots=1000, contrast=1.0, iterations=40,
                               mode="touch"))[:, 0]
    ratio = (x < 119.5).sum() / (x >= 119.5).sum()
    assert ratio == pytest.approx(4.0, rel=0.2)


def test_stipple_line_mode_is_one_stroke_through_every_dot():
    pytest.importorskip("inkreach.route")
    lum = np.linspace(0, 1, 80 * 80, dtype=np.float32).reshape(80, 80)
    dots = np.concatenate(stipple(lum, dots=300, seed=3, mode="touch"))
    (path,) = stipple(lum, dots=300, seed=3, mode="line")
    assert path.shape == (300, 2)
    np.testing.assert_allclose(np.sort(path, axis=0), np.sort(dots, axis=0))


def test_contour_returns_x_y_order():
    # find_contours gives (row, col); strokes must be (x = col, y = row).
    lum = np.ones((60, 120), np.float32)
    lum[20:40, 10:110] = 0.0                       # a wide, short bar
    strokes = contour(lum, levels=1, smooth=1.0)
    pts = np.concatenate(strokes)
    assert np.ptp(pts[:, 0]) > 90 and np.ptp(pts[:, 1]) < 30


def test_contour_rings_of_a_radial_ramp_are_circles():
    yy, xx = np.mgrid[:101, :101]
    lum = np.clip(np.hypot(xx - 50, yy - 50) / 50, 0, 1).astype(np.float32)
    strokes = contour(lum, levels=3, smooth=0)
    assert len(strokes) == 3
    for s in strokes:
        np.testing.assert_allclose(s[0], s[-1])
        r = np.hypot(s[:, 0] - 50, s[:, 1] - 50)
        assert np.ptp(r) < 2.0


def test_contour_levels_are_even_in_cie_lightness():
    # CIE 15:2004: L* = 116 (Y)^(1/3) - 16 above Y = 0.008856.  On a ramp of
    # linear Y, three levels between L* = 0 and 100 sit at L* = 25, 50, 75.
    w = 401
    y = np.linspace(0.0, 1.0, w)
    lum = np.repeat(y[None, :], 40, axis=0).astype(np.float32)
    strokes = contour(lum, levels=3, smooth=0, simplify=0)
    xs = sorted(float(np.median(s[:, 0])) for s in strokes)
    want = [(((L + 16) / 116) ** 3) * (w - 1) for L in (25.0, 50.0, 75.0)]
    np.testing.assert_allclose(xs, want, atol=1.0)
