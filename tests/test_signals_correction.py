"""A calibrated arm's signals drive the motors to the commanded angles."""

import numpy as np

from inkreach.arms import parse_arm
from inkreach.arms.armfile import builtin_arm_text
from inkreach.motion import JointStream
from inkreach.signals import from_commanded, make_signals, quantised_angles, to_commanded


def _stream(arm, q):
    return JointStream(t=np.arange(len(q)) * 0.02, q=q, pen=np.zeros(len(q), np.int8),
                       xy=arm.fk(q), period=0.02)


def test_commanded_angles_undo_the_fitted_offset_and_scale():
    arm = parse_arm(builtin_arm_text("default")
                    + "\n[calibration]\noffset_deg = [2.0, -1.0]\nscale = [1.01, 0.99]\n")
    q = np.deg2rad([[120.0, 60.0], [100.0, 50.0]])
    cmd = to_commanded(q, arm)
    # true angle = scale * commanded + offset (the calibration model)
    np.testing.assert_allclose(1.01 * np.rad2deg(cmd[:, 0]) + 2.0, [120.0, 100.0])
    np.testing.assert_allclose(from_commanded(cmd, arm), q)


def test_signals_of_a_calibrated_arm_reach_the_model_angles():
    text = builtin_arm_text("serial") + "\n[calibration]\noffset_deg = [3.0, 1.0]\nscale = [1.0, 1.02]\n"
    arm = parse_arm(text)
    q = np.deg2rad([[30.0, 40.0], [31.0, 41.0], [33.0, 44.0]])
    s = _stream(arm, q)
    sig = make_signals(s, arm, kind="stepper")
    plain = make_signals(s, parse_arm(builtin_arm_text("serial")), kind="stepper")
    assert not np.array_equal(sig["stepper"].steps, plain["stepper"].steps)
    # Written out, not taken from the project's functions: the calibration
    # model is true = scale * commanded + offset, so commanded = (true -
    # offset) / scale; the shipped serial arm has 200 steps/rev, 16 microsteps,
    # gear 3 and no home, so step 0 is 0 deg and a step is 360 / 9600 deg.
    deg = np.rad2deg(q)
    cmd = (deg - [3.0, 1.0]) / np.array([1.0, 1.02])
    want = np.rint(cmd * 200 * 16 * 3.0 / 360.0).astype(np.int64)
    np.testing.assert_array_equal(sig["stepper"].steps, want)
    # and the motors then stand within half a step of the model angles
    reached = np.array([1.0, 1.02]) * (want * 360.0 / 9600.0) + [3.0, 1.0]
    assert np.abs(reached - deg).max() <= 0.5 * 360.0 / 9600.0 * 1.02 + 1e-12
    np.testing.assert_allclose(quantised_angles(s, arm, sig), np.deg2rad(reached), atol=1e-12)
