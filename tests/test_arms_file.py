"""Arm files: the built-ins load, and every kind of mistake gets one clear line."""

import numpy as np
import pytest

from inkreach import InkreachError
from inkreach.arms import (FiveBar, SerialArm, arm_to_toml, default_arm, example_arms,
                           load_arm, parse_arm)
from inkreach.arms.armfile import builtin_arm_text

GOOD = builtin_arm_text("default")


def _edit(text, old, new):
    assert old in text
    return text.replace(old, new)


def test_builtin_arms_load():
    assert example_arms()[0] == "default"
    arms = [load_arm(n) for n in example_arms()]
    assert isinstance(arms[0], FiveBar) and arms[0].elbows == "out"
    assert any(isinstance(a, SerialArm) for a in arms)
    assert any(getattr(a, "pen_extension", 0) > 0 for a in arms)


def test_design_example_arm_parses_with_degrees_converted():
    text = """
name = "desk arm"
kind = "five-bar"
[geometry]
left_motor = [-30.0, 0.0]
right_motor = [30.0, 0.0]
left_upper = 90.0
right_upper = 90.0
left_lower = 120.0
right_lower = 120.0
pen_extension = 0.0
elbows = "out"
[limits]
theta1_deg = [0.0, 180.0]
theta2_deg = [0.0, 180.0]
max_speed_deg_s = 200.0
max_accel_deg_s2 = 2000.0
min_conditioning = 0.3
[pen]
width_mm = 0.5
lift_s = 0.12
"""
    arm = parse_arm(text)
    assert arm.limits.theta1 == pytest.approx((0.0, np.pi))
    assert arm.limits.max_speed == pytest.approx(np.deg2rad(200.0))
    assert arm.pen.lift_s == 0.12


def test_arm_file_round_trips_through_toml(tmp_path):
    for name in example_arms():
        arm = load_arm(name)
        path = tmp_path / f"{name}.toml"
        path.write_text(arm_to_toml(arm))
        again = load_arm(path)
        assert arm_to_toml(again) == arm_to_toml(arm)


@pytest.mark.parametrize("old,new,words", [
    ('kind = "five-bar"', 'kind = "delta"', "kind 'delta' is unknown"),
    ('kind = "five-bar"', '', "missing kind"),
    ("left_upper = 100.0", "", "missing left_upper"),
    ("left_upper = 100.0", "left_upper = -5.0", "greater than zero"),
    ("left_upper = 100.0", "left_upper = 0.0", "greater than zero"),
    ("left_upper = 100.0", "left_upper = nan", "finite"),
    ("left_upper = 100.0", "left_upper = inf", "finite"),
    ("left_upper = 100.0", 'left_upper = "long"', "must be a number"),
    ("theta1_deg = [30.0, 210.0]", "theta1_deg = [210.0, 30.0]", "reversed"),
    ("min_conditioning = 0.3", "min_conditioning = 0.0", "in (0, 1]"),
    ("min_conditioning = 0.3", "min_conditioning = 1.5", "in (0, 1]"),
    ('elbows = "out"', 'elbows = "sideways"', "elbows must be"),
    ("left_upper = 100.0", "left_upper = 100.0\nleft_uper = 3.0", "unknown key left_uper"),
    ("max_speed_deg_s = 180.0", "max_speed_deg_s = -1.0", "greater than zero"),
    ("[limits]", "[limits", "not valid TOML"),
])
def test_bad_arm_files_get_one_clear_line(old, new, words):
    with pytest.raises(InkreachError) as err:
        parse_arm(_edit(GOOD, old, new), source="bad.toml")
    msg = str(err.value)
    assert words in msg
    assert "\n" not in msg and msg.startswith("arm file bad.toml")


def test_loop_that_can_close_nowhere_is_refused():
    # motors 800 mm apart: the elbows are at least 600 mm apart, the lower
    # links span at most 300 mm
    text = _edit(_edit(GOOD, "left_motor = [-40.0, 0.0]", "left_motor = [-400.0, 0.0]"),
                 "right_motor = [40.0, 0.0]", "right_motor = [400.0, 0.0]")
    with pytest.raises(InkreachError, match="cannot close"):
        parse_arm(text)


def test_missing_and_folder_arm_paths(tmp_path):
    with pytest.raises(InkreachError, match="does not exist"):
        load_arm(tmp_path / "nope.toml")
    with pytest.raises(InkreachError, match="is a folder"):
        load_arm(tmp_path)
    bad = tmp_path / "bin.toml"
    bad.write_bytes(b"\xff\xfe\x00garbage")
    with pytest.raises(InkreachError, match="UTF-8"):
        load_arm(bad)


def test_serial_limits_must_admit_the_elbow_sense():
    text = builtin_arm_text("serial").replace("theta2_deg = [10.0, 170.0]",
                                              "theta2_deg = [-170.0, -10.0]")
    with pytest.raises(InkreachError, match="excludes every ccw"):
        parse_arm(text)


def test_calibration_table_is_accepted_and_checked():
    arm = parse_arm(GOOD + "\n[calibration]\noffset_deg = [1.5, -0.5]\nscale = [1.0, 1.01]\n")
    assert arm.hardware["calibration"]["offset_deg"] == [1.5, -0.5]
    with pytest.raises(InkreachError, match="scale must be positive"):
        parse_arm(GOOD + "\n[calibration]\nscale = [0.0, 1.0]\n")


def test_default_arm_is_the_first_builtin():
    assert arm_to_toml(default_arm()) == arm_to_toml(load_arm("default"))
