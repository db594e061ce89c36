import cv2
import numpy as np
import pytest
from scipy.spatial import cKDTree
from skimage import data

from inkreach.trace import load_image, outline, outline_edges
from inkreach.trace.outline import edge_thresholds
from inkreach.trace.srgb import linear_to_srgb


@pytest.mark.parametrize("name", ["camera", "astronaut"])
def test_outline_edges_agree_with_opencv_canny(name):
    # Reference: OpenCV's Canny (Canny 1986) on scikit-image's shipped
    # sample images, with the same thresholds, on the sRGB-encoded picture.
    lum = load_image(getattr(data, name)()).luminance
    ref_img = np.round(linear_to_srgb(lum) * 255).astype(np.uint8)
    for low, high in [(40.0, 100.0), (80.0, 200.0)]:
        ours = outline_edges(lum, low=low, high=high, blur=0)
        ref = cv2.Canny(ref_img, low, high, L2gradient=True) > 0
        assert (ours == ref).mean() > 0.999


def test_automatic_thresholds_are_ordered_and_follow_detail():
    img = np.round(linear_to_srgb(load_image(data.camera()).luminance) * 255).astype(np.uint8)
    lo1, hi1 = edge_thresholds(img, 0.2)
    lo2, hi2 = edge_thresholds(img, 0.8)
    assert 0 < lo1 < hi1 and 0 < lo2 < hi2 and hi2 < hi1


@pytest.mark.parametrize("name", ["camera", "astronaut"])
def test_outline_strokes_lie_on_canny_edges(name):
    lum = load_image(getattr(data, name)()).luminance
    edges = outline_edges(lum)
    r, c = np.nonzero(edges)
    tree = cKDTree(np.stack([c, r], axis=1))
    d, _ = tree.query(np.concatenate(outline(lum, smooth=0, simplify=0)))
    assert d.max() <= 1.0 + 1e-9                   # the pixel path itself
    d, _ = tree.query(np.concatenate(outline(lum, simplify=0)))
    # Smoothed: sub-pixel off the pixel chain, except corners moved out to
    # where their straight arms meet (at most 2 * round(2 * sigma) = 8 px).
    assert np.median(d) <= 0.5 and np.quantile(d, 0.99) <= 1.5 and d.max() <= 8.0


def test_outline_defaults_give_few_long_strokes_on_a_photo():
    lum = load_image(data.astronaut()).luminance
    strokes = outline(lum)
    lengths = np.array([np.hypot(*np.diff(s, axis=0).T).sum() for s in strokes])
    assert 20 < len(strokes) < 2000
    # No crumbs below the documented default min_length: 2.5 % of the long
    # side (512 px) and at least 8 pen widths (2 px).
    assert lengths.min() >= max(8 * 2.0, 0.025 * 512) - 1e-9
    assert np.median([len(s) for s in strokes]) < np.median(lengths)   # simplified


def test_outline_of_a_square_is_one_closed_stroke():
    lum = np.ones((80, 80), np.float32)
    lum[20:60, 20:60] = 0.0
    (s,) = outline(lum)
    np.testing.assert_allclose(s[0], s[-1])
    assert np.ptp(s[:, 0]) == pytest.approx(40, abs=3)


def test_noise_estimate_matches_the_added_noise():
    # Donoho & Johnstone 1994 MAD estimate; the truth is the known sigma of
    # Gaussian noise added to a smooth ramp.
    from inkreach.trace.outline import noise_sigma
    ramp = np.linspace(40, 200, 300)[None, :] * np.ones((200, 1))
    rng = np.random.default_rng(0)
    assert noise_sigma(ramp) < 0.5
    for s in (2.0, 4.0, 8.0):
        assert noise_sigma(ramp + rng.normal(0, s, ramp.shape)) == pytest.approx(s, rel=0.1)


def test_outline_ignores_grain_on_a_flat_shaded_picture():
    # A smooth vertical shading with sensor-like noise and one dark square:
    # only the square's outline should be drawn, not crumbs of grain.
    rng = np.random.default_rng(2)
    yy = np.linspace(0.35, 0.75, 300)[:, None] * np.ones((1, 400))
    img = yy + rng.normal(0, 0.02, yy.shape)
    img[100:200, 150:250] = 0.05
    strokes = outline(np.clip(img, 0, 1).astype(np.float32))
    assert len(strokes) <= 2
