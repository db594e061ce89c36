"""Planned streams follow the strokes, touch down exactly and obey the limits."""

import io

import numpy as np
import pytest

from inkreach.arms import largest_rectangle, load_arm, workspace_map
from inkreach.errors import InkreachError
from inkreach.motion import JointStream, check_stream, plan_motion, subdivide

ARMS = ("default", "wide", "serial")
_RECTS = {}


def _arm_and_box(name):
    arm = load_arm(name)
    if name not in _RECTS:
        r = largest_rectangle(workspace_map(arm, cells=150))
        _RECTS[name] = r.center + 0.9 * (r.corners() - r.center)
    return arm, _RECTS[name]


def _polyline_distance(p, line):
    """Brute-force distance of points p (N, 2) to a polyline (M, 2)."""
    line = np.asarray(line, float)
    if len(line) == 1:
        return np.hypot(*(p - line[0]).T)
    a, b = line[:-1], line[1:]
    ab = b - a
    u = np.einsum("nmi,mi->nm", p[:, None] - a[None], ab) / np.einsum("mi,mi->m", ab, ab)
    u = np.clip(u, 0, 1)
    c = a[None] + u[..., None] * ab[None]
    return np.hypot(*(p[:, None] - c).transpose(2, 0, 1)).min(axis=1)


def _drawing(box):
    c = box.mean(axis=0)
    w = np.ptp(box[:, 0]) / 2
    th = np.linspace(0, 2 * np.pi, 90)
    square = np.vstack([box, box[:1]]) * 0.8 + 0.2 * c
    circle = c + 0.4 * w * np.c_[np.cos(th), np.sin(th)]
    dot = c[None] + [0.1 * w, -0.2 * w]
    return [square, circle, dot]


def _outside_fd_check(t, deg, arm):
    """What an outside reader of joints.csv computes: finite differences in degrees."""
    T = np.diff(t).mean()
    v = np.abs(np.diff(deg, axis=0)) / T
    a = np.abs(np.diff(deg, n=2, axis=0)) / T ** 2
    lim = arm.limits
    assert v.max() <= np.rad2deg(lim.max_speed)
    assert a.max() <= np.rad2deg(lim.max_accel)


@pytest.mark.parametrize("name", ARMS)
def test_round_trip_fk_of_the_stream_reproduces_the_strokes(name):
    arm, box = _arm_and_box(name)
    strokes = _drawing(box)
    s = plan_motion(strokes, arm)
    # The pen positions through the saved-plan check's own forward kinematics,
    # written apart from arms/ from the documented conventions: the stream's xy
    # and the arm's FK must both agree with it.
    from inkreach.check._kinematics import fk as independent_fk
    from inkreach.check.plancheck import _arm_dict
    x = independent_fk(_arm_dict(arm), s.q)
    np.testing.assert_allclose(arm.fk(s.q), x, atol=1e-9)
    np.testing.assert_allclose(s.xy, x, atol=1e-9)
    for i, stroke in enumerate(strokes):
        rows = np.flatnonzero((s.pen == 1) & (s.stroke == i))
        assert rows.size
        assert _polyline_distance(x[rows], stroke).max() <= 0.05
        # Touch-down and lift are exact rows.
        np.testing.assert_allclose(x[rows[0]], stroke[0], atol=1e-9)
        np.testing.assert_allclose(x[rows[-1]], stroke[-1], atol=1e-9)
    report = check_stream(s, arm, strokes=strokes)
    assert report.max_deviation_mm <= 0.05
    assert report.rows == len(s)


