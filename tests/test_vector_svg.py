"""SVG input, checked against the definitions of the SVG 1.1 specification.

Reference: W3C, "Scalable Vector Graphics (SVG) 1.1 (Second Edition)",
16 August 2011 -- basic shapes (chapter 9), transforms (7.4-7.6), units
(7.10), arc implementation notes (appendix F.6.5 and F.6.6).
"""

import math

import numpy as np
import pytest
from hypothesis import HealthCheck, assume, given, settings
from hypothesis import strategies as st

import inkreach
from inkreach import InkreachError
from inkreach.vector import load_svg

NS = 'xmlns="http://www.w3.org/2000/svg"'


def svg(body, attrs='width="200" height="200"'):
    return f'<svg {NS} {attrs}>{body}</svg>'.encode()


def seg_dist(p, a, b):
    """Distance of points p (N, 2) to segment a-b (written out here)."""
    ab = b - a
    L = ab @ ab
    t = np.zeros(len(p)) if L == 0 else np.clip(((p - a) @ ab) / L, 0, 1)
    return np.hypot(*(p - (a + t[:, None] * ab)).T)


def polyline_dist(p, line):
    return np.min([seg_dist(p, line[i], line[i + 1]) for i in range(len(line) - 1)], axis=0)


def chord_mids(line):
    return 0.5 * (line[1:] + line[:-1])


# --- circle (SVG 1.1 section 9.3: the points at distance r from (cx, cy)) -----------

def test_circle_points_lie_at_radius_r_and_chords_within_tolerance():
    tol = 0.01
    d = load_svg(svg('<circle cx="60" cy="70" r="40"/>'), tol=tol)
    assert len(d.strokes) == 1
    s = d.strokes[0]
    r = np.hypot(s[:, 0] - 60, s[:, 1] - 70)
    np.testing.assert_allclose(r, 40.0, atol=1e-9)           # every vertex on the circle
    mids = np.hypot(*(chord_mids(s) - [60, 70]).T)
    assert np.all(40.0 - mids <= tol + 1e-12)                # sagitta within tol
    np.testing.assert_array_equal(s[0], s[-1])               # the shape is closed
    # the whole circle: the polygon's angles cover 2 pi with no gap over the
    # chord angle allowed by tol (sagitta r(1 - cos(a/2)) <= tol)
    ang = np.unwrap(np.arctan2(s[:, 1] - 70, s[:, 0] - 60))
    assert abs(abs(ang[-1] - ang[0]) - 2 * np.pi) < 1e-9
    assert np.max(np.abs(np.diff(ang))) <= 2 * np.arccos(1 - tol / 40.0) + 1e-9


def test_ellipse_points_satisfy_the_ellipse_equation():
    # SVG 1.1 section 9.4: ellipse centred (cx, cy) with semi-axes rx, ry
    d = load_svg(svg('<ellipse cx="100" cy="50" rx="80" ry="30"/>'), tol=0.02)
    s = d.strokes[0]
    np.testing.assert_allclose(((s[:, 0] - 100) / 80) ** 2 + ((s[:, 1] - 50) / 30) ** 2, 1.0,
                               atol=1e-9)


# --- arcs (appendix F.6.5: endpoint to centre parameterisation) ------------------

