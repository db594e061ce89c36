"""Calibration sheet: a millimetre SVG with frame, ticks, motors and numbered dots."""

import xml.etree.ElementTree as ET

import numpy as np
import pytest

from inkreach.arms import default_arm, load_arm
from inkreach.calibrate import calibration_sheet, calibration_targets, sheet_corners, sheet_svg

NS = {"s": "http://www.w3.org/2000/svg"}


def _sheet(name="default", n=10):
    arm = load_arm(name)
    q = calibration_targets(arm, n=n)
    return arm, q, ET.fromstring(sheet_svg(arm, q))  # the standard-library XML parser


def _of(root, tag, cls):
    return [e for e in root.iter("{http://www.w3.org/2000/svg}" + tag) if e.get("class") == cls]


def _labels(root, cls):
    return [(float(t.get("x")), float(t.get("y")), float(t.text)) for t in _of(root, "text", cls)]


def test_sheet_is_millimetre_svg_with_ticks_labelled_every_10_mm():
    arm, q, root = _sheet()
    w, h = root.get("width"), root.get("height")
    assert w.endswith("mm") and h.endswith("mm")
    vb = [float(v) for v in root.get("viewBox").split()]
    assert vb[2] == float(w[:-2]) and vb[3] == float(h[:-2])  # one user unit = 1 mm
    xs = sorted(_labels(root, "tick-x"), key=lambda t: t[0])  # along the bottom edge
    ux = np.array([t[0] for t in xs])
    vx = np.array([t[2] for t in xs])
    np.testing.assert_allclose(np.diff(vx), 10.0)
    np.testing.assert_allclose(np.diff(ux), 10.0)  # 10 mm of paper per 10 mm label
    ys = sorted(_labels(root, "tick-y"), key=lambda t: t[1])  # y increases up the page
    np.testing.assert_allclose(np.diff([t[2] for t in ys]), -10.0)
    np.testing.assert_allclose(np.diff([t[1] for t in ys]), 10.0)
    assert len(xs) > 5 and len(ys) > 5


def test_sheet_shows_axes_motors_corner_markers_and_numbered_rings_at_the_dots():
    arm, q, root = _sheet(n=10)
    svg = ET.tostring(root, encoding="unicode")
    assert "left motor (-40, 0)" in svg and "right motor (40, 0)" in svg
    assert "x mm" in svg and "y mm" in svg
    assert len(_of(root, "rect", "corner")) == 4
    rings = _of(root, "circle", "dot-ring")
    assert len(rings) == 10
    # ring centres sit at the nominal dot positions: invert the page mapping
    # (x_page = x - x0, y_page = y1 - y) using the motor marks as anchors
    motors = [g.find("s:circle", NS) for g in _of(root, "g", "motor")]
    (ax, ay), (bx, by) = [(float(c.get("cx")), float(c.get("cy"))) for c in motors]
    x0, y1 = arm.left_motor[0] - ax, arm.left_motor[1] + ay
    assert bx + x0 == pytest.approx(arm.right_motor[0]) and y1 - by == pytest.approx(0.0)
    centres = np.array([[float(c.get("cx")) + x0, y1 - float(c.get("cy"))] for c in rings])
    np.testing.assert_allclose(centres, arm.fk(q), atol=1e-3)
    assert [t.text for t in _of(root, "text", "dot-label")] == [str(i) for i in range(1, 11)]


def test_printed_corner_markers_sit_where_sheet_corners_says():
    # the photo reader maps pixels to mm through sheet_corners, so the
    # printed squares must be centred there; page mapping inverted from the
    # motor marks as above (x_page = x - x0, y_page = y1 - y)
    arm, q, root = _sheet(n=10)
    motor = _of(root, "g", "motor")[0].find("s:circle", NS)
    x0 = arm.left_motor[0] - float(motor.get("cx"))
    y1 = arm.left_motor[1] + float(motor.get("cy"))
    rects = _of(root, "rect", "corner")
    centres = np.array([[float(r.get("x")) + float(r.get("width")) / 2 + x0,
                         y1 - float(r.get("y")) - float(r.get("height")) / 2] for r in rects])
    np.testing.assert_allclose(centres, sheet_corners(arm, q), atol=1e-9)


def test_corner_markers_enclose_every_dot():
    arm = load_arm("serial")
    q = calibration_targets(arm, n=8)
    c = sheet_corners(arm, q)
    xy = arm.fk(q)
    assert np.all(xy.min(0) > c.min(0)) and np.all(xy.max(0) < c.max(0))


def test_calibration_stream_visits_each_dot_at_the_commanded_angles():
    motion = pytest.importorskip("inkreach.motion")
    if not hasattr(motion, "plan_motion"):
        pytest.skip("inkreach.motion.plan_motion is not available yet")
    arm = default_arm()
    q = calibration_targets(arm, n=6)
    svg, stream = calibration_sheet(arm, q)
    assert svg.startswith("<svg")
    down = stream.pen == 1
    assert down.any()
    # every commanded posture is reached with the pen down
    for target in q:
        d = np.abs(stream.q[down] - target).max(axis=1)
        assert d.min() < 1e-6
    # and the pen is lifted between dots: one pen-down run per dot
    runs = np.count_nonzero(np.diff(down.astype(int)) == 1) + int(down[0])
    assert runs == len(q)