@pytest.mark.parametrize("name", ARMS)
def test_round_trip_survives_a_csv_with_six_decimals(name):
    arm, box = _arm_and_box(name)
    strokes = _drawing(box)
    s = plan_motion(strokes, arm)
    buf = io.StringIO()
    table = np.column_stack([s.t, np.rad2deg(s.q), s.pen, s.xy])
    np.savetxt(buf, table, fmt=["%.2f", "%.6f", "%.6f", "%d", "%.6f", "%.6f"], delimiter=",",
               header="t_s,theta1_deg,theta2_deg,pen,x_mm,y_mm", comments="")
    back = np.loadtxt(io.StringIO(buf.getvalue()), delimiter=",", skiprows=1)
    _outside_fd_check(back[:, 0], back[:, 1:3], arm)
    # Coarser still: the limits hold after rounding to 1e-4 degree.
    _outside_fd_check(back[:, 0], np.round(back[:, 1:3], 4), arm)
    read = JointStream(t=back[:, 0], q=np.deg2rad(back[:, 1:3]), pen=back[:, 3].astype(np.int8),
                       xy=back[:, 4:6], period=s.period)
    report = check_stream(read, arm, strokes=strokes, atol=1e-4)
    assert report.max_deviation_mm <= 0.05


@pytest.mark.parametrize("name", ARMS)
def test_straight_line_stays_straight_between_rows(name):
    arm, box = _arm_and_box(name)
    line = np.array([box[0], box[2]])  # the long diagonal
    s = plan_motion([line], arm)
    rows = np.flatnonzero(s.pen == 1)
    # Joint-linear interpolation between consecutive pen-down rows, sampled densely.
    u = np.linspace(0, 1, 21)[None, :, None]
    q = s.q[rows[:-1], None] + u * (s.q[rows[1:]] - s.q[rows[:-1]])[:, None]
    x = arm.fk(q.reshape(-1, 2))
    assert _polyline_distance(x, line).max() <= 0.05


@pytest.mark.parametrize("name", ARMS)
def test_subdivide_keeps_joint_chords_within_tolerance(name):
    arm, box = _arm_and_box(name)
    line = np.vstack([box, box[:1]])
    p, q = subdivide(line, arm, 0.02)
    # Every input point is kept, in order.
    assert np.all(np.isin(line[:, 0], p[:, 0]))
    np.testing.assert_allclose(arm.fk(q), p, atol=1e-9)
    u = np.linspace(0, 1, 33)[None, :, None]
    qq = q[:-1, None] + u * (q[1:] - q[:-1])[:, None]
    x = arm.fk(qq.reshape(-1, 2)).reshape(len(q) - 1, -1, 2)
    for k in range(len(q) - 1):
        assert _polyline_distance(x[k], p[k:k + 2]).max() <= 0.02 * 1.05


def test_pen_lowers_and_lifts_in_place_for_lift_s():
    arm, box = _arm_and_box("default")
    strokes = _drawing(box)
    s = plan_motion(strokes, arm)
    n_lift = int(np.ceil(arm.pen.lift_s / s.period - 1e-9))
    down = s.pen == 1
    starts = np.flatnonzero(down[1:] & ~down[:-1]) + 1
    ends = np.flatnonzero(down[:-1] & ~down[1:])
    assert len(starts) == len(ends) == len(strokes)
    for i, (a, b) in enumerate(zip(starts, ends)):
        # Zero-order hold: the pen is commanded down on the row where the
        # pen-up move arrives at rest, and the arm stays there for lift_s.
        assert s.pen[a - 1] == 0 and np.any(s.q[a - 1] != s.q[a])
        assert np.all(s.q[a:a + n_lift] == s.q[a])
        assert np.any(s.q[a + n_lift] != s.q[a]) or b == a + n_lift - 1
        # Lifts at the end point, staying there while lifting.
        assert np.all(s.pen[b + 1:b + 1 + n_lift] == 0)
        assert np.all(s.q[b + 1:b + 1 + n_lift] == s.q[b])
        np.testing.assert_allclose(s.xy[b], strokes[i][-1], atol=1e-9)
    # The dot: lowered for lift_s and lifted for lift_s at one posture.
    a, b = starts[2], ends[2]
    assert b - a + 1 == n_lift
    assert s.stroke[a] == 2


def test_stream_starts_and_ends_at_home_pen_up():
    arm, box = _arm_and_box("default")
    s = plan_motion(_drawing(box), arm)
    np.testing.assert_allclose(s.q[0], arm.home())
    np.testing.assert_allclose(s.q[-1], arm.home())
    assert s.pen[0] == 0 and s.pen[-1] == 0
    assert np.all(s.stroke[s.pen == 0] == -1)


