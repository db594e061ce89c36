import numpy as np
import pytest
from PIL import Image, ImageDraw
from scipy.spatial import cKDTree

from inkreach.trace import centerline


def _bezier(p0, p1, p2, p3, n=2000):
    t = np.linspace(0, 1, n)[:, None]
    return ((1 - t) ** 3 * p0 + 3 * (1 - t) ** 2 * t * p1
            + 3 * (1 - t) * t ** 2 * p2 + t ** 3 * p3)


def _draw(shape, curves, closed=()):
    """Curves drawn 3 px wide with Pillow, dark on white, as linear luminance."""
    im = Image.new("L", shape[::-1], 255)
    d = ImageDraw.Draw(im)
    for c in curves:
        d.line([tuple(p) for p in c], fill=0, width=3, joint="curve")
    for (cx, cy, r) in closed:
        d.ellipse([cx - r - 1, cy - r - 1, cx + r + 1, cy + r + 1], outline=0, width=3)
    return (np.asarray(im) / 255.0).astype(np.float32)


def _check(strokes, truth, open_ends=()):
    # Reference geometry: densely sampled true centre lines; distances by
    # scipy.spatial.cKDTree.  Pixel centres sit at whole numbers in both.
    pts = np.concatenate(strokes)
    d_out, _ = cKDTree(truth).query(pts)
    # 1.5 px: half the drawn 3 px line width, i.e. every stroke point lies
    # inside the drawn line; a bound chosen from the picture's geometry
    assert d_out.max() <= 1.5                       # strokes lie on the centre line
    # Densify the strokes (they are simplified polylines) before the recall.
    dense = np.concatenate([np.linspace(a, b, max(2, int(np.hypot(*(b - a))) * 2 + 2))
                            for s in strokes for a, b in zip(s[:-1], s[1:])])
    d_in, _ = cKDTree(dense).query(truth)
    keep = np.ones(len(truth), bool)
    for e in open_ends:                              # ignore ~3 px at open ends
        keep &= np.hypot(*(truth - e).T) > 3.0
    # 98 %: chosen here to allow a few pixels lost where lines meet (a
    # skeleton's junctions move by about a line width)
    assert (d_in[keep] <= 1.5).mean() >= 0.98


def test_centerline_returns_one_stroke_down_a_thick_line():
    truth = np.stack([np.linspace(20, 180, 2000), np.linspace(30, 90, 2000)], axis=1)
    lum = _draw((120, 200), [truth[[0, -1]]])
    strokes = centerline(lum)
    assert len(strokes) == 1
    _check(strokes, truth, open_ends=truth[[0, -1]])


def test_centerline_follows_cubic_bezier_curves():
    curves = [_bezier(np.array([20.0, 150]), np.array([60.0, 10]), np.array([140.0, 10]),
                      np.array([180.0, 150])),
              _bezier(np.array([30.0, 180]), np.array([80.0, 230]), np.array([120.0, 130]),
                      np.array([220.0, 200]))]
    lum = _draw((260, 260), curves)
    strokes = centerline(lum)
    assert len(strokes) == 2
    _check(strokes, np.concatenate(curves), open_ends=[c[i] for c in curves for i in (0, -1)])


def test_centerline_of_a_circle_is_one_closed_stroke():
    theta = np.linspace(0, 2 * np.pi, 3000)
    truth = np.stack([100 + 60 * np.cos(theta), 100 + 60 * np.sin(theta)], axis=1)
    lum = _draw((200, 200), [], closed=[(100, 100, 60)])
    (s,) = centerline(lum)
    np.testing.assert_allclose(s[0], s[-1])
    _check([s], truth)


def test_centerline_of_a_cross_is_two_strokes():
    a = np.stack([np.linspace(20, 180, 800), np.full(800, 100.0)], axis=1)
    b = a[:, ::-1].copy()
    lum = _draw((200, 200), [a[[0, -1]], b[[0, -1]]])
    strokes = centerline(lum)
    assert len(strokes) == 2
    _check(strokes, np.concatenate([a, b]),
           open_ends=[a[0], a[-1], b[0], b[-1]])


@pytest.mark.parametrize("threshold", ["otsu", "adaptive", 0.5])
def test_centerline_thresholds_all_find_the_line(threshold):
    truth = np.stack([np.linspace(20, 180, 500), np.full(500, 60.0)], axis=1)
    lum = _draw((120, 200), [truth[[0, -1]]])
    assert len(centerline(lum, threshold=threshold)) == 1


def test_centerline_on_unevenly_lit_paper_uses_local_thresholds():
    truth = np.stack([np.linspace(20, 280, 1000), np.full(1000, 100.0)], axis=1)
    lum = _draw((200, 300), [truth[[0, -1]]])
    shade = np.linspace(1.0, 0.25, 300)[None, :].astype(np.float32)   # light falls off
    strokes = centerline(lum * shade)
    assert len(strokes) == 1
    _check(strokes, truth, open_ends=truth[[0, -1]])