def f65_centre(x1, y1, x2, y2, rx, ry, phi_deg, fa, fs):
    """Centre and radii by appendix F.6.5 steps 1-3, with F.6.6 radius scaling."""
    phi = math.radians(phi_deg)
    c, s = math.cos(phi), math.sin(phi)
    # step 1: (x1', y1')
    dx, dy = (x1 - x2) / 2, (y1 - y2) / 2
    x1p, y1p = c * dx + s * dy, -s * dx + c * dy
    # F.6.6 step 3: scale the radii up if they are too small
    lam = x1p ** 2 / rx ** 2 + y1p ** 2 / ry ** 2
    if lam > 1:
        rx, ry = math.sqrt(lam) * rx, math.sqrt(lam) * ry
    # step 2: (cx', cy')
    num = rx * rx * ry * ry - rx * rx * y1p * y1p - ry * ry * x1p * x1p
    den = rx * rx * y1p * y1p + ry * ry * x1p * x1p
    k = math.sqrt(max(num / den, 0.0))
    if fa == fs:
        k = -k
    cxp, cyp = k * rx * y1p / ry, -k * ry * x1p / rx
    # step 3: (cx, cy)
    cx = c * cxp - s * cyp + (x1 + x2) / 2
    cy = s * cxp + c * cyp + (y1 + y2) / 2
    # step 4: start angle and sweep
    def ang(ux, uy, vx, vy):
        cos = (ux * vx + uy * vy) / (math.hypot(ux, uy) * math.hypot(vx, vy))
        a = math.acos(max(-1.0, min(1.0, cos)))
        return -a if ux * vy - uy * vx < 0 else a
    th1 = ang(1, 0, (x1p - cxp) / rx, (y1p - cyp) / ry)
    dth = ang((x1p - cxp) / rx, (y1p - cyp) / ry,
              (-x1p - cxp) / rx, (-y1p - cyp) / ry) % (2 * math.pi)
    if not fs and dth > 0:
        dth -= 2 * math.pi
    return (cx, cy), (rx, ry), phi, th1, dth


ARCS = [
    # x1, y1, rx, ry, phi, large-arc, sweep, x2, y2
    (20, 100, 60, 40, 0, 0, 1, 140, 100),
    (20, 100, 60, 40, 0, 1, 1, 140, 100),
    (20, 100, 60, 40, 0, 1, 0, 140, 100),
    (30, 40, 50, 25, 30, 0, 0, 120, 90),
    (30, 40, 50, 25, 30, 1, 1, 120, 90),
    (10, 10, 5, 5, 0, 0, 1, 110, 10),       # radii too small: scaled up (F.6.6)
]


@pytest.mark.parametrize("x1, y1, rx, ry, phi, fa, fs, x2, y2", ARCS)
def test_arc_end_points_centre_and_side(x1, y1, rx, ry, phi, fa, fs, x2, y2):
    tol = 0.01
    d = load_svg(svg(f'<path d="M {x1} {y1} A {rx} {ry} {phi} {fa} {fs} {x2} {y2}"/>',
                     'width="300" height="300"'), tol=tol)
    assert len(d.strokes) == 1
    s = d.strokes[0]
    np.testing.assert_allclose(s[0], [x1, y1], atol=1e-9)
    np.testing.assert_allclose(s[-1], [x2, y2], atol=1e-9)
    (cx, cy), (Rx, Ry), ph, th1, dth = f65_centre(x1, y1, x2, y2, rx, ry, phi, fa, fs)
    c, sn = math.cos(ph), math.sin(ph)
    u = c * (s[:, 0] - cx) + sn * (s[:, 1] - cy)
    v = -sn * (s[:, 0] - cx) + c * (s[:, 1] - cy)
    np.testing.assert_allclose((u / Rx) ** 2 + (v / Ry) ** 2, 1.0, atol=1e-7)
    # the arc goes the way the flags say: its middle vertex is at the
    # parametric angle th1 + dth / 2 (F.6.3's parameterisation), within tol
    t = th1 + dth / 2
    mid = np.array([cx + Rx * math.cos(t) * c - Ry * math.sin(t) * sn,
                    cy + Rx * math.cos(t) * sn + Ry * math.sin(t) * c])
    assert polyline_dist(mid[None], s)[0] <= tol + 1e-9
    # the swept parametric angle, vertex by vertex, is F.6.5's delta-theta
    # (its sign is the sweep flag, its size over pi the large-arc flag)
    theta = np.unwrap(np.arctan2(v / Ry, u / Rx))
    assert theta[-1] - theta[0] == pytest.approx(dth, abs=1e-6)
    assert np.all(np.diff(theta) * np.sign(dth) > 0)


# --- transforms (section 7.5/7.6: a list is the product of its matrices) ---------

def T(tx, ty):
    return np.array([[1, 0, tx], [0, 1, ty], [0, 0, 1]], float)