def test_without_home_the_stream_starts_at_the_first_stroke():
    arm, box = _arm_and_box("serial")
    assert arm.home() is None
    strokes = _drawing(box)
    s = plan_motion(strokes, arm)
    np.testing.assert_allclose(s.xy[0], strokes[0][0], atol=1e-9)
    assert s.pen[0] == 0


def test_unsafe_joint_space_move_falls_back_to_a_straight_line():
    arm = load_arm("wide")
    r = largest_rectangle(workspace_map(arm, cells=150))
    box = r.center + 0.95 * (r.corners() - r.center)
    a, b = box[0], box[1]
    # Precondition: joint-linear motion between these corners dips below the
    # conditioning floor, the straight line between them (inside the usable
    # rectangle) does not.
    q = arm.ik(np.stack([a, b]))
    u = np.linspace(0, 1, 200)[:, None]
    assert arm.conditioning(q[0] + u * (q[1] - q[0])).min() < arm.limits.min_conditioning
    strokes = [a[None], b[None]]
    s = plan_motion(strokes, arm, region=box)
    i0 = np.flatnonzero(s.stroke == 0)[-1]
    i1 = np.flatnonzero(s.stroke == 1)[0]
    travel = s.xy[i0:i1 + 1]
    assert _polyline_distance(travel, np.array([a, b])).max() <= 0.05
    check_stream(s, arm, strokes=strokes)


def test_straight_pen_up_move_keeps_to_the_tip_speed():
    # The same straight pen-up move as above: its steps are marked and bound
    # by the tip-speed limit (before, 301 mm/s on its 142 mm), and the check
    # refuses a stream whose straight steps are faster than the limit given.
    arm = load_arm("wide")
    r = largest_rectangle(workspace_map(arm, cells=150))
    box = r.center + 0.95 * (r.corners() - r.center)
    strokes = [box[0][None], box[1][None]]
    for tip in (80.0, 30.0):
        s = plan_motion(strokes, arm, region=box, tip_speed=tip)
        assert s.straight is not None and s.straight.sum() > 10
        k = np.flatnonzero(s.straight[1:]) + 1
        v = np.hypot(*(s.xy[k] - s.xy[k - 1]).T) / s.period
        assert v.max() <= tip * (1 + 1e-9)
        # at the limit most of the way (distance over speed: 142 mm at 30 mm/s
        # takes at least 4.7 s), a bound we chose: 90 % of it
        assert v.max() >= 0.9 * tip
        check_stream(s, arm, strokes=strokes, tip_speed=tip)
    with pytest.raises(InkreachError, match=r"on a straight pen-up move exceeds the tip "
                                            r"limit 20 mm/s"):
        check_stream(s, arm, strokes=strokes, tip_speed=20.0)
    # joint-space pen-up moves are not marked
    assert plan_motion([box[0][None], box[0][None] + 1.0], arm).straight is None


def test_tip_speed_bounds_the_pen_speed_while_drawing():
    arm, box = _arm_and_box("default")
    line = np.array([box[0], box[1]])
    s = plan_motion([line], arm, tip_speed=30.0)
    rows = np.flatnonzero(s.pen == 1)
    v = np.hypot(*np.diff(s.xy[rows], axis=0).T) / s.period
    assert v.max() <= 30.0 * 1.01
    fast = plan_motion([line], arm, tip_speed=60.0)
    assert fast.duration < s.duration


def test_unreachable_stroke_raises_one_line_error():
    arm = load_arm("default")
    with pytest.raises(InkreachError, match=r"stroke 0, point 1 .* cannot be reached"):
        plan_motion([np.array([[0.0, 150.0], [0.0, 5.0]])], arm)


def test_bad_options_raise_inkreach_error():
    arm = load_arm("default")
    line = [np.array([[0.0, 150.0], [10.0, 150.0]])]
    for kw in ({"period": 0}, {"chord_tol": -1}, {"margin": 1.5}, {"tip_speed": 0}):
        with pytest.raises(InkreachError):
            plan_motion(line, arm, **kw)
    with pytest.raises(InkreachError, match="stroke 0 must be an"):
        plan_motion([np.zeros((3, 3))], arm)
    with pytest.raises(InkreachError, match="nothing to draw"):
        plan_motion([], load_arm("serial"))


