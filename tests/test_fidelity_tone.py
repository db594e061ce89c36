"""Tone likeness in CIE L*, checked against the CIE 1976 formula and scikit-image's SSIM."""

import numpy as np
import pytest
from scipy import ndimage
from skimage.metrics import structural_similarity

from inkreach.errors import InkreachError
from inkreach.likeness import (TONE_TARGETS, ToneLikeness, cie_lightness, render_coverage,
                               tone_likeness_images)


@pytest.mark.parametrize("y, lstar", [
    # CIE 15:2004 section 8.2.1, L* = 116 (Y/Yn)^(1/3) - 16, values worked from the formula:
    (1.0, 100.0),
    (0.18, 116 * 0.18 ** (1 / 3) - 16),        # = 49.496, middle grey
    (0.5, 116 * 0.5 ** (1 / 3) - 16),          # = 76.069
    ((6 / 29) ** 3, 8.0),                       # the breakpoint: 116 * 6/29 - 16 = 8
    (0.001, 0.001 * 903.2963),                  # linear part, slope (29/3)^3 = 903.30
    (0.0, 0.0),
])
def test_cie_lightness_matches_the_cie_1976_formula(y, lstar):
    assert float(cie_lightness(y)) == pytest.approx(lstar, abs=1e-3)


def test_cie_lightness_of_middle_grey_is_about_49_5():
    # CIE 1976 formula worked value: Y = 0.18 gives L* = 49.5 (to one decimal)
    assert round(float(cie_lightness(0.18)), 1) == 49.5


def test_cie_lightness_is_continuous_at_the_breakpoint():
    # both branches of the CIE 1976 f(t) meet at t = (6/29)^3 (value and slope)
    t = (6 / 29) ** 3
    lo, hi = cie_lightness([t * (1 - 1e-9), t * (1 + 1e-9)])
    assert lo == pytest.approx(hi, abs=1e-6)


def _scene(shape=(96, 128), seed=0):
    rng = np.random.default_rng(seed)
    return np.clip(ndimage.gaussian_filter(rng.uniform(0, 1, shape), 6) * 4 - 1.5, 0.02, 0.95)


def test_ssim_and_figures_agree_with_scikit_image_on_blurred_lightness():
    target = _scene()
    drawn = np.clip(target * 0.8 + 0.1 + 0.05 * np.sin(np.arange(128) / 3.0)[None, :], 0, 1)
    sigma = 3.0
    t = tone_likeness_images(drawn, target, sigma)
    # reference: SciPy's Gaussian (reflect borders), CIE 1976 L*, skimage SSIM with the
    # constants and Gaussian window of Wang et al. (2004)
    la = cie_lightness(ndimage.gaussian_filter(drawn, sigma, mode="reflect", truncate=4.0))
    lb = cie_lightness(ndimage.gaussian_filter(target, sigma, mode="reflect", truncate=4.0))
    ref = structural_similarity(la, lb, data_range=100.0, gaussian_weights=True, sigma=1.5,
                                use_sample_covariance=False)
    # OpenCV's Gaussian kernel is cut off a little differently: an allowance of our own
    assert t.ssim == pytest.approx(ref, abs=2e-3)
    assert t.delta_lightness == pytest.approx(la.mean() - lb.mean(), abs=0.05)
    rr = np.subtract(*np.percentile(la, [95, 5])) / np.subtract(*np.percentile(lb, [95, 5]))
    assert t.range_ratio == pytest.approx(rr, abs=0.01)
    assert isinstance(t, ToneLikeness) and t.shape == target.shape


def test_a_pale_drawing_fails_the_targets_and_the_picture_itself_meets_them():
    target = _scene(seed=1)
    same = tone_likeness_images(target, target, 2.0)
    assert same.meets() and same.ssim == pytest.approx(1.0) and same.range_ratio == 1.0
    pale = tone_likeness_images(0.7 + 0.3 * target, target, 2.0)   # a scatter of light dots
    assert not pale.meets()
    assert pale.range_ratio < TONE_TARGETS["range_ratio"] and pale.delta_lightness > 6


def test_hatch_lines_at_murray_davies_width_match_a_flat_grey_once_blurred():
    # Murray-Davies (A. Murray 1936): lines of width a*s every s px cover a of the paper and
    # reflect 1 - a; at a blur much wider than s the drawing is a flat 1 - a.
    h, w, s, a = 120, 120, 4, 0.6
    lines = [np.array([[-5.0, r], [w + 5.0, r]]) for r in np.arange(0, h + s, s) - 0.5]
    cov = render_coverage(lines, (h, w), a * s, supersample=8)
    t = tone_likeness_images(1 - cov, np.full((h, w), 1 - a), 6.0)
    assert abs(t.delta_lightness) < 0.5          # an allowance of our own for the rendering


def test_images_of_other_shapes_or_too_small_are_refused():
    with pytest.raises(InkreachError):
        tone_likeness_images(np.ones((20, 20)), np.ones((20, 21)), 1.0)
    with pytest.raises(InkreachError):
        tone_likeness_images(np.ones((8, 8)), np.ones((8, 8)), 1.0)
