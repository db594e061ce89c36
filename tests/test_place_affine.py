"""The placement's affine: pixel centres, orientation, scale, inverse and hull."""

import functools

import cv2
import numpy as np
import pytest

from inkreach.arms import default_arm, workspace_map
from inkreach.place import Placement, place_drawing


@functools.lru_cache(maxsize=None)
def _setup():
    arm = default_arm()
    return arm, workspace_map(arm)


def _arrow():
    """An invented upright arrow: shaft and head, tip at the top (row 10)."""
    return [np.array([[50.0, 190.0], [50.0, 10.0]]),
            np.array([[20.0, 60.0], [50.0, 10.0], [80.0, 60.0]])]


def test_image_row_zero_goes_to_the_largest_y_and_the_affine_mirrors():
    arm, wmap = _setup()
    p = place_drawing(_arrow(), arm, wmap=wmap, rotations=[0.0])
    tip, tail = p.apply(np.array([[50.0, 10.0], [50.0, 190.0]]))
    assert tip[1] > tail[1]                        # picture appears upright, +y up
    assert np.isclose(tip[0], tail[0])             # same column -> same x
    assert np.linalg.det(p.matrix[:, :2]) < 0 and p.flipped
    q = place_drawing(_arrow(), arm, wmap=wmap, rotations=[0.0], flip=False)
    assert np.linalg.det(q.matrix[:, :2]) > 0 and not q.flipped


def test_known_pixel_centres_map_to_the_corners_of_the_placed_box():
    # Worked value (plain algebra): with rotation 0 and the flip, pixel (c, r) goes to
    # (x0 + s (c - cmin), y0 + h - s (r - rmin)) where (x0, y0, w, h) is the placed box.
    arm, wmap = _setup()
    strokes = [np.array([[3.0, 7.0], [103.0, 7.0], [103.0, 57.0], [3.0, 57.0]])]
    p = place_drawing(strokes, arm, wmap=wmap, rotations=[0.0])
    x0, y0, w, h = p.bbox
    np.testing.assert_allclose(p.apply(np.array([3.0, 7.0])), [x0, y0 + h], atol=1e-9)
    np.testing.assert_allclose(p.apply(np.array([103.0, 57.0])), [x0 + w, y0], atol=1e-9)
    np.testing.assert_allclose(p.apply(np.array([53.0, 32.0])), [x0 + w / 2, y0 + h / 2],
                               atol=1e-9)
    np.testing.assert_allclose([w, h], [100 * p.scale, 50 * p.scale])
    np.testing.assert_allclose(p.size_mm, (w, h))


@pytest.mark.parametrize("rotations", [[0.0], None, [np.deg2rad(25.0)]])
def test_scale_equals_the_ratio_of_placed_to_image_hull_size(rotations):
    arm, wmap = _setup()
    strokes = _arrow()
    p = place_drawing(strokes, arm, wmap=wmap, rotations=rotations)
    pts = np.concatenate(strokes)
    # Reference: the image hull's perimeter from OpenCV (cv2.convexHull, cv2.arcLength).
    h_img = cv2.convexHull(pts.astype(np.float32))
    perim = lambda v: np.hypot(*(np.roll(v, -1, 0) - v).T).sum()  # noqa: E731
    assert np.isclose(perim(p.hull) / cv2.arcLength(h_img, True), p.scale, rtol=1e-6)
    # the linear part is scale * rotation * diag(1, -1)
    c, s = np.cos(p.rotation), np.sin(p.rotation)
    np.testing.assert_allclose(p.matrix[:, :2], p.scale * np.array([[c, s], [s, -c]]),
                               atol=1e-12)
    if rotations is not None:
        assert p.rotation in rotations


def test_placed_hull_matches_opencv_convex_hull():
    # Reference: cv2.convexHull (OpenCV) of the placed stroke points.
    arm, wmap = _setup()
    rng = np.random.default_rng(3)
    strokes = [rng.uniform(0, 300, size=(40, 2)) for _ in range(3)]
    p = place_drawing(strokes, arm, wmap=wmap)
    placed = np.concatenate(p.apply_all(strokes))
    ref = cv2.convexHull(placed.astype(np.float32)).reshape(-1, 2)
    assert len(ref) == len(p.hull)
    assert np.isclose(cv2.contourArea(ref.astype(np.float32)),
                      cv2.contourArea(p.hull.astype(np.float32)), rtol=1e-5)


def test_inverse_round_trips_and_contains_every_stroke_point():
    arm, wmap = _setup()
    strokes = _arrow()
    p = place_drawing(strokes, arm, wmap=wmap)
    pts = np.concatenate(strokes)
    arm_pts = p.apply(pts)
    back = arm_pts @ p.inverse()[:, :2].T + p.inverse()[:, 2]
    np.testing.assert_allclose(back, pts, atol=1e-9)
    assert p.contains(arm_pts).all()
    far = p.hull.mean(0) + 1000.0
    assert not p.contains(far)
    assert isinstance(p, Placement)
    assert len(p.apply_all(strokes)) == len(strokes)
