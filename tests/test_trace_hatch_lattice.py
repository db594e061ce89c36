import math

import numpy as np
from skimage import data, transform

from inkreach.trace import hatch, srgb_to_linear

from _independent import cv_coverage


def _ramp(h=240, w=320):
    # Linear reflectance falling smoothly from 0.95 to 0.1 across the picture.
    return np.repeat(np.linspace(0.95, 0.1, w)[None, :], h, 0).astype(np.float32)


def _lines(strokes, min_len=40.0):
    """Long segments (hatch lines, not joins): direction in whole degrees
    [0, 180) and signed distance of the line from the origin."""
    seg = np.concatenate([np.stack([s[:-1], s[1:]], 1) for s in strokes if len(s) > 1])
    d = seg[:, 1] - seg[:, 0]
    keep = np.hypot(*d.T) > min_len
    seg, d = seg[keep], d[keep]
    ang = np.round(np.degrees(np.arctan2(-d[:, 1], d[:, 0]))) % 180
    t = np.radians(ang)
    # the line through p with direction (cos t, -sin t) has normal (sin t, cos t)
    off = seg[:, 0, 0] * np.sin(t) + seg[:, 0, 1] * np.cos(t)
    return ang, off


def test_hatch_lines_of_every_tone_lie_on_one_lattice_per_direction():
    # Lines of neighbouring tones are collinear: the offsets of all lines of
    # one direction are whole multiples of one spacing apart.
    strokes = hatch(_ramp(), pen_px=2.0)
    # hops between zig-zags are at most 20 lattice spacings (<= 1.43 pens each): 57 px
    ang, off = _lines(strokes, min_len=70.0)
    for a in np.unique(ang):
        if (ang == a).sum() < 3:
            continue
        o = np.sort(off[ang == a])
        gaps = np.diff(o)
        gaps = gaps[gaps > 0.5]
        if len(gaps) == 0:
            continue
        # some spacing of at least one pen width divides every gap
        steps = gaps.min() / np.arange(1, 5)
        steps = steps[steps >= 2.0]
        ok = [np.allclose(gaps / st, np.round(gaps / st), atol=0.05) for st in steps]
        assert any(ok), a


def test_hatch_of_a_smooth_ramp_has_no_seam_of_line_ends():
    # Where tones change, lines end or turn a few at a time, not all on one
    # front: no 4-px column of the ramp holds more end and turning points
    # than one layer has lines across it (height / densest spacing, 2.5
    # pens).  The earlier hatch, with its own spacing per tone band, turned
    # about four layers' worth of lines on each band edge.
    lum = _ramp()
    pen = 2.0
    pts = np.concatenate(hatch(lum, pen_px=pen))
    h, w = lum.shape
    m = 12
    inner = pts[(pts[:, 0] > m) & (pts[:, 0] < w - 1 - m)
                & (pts[:, 1] > m) & (pts[:, 1] < h - 1 - m)]
    counts, _ = np.histogram(inner[:, 0], bins=np.arange(m, w - m, 4))
    assert counts.max() <= h / (2.5 * pen)


def test_hatch_of_a_ramp_matches_its_tone_everywhere():
    # Murray-Davies (Murray 1936): coverage 1 - Y, seen through a blur of a
    # few line spacings (sigma 8 px, chosen here: about the widest spacing of
    # the lightest tones), drawn with OpenCV rather than the project's renderer.
    # The 0.05 mean tone error is a bound chosen here (an 8-bit grey step is 0.004).
    import cv2
    lum = _ramp()
    cov = cv_coverage(hatch(lum, pen_px=2.0), lum.shape, 2.0)
    seen = cv2.GaussianBlur(1.0 - cov, (0, 0), 8.0)
    inner = (slice(30, -30), slice(30, -30))
    assert np.abs(seen[inner] - lum[inner]).mean() < 0.05


def test_hatch_of_the_astronaut_is_under_half_the_earlier_stroke_count():
    # scikit-image's shipped sample picture, upscaled to 1 MP; the earlier
    # hatch drew about 7,700 strokes of it.
    rgb = transform.resize(data.astronaut(), (1024, 1024), order=1)
    lin = srgb_to_linear(rgb)
    lum = (lin @ np.array([0.2126, 0.7152, 0.0722])).astype(np.float32)  # Rec. 709 luminance
    strokes = hatch(lum)
    assert len(strokes) < 3850