def R(deg):
    a = math.radians(deg)
    return np.array([[math.cos(a), -math.sin(a), 0], [math.sin(a), math.cos(a), 0], [0, 0, 1]])


def S(sx, sy):
    return np.diag([sx, sy, 1.0])


def KX(deg):
    return np.array([[1, math.tan(math.radians(deg)), 0], [0, 1, 0], [0, 0, 1]])


def test_transform_list_is_the_product_in_written_order():
    body = ('<g transform="translate(30,40) rotate(25)">'
            '<line x1="3" y1="4" x2="20" y2="-7" transform="scale(2,0.5) skewX(20)"/></g>')
    d = load_svg(svg(body), tol=0.01)
    # section 7.5: transform="A B" means the matrix A B; nested groups
    # compose outer times inner (the CTM)
    M = T(30, 40) @ R(25) @ S(2, 0.5) @ KX(20)
    want = (M @ np.array([[3, 20], [4, -7], [1, 1]], float))[:2].T
    np.testing.assert_allclose(d.strokes[0], want, atol=1e-9)


def test_rotate_about_a_point_and_matrix_form():
    body = ('<g transform="rotate(90, 50, 50)"><g transform="matrix(1 0.5 0 1 10 0)">'
            '<polyline points="0,0 10,0 10,10"/></g></g>')
    d = load_svg(svg(body), tol=0.01)
    # section 7.6: rotate(a, cx, cy) = translate(cx, cy) rotate(a) translate(-cx, -cy);
    # matrix(a b c d e f) = [[a c e], [b d f], [0 0 1]]
    M = T(50, 50) @ R(90) @ T(-50, -50) @ np.array([[1, 0, 10], [0.5, 1, 0], [0, 0, 1]])
    want = (M @ np.array([[0, 10, 10], [0, 0, 10], [1, 1, 1]], float))[:2].T
    np.testing.assert_allclose(d.strokes[0], want, atol=1e-9)


def test_skewed_circle_stays_on_the_transformed_circle():
    tol = 0.01
    d = load_svg(svg('<circle cx="5" cy="5" r="2" transform="skewX(30) scale(10)"/>'), tol=tol)
    M = KX(30) @ S(10, 10)
    inv = np.linalg.inv(M)
    s = d.strokes[0]
    local = (inv @ np.vstack([s.T, np.ones(len(s))]))[:2].T
    np.testing.assert_allclose(np.hypot(*(local - 5).T), 2.0, atol=1e-9)


# --- units (section 7.10, CSS2: 1in = 2.54cm = 25.4mm = 96px) --------------------

@pytest.mark.parametrize("width", ["1in", "25.4mm", "2.54cm", "96px", "96", "72pt", "6pc"])
def test_physical_units_96_px_per_inch(width):
    # a line across the whole viewBox spans the viewport's width in px
    d = load_svg(svg('<line x1="0" y1="5" x2="10" y2="5"/>',
                     f'width="{width}" height="{width}" viewBox="0 0 10 10"'), tol=0.01)
    # svgelements converts mm and cm with 0.0393701 in/mm (1/25.4 rounded,
    # relative error 5.4e-7: 0.1 um over 200 mm, far below any chord
    # tolerance), so metric widths are checked to 1e-6 relative; the rest exactly
    rtol = 1e-6 if width.endswith("m") else 1e-12
    np.testing.assert_allclose(d.strokes[0][:, 0], [0.0, 96.0], rtol=rtol, atol=1e-9)
    np.testing.assert_allclose(d.strokes[0][:, 1], [48.0, 48.0], rtol=rtol)
    assert d.mm_per_unit == 25.4 / 96
    np.testing.assert_allclose(d.size, (96.0, 96.0), rtol=rtol)


def test_viewbox_with_aspect_ratio_meet_centres_the_content():
    # section 7.8, preserveAspectRatio default xMidYMid meet: uniform scale
    # min(200/10, 100/10) = 10, content centred horizontally (offset 50)
    d = load_svg(svg('<line x1="0" y1="0" x2="10" y2="10"/>',
                     'width="200" height="100" viewBox="0 0 10 10"'), tol=0.01)
    np.testing.assert_allclose(d.strokes[0], [[50, 0], [150, 100]], atol=1e-9)


