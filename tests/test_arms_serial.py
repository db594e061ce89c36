"""Serial two-link arm against textbook kinematics."""

import numpy as np
import pytest
from hypothesis import given, settings, strategies as st

from inkreach.arms import Limits, SerialArm, load_arm


def _arm(l1=100.0, l2=80.0, elbow="ccw"):
    return SerialArm(upper=l1, lower=l2, elbow=elbow,
                     limits=Limits(theta1=(-np.pi, np.pi), theta2=(-np.pi, np.pi)))


def test_fk_matches_textbook_worked_values():
    # Craig, Introduction to Robotics (3rd ed.), planar RR arm:
    # x = l1 c1 + l2 c12, y = l1 s1 + l2 s12.
    arm = _arm(1.0, 1.0)
    q = np.deg2rad([[0, 0], [90, 0], [0, 90], [30, 60], [45, -90]])
    c1, s1 = np.cos(q[:, 0]), np.sin(q[:, 0])
    c12, s12 = np.cos(q.sum(1)), np.sin(q.sum(1))
    expected = np.stack([c1 + c12, s1 + s12], 1)
    np.testing.assert_allclose(arm.fk(q), expected, atol=1e-12)
    np.testing.assert_allclose(arm.fk(q[3]), [np.cos(np.pi / 6), 1.5], atol=1e-12)


def test_ik_picks_the_configured_elbow_sense():
    p = np.array([[120.0, 50.0]])
    up = _arm(elbow="ccw").ik(p)
    down = _arm(elbow="cw").ik(p)
    assert 0 < up[0, 1] < np.pi
    assert -np.pi < down[0, 1] < 0
    np.testing.assert_allclose(_arm().fk(up), p, atol=1e-9)
    np.testing.assert_allclose(_arm().fk(down), p, atol=1e-9)


def test_ik_of_unreachable_points_is_nan_not_an_error():
    arm = _arm(100.0, 80.0)
    q = arm.ik(np.array([[200.0, 0.0], [10.0, 0.0], [150.0, 0.0]]))
    assert np.isnan(q[0]).all()          # beyond l1 + l2
    assert np.isnan(q[1]).all()          # inside |l1 - l2|
    assert np.isfinite(q[2]).all()


@settings(max_examples=200, deadline=None)
@given(r=st.floats(0.05, 0.999), phi=st.floats(-np.pi, np.pi),
       l1=st.floats(20, 300), ratio=st.floats(0.2, 2.0), ccw=st.booleans())
def test_ik_then_fk_returns_the_point(r, phi, l1, ratio, ccw):
    l2 = l1 * ratio
    lo, hi = abs(l1 - l2), l1 + l2
    rad = lo + (hi - lo) * r
    arm = _arm(l1, l2, "ccw" if ccw else "cw")
    p = np.array([rad * np.cos(phi), rad * np.sin(phi)])
    q = arm.ik(p)
    assert np.all(np.isfinite(q))
    np.testing.assert_allclose(arm.fk(q), p, atol=1e-6 * hi)


def test_manipulability_is_yoshikawas_l1_l2_sin_theta2():
    # Yoshikawa, "Manipulability of robotic mechanisms", IJRR 4(2), 1985:
    # w = |det J| = l1 l2 |sin theta2| for the planar two-link arm.
    arm = _arm(100.0, 80.0)
    rng = np.random.default_rng(1)
    q = rng.uniform(-np.pi, np.pi, (50, 2))
    np.testing.assert_allclose(arm.manipulability(q), 100 * 80 * np.abs(np.sin(q[:, 1])),
                               rtol=1e-10, atol=1e-9)


def test_isotropic_posture_has_conditioning_one():
    # Salisbury & Craig 1982: with l1 = sqrt(2) l2 and theta2 = +-135 deg the
    # Jacobian of the two-link arm is isotropic (condition number 1).
    arm = _arm(np.sqrt(2.0) * 50.0, 50.0)
    for t2 in (135.0, -135.0):
        for t1 in (-60.0, 0.0, 77.0):
            assert arm.conditioning(np.deg2rad([t1, t2])) == pytest.approx(1.0, abs=1e-12)


def test_conditioning_is_zero_when_stretched_or_folded():
    arm = _arm(100.0, 80.0)
    assert arm.conditioning(np.array([0.3, 0.0])) == pytest.approx(0.0, abs=1e-12)
    assert arm.conditioning(np.array([0.3, np.pi])) == pytest.approx(0.0, abs=1e-12)


def test_analytic_jacobian_equals_central_differences():
    arm = _arm(120.0, 90.0)
    rng = np.random.default_rng(2)
    q = rng.uniform(-3, 3, (20, 2))
    h = 1e-6
    num = np.stack([(arm.fk(q + h * e) - arm.fk(q - h * e)) / (2 * h)
                    for e in np.eye(2)], axis=2)
    np.testing.assert_allclose(arm.jacobian(q), num, atol=1e-5)


@pytest.mark.parametrize("deg", [[-30.0, 90.0], [210.0, 90.0], [-30.0, 10.0]])
def test_ik_keeps_an_angle_on_its_limit(deg):
    # The shipped serial arm allows theta1 in [-30, 210] deg: a posture on a
    # limit comes back on it, not 360 deg away (the same posture, but outside).
    arm = load_arm("serial")
    q = np.deg2rad(deg)
    back = arm.ik(arm.fk(q))
    np.testing.assert_allclose(back, q, atol=1e-9)
    assert arm.within_limits(back)


def test_an_offset_shoulder_moves_everything_with_it():
    # Craig 2005, sec. 3.6, with the base translated: shoulder (10, 20),
    # links 100 and 80 at (0, 90) deg put the elbow at (110, 20) and the
    # pen at (110, 100); the reach box is the shoulder +- 180 mm.
    arm = SerialArm(shoulder=(10.0, 20.0), upper=100.0, lower=80.0,
                    limits=Limits(theta1=(-np.pi, np.pi), theta2=(-np.pi, np.pi)))
    j = arm.joints(np.deg2rad([0.0, 90.0]))
    np.testing.assert_allclose(j["shoulder"], [[10.0, 20.0]])
    np.testing.assert_allclose(j["elbow"], [[110.0, 20.0]], atol=1e-12)
    np.testing.assert_allclose(j["pen"], [[110.0, 100.0]], atol=1e-12)
    np.testing.assert_allclose(arm.ik(np.array([110.0, 100.0])), np.deg2rad([0.0, 90.0]),
                               atol=1e-12)
    assert arm.reach_box() == (-170.0, -160.0, 190.0, 200.0)
