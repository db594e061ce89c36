"""Centre lines of 3-px lines: how much of the true centre line is found, and how far
the strokes stray from it."""

import numpy as np
import pytest
from PIL import Image, ImageDraw
from scipy.spatial import cKDTree

from inkreach.trace import centerline


def _dense(poly, step=0.1):
    return np.concatenate([np.linspace(a, b, max(2, int(np.hypot(*(b - a)) / step) + 2))
                           for a, b in zip(poly[:-1], poly[1:])])


def _bezier(p0, p1, p2, p3, n=400):
    t = np.linspace(0, 1, n)[:, None]
    return ((1 - t) ** 3 * p0 + 3 * (1 - t) ** 2 * t * p1
            + 3 * (1 - t) * t ** 2 * p2 + t ** 3 * p3)


_SS = 8   # supersampling factor of the drawing


def _draw(polys, shape=(240, 240)):
    """Lines 3 px wide drawn by Pillow, black on white, as linear luminance.

    Pillow's rasteriser drops the fraction of a vertex's coordinates (a line through
    y = 100.7 inks rows 99-101, centred on 100), which would put the ink up to 1 px off
    the analytic centre line. So the lines are drawn 8 times larger, with pixel centres
    at whole numbers (x -> 8 (x + 1/2) - 1/2); a pixel is ink where more than half of its
    8 x 8 block is, so the ink lies within 1/8 px of the analytic line at pixel precision.
    """
    im = Image.new("L", (shape[1] * _SS, shape[0] * _SS), 255)
    d = ImageDraw.Draw(im)
    for c in polys:
        big = _SS * (np.asarray(c, dtype=float) + 0.5) - 0.5
        d.line([tuple(p) for p in big], fill=0, width=3 * _SS, joint="curve")
    a = np.asarray(im, dtype=np.float64) / 255.0
    a = a.reshape(shape[0], _SS, shape[1], _SS).mean(axis=(1, 3))
    return (a >= 0.5).astype(np.float32)


def _cases():
    A = np.array
    t = np.linspace(0, 2 * np.pi, 200)
    s = np.linspace(0, 6 * np.pi, 2000)
    rng = np.random.default_rng(1)
    out = [
        [A([[30.0, 170], [100, 30], [170, 170]])],                            # V, 53 deg
        [A([[30.0, 200], [100, 20], [130, 200]])],                            # V, 26 deg
        [A([[20.0, 60], [180, 60]]), A([[100.0, 60], [100, 180]])],           # T
        [A([[100 + 80 * np.cos(a), 100 + 80 * np.sin(a)],
            [100 - 80 * np.cos(a), 100 - 80 * np.sin(a)]])
         for a in np.linspace(0, np.pi, 4, endpoint=False)],                  # star of 4
        [A([[20.0, 150], [50, 50], [80, 150], [110, 50], [140, 150], [170, 50]])],
        [A([[60.0, 20], [60, 220]]), A([[60.0, 120], [160, 20]]), A([[60.0, 120], [160, 220]])],
        [A([[20.0, 100], [220, 100]]), A([[20.0, 54], [220, 146]])],           # X, 25 deg
        [np.stack([60 + 6 * np.cos(t), 60 + 6 * np.sin(t)], 1),
         np.stack([150 + 10 * np.cos(t), 150 + 10 * np.sin(t)], 1)],          # small rings
        [np.stack([120 + (5 + 6 * s) * np.cos(s), 120 + (5 + 6 * s) * np.sin(s)], 1)],
    ]
    # random cubic curves (some with cusps and loops), three to a picture
    out += [[_bezier(*[rng.uniform(20, 220, 2) for _ in range(4)]) for _ in range(3)]
            for _ in range(12)]
    return out


def _figures():
    # Truth: the drawn polylines, densely resampled; distances by scipy's cKDTree,
    # pooled over every picture.
    found, stray = [], []
    for polys in _cases():
        strokes = centerline(_draw(polys))
        truth = np.concatenate([_dense(p) for p in polys])
        pts = np.concatenate([_dense(s) if len(s) > 1 else s for s in strokes])
        found.append(cKDTree(pts).query(truth)[0])
        stray.append(cKDTree(truth).query(pts)[0])
    return np.concatenate(found), np.concatenate(stray)


def test_centre_lines_of_3px_lines_are_found_and_no_stroke_strays_beyond_4px():
    # Bounds (this project's promise): recall within 1.5 px >= 0.97, no stray point
    # beyond 4 px (corners of curved arms were once pushed 5.8 px off the line).
    found, stray = _figures()
    assert (found <= 1.5).mean() >= 0.97
    assert stray.max() <= 4.0


def test_centre_lines_of_3px_lines_stray_at_most_1px_at_the_99th_percentile():
    _, stray = _figures()
    assert np.percentile(stray, 99) <= 1.0


@pytest.mark.parametrize("deg", [10.0, 15.0, 20.0])
def test_a_shallow_crossing_gives_two_strokes_each_on_one_line(deg):
    # Two 3-px lines crossing at a shallow angle merge over tens of pixels; the
    # skeleton there runs down the middle between them.  Each of the two strokes
    # should follow one line straight through the crossing.  Distances by scipy's
    # cKDTree.  Bound: 1 px, a third of the line width (this project's choice,
    # the figure the 99th percentile above is held to).
    k = np.tan(np.radians(deg))
    lines = [np.array([[20.0, 120], [220, 120]]),
             np.array([[20.0, 120 - 100 * k], [220, 120 + 100 * k]])]
    strokes = centerline(_draw(lines))
    assert len(strokes) == 2
    trees = [cKDTree(_dense(p)) for p in lines]
    owner = []
    for s in strokes:
        far = [t.query(_dense(s))[0].max() for t in trees]
        assert min(far) <= 1.0
        owner.append(int(np.argmin(far)))
    assert sorted(owner) == [0, 1]


def test_a_short_rung_between_two_lines_is_kept():
    # An H: the junction repair may not take the rung for a merged zone (its
    # pixels lie far from the two uprights).  Recall within 1.5 px as above.
    polys = [np.array([[60.0, 40], [60, 200]]), np.array([[75.0, 40], [75, 200]]),
             np.array([[60.0, 120], [75, 120]])]
    strokes = centerline(_draw(polys))
    pts = np.concatenate([_dense(s) for s in strokes])
    rung = _dense(polys[2])[10:-10]          # away from the uprights' ink
    assert (cKDTree(pts).query(rung)[0] <= 1.5).all()
