"""Five-bar kinematics: conventions, round trips, Jacobian and singularities."""

import numpy as np
import pytest
from hypothesis import HealthCheck, assume, example, given, settings, strategies as st
from scipy.optimize import least_squares

from inkreach.arms import FiveBar, Limits, default_arm, load_arm

WIDE = Limits(theta1=(-np.pi, np.pi), theta2=(-np.pi, np.pi), min_conditioning=0.01)


def _cross(a, b):
    return a[..., 0] * b[..., 1] - a[..., 1] * b[..., 0]


def test_fk_follows_the_design_conventions():
    arm = default_arm()
    q = np.deg2rad([[120.0, 60.0], [100.0, 40.0], [150.0, 80.0]])
    j = arm.joints(q)
    eL, eR, P = j["left_elbow"], j["right_elbow"], j["pen_joint"]
    np.testing.assert_allclose(np.hypot(*(eL - arm.left_motor).T), arm.left_upper)
    np.testing.assert_allclose(np.hypot(*(P - eL).T), arm.left_lower)
    np.testing.assert_allclose(np.hypot(*(P - eR).T), arm.right_lower)
    # the pen joint lies left of elbow_L -> elbow_R
    assert np.all(_cross(eR - eL, P - eL) > 0)
    # "out": left elbow left of left_motor -> P, right elbow right of right_motor -> P
    mL, mR = np.array(arm.left_motor), np.array(arm.right_motor)
    assert np.all(_cross(P - mL, eL - mL) > 0)
    assert np.all(_cross(P - mR, eR - mR) < 0)


def test_symmetric_posture_puts_the_pen_on_the_axis():
    # Worked by hand: motors at (+-40, 0), upper 100, lower 150, angles
    # 120 / 60 deg put the elbows at (-+90, 86.6025), so P = (0, 86.6025 +
    # sqrt(150^2 - 90^2)) = (0, 206.6025).
    arm = default_arm()
    p = arm.fk(np.deg2rad([120.0, 60.0]))
    np.testing.assert_allclose(p, [0.0, 100 * np.sin(np.pi / 3) + np.sqrt(150 ** 2 - 90 ** 2)],
                               atol=1e-9)


@st.composite
def arms_and_points(draw):
    half = draw(st.floats(5, 80))
    l1 = draw(st.floats(40, 150))
    r1 = l1 * draw(st.floats(0.7, 1.4))
    l2 = draw(st.floats(60, 200))
    r2 = l2 * draw(st.floats(0.7, 1.4))
    ext = draw(st.sampled_from([0.0, 0.0, 15.0]))
    elbows = draw(st.sampled_from(["out", "in"]))
    arm = FiveBar(left_motor=(-half, 0.0), right_motor=(half, 0.0), left_upper=l1,
                  right_upper=r1, left_lower=l2, right_lower=r2, pen_extension=ext,
                  elbows=elbows, limits=WIDE)
    q = np.array([draw(st.floats(-np.pi, np.pi)), draw(st.floats(-np.pi, np.pi))])
    return arm, q


# Both elbows "in" with the pen at the point of q = (0, 0): the right leg's
# configured elbow coincides with the left elbow, the distal links overlap and
# the angles do not determine the pen joint. IK once answered (0, -180) deg,
# whose FK is (60, 0), not the point: it must give NaN.
_DEGENERATE = FiveBar(left_motor=(-44.0, 0.0), right_motor=(44.0, 0.0), left_upper=44.0,
                      right_upper=44.0, left_lower=60.0, right_lower=60.0, elbows="in",
                      limits=WIDE)


@settings(max_examples=300, deadline=None,
          suppress_health_check=[HealthCheck.filter_too_much, HealthCheck.too_slow])