def test_hundred_thousand_points_are_planned_and_pass_the_check():
    arm, box = _arm_and_box("default")
    c = box.mean(axis=0)
    w = np.ptp(box[:, 0]) / 2
    th = np.linspace(0, 2 * np.pi, 1000)
    rng = np.random.default_rng(0)
    strokes = [c + rng.uniform(-0.5, 0.5, 2) * w + rng.uniform(0.05, 0.4) * w
               * np.c_[np.cos(th), np.sin(th)] for _ in range(100)]
    s = plan_motion(strokes, arm)
    assert check_stream(s, arm, strokes=strokes).max_deviation_mm <= 0.05


def _point_polyline_distance(p, path):
    # plain point-to-segment distance (Euclidean geometry), minimum over segments
    a, b = path[:-1], path[1:]
    ab = b - a
    t = np.clip(((p[:, None, :] - a) * ab).sum(-1) / np.maximum((ab * ab).sum(-1), 1e-300), 0, 1)
    d = p[:, None, :] - (a + t[..., None] * ab)
    return np.sqrt((d * d).sum(-1)).min(axis=1)


def test_every_stroke_vertex_lies_near_the_drawn_path():
    # Rows near a stroke can still cut between its vertices at a corner the
    # pen passes at speed. The drawn path (rows and joint-space midpoints, as a
    # joint-linear board moves) must pass within chord_tol of every vertex of
    # its stroke, or part of the stroke is not drawn. The small emblem has
    # such corners (found by the independent plan check).
    from pathlib import Path

    import inkreach

    emblem = Path(__file__).resolve().parents[1] / "demo_images" / "emblem.png"
    p = inkreach.plan(str(emblem), style="centerline", size=30, fidelity=False)
    s, arm, tol = p.stream, p.arm, p.options["chord_tol"]
    worst = 0.0
    for i, stroke in enumerate(p.strokes):
        rows = np.flatnonzero((s.pen == 1) & (s.stroke == i))
        x = arm.fk(s.q[rows])
        if len(rows) > 1:
            xm = arm.fk(0.5 * (s.q[rows[:-1]] + s.q[rows[1:]]))
            path = np.empty((2 * len(x) - 1, 2))
            path[0::2], path[1::2] = x, xm
        else:
            path = np.repeat(x, 2, axis=0)
        worst = max(worst, _point_polyline_distance(np.asarray(stroke, float), path).max())
    assert worst <= tol


# Cases found by mutation testing (tests/MUTATION.md): each refusal of
# plan_motion has its own whole line (the house rule for bad input: what is
# wrong and what to do), and the edge of each accepted range is accepted.

@pytest.mark.parametrize("kw, line", [
    ({"period": 0}, "period must be greater than zero, got 0.0"),
    ({"chord_tol": -1}, "chord_tol must be greater than zero, got -1"),
    ({"margin": 1.5}, "margin must be in (0, 1], got 1.5; 1 (the default) uses the arm's "
                      "limits as they are"),
    ({"tip_speed": 0}, "tip_speed must be greater than zero, got 0.0"),
    ({"region": [[0.0, 100.0], [10.0, 100.0]]},
     "region must be an (M, 2) convex polygon with M >= 3"),
    ({"period": 0.015}, "period 0.015 s is not a whole number of servo frames (20 ms at "
                        "50 Hz); use 0.02, 0.04 or 0.06 s"),
])
def test_each_bad_option_is_refused_with_its_own_line(kw, line):
    arm = load_arm("default")          # its [servo] table: frame_hz = 50
    with pytest.raises(InkreachError) as err:
        plan_motion([np.array([[0.0, 150.0], [10.0, 150.0]])], arm, **kw)
    assert str(err.value) == line


