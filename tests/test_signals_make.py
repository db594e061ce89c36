import numpy as np
import pytest

from inkreach.arms import arm_to_toml, default_arm, load_arm, parse_arm
from inkreach.errors import InkreachError
from inkreach.signals import servo_calibration_from_arm, make_signals, quantised_angles

from _streams import line_stream


def _bare_default():
    """The default arm without its hardware tables (the tests add their own)."""
    from dataclasses import replace
    return replace(default_arm(), hardware={})


def _line_stream(arm, n=30):
    """A short pen-down line inside the arm's reach, built by hand from its IK."""
    if arm.kind == "five-bar":
        return line_stream(arm, n)
    return line_stream(arm, n, (-60.0, 120.0), (40.0, 160.0))


def test_make_signals_follows_the_arm_file_tables():
    base = arm_to_toml(_bare_default())
    only_stepper = parse_arm(base + "\n[stepper]\nmicrosteps = 8\n")
    s = _line_stream(only_stepper)
    assert sorted(make_signals(s, only_stepper)) == ["stepper"]
    both = parse_arm(base + "\n[stepper]\nmicrosteps = 8\n\n[servo]\nframe_hz = 50.0\n")
    assert sorted(make_signals(s, both)) == ["servo", "stepper"]
    assert make_signals(s, both, kind="none") == {}
    assert sorted(make_signals(s, only_stepper, kind="servo")) == ["servo"]


def test_make_signals_auto_without_tables_skips_servos_that_cannot_reach():
    from dataclasses import replace
    arm = replace(load_arm("serial"), hardware={})   # no [servo] or [stepper] table
    s = _line_stream(arm)
    got = make_signals(s, arm)
    assert "stepper" in got
    deg = np.rad2deg(s.q)
    cal = servo_calibration_from_arm(arm)
    fits = all(np.all((deg[:, m] >= cal.angle_range(m)[0]) & (deg[:, m] <= cal.angle_range(m)[1]))
               for m in (0, 1))
    assert ("servo" in got) == bool(fits)


def test_make_signals_refuses_an_unknown_kind():
    arm = _bare_default()
    with pytest.raises(InkreachError, match="signals 'pwm' is unknown"):
        make_signals(_line_stream(arm), arm, kind="pwm")


def test_quantised_angles_takes_a_signal_dict_and_prefers_steppers():
    arm = _bare_default()
    s = _line_stream(arm)
    sig = make_signals(s, arm, kind="both")
    from_dict = quantised_angles(s, arm, sig)
    assert np.array_equal(from_dict, quantised_angles(s, sig["stepper"]))
    assert np.array_equal(quantised_angles(s, {}), s.q)
    assert np.array_equal(quantised_angles(s, {"servo": sig["servo"]}),
                          quantised_angles(s, sig["servo"]))


@pytest.mark.parametrize("name", ["servo", "stepper"])
def test_hardware_entry_that_is_not_a_table_is_refused_in_one_line(name):
    from inkreach.signals import stepper_config_from_arm
    read = {"servo": servo_calibration_from_arm, "stepper": stepper_config_from_arm}[name]
    arm = parse_arm(f"{name} = 3\n" + arm_to_toml(_bare_default()))
    with pytest.raises(InkreachError, match=rf"arm file \[{name}\] must be a table") as info:
        read(arm)
    assert "\n" not in str(info.value)