@given(arms_and_points())
@example((_DEGENERATE, np.array([0.0, 0.0])))
def test_ik_then_fk_returns_the_point(sample):
    arm, q = sample
    p = arm.fk(q)
    assume(np.all(np.isfinite(p)))
    q2 = arm.ik(p)
    if np.all(np.isfinite(q2)):
        np.testing.assert_allclose(arm.fk(q2), p, atol=1e-6)


@settings(max_examples=200, deadline=None,
          suppress_health_check=[HealthCheck.filter_too_much, HealthCheck.too_slow])
@given(arms_and_points())
def test_fk_then_ik_recovers_angles_in_the_matching_mode(sample):
    arm, q = sample
    p = arm.fk(q)
    assume(np.all(np.isfinite(p)))
    j = arm.joints(q)
    mL, mR = np.array(arm.left_motor), np.array(arm.right_motor)
    P = j["pen_joint"][0]
    sL = _cross(P - mL, j["left_elbow"][0] - mL)
    sR = _cross(P - mR, j["right_elbow"][0] - mR)
    want = 1 if arm.elbows == "out" else -1
    assume(np.sign(sL) == want and np.sign(sR) == -want)
    assume(abs(sL) > 1e-3 and abs(sR) > 1e-3)
    q2 = arm.ik(p)
    d = np.angle(np.exp(1j * (q2 - q)))
    np.testing.assert_allclose(d, 0.0, atol=1e-6)


def test_ik_gives_nan_where_the_elbows_coincide():
    p = _DEGENERATE.fk(np.array([0.0, 0.0]))
    # by hand: elbows (0, 0) and (88, 0), pen joint at (44, sqrt(60^2 - 44^2))
    np.testing.assert_allclose(p, [44.0, np.sqrt(60.0 ** 2 - 44.0 ** 2)], atol=1e-12)
    assert np.isnan(_DEGENERATE.ik(p)).all()
    assert not _DEGENERATE.reachable(p)


@pytest.mark.parametrize("deg", [[120.0, -30.0], [210.0, 100.0], [30.0, 120.0]])
def test_ik_keeps_an_angle_on_its_limit(deg):
    # The desk arm's limits are theta1 [30, 210], theta2 [-30, 150] deg: a
    # posture exactly on a limit must come back on it, not 360 deg away.
    arm = default_arm()
    q = np.deg2rad(deg)
    back = arm.ik(arm.fk(q))
    np.testing.assert_allclose(back, q, atol=1e-9)
    assert arm.within_limits(back)


def test_analytic_jacobian_equals_central_differences():
    for arm in (default_arm(), load_arm("wide")):
        rng = np.random.default_rng(3)
        q = rng.uniform(arm.limits.lower, arm.limits.upper, (400, 2))
        p = arm.fk(q)
        q = q[np.isfinite(p[:, 0])]
        c = arm.conditioning(q)
        q = q[c > 0.05][:50]
        assert len(q) > 10
        h = 1e-6
        num = np.stack([(arm.fk(q + h * e) - arm.fk(q - h * e)) / (2 * h)
                        for e in np.eye(2)], axis=2)
        np.testing.assert_allclose(arm.jacobian(q), num, rtol=1e-5, atol=1e-4)


def test_closed_form_agrees_with_loop_closure_solved_numerically():
    # Solve |P - elbow_L| = left_lower, |P - elbow_R| = right_lower with
    # scipy.optimize.least_squares from a start near the closed form's answer.
    arm = load_arm("wide")
    rng = np.random.default_rng(4)
    done = 0
    for q in rng.uniform(arm.limits.lower, arm.limits.upper, (60, 2)):
        j = arm.joints(q)
        P = j["pen_joint"][0]
        if not np.all(np.isfinite(P)):
            continue
        eL, eR = j["left_elbow"][0], j["right_elbow"][0]

        def loop(x):
            return [np.hypot(*(x - eL)) - arm.left_lower, np.hypot(*(x - eR)) - arm.right_lower]

        sol = least_squares(loop, P + rng.normal(0, 2.0, 2), xtol=1e-14, ftol=1e-14)
        np.testing.assert_allclose(sol.x, P, atol=1e-6)
        done += 1
    assert done > 10