def test_a_servo_table_without_frame_hz_means_50_hz_frames():
    # 50 Hz is the hobby-servo frame rate (common practice), the documented
    # default of [servo] frame_hz.
    from dataclasses import replace
    arm = replace(load_arm("default"), hardware={"servo": {"pen_up_us": 1200.0}})
    line = [np.array([[0.0, 150.0], [10.0, 150.0]])]
    with pytest.raises(InkreachError, match=r"\(20 ms at 50 Hz\); use 0\.02, 0\.04"):
        plan_motion(line, arm, period=0.015)
    assert plan_motion(line, arm, period=0.04).period == 0.04


def test_a_triangle_is_a_region():
    # The smallest convex polygon has three corners.
    arm, box = _arm_and_box("default")
    tri = box[:3]
    c = tri.mean(axis=0)
    line = [np.stack([c, c + 0.2 * (tri[1] - c)])]
    s = plan_motion(line, arm, region=tri)
    check_stream(s, arm, strokes=line)


def test_an_unreachable_point_is_named_by_its_own_stroke_and_index():
    arm = load_arm("default")
    ok = np.array([[0.0, 150.0], [10.0, 150.0]])
    with pytest.raises(InkreachError) as err:
        plan_motion([ok, np.array([[0.0, 150.0], [5.0, 150.0], [0.0, 5.0]])], arm)
    assert str(err.value).startswith("stroke 1, point 2 at (0.00, 5.00) mm cannot be reached "
                                     "safely")


def test_rest_postures_outside_or_badly_conditioned_are_refused_with_their_lines():
    arm = load_arm("default")
    line = [np.array([[0.0, 150.0], [10.0, 150.0]])]
    with pytest.raises(InkreachError) as err:
        plan_motion(line, arm, start=np.radians([0.0, 60.0]))
    assert str(err.value) == ("the start posture (0.00, 60.00) deg is outside the joint limits "
                              "or does not assemble; give angles inside the limits")
    # a posture inside the limits below the conditioning floor, found on a 1 deg grid
    g = np.radians(np.stack(np.meshgrid(np.arange(30.0, 211.0), np.arange(-30.0, 151.0)),
                            -1).reshape(-1, 2))
    ok = arm.within_limits(g) & np.isfinite(arm.fk(g)).all(axis=1)
    c = np.where(ok, arm.conditioning(g), np.inf)
    low = g[np.flatnonzero(c < arm.limits.min_conditioning)[0]]
    with pytest.raises(InkreachError) as err:
        plan_motion(line, arm, end=low)
    c0 = float(arm.conditioning(low))
    assert str(err.value) == (f"the end posture ({np.degrees(low[0]):.2f}, "
                              f"{np.degrees(low[1]):.2f}) deg has conditioning {c0:.3f}, below "
                              f"the floor {arm.limits.min_conditioning:g}; pick a rest posture "
                              "in the well-conditioned region")


def test_nothing_to_draw_without_a_rest_posture_says_what_to_set():
    with pytest.raises(InkreachError) as err:
        plan_motion([], load_arm("serial"))
    assert str(err.value) == ("nothing to draw and no rest posture; give start or set [home] "
                              "in the arm file")


def test_without_a_region_the_straight_fallback_is_probed_along_the_line():
    # As in the fallback test above but with no region given: the straight
    # line between the corners is probed point by point and taken.
    arm = load_arm("wide")
    r = largest_rectangle(workspace_map(arm, cells=150))
    box = r.center + 0.95 * (r.corners() - r.center)
    a, b = box[0], box[1]
    strokes = [a[None], b[None]]
    s = plan_motion(strokes, arm)
    i0 = np.flatnonzero(s.stroke == 0)[-1]
    i1 = np.flatnonzero(s.stroke == 1)[0]
    assert _polyline_distance(s.xy[i0:i1 + 1], np.array([a, b])).max() <= 0.05
    assert np.all(s.stroke[s.pen == 0] == -1)    # JointStream: -1 for pen-up rows
    check_stream(s, arm, strokes=strokes)