# --- rect with rounded corners (section 9.2) --------------------------------------

def rounded_rect_dist(p, x, y, w, h, rx, ry):
    """Distance-like residual of points to the rounded rectangle outline."""
    cx = np.clip(p[:, 0], x + rx, x + w - rx)
    cy = np.clip(p[:, 1], y + ry, y + h - ry)
    u, v = (p[:, 0] - cx) / rx, (p[:, 1] - cy) / ry
    corner = (p[:, 0] != cx) & (p[:, 1] != cy)
    edge_x = np.minimum(np.abs(p[:, 0] - x), np.abs(p[:, 0] - x - w))
    edge_y = np.minimum(np.abs(p[:, 1] - y), np.abs(p[:, 1] - y - h))
    return np.where(corner, np.abs(np.hypot(u, v) - 1.0), np.minimum(edge_x, edge_y))


@pytest.mark.parametrize("attrs, rx, ry", [
    ('rx="6" ry="4"', 6, 4),
    ('rx="5"', 5, 5),               # 9.2: ry missing -> ry = rx
    ('ry="3"', 3, 3),               # rx missing -> rx = ry
    ('rx="80" ry="4"', 25, 4),      # rx > width/2 -> width/2
])
def test_rounded_rect_outline(attrs, rx, ry):
    d = load_svg(svg(f'<rect x="10" y="20" width="50" height="30" {attrs}/>'), tol=0.005)
    assert len(d.strokes) == 1
    s = d.strokes[0]
    np.testing.assert_array_equal(s[0], s[-1])
    assert np.all(rounded_rect_dist(s, 10, 20, 50, 30, rx, ry) < 1e-9)
    np.testing.assert_allclose(s.min(0), [10, 20], atol=1e-9)
    np.testing.assert_allclose(s.max(0), [60, 50], atol=1e-9)
    # the perimeter of the outline (straight parts + an ellipse's perimeter,
    # Ramanujan's approximation, accurate to ~1e-5 relative for these axes)
    h_ = ((rx - ry) / (rx + ry)) ** 2
    ell = math.pi * (rx + ry) * (1 + 3 * h_ / (10 + math.sqrt(4 - 3 * h_)))
    want = 2 * (50 - 2 * rx) + 2 * (30 - 2 * ry) + ell
    assert np.hypot(*np.diff(s, axis=0).T).sum() == pytest.approx(want, rel=2e-4)


def test_every_path_command_and_closing():
    body = ('<path d="M10 10 h 20 v 10 H 10 z m 40 0 l 10 0 L 60 20 Z '
            'M 100 100 C 110 80 130 80 140 100 S 170 120 180 100 Q 190 90 200 100 T 220 100"/>')
    d = load_svg(svg(body, 'width="300" height="300"'), tol=0.01)
    assert len(d.strokes) == 3
    np.testing.assert_allclose(d.strokes[0], [[10, 10], [30, 10], [30, 20], [10, 20], [10, 10]])
    np.testing.assert_allclose(d.strokes[1], [[50, 10], [60, 10], [60, 20], [50, 10]])
    c = d.strokes[2]
    np.testing.assert_allclose(c[0], [100, 100])
    np.testing.assert_allclose(c[-1], [220, 100])
    assert not np.allclose(c[0], c[-1])                       # left open, as written
    # S reflects the previous control point (section 8.3.6): the curve
    # passes through (180, 100) and (140, 100)
    assert polyline_dist(np.array([[140.0, 100.0], [180.0, 100.0], [200.0, 100.0]]), c).max() < 1e-9


# --- the flattening invariant, as a property -------------------------------------

@settings(max_examples=40, deadline=None, derandomize=True,
          suppress_health_check=[HealthCheck.too_slow])
@given(p=st.lists(st.floats(-100, 100, allow_nan=False), min_size=8, max_size=8),
       tol=st.sampled_from([0.3, 0.05, 0.01]))
