import numpy as np
import pytest

from inkreach.arms import arm_to_toml, default_arm, load_arm, parse_arm
from inkreach.errors import InkreachError
from inkreach.motion import JointStream
from inkreach.signals import make_signals, quantised_angles


def _line_stream(arm, n=30):
    xy = np.linspace([-30.0, 150.0], [30.0, 190.0], n) if arm.kind == "five-bar" else \
        np.linspace([-60.0, 120.0], [40.0, 160.0], n)
    q = arm.ik(xy)
    return JointStream(t=np.arange(n) * 0.01, q=q, pen=np.ones(n, np.int8), xy=arm.fk(q),
                       period=0.01)


def test_make_signals_follows_the_arm_file_tables():
    base = arm_to_toml(default_arm())
    only_stepper = parse_arm(base + "\n[stepper]\nmicrosteps = 8\n")
    s = _line_stream(only_stepper)
    assert sorted(make_signals(s, only_stepper)) == ["stepper"]
    both = parse_arm(base + "\n[stepper]\nmicrosteps = 8\n\n[servo]\nframe_hz = 50.0\n")
    assert sorted(make_signals(s, both)) == ["servo", "stepper"]
    assert make_signals(s, both, kind="none") == {}
    assert sorted(make_signals(s, only_stepper, kind="servo")) == ["servo"]


def test_make_signals_auto_without_tables_skips_servos_that_cannot_reach():
    arm = load_arm("serial")
    s = _line_stream(arm)
    got = make_signals(s, arm)
    assert "stepper" in got
    deg = np.rad2deg(s.q)
    assert ("servo" in got) == bool(np.all((deg[:, 0] >= 0) & (deg[:, 0] <= 180)))


def test_make_signals_refuses_an_unknown_kind():
    arm = default_arm()
    with pytest.raises(InkreachError, match="signals 'pwm' is unknown"):
        make_signals(_line_stream(arm), arm, kind="pwm")


def test_quantised_angles_takes_a_signal_dict_and_prefers_steppers():
    arm = default_arm()
    s = _line_stream(arm)
    sig = make_signals(s, arm, kind="both")
    from_dict = quantised_angles(s, arm, sig)
    assert np.array_equal(from_dict, quantised_angles(s, sig["stepper"]))
    assert np.array_equal(quantised_angles(s, {}), s.q)
    assert np.array_equal(quantised_angles(s, {"servo": sig["servo"]}),
                          quantised_angles(s, sig["servo"]))