def test_a_pen_up_move_with_no_usable_path_is_refused_with_its_line():
    # Two reachable points on the wide arm whose straight line crosses the
    # unreachable middle and whose joint-space line leaves the limits or the
    # conditioning floor (both checked here on the arm itself).
    arm = load_arm("wide")
    a, b = np.array([85.0, 105.0]), np.array([-90.0, 100.0])
    assert arm.reachable(np.stack([a, b])).all()
    u = np.linspace(0.0, 1.0, 401)[:, None]
    assert not arm.reachable(a + u * (b - a)).all()
    q = arm.ik(np.stack([a, b]))
    qq = q[0] + u * (q[1] - q[0])
    assert not (arm.within_limits(qq).all()
                and (arm.conditioning(qq) >= arm.limits.min_conditioning).all())
    with pytest.raises(InkreachError) as err:
        plan_motion([a[None], b[None]], arm)
    assert str(err.value) == (
        "the pen-up move from (85.0, 105.0) to (-90.0, 100.0) mm leaves the usable region both "
        "as a joint-space and as a straight move; place the drawing in the well-conditioned "
        "region or change the rest posture")


def test_a_pen_quicker_than_one_period_still_dwells_one_row():
    # Zero-order hold: a pen that lowers in 10 ms is commanded down for one
    # whole 20 ms row, ceil(lift_s / T) = 1, not two.
    from dataclasses import replace
    arm, box = _arm_and_box("default")
    arm = replace(arm, pen=replace(arm.pen, lift_s=0.01))
    dot = [box.mean(axis=0)[None]]
    s = plan_motion(dot, arm)
    assert int((s.pen == 1).sum()) == 1
    check_stream(s, arm, strokes=dot)


def test_the_plan_is_held_to_its_own_chord_tolerance():
    # A looser chord_tol lets the joint-space chords stray further (their
    # sagitta grows with the row spacing), and plan_motion's own final check
    # uses that tolerance, not the default 0.05 mm.
    arm = load_arm("default")
    line = [np.array([[-60.0, 120.0], [60.0, 120.0]])]
    s = plan_motion(line, arm, chord_tol=0.3)
    r = check_stream(s, arm, strokes=line, chord_tol=0.3)
    assert 0.05 < r.max_deviation_mm <= 0.3


def test_the_tip_speed_repair_names_fast_pen_down_pairs_of_one_stroke():
    # Pen speed of a row pair = |fk(q[k+1]) - fk(q[k])| / T (finite
    # differences, Craig 2005, ch. 7), counted only while the pen is down on
    # one stroke. Pairs within 1e-9 relative under the limit are named too (a
    # margin chosen so a repaired stream passes the final check, which allows
    # 1e-9 over).
    from inkreach.motion.plan import _tip_violations
    arm = load_arm("default")
    q = np.tile(np.radians([120.0, 60.0]), (6, 1))
    q[:, 0] += np.radians(0.5) * np.arange(6)
    pen = np.array([0, 1, 1, 1, 1, 0], np.int8)
    stroke = np.array([-1, 0, 0, 1, 1, -1])
    sp = np.hypot(*np.diff(arm.fk(q), axis=0).T) / 0.02
    # pairs (1, 2) and (3, 4) are drawing pairs; (2, 3) joins two strokes
    assert _tip_violations(q, pen, stroke, 0.02, arm, 0.5 * sp.min()).tolist() == [1, 2, 3, 4]
    assert _tip_violations(q, pen, stroke, 0.02, arm, 2.0 * sp.max()).tolist() == []
    at = float(sp[1]) * (1 + 0.5e-9)           # just over pair (1, 2)'s speed
    assert _tip_violations(q, pen, stroke, 0.02, arm, at).tolist()[:2] == [1, 2]
    assert _tip_violations(q[:1], pen[:1], stroke[:1], 0.02, arm, 1.0).tolist() == []


