"""The Python copy of the board's signal maths equals the C core's, sample for sample."""

import subprocess

import numpy as np
import pytest

from inkreach.arms import load_arm
from inkreach.board import (angle_units, board_config, executed_angles,
                            executed_deviation_mm, servo_ticks, stepper_positions)
from inkreach.motion import JointStream

from _board import Core, arm_with


def _c_outputs(arm, drive, units):
    core = Core(arm, drive)
    script = "".join(f"o {a} {b}\n" for a, b in units)
    res = subprocess.run([core.exe], input=script, capture_output=True, text=True, timeout=60)
    assert res.returncode == 0, res.stderr
    return np.array([[int(x) for x in ln.split()[1:]] for ln in res.stdout.splitlines()])


@pytest.mark.parametrize("arm_name, drive", [("default", "servo"), ("wide", "servo"),
                                             ("default", "stepper"), ("serial", "stepper")])
def test_python_signal_maths_equals_the_c_core(arm_name, drive):
    arm = load_arm(arm_name)
    cfg = board_config(arm, drive)
    rng = np.random.default_rng(3)
    lo, hi = np.array(cfg.q_min), np.array(cfg.q_max)
    units = rng.integers(lo - 1000, hi + 1000, size=(3000, 2))
    units[:4] = [lo, hi, lo + 1, hi - 1]
    out = _c_outputs(arm, drive, units)
    if drive == "servo":
        assert np.array_equal(servo_ticks(units, cfg), out[:, :2])
    else:
        assert np.array_equal(stepper_positions(units, cfg), out[:, 2:])


def test_calibrated_multi_point_servo_tables_agree_too():
    arm = arm_with("[calibration]\noffset_deg = [0.37, -0.21]\nscale = [1.013, 0.991]\n")
    arm = load_arm("default") if arm is None else arm
    cfg = board_config(arm, "servo")
    units = np.random.default_rng(5).integers(cfg.q_min[0], cfg.q_max[1], size=(2000, 2))
    out = _c_outputs(arm, "servo", units)
    assert np.array_equal(servo_ticks(units, cfg), out[:, :2])


def test_executed_angles_are_within_half_a_tick():
    # 1/16 us of a 2000 us span over 180 deg (the default table) is 0.005625 deg
    arm = load_arm("default")
    deg = np.random.default_rng(1).uniform([31, -29], [209, 149], size=(500, 2))
    ex = executed_angles(deg, arm, "servo")
    assert np.abs(ex - deg).max() <= 0.005625 / 2 + 1e-4 / 2 + 1e-9
    assert np.abs(ex - deg).max() > 0.001      # really quantised, not a copy


def test_stepper_executed_angles_are_whole_steps():
    arm = load_arm("serial")
    deg = np.random.default_rng(2).uniform([0, 20], [180, 160], size=(200, 2))
    ex = executed_angles(deg, arm, "stepper")
    # 200 steps * 16 microsteps * 3:1 belts per turn: 0.0375 deg a step (arm file)
    steps = ex / 0.0375
    assert np.allclose(steps, np.round(steps), atol=1e-6)
    assert np.abs(ex - deg).max() <= 0.0375 / 2 + 1e-4


def test_angle_units_round_halves_away_from_zero():
    assert angle_units([0.00005, -0.00005, 0.00015, 1.23456]).tolist() == [1, -1, 2, 12346]


@pytest.mark.parametrize("arm_name", ["default", "wide"])
def test_fine_servo_pulses_keep_the_pen_within_the_chord_tolerance(arm_name):
    # 0.05 mm: the motion stage's default chord tolerance (inkreach.plan MOTION_OPTIONS).
    arm = load_arm(arm_name)
    cfg = board_config(arm, "servo")
    rng = np.random.default_rng(4)
    deg = rng.uniform(np.array(cfg.q_min) / 1e4, np.array(cfg.q_max) / 1e4, size=(20000, 2))
    q = np.deg2rad(deg)
    ok = np.isfinite(arm.fk(q)[:, 0]) & (arm.conditioning(q) >= arm.limits.min_conditioning)
    q = q[ok][:3000]
    s = JointStream(t=np.arange(len(q)) * 0.02, q=q, pen=np.ones(len(q), np.int8),
                    xy=arm.fk(q), period=0.02)
    dev = executed_deviation_mm(s, arm, "servo")
    assert 0 < dev <= 0.05
