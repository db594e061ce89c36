import numpy as np
import pytest
from hypothesis import given, settings, strategies as st
from PIL import Image, ImageDraw

from inkreach.trace import centerline, outline, smooth_polylines


def _line_picture(angle_deg, width=3, size=(200, 260)):
    # The true line is what Pillow draws: a segment between two known points.
    h, w = size
    c = np.array([w / 2, h / 2])
    d = np.array([np.cos(np.radians(angle_deg)), -np.sin(np.radians(angle_deg))])
    a, b = c - 100 * d, c + 100 * d
    im = Image.new("L", (w, h), 255)
    ImageDraw.Draw(im).line([tuple(a), tuple(b)], fill=0, width=width)
    return (np.asarray(im) / 255.0).astype(np.float32), a, b


@pytest.mark.parametrize("angle", [17.0, 5.0, 33.0, 62.0])  # 17 deg: the staircase case
def test_centerline_of_a_straight_drawn_line_has_few_vertices(angle):
    lum, a, b = _line_picture(angle)
    (s,) = centerline(lum)
    assert len(s) <= 3
    # and it still lies on the true line (Pillow's segment a-b), within the
    # 1.5 px of the centre-line accuracy tests
    d = np.abs((b - a)[0] * (s - a)[:, 1] - (b - a)[1] * (s - a)[:, 0]) / np.hypot(*(b - a))
    assert d.max() <= 1.5


def _circle_picture(r, cx=100.0, cy=100.0, size=200, fill=False):
    im = Image.new("L", (size, size), 255)
    box = [cx - r, cy - r, cx + r, cy + r]
    dr = ImageDraw.Draw(im)
    if fill:
        dr.ellipse(box, fill=0)
    else:
        dr.ellipse([box[0] - 1, box[1] - 1, box[2] + 1, box[3] + 1], outline=0, width=3)
    return (np.asarray(im) / 255.0).astype(np.float32)


@pytest.mark.parametrize("r", [12.0, 30.0, 70.0])
def test_centerline_of_a_circle_keeps_its_radius(r):
    # Outside source: the circle Pillow drew, centre (100, 100), radius r
    # (its 3-px ring runs from r - 1 to r + 1).
    (s,) = centerline(_circle_picture(r))
    dense = np.concatenate([np.linspace(p, q, 10) for p, q in zip(s[:-1], s[1:])])
    rad = np.hypot(dense[:, 0] - 100, dense[:, 1] - 100)
    assert abs(rad.mean() - r) <= 0.5          # no shrinkage
    assert np.abs(rad - r).max() <= 1.2        # round: RDP's 0.6 px plus pixel rounding


def test_outline_of_a_disc_keeps_its_radius_and_is_smooth():
    # A filled Pillow disc of radius 40: Canny puts the edge about half a
    # pixel inside the boundary; smoothing must not pull it in further.
    lum = _circle_picture(40.0, fill=True)
    raw = outline(lum, smooth=0, simplify=0)[0]
    (s,) = outline(lum)
    r_raw = np.hypot(raw[:, 0] - 100, raw[:, 1] - 100).mean()
    r = np.hypot(s[:, 0] - 100, s[:, 1] - 100)
    assert abs(r.mean() - r_raw) <= 0.2 and abs(r.mean() - 40) <= 1.0
    assert r.std() < 0.4


def test_smoothing_keeps_the_points_of_a_star():
    # A five-pointed star drawn with Pillow: every tip must still be reached.
    ang = np.pi / 2 + np.arange(10) * np.pi / 5
    rad = np.where(np.arange(10) % 2 == 0, 80.0, 32.0)
    pts = np.stack([100 + rad * np.cos(ang), 100 - rad * np.sin(ang)], axis=1)
    im = Image.new("L", (200, 200), 255)
    ImageDraw.Draw(im).line([tuple(p) for p in np.vstack([pts, pts[:1]])], fill=0, width=5,
                            joint="curve")
    lum = (np.asarray(im) / 255.0).astype(np.float32)
    strokes = centerline(lum)
    allpts = np.concatenate(strokes)
    reach = [np.hypot(*(allpts - p).T).min() for p in pts]
    assert max(reach) <= 4.0          # tips and inner corners kept (within 4 px)
    assert sum(len(s) for s in strokes) <= 40    # ten straight sides, few vertices


def test_smoothing_holds_open_ends_in_place():
    rng = np.random.default_rng(1)
    p = np.cumsum(rng.normal(size=(80, 2)), axis=0)
    (q,) = smooth_polylines([p], 1.5)
    np.testing.assert_allclose(q[0], p[0])
    np.testing.assert_allclose(q[-1], p[-1])


@settings(max_examples=30, deadline=None)
@given(st.floats(0.0, np.pi), st.floats(5.0, 80.0))
def test_smoothing_a_straight_segment_leaves_it_straight(theta, length):
    d = np.array([np.cos(theta), np.sin(theta)])
    p = np.linspace(0, length, 50)[:, None] * d
    (q,) = smooth_polylines([p], 2.0)
    assert np.abs(d[0] * q[:, 1] - d[1] * q[:, 0]).max() < 1e-9