def test_the_chord_repair_names_rows_and_midpoints_off_their_stroke():
    # The same rule as the final check: a pen-down row, or the joint-space
    # midpoint of two consecutive rows of one stroke, farther than chord_tol
    # (less 1 % headroom) from its stroke names both rows of its pair.
    from inkreach.motion.plan import _StrokeIndex, _chord_violations
    arm = load_arm("default")
    line = np.array([[-20.0, 150.0], [20.0, 150.0]])
    idx = _StrokeIndex([line], 0.05)
    x = np.column_stack([np.linspace(-20.0, 20.0, 41), np.full(41, 150.0)])
    q = arm.ik(x)
    pen, lab = np.ones(41, np.int8), np.zeros(41, int)
    assert _chord_violations(q, pen, lab, arm, idx, 0.05).tolist() == []
    x[20, 1] += 0.06                        # one row 0.06 mm off; its midpoints ~0.03 mm
    assert _chord_violations(arm.ik(x), pen, lab, arm, idx, 0.05).tolist() == [20, 21]
    # two rows at the ends: on the line, but the joint-space midpoint sags off it
    q2 = arm.ik(line)
    sag = _polyline_distance(arm.fk(0.5 * (q2[:1] + q2[1:])), line).max()
    assert sag > 0.05
    assert _chord_violations(q2, pen[:2], lab[:2], arm, idx, 0.05).tolist() == [0, 1]
    # two strokes drawn back to back: no midpoint between rows of different strokes
    s0, s1 = np.array([[-20.0, 150.0], [0.0, 150.0]]), np.array([[0.0, 160.0], [20.0, 160.0]])
    pts = np.concatenate([np.column_stack([np.linspace(-20.0, 0.0, 21), np.full(21, 150.0)]),
                          np.column_stack([np.linspace(0.0, 20.0, 21), np.full(21, 160.0)])])
    two = _StrokeIndex([s0, s1], 0.05)
    assert _chord_violations(arm.ik(pts), np.ones(42, np.int8), np.repeat([0, 1], 21), arm,
                             two, 0.05).tolist() == []


def test_the_vertex_repair_names_the_rows_around_a_cut_corner():
    # The rule of the saved-plan check: every stroke vertex lies within
    # chord_tol of the drawn path (rows and joint-space midpoints, in order).
    # Rows that jump over the apex of a corner leave it 1 mm away; the rows
    # around the jump (one before to two after its first row) are named.
    from inkreach.motion.plan import _vertex_misses as _misses

    def _vertex_misses(*args):          # the rows to slow down (the vertices come second)
        return _misses(*args)[0]

    arm = load_arm("default")
    corner = np.array([[-10.0, 150.0], [0.0, 160.0], [10.0, 150.0]])
    xs = np.r_[np.arange(-10.0, 0.0), np.arange(1.0, 11.0)]        # no row at x = 0
    x = np.column_stack([xs, 160.0 - np.abs(xs)])
    n = len(x)
    pen, lab = np.ones(n, np.int8), np.zeros(n, int)
    assert _vertex_misses(arm.ik(x), pen, lab, arm, [corner], 0.05).tolist() == [8, 9, 10, 11]
    full = np.column_stack([np.arange(-10.0, 11.0), 160.0 - np.abs(np.arange(-10.0, 11.0))])
    assert _vertex_misses(arm.ik(full), np.ones(21, np.int8), np.zeros(21, int), arm, [corner],
                          0.05).tolist() == []
    # two rows at the ends only: both named, and no row before the first
    two = arm.ik(corner[[0, 2]])
    assert _vertex_misses(two, pen[:2], lab[:2], arm, [corner], 0.05).tolist() == [0, 1]
    # rows that never move draw no path: nothing to slow down
    still = np.repeat(arm.ik(corner[:1]), 3, axis=0)
    assert _vertex_misses(still, pen[:3], lab[:3], arm, [corner], 0.05).tolist() == []
    # a stroke through the joint-space midpoint of its two rows is drawn whole:
    # the midpoint is part of the drawn path (the check's rule), the chord is not
    ends = np.array([[-20.0, 150.0], [20.0, 150.0]])
    qe = arm.ik(ends)
    mid = arm.fk(0.5 * (qe[:1] + qe[1:]))[0]
    assert _polyline_distance(mid[None], ends).max() > 0.05
    bent = np.array([ends[0], mid, ends[1]])
    assert _vertex_misses(qe, pen[:2], lab[:2], arm, [bent], 0.05).tolist() == []
    # two strokes drawn back to back: the midpoint between them belongs to neither,
    # so stroke 0's last vertex, never reached, is still named
    s0 = np.array([[-20.0, 150.0], [0.0, 150.0], [0.0, 155.0]])
    s1 = np.array([[0.0, 160.0], [20.0, 160.0]])
    pts = np.concatenate([np.column_stack([np.linspace(-20.0, 0.0, 21), np.full(21, 150.0)]),
                          np.column_stack([np.linspace(0.0, 20.0, 21), np.full(21, 160.0)])])
    got = _vertex_misses(arm.ik(pts), np.ones(42, np.int8), np.repeat([0, 1], 21), arm,
                         [s0, s1], 0.05).tolist()
    assert got and max(got) <= 22, got