def test_cubic_chords_stay_within_tolerance(p, tol):
    P = np.array(p).reshape(4, 2) + 150
    assume(np.ptp(P, axis=0).max() > 1e-3)          # a curve, not a dot
    d = load_svg(svg('<path d="M {} {} C {} {} {} {} {} {}"/>'.format(*P.ravel()),
                     'width="300" height="300"'), tol=tol)
    line = np.concatenate(d.strokes)
    t = np.linspace(0, 1, 4001)[:, None]
    # Bernstein form of the cubic (section 8.3.6), densely sampled
    true = ((1 - t) ** 3 * P[0] + 3 * (1 - t) ** 2 * t * P[1]
            + 3 * (1 - t) * t * t * P[2] + t ** 3 * P[3])
    spacing = np.hypot(*np.diff(true, axis=0).T).max()
    # chord midpoints lie within tol of the curve (plus the sampling step)
    mids = chord_mids(line)
    dist = np.min(np.hypot(mids[:, None, 0] - true[None, :, 0],
                           mids[:, None, 1] - true[None, :, 1]), axis=1)
    assert dist.max() <= tol + spacing


# --- a planned SVG, on the arm ---------------------------------------------------

SHAPES = ('<circle cx="60" cy="60" r="40" fill="none"/>'
          '<rect x="120" y="20" width="60" height="80" rx="10" ry="10" fill="none"/>'
          '<line x1="20" y1="150" x2="180" y2="150"/>'
          '<path d="M 20 180 A 30 30 0 0 1 80 180" fill="none"/>')


def true_distance(p):
    """Distance of user-unit points to the nearest of the true shapes."""
    circle = np.abs(np.hypot(p[:, 0] - 60, p[:, 1] - 60) - 40)
    rect = rounded_rect_dist(p, 120, 20, 60, 80, 10, 10) * np.where(
        (np.clip(p[:, 0], 130, 170) != p[:, 0]) & (np.clip(p[:, 1], 30, 90) != p[:, 1]), 10, 1)
    line = seg_dist(p, np.array([20.0, 150.0]), np.array([180.0, 150.0]))
    # the arc: upper half circle (sweep 1, y down) about (50, 180), radius 30
    arc = np.where(p[:, 1] <= 180 + 1e-3,
                   np.abs(np.hypot(p[:, 0] - 50, p[:, 1] - 180) - 30), np.inf)
    return np.min([circle, rect, line, arc], axis=0)


@pytest.fixture(scope="module")
def planned():
    return inkreach.plan(svg(SHAPES), fidelity=False, signals="servo")


def test_planned_svg_points_within_chord_tolerance_of_true_shapes(planned):
    p = planned
    M = p.image_to_arm
    A, t = M[:, :2], M[:, 2]
    inv = np.linalg.inv(A)
    scale = p.placement.scale
    chord_tol = p.options["chord_tol"]
    # plan.json keeps 1e-4 mm; the strokes here are unrounded, so the slack
    # is float error only (1e-9 mm)
    for s in p.strokes:
        u = (s - t) @ inv.T
        assert np.all(true_distance(u) * scale <= 1e-6)                 # vertices on the shapes
        assert np.all(true_distance(chord_mids(u)) * scale <= chord_tol + 1e-6)


def test_plan_json_strokes_within_tolerance_plus_rounding(planned):
    import json
    p = planned
    doc = json.loads(p.files()["plan.json"])
    M = np.asarray(doc["image_to_arm"], float)
    inv = np.linalg.inv(M[:, :2])
    scale = p.placement.scale
    # plan.json rounds arm mm to 1e-4 (DEVELOPERS/README contract): at most
    # 0.5e-4 * sqrt(2) per point, plus the 1e-6 rounding of image_to_arm
    slack = 0.5e-4 * math.sqrt(2) + 1e-5
    assert len(doc["strokes"]) == 4
    for s in doc["strokes"]:
        u = (np.asarray(s, float) - M[:, 2]) @ inv.T
        assert np.all(true_distance(u) * scale <= slack)
        assert np.all(true_distance(chord_mids(u)) * scale <= p.options["chord_tol"] + slack)