def test_conditioning_vanishes_at_a_type_one_singularity():
    # Gosselin & Angeles 1990, type I (serial): a leg fully stretched.
    arm = FiveBar(left_motor=(-40, 0), right_motor=(40, 0), left_upper=100, right_upper=100,
                  left_lower=150, right_lower=150, limits=WIDE)
    t1 = np.deg2rad(80.0)
    # put P on the ray from the left motor at distance 250 (stretched left leg)
    P = np.array(arm.left_motor) + 250 * np.array([np.cos(t1), np.sin(t1)])
    eR_dir = P - np.array(arm.right_motor)
    # find theta2 that closes the right leg at P (right elbow right of motor->P)
    d = np.hypot(*eR_dir)
    a = np.arccos((100 ** 2 + d ** 2 - 150 ** 2) / (2 * 100 * d))
    t2 = np.arctan2(eR_dir[1], eR_dir[0]) - a
    q = np.array([t1, t2])
    np.testing.assert_allclose(arm.fk(q), P, atol=1e-6)
    assert arm.conditioning(q) < 1e-6
    assert arm.conditioning(q + [0.2, 0.0]) > 1e-3


def test_conditioning_vanishes_at_a_type_two_singularity():
    # Gosselin & Angeles 1990, type II (parallel): the two lower links in
    # line: motors at (+-50, 0), upper 100, so theta1 = 180 and theta2 = 0
    # put the elbows at (-+150, 0), 300 mm apart, with lower links of 150 mm;
    # the two lower links meet in line at P = (0, 0).
    arm = FiveBar(left_motor=(-50, 0), right_motor=(50, 0), left_upper=100, right_upper=100,
                  left_lower=150, right_lower=150, limits=WIDE)
    q = np.array([np.pi, 0.0])
    P = arm.fk(q)
    np.testing.assert_allclose(P, [0.0, 0.0], atol=1e-5)
    assert arm.conditioning(q) < 1e-6
    J = arm.jacobian(q + [1e-9, 0])
    assert np.abs(J).max() > 1e3  # the Jacobian blows up near type II


def test_conditioning_is_the_svd_ratio_of_the_jacobian():
    # sigma_min / sigma_max from numpy's SVD (Golub & Van Loan 2013, sec. 2.4) of
    # the analytic Jacobian, over random postures of both shipped five-bars;
    # a closed form that only stayed inside [0, 1] would not pass.
    for arm in (default_arm(), load_arm("wide")):
        q = np.random.default_rng(5).uniform(-4, 4, (5000, 2))
        q = q[np.isfinite(arm.fk(q)[:, 0])]
        J = arm.jacobian(q)
        ok = np.isfinite(J).all(axis=(1, 2))
        assert ok.sum() > 100
        s = np.linalg.svd(J[ok], compute_uv=False)
        np.testing.assert_allclose(arm.conditioning(q[ok]), s[:, 1] / s[:, 0], atol=1e-9)


def test_pen_extension_places_the_pen_beyond_the_joint():
    arm = load_arm("wide")
    q = np.deg2rad([[110.0, 70.0]])
    j = arm.joints(q)
    u = (j["pen_joint"] - j["left_elbow"]) / arm.left_lower
    np.testing.assert_allclose(j["pen"], j["pen_joint"] + arm.pen_extension * u)
    np.testing.assert_allclose(arm.fk(arm.ik(j["pen"])), j["pen"], atol=1e-9)


def test_unreachable_points_give_nan():
    arm = default_arm()
    q = arm.ik(np.array([[0.0, 1000.0], [0.0, 0.0], [0.0, 200.0]]))
    assert np.isnan(q[0]).all()      # 1000 mm away: beyond upper + lower = 250 mm
    assert np.isnan(q[1]).all()      # 40 mm from each motor: inside |150 - 100| = 50 mm
    assert np.isfinite(q[2]).all()   # and a point in the middle of the workspace is not