@pytest.mark.parametrize("fallback", [False, True])
def test_repairs_checking_only_the_changed_strokes_plan_the_same_stream(fallback, monkeypatch):
    # The reference is the planner checking every stroke in every repair
    # round (_INCREMENTAL off): keeping the verdicts of strokes whose rows did
    # not change must give the same stream, bit for bit. With one blend round
    # allowed, strokes also fall back to plain rows (the path is rebuilt).
    import inkreach.motion.plan as plan_module

    if fallback:
        monkeypatch.setattr(plan_module, "_BLEND_REPAIRS", 1)
    arm = load_arm("default")
    square = np.array([[-15.0, 140.0], [15.0, 140.0], [15.0, 170.0], [-15.0, 170.0],
                       [-15.0, 140.0]])
    zigs = [np.array([[x, 180.0], [x + 2.0, 183.0], [x + 4.0, 180.0], [x + 6.0, 183.0]])
            for x in (-12.0, -4.0, 4.0)]
    vee = np.array([[20.0, 150.0], [21.0, 156.0], [22.0, 150.0]])
    strokes = [square, *zigs, vee]
    checked = []
    off_stroke_rows = plan_module._off_stroke_rows

    def counted(q, pen, stroke, *args):
        checked.append(np.unique(stroke[pen == 1]).tolist())
        return off_stroke_rows(q, pen, stroke, *args)

    monkeypatch.setattr(plan_module, "_off_stroke_rows", counted)
    fast = plan_motion(strokes, arm)
    rounds = list(checked)
    monkeypatch.setattr(plan_module, "_INCREMENTAL", False)
    full = plan_motion(strokes, arm)
    # repairs happened, and some rounds checked only some of the strokes
    assert len(rounds) > 1 and rounds[0] == list(range(len(strokes)))
    assert any(len(r) < len(strokes) for r in rounds[1:]), rounds
    for a, b in ((fast.q, full.q), (fast.pen, full.pen), (fast.stroke, full.stroke),
                 (fast.t, full.t)):
        assert a.dtype == b.dtype and a.shape == b.shape
        assert np.array_equal(a, b)


def test_joint_space_pen_up_moves_are_probed_for_limits_and_conditioning():
    # A pen-up move along the joint-space line is usable when every probed
    # posture is inside the joint limits, assembles, and meets the
    # conditioning floor; several moves are probed at once, each on its own.
    from inkreach.motion.plan import _joint_moves_ok
    arm = load_arm("default")
    deg = np.array([[[120.0, 60.0], [110.0, 50.0]],      # inside, well conditioned
                    [[200.0, -20.0], [212.0, -30.0]],    # ends past theta1's 210 deg
                    [[40.0, -20.0], [30.0, -30.0]],      # ends below the floor
                    [[180.0, 100.0], [200.0, 100.0]]])   # inside, up to 10 deg from a limit
    qa, qb = np.radians(deg[:, 0]), np.radians(deg[:, 1])
    u = np.linspace(0.0, 1.0, 101)[:, None]
    line = qa[1] + u * (qb[1] - qa[1])
    # the second move fails on the limits alone: it assembles and is well conditioned
    assert not arm.within_limits(qb[1:2]).all()
    assert (arm.conditioning(line) >= arm.limits.min_conditioning).all()
    assert np.isfinite(arm.fk(line)).all()
    assert arm.conditioning(qb[2:3])[0] < arm.limits.min_conditioning
    last = qa[3] + u * (qb[3] - qa[3])
    assert (arm.conditioning(last) >= arm.limits.min_conditioning).all()
    assert _joint_moves_ok(arm, qa, qb).tolist() == [True, False, False, True]
