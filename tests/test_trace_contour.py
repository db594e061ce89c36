import numpy as np
from skimage import data

from inkreach.trace import contour


def _closed(s):
    return np.allclose(s[0], s[-1])


def test_contour_leaves_out_loops_narrower_than_two_pen_widths_on_a_noisy_picture():
    # A smooth ramp with strong grain: the grain must not come out as crumbs.
    rng = np.random.default_rng(1)
    y = np.linspace(0.05, 0.95, 200)[None, :].repeat(150, 0)
    lum = np.clip(y + rng.normal(0, 0.03, y.shape), 0, 1).astype(np.float32)
    for pen in (1.0, 2.0, 3.0):
        for s in contour(lum, pen_px=pen):
            if _closed(s):
                assert np.ptp(s, axis=0).max() >= 2.0 * pen - 1.0   # less simplification


def test_contour_of_the_camera_man_has_no_crumbs():
    # scikit-image's shipped sample picture (skimage.data.camera).
    lum = (data.camera() / 255.0).astype(np.float32) ** 2.2   # sRGB-ish to linear (from memory)
    strokes = contour(lum)
    small = [s for s in strokes if _closed(s) and np.ptp(s, axis=0).max() < 3.0]   # 2 pens less simplification
    assert not small and len(strokes) < 400   # stroke bound chosen here by hand (rough)


def test_contour_smoothing_follows_the_noise_level():
    # More grain, more blur: fewer tone lines on the noisier copy of one ramp.
    rng = np.random.default_rng(2)
    y = np.linspace(0.05, 0.95, 240)[None, :].repeat(160, 0)
    quiet = np.clip(y + rng.normal(0, 0.005, y.shape), 0, 1).astype(np.float32)
    loud = np.clip(y + rng.normal(0, 0.04, y.shape), 0, 1).astype(np.float32)
    assert len(contour(loud)) <= len(contour(quiet)) + 2
