"""Reading dots off a photo of the sheet (a synthetic photo drawn with OpenCV)."""

import numpy as np
import pytest

cv2 = pytest.importorskip("cv2")

from inkreach.arms import default_arm  # noqa: E402
from inkreach.calibrate import calibration_targets, measure_sheet_photo, sheet_corners  # noqa: E402
from inkreach.errors import InkreachError  # noqa: E402


def _photo(arm, q, true_xy, px_per_mm=6.0, angle_deg=4.0, tilt=2e-5, labels=True):
    """Render the dotted sheet as a camera would see it (invented test scene)."""
    c = sheet_corners(arm, q)
    lo, hi = c.min(0) - 10, c.max(0) + 10
    a = np.deg2rad(angle_deg)
    R = np.array([[np.cos(a), np.sin(a)], [np.sin(a), -np.cos(a)]])  # y up -> rows down
    A = np.eye(3)
    A[:2, :2] = px_per_mm * R
    A[:2, 2] = -A[:2, :2] @ ((lo + hi) / 2)
    H = np.array([[1, 0, 0], [0, 1, 0], [tilt, -tilt, 1.0]]) @ A
    pts = cv2.perspectiveTransform(np.array([[lo, [hi[0], lo[1]], hi, [lo[0], hi[1]]]]), H)[0]
    off = -pts.min(0) + 40
    H = np.array([[1, 0, off[0]], [0, 1, off[1]], [0, 0, 1]]) @ H
    size = np.ceil(pts.max(0) - pts.min(0) + 80).astype(int)
    img = np.full((size[1], size[0]), 245, np.uint8)

    def to_px(p):
        return cv2.perspectiveTransform(np.asarray(p, np.float64)[None], H)[0]

    def fill(poly_mm, value):
        p = np.rint(to_px(poly_mm) * 16).astype(np.int32)
        cv2.fillPoly(img, [p], int(value), lineType=cv2.LINE_AA, shift=4)

    for x in np.arange(np.ceil(lo[0] / 10) * 10, hi[0], 10):  # faint grid
        p = np.rint(to_px([[x, lo[1]], [x, hi[1]]])).astype(int)
        cv2.line(img, tuple(p[0]), tuple(p[1]), 200, 1)
    for y in np.arange(np.ceil(lo[1] / 10) * 10, hi[1], 10):
        p = np.rint(to_px([[lo[0], y], [hi[0], y]])).astype(int)
        cv2.line(img, tuple(p[0]), tuple(p[1]), 200, 1)
    s = 3.0
    for cx, cy in c:
        fill([[cx - s, cy - s], [cx + s, cy - s], [cx + s, cy + s], [cx - s, cy + s]], 10)
    t = np.linspace(0, 2 * np.pi, 72, endpoint=False)
    circle = np.stack([np.cos(t), np.sin(t)], 1)
    for i, e in enumerate(arm.fk(q), start=1):
        ring = np.rint(to_px(e + 4.0 * circle)).astype(np.int32)
        cv2.polylines(img, [ring], True, 120, 1, cv2.LINE_AA)
        if labels:
            org = tuple(np.rint(to_px([e + [4.8, 3.5]])[0]).astype(int))
            cv2.putText(img, str(i), org, cv2.FONT_HERSHEY_SIMPLEX, 0.5, 40, 1, cv2.LINE_AA)
    for d in true_xy:
        fill(d + 0.5 * circle, 20)
    return img


def test_dots_are_measured_from_a_photo_to_a_tenth_of_a_millimetre():
    # Ground truth is the scene itself: the dots are drawn where we put them,
    # through a known homography (Hartley & Zisserman, Multiple View Geometry,
    # section 2.3), with OpenCV's anti-aliased polygon fill.
    arm = default_arm()
    q = calibration_targets(arm, n=8)
    rng = np.random.default_rng(4)
    true_xy = arm.fk(q) + rng.uniform(-3, 3, (8, 2))
    img = _photo(arm, q, true_xy)
    xy = measure_sheet_photo(img, arm, q)
    np.testing.assert_allclose(xy, true_xy, atol=0.1)


def test_a_dot_missing_from_the_photo_is_named():
    arm = default_arm()
    q = calibration_targets(arm, n=6)
    true_xy = arm.fk(q)
    img = _photo(arm, q, true_xy[[0, 1, 2, 4, 5]])
    with pytest.raises(InkreachError, match="dot 4 not found"):
        measure_sheet_photo(img, arm, q)


def test_a_photo_without_the_corner_markers_is_refused():
    arm = default_arm()
    q = calibration_targets(arm, n=6)
    with pytest.raises(InkreachError, match="corner markers"):
        measure_sheet_photo(np.full((400, 600), 240, np.uint8), arm, q)