def test_planned_svg_draws_every_shape_whole(planned):
    p = planned
    M = p.image_to_arm
    tol_mm = p.options["chord_tol"]
    a = np.linspace(0, 2 * np.pi, 721)
    th = np.linspace(np.pi, 2 * np.pi, 361)     # sweep-flag 1: increasing angle
    samples = [np.column_stack([60 + 40 * np.cos(a), 60 + 40 * np.sin(a)]),
               np.column_stack([np.linspace(20, 180, 200), np.full(200, 150.0)]),
               np.column_stack([50 + 30 * np.cos(th), 180 + 30 * np.sin(th)]),
               np.array([[130, 20], [170, 20], [180, 30], [180, 90], [170, 100], [130, 100],
                         [120, 90], [120, 30]], float)]
    strokes_mm = p.strokes
    for smp in samples:
        q = smp @ M[:, :2].T + M[:, 2]
        d = np.min([polyline_dist(q, s) for s in strokes_mm if len(s) > 1], axis=0)
        assert d.max() <= tol_mm + 1e-6
    # four shapes, no two touching: four strokes, one pen-down each
    assert p.stats["strokes"] == 4
    assert p.stats["warnings"] == []


def test_actual_size_draws_at_the_files_physical_size():
    # 96 px = 1 in = 25.4 mm (CSS2 / SVG 1.1 section 7.10)
    data = svg('<rect x="0" y="0" width="10" height="5" fill="none"/>',
               'width="40mm" height="40mm" viewBox="0 0 40 40"')
    p = inkreach.plan(data, actual_size=True, fidelity=False, rotations=[0.0])
    assert p.placement.scale == pytest.approx(25.4 / 96)
    assert p.stats["drawing_mm"] == pytest.approx([10.0, 5.0], abs=0.01)


def test_touching_paths_are_joined():
    body = ('<path d="M 10 10 L 50 10"/><path d="M 50 10 L 50 50"/>'
            '<path d="M 10 50 L 10 10"/><path d="M 50 50 L 10 50"/>')
    p = inkreach.plan(svg(body), fidelity=False)
    assert p.stats["strokes"] == 1 and p.stats["pen_lifts"] <= 1


# --- what is not drawn is said, once per kind ----------------------------------

def test_one_warning_line_per_kind_not_drawn():
    body = ('<circle cx="10" cy="10" r="5" fill="none"/>'
            '<rect x="1" y="1" width="3" height="3" style="display:none"/>'
            '<g visibility="hidden"><line x1="0" y1="0" x2="5" y2="5"/>'
            '<line x1="0" y1="5" x2="5" y2="0"/></g>'
            '<defs><clipPath id="c"><rect width="5" height="5"/></clipPath></defs>'
            '<line x1="20" y1="20" x2="40" y2="20" clip-path="url(#c)"/>'
            '<text x="0" y="50">hello</text><text x="0" y="60">again</text>'
            '<image href="data:image/png;base64,AAAA" width="4" height="4"/>')
    d = load_svg(svg(body), tol=0.05)
    w = d.warnings
    assert sum("hidden" in x for x in w) == 1 and any(x.startswith("3 hidden") for x in w)
    assert sum("clip" in x for x in w) == 1
    assert sum("text elements" in x for x in w) == 1
    assert sum("images" in x for x in w) == 1
    assert all("\n" not in x for x in w)
    # the hidden lines are not drawn; the circle and the clipped line are
    assert len(d.strokes) == 2


def test_an_svg_with_nothing_visible_is_refused():
    with pytest.raises(InkreachError, match="no visible"):
        load_svg(svg('<text x="0" y="10">only words</text>'))


# --- hostile files: refused by the guard before any parsing ----------------------

XXE = (b'<?xml version="1.0"?><!DOCTYPE svg [<!ENTITY xxe SYSTEM "file:///etc/passwd">]>'
       b'<svg xmlns="http://www.w3.org/2000/svg"><text>&xxe;</text></svg>')
LAUGHS = (b'<?xml version="1.0"?><!DOCTYPE svg [<!ENTITY a "ha"><!ENTITY b "&a;&a;&a;&a;&a;'
          b'&a;&a;&a;&a;&a;"><!ENTITY c "&b;&b;&b;&b;&b;&b;&b;&b;&b;&b;">]>'
          b'<svg xmlns="http://www.w3.org/2000/svg"><desc>&c;</desc></svg>')