def test_reachable_means_ik_limits_and_conditioning():
    arm = default_arm()
    home_pen = arm.fk(arm.home())
    assert arm.reachable(home_pen)
    assert not arm.reachable(np.array([0.0, 400.0]))
    tight = FiveBar(**{**{k: getattr(arm, k) for k in (
        "left_motor", "right_motor", "left_upper", "right_upper", "left_lower",
        "right_lower", "pen_extension", "elbows")}},
        limits=Limits(theta1=arm.limits.theta1, theta2=arm.limits.theta2,
                      min_conditioning=0.99))
    assert not tight.reachable(home_pen)  # conditioning 0.75 < 0.99 floor


def test_many_points_at_once():
    arm = default_arm()
    pts = np.random.default_rng(6).uniform([-150, 0], [150, 260], (100_000, 2))
    q = arm.ik(pts)
    ok = np.isfinite(q[:, 0])
    np.testing.assert_allclose(arm.fk(q[ok]), pts[ok], atol=1e-7)
    assert arm.reachable(pts).shape == (100_000,)


@pytest.mark.parametrize("name", ["default", "wide"])
def test_ik_conditioning_equals_ik_then_conditioning_and_an_svd(name):
    arm = load_arm(name)
    pts = np.random.default_rng(8).uniform([-250, -50], [250, 300], (20_000, 2))
    q, c = arm.ik_conditioning(pts)
    np.testing.assert_array_equal(q, arm.ik(pts))
    # the elbows found by IK and those assembled from the angles differ by
    # rounding; near a singularity that moves the ratio by up to ~1e-13
    np.testing.assert_allclose(c, arm.conditioning(q), rtol=0, atol=1e-12)
    np.testing.assert_allclose(arm.conditioning_at(pts), c, rtol=0, atol=0)
    ok = np.isfinite(q[:, 0])
    assert 1000 < ok.sum() < len(pts)          # both reachable and unreachable points
    # numpy's SVD of the analytic Jacobian (Golub & Van Loan 2013, sec. 2.4)
    s = np.linalg.svd(arm.jacobian(q[ok]), compute_uv=False)
    fin = np.isfinite(s).all(axis=1)
    np.testing.assert_allclose(c[ok][fin], s[fin, 1] / s[fin, 0], atol=1e-9)
    q1, c1 = arm.ik_conditioning(pts[3])
    assert q1.shape == (2,) and c1.shape == ()


def test_reach_box_and_joints_of_an_unequal_arm_by_hand():
    # Left leg 90 + 120, right leg 70 + 100, pen 10 beyond, motors at (-30, 5)
    # and (40, 0): the box spans each motor +- its leg plus the pen extension
    # (220 left, 180 right): x from min(-250, -140) to max(190, 220), y from
    # min(-215, -180) to max(225, 180). The right elbow at 60 deg: (40 + 35, 70 sin 60).
    arm = FiveBar(left_motor=(-30.0, 5.0), right_motor=(40.0, 0.0), left_upper=90.0,
                  right_upper=70.0, left_lower=120.0, right_lower=100.0, pen_extension=10.0,
                  limits=WIDE)
    assert arm.reach_box() == (-250.0, -215.0, 220.0, 225.0)
    q = np.deg2rad([[120.0, 60.0]])
    j = arm.joints(q)
    assert set(j) == {"left_motor", "left_elbow", "pen_joint", "right_elbow", "right_motor",
                      "pen"}
    np.testing.assert_allclose(j["left_motor"], [[-30.0, 5.0]])
    np.testing.assert_allclose(j["right_motor"], [[40.0, 0.0]])
    np.testing.assert_allclose(j["right_elbow"], [[40.0 + 35.0, 70.0 * np.sin(np.pi / 3)]])
