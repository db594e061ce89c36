"""Independent forward kinematics and stream checks, written from the design
conventions alone (no inkreach code), used to check exported files."""

import csv
import io
import math

import numpy as np


def fk_fivebar(arm_geo, t1, t2):
    """Pen position of a five-bar from the conventions of DEVELOPERS.md (degrees in)."""
    (lx, ly), (rx, ry) = arm_geo["left_motor"], arm_geo["right_motor"]
    a1, a2 = np.deg2rad(t1), np.deg2rad(t2)
    ex_l = lx + arm_geo["left_upper"] * np.cos(a1)
    ey_l = ly + arm_geo["left_upper"] * np.sin(a1)
    ex_r = rx + arm_geo["right_upper"] * np.cos(a2)
    ey_r = ry + arm_geo["right_upper"] * np.sin(a2)
    dx, dy = ex_r - ex_l, ey_r - ey_l
    d = np.hypot(dx, dy)
    L, R = arm_geo["left_lower"], arm_geo["right_lower"]
    a = (L * L - R * R + d * d) / (2 * d)
    h = np.sqrt(L * L - a * a)
    # the meeting point to the LEFT of elbow_L -> elbow_R
    px = ex_l + a * dx / d - h * dy / d
    py = ey_l + a * dy / d + h * dx / d
    e = arm_geo.get("pen_extension", 0.0)
    return px + e * (px - ex_l) / L, py + e * (py - ey_l) / L


def fk_serial(arm_geo, t1, t2):
    sx, sy = arm_geo["shoulder"]
    a1, a12 = np.deg2rad(t1), np.deg2rad(np.asarray(t1) + np.asarray(t2))
    return (sx + arm_geo["upper"] * np.cos(a1) + arm_geo["lower"] * np.cos(a12),
            sy + arm_geo["upper"] * np.sin(a1) + arm_geo["lower"] * np.sin(a12))


def read_joints(text):
    header = next(csv.reader(io.StringIO(text)))
    assert header == ["t_s", "theta1_deg", "theta2_deg", "pen", "x_mm", "y_mm"]
    return np.loadtxt(io.StringIO(text), delimiter=",", skiprows=1, ndmin=2)


def check_joints(text, arm_table, chord_tol=0.05):
    """Check a joints.csv against an arm file table; returns figures."""
    J = read_joints(text)
    t, t1, t2, pen, x, y = J.T
    kind = arm_table["kind"]
    geo = arm_table["geometry"]
    lim = arm_table["limits"]
    fx, fy = (fk_fivebar if kind == "five-bar" else fk_serial)(geo, t1, t2)
    err = np.hypot(fx - x, fy - y)
    dt = np.diff(t)
    period = float(np.median(dt))
    v = np.abs(np.diff(J[:, 1:3], axis=0)) / period
    acc = np.abs(np.diff(J[:, 1:3], n=2, axis=0)) / period ** 2
    return {
        "rows": len(J), "fk_error_mm": float(err.max()),
        "period_spread": float(dt.max() - dt.min()),
        "in_limits": bool(np.all((t1 >= lim["theta1_deg"][0] - 1e-6) & (t1 <= lim["theta1_deg"][1] + 1e-6)
                              & (t2 >= lim["theta2_deg"][0] - 1e-6) & (t2 <= lim["theta2_deg"][1] + 1e-6))),
        "max_speed": float(v.max()), "speed_limit": lim["max_speed_deg_s"],
        "max_accel": float(acc.max()), "accel_limit": lim["max_accel_deg_s2"],
        "pen_downs": int(np.sum(np.diff(pen) > 0) + (pen[0] > 0)),
        "pen": pen, "xy": np.stack([x, y], 1),
    }


def point_segment_distance(p, a, b):
    p, a, b = (np.asarray(v, float) for v in (p, a, b))
    ab = b - a
    t = np.clip(((p - a) @ ab) / (ab @ ab), 0, 1)
    return np.hypot(*(p - (a + t[:, None] * ab)).T)


def cv_coverage(polylines, shape, pen_px, supersample=8):
    """Ink coverage (H, W) in [0, 1] of polylines drawn with OpenCV.

    ``cv2.polylines`` with a thick line (round caps and joins) and
    ``cv2.circle`` for single points, on a canvas ``supersample`` times
    finer, averaged back to whole pixels; points are (column, row) with
    pixel centres at whole numbers. A renderer outside the project, for
    judging the project's own coverage figures. OpenCV's thick 8-connected
    lines come in odd widths of fine pixels (measured on horizontal and
    sloped lines: thickness 2k - 1 or 2k covers 2k + 1 across), so an even
    fine width W is drawn as the mean of the W - 1 and W + 1 renders; a
    filled circle of radius r covers a diameter of 2 r + 1 fine pixels.
    """
    import cv2

    h, w = shape
    ss = int(supersample)
    shift = 4
    width = max(1, int(round(pen_px * ss)))
    widths = [width] if width % 2 else [width - 1, width + 1]
    widths = [max(1, wd - 1) for wd in widths]      # thickness for each odd width
    radius = max(0, int(round((pen_px * ss - 1) / 2 * (1 << shift))))
    out = np.zeros((h, w))
    for t in widths:
        img = np.zeros((h * ss, w * ss), np.uint8)
        for p in polylines:
            p = np.asarray(p, float).reshape(-1, 2)
            fine = np.rint(((p + 0.5) * ss - 0.5) * (1 << shift)).astype(np.int32)
            if len(p) == 1:
                cv2.circle(img, tuple(int(v) for v in fine[0]), radius, 255, -1, cv2.LINE_8,
                           shift)
            else:
                cv2.polylines(img, [fine.reshape(-1, 1, 2)], False, 255, max(1, t),
                              cv2.LINE_8, shift)
        out += (img.reshape(h, ss, w, ss) > 0).mean(axis=(1, 3))
    return out / len(widths)