def many_commands(n=1_000_000):
    return svg('<path d="M 0 0' + " L 1 1" * n + '"/>')


HOSTILE = {
    "external entity": (XXE, "entit"),
    "entity expansion": (LAUGHS, "entit"),
    "million commands": (None, "path commands"),
    "nan coordinate": (svg('<path d="M 0 0 L NaN 5"/>'), "non-finite or huge"),
    "huge coordinate": (svg('<line x1="0" y1="0" x2="1e300" y2="5"/>'), "non-finite or huge"),
    "huge transform": (svg('<g transform="scale(1e200)"><line x1="0" y1="0" x2="1" y2="1"/></g>'),
                       "non-finite or huge"),
    "not xml": (b"<svg " + NS.encode() + b"><path d='M 0 0 L 1 1'", "well-formed"),
}


@pytest.fixture
def no_parser(monkeypatch):
    """Make the real SVG parser unusable: a refusal must come before it."""
    import svgelements

    def boom(*a, **k):
        raise AssertionError("the SVG parser was reached")
    monkeypatch.setattr(svgelements.SVG, "parse", boom)


@pytest.mark.parametrize("case", sorted(HOSTILE))
def test_hostile_svg_refused_before_parsing_and_nothing_written(case, tmp_path, no_parser,
                                                                capsys):
    from inkreach.cli import main
    data, msg = HOSTILE[case]
    if data is None:
        data = many_commands()
    path = tmp_path / "in.svg"
    path.write_bytes(data)
    out = tmp_path / "out"
    assert main(["plan", str(path), "--out", str(out), "-q"]) == 2
    err = capsys.readouterr().err
    assert msg in err and err.count("\n") == 1 and "Traceback" not in err
    assert not out.exists()


def test_fifty_megabyte_file_refused_by_its_size(tmp_path, no_parser, capsys):
    from inkreach.cli import main
    path = tmp_path / "big.svg"
    with open(path, "wb") as f:
        f.write(svg("")[:-6])
        f.seek(50_000_000)
        f.write(b"</svg>")
    out = tmp_path / "out"
    assert main(["plan", str(path), "--out", str(out), "-q"]) == 2
    assert "MB" in capsys.readouterr().err
    assert not out.exists()
    with pytest.raises(InkreachError, match="MB"):
        load_svg(b"<svg" + b" " * 50_000_000 + b"/>")


def test_a_plain_doctype_without_declarations_is_read():
    data = (b'<?xml version="1.0"?><!DOCTYPE svg PUBLIC "-//W3C//DTD SVG 1.1//EN" '
            b'"http://www.w3.org/Graphics/SVG/1.1/DTD/svg11.dtd">'
            + svg('<line x1="0" y1="0" x2="5" y2="0"/>'))
    assert len(load_svg(data).strokes) == 1


def test_huge_number_written_in_digits_refused_after_parsing(tmp_path):
    # 10**20 user units, no exponent: passes the text guard, caught on the
    # coordinates (bound 1e9 user units: our choice, ~10 km at 96 px/in)
    data = svg('<line x1="0" y1="0" x2="1' + "0" * 20 + '" y2="5"/>')
    with pytest.raises(InkreachError, match="huge"):
        load_svg(data, tol=0.05)


# --- hatching filled shapes (an option) ------------------------------------------

@pytest.mark.parametrize("rule, hole_filled", [("evenodd", False), ("nonzero", True)])
def test_fill_hatch_follows_the_fill_rule(rule, hole_filled):
    from skimage.measure import points_in_poly
    # two squares drawn the same way round: with evenodd the inner one is a
    # hole, with nonzero (winding 2) it is filled (SVG 1.1 section 11.3)
    body = (f'<path fill-rule="{rule}" d="M 10 10 L 90 10 L 90 90 L 10 90 Z '
            'M 30 30 L 70 30 L 70 70 L 30 70 Z"/>')
    d = load_svg(svg(body), tol=0.01, fill_spacing=2.0, fill_angle=30.0)
    outer = np.array([[10, 10], [90, 10], [90, 90], [10, 90]], float)
    inner = np.array([[30, 30], [70, 30], [70, 70], [30, 70]], float)
    hatch = [s for s in d.strokes if len(s) == 2 and not np.allclose(s[0], s[-1])]
    hatch = [s for s in hatch if abs(np.arctan2(*(s[1] - s[0])[::-1]) % np.pi - np.pi / 6) < 1e-9]
    assert len(hatch) > 20
    # scikit-image's point-in-polygon test as the reference for "inside"
    samples = np.concatenate([s[0] + np.linspace(0.02, 0.98, 25)[:, None] * (s[1] - s[0])
                              for s in hatch])
    assert points_in_poly(samples, outer).all()
    in_hole = points_in_poly(samples, inner)
    assert in_hole.any() == hole_filled
    # every segment ends on an edge of one of the squares
    ends = np.concatenate(hatch)
    edge = np.min([polyline_dist(ends, np.vstack([q, q[:1]])) for q in (outer, inner)], axis=0)
    assert edge.max() < 1e-9
    # neighbouring lines are 2 units apart
    normal = np.array([-np.sin(np.pi / 6), np.cos(np.pi / 6)])
    offs = np.unique(np.round([s[0] @ normal for s in hatch], 6))
    np.testing.assert_allclose(np.diff(offs), 2.0, atol=1e-6)


def test_fill_hatch_off_by_default_says_outlines():
    d = load_svg(svg('<rect x="0" y="0" width="20" height="20"/>'), tol=0.01)
    assert len(d.strokes) == 1
    assert any("outlines" in w for w in d.warnings)


def test_svg_recognised_by_content_and_svgz_refused(tmp_path):
    import gzip
    from inkreach.vector import looks_like_svg
    plain = tmp_path / "drawing"
    plain.write_bytes(svg('<line x1="0" y1="0" x2="5" y2="0"/>'))
    assert looks_like_svg(str(plain)) and not looks_like_svg(str(tmp_path / "none.png"))
    packed = tmp_path / "drawing.svgz"
    packed.write_bytes(gzip.compress(plain.read_bytes()))
    with pytest.raises(InkreachError, match="svgz"):
        inkreach.plan(packed)


@settings(max_examples=60, deadline=None, derandomize=True,
          suppress_health_check=[HealthCheck.too_slow])
@given(x1=st.floats(20, 180), y1=st.floats(20, 180), x2=st.floats(20, 180),
       y2=st.floats(20, 180), rx=st.floats(1, 120), ry=st.floats(1, 120),
       phi=st.floats(-180, 180), fa=st.integers(0, 1), fs=st.integers(0, 1))
def test_any_arc_lies_on_the_f65_ellipse(x1, y1, x2, y2, rx, ry, phi, fa, fs):
    assume(math.hypot(x2 - x1, y2 - y1) > 1.0)
    path = f'<path d="M {x1!r} {y1!r} A {rx!r} {ry!r} {phi!r} {fa} {fs} {x2!r} {y2!r}"/>'
    d = load_svg(svg(path, 'width="300" height="300"'), tol=0.02)
    s = np.concatenate(d.strokes)
    np.testing.assert_allclose(s[0], [x1, y1], atol=1e-7)
    np.testing.assert_allclose(s[-1], [x2, y2], atol=1e-7)
    (cx, cy), (Rx, Ry), ph, th1, dth = f65_centre(x1, y1, x2, y2, rx, ry, phi, fa, fs)
    c, sn = math.cos(ph), math.sin(ph)
    u = c * (s[:, 0] - cx) + sn * (s[:, 1] - cy)
    v = -sn * (s[:, 0] - cx) + c * (s[:, 1] - cy)
    np.testing.assert_allclose((u / Rx) ** 2 + (v / Ry) ** 2, 1.0, atol=1e-6)
    theta = np.unwrap(np.arctan2(v / Ry, u / Rx))
    assert theta[-1] - theta[0] == pytest.approx(dth, abs=1e-5)
