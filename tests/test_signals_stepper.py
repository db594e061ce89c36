from fractions import Fraction

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from inkreach.arms import (arm_to_toml, default_arm, example_arms, largest_rectangle, load_arm,
                           parse_arm, workspace_map)
from inkreach.errors import InkreachError
from inkreach.signals import (StepperConfig, quantised_angles, stepper_config_from_arm,
                              stepper_steps, worst_pen_error_mm)

from _streams import line_stream, stream_of_deg


def _line_stream(arm, n=60, a=(-30.0, 150.0), b=(30.0, 190.0)):
    """A short pen-down line built by hand from the arm's IK."""
    return line_stream(arm, n, a, b)


def _stream_of_deg(deg, period=0.01):
    return stream_of_deg(deg, period=period, pen=1)


def _exact_steps(angle_deg, zero_deg, spr, ms, gear, direction):
    """Reference: exact rational arithmetic (Python fractions.Fraction), round half to even."""
    a = Fraction(float(angle_deg)) - Fraction(float(zero_deg))
    return direction * round(a * spr * ms * Fraction(float(gear)) / 360)


@settings(max_examples=40, deadline=None)
@given(st.lists(st.floats(-170.0, 170.0), min_size=1, max_size=40),
       st.sampled_from([200, 400]), st.sampled_from([1, 8, 16, 32]),
       st.sampled_from([1.0, 3.0, 4.5]), st.floats(-90.0, 90.0), st.sampled_from([1, -1]))
def test_stepper_counts_match_exact_rational_arithmetic(angles, spr, ms, gear, zero, d):
    # Reference: fractions.Fraction (Python standard library), exact rationals.
    deg = np.stack([np.asarray(angles), np.asarray(angles)[::-1]], 1)
    # What the stream holds are radians; the reference starts from the same degrees.
    stream = _stream_of_deg(deg)
    deg_back = np.rad2deg(stream.q)
    cfg = StepperConfig(steps_per_rev=spr, microsteps=ms, gear_ratio=gear,
                        zero_deg=(zero, -zero), direction=(d, -d))
    got = stepper_steps(stream, cfg).steps
    want = [[_exact_steps(r[0], zero, spr, ms, gear, d),
             _exact_steps(r[1], -zero, spr, ms, gear, -d)] for r in deg_back]
    # an exact tie (x.5 steps) may round either way after floating point
    spd = Fraction(spr) * ms * Fraction(gear) / 360
    ties = [abs((Fraction(float(r[0])) - Fraction(zero)) * spd % 1 - Fraction(1, 2)) < 1e-9
            or abs((Fraction(float(r[1])) + Fraction(zero)) * spd % 1 - Fraction(1, 2)) < 1e-9
            for r in deg_back]
    for g, w, tie in zip(got.tolist(), want, ties):
        if tie:
            assert all(abs(a - b) <= 1 for a, b in zip(g, w))
        else:
            assert g == w


def test_stepper_counts_do_not_drift_over_a_long_sequence():
    # Reference: fractions.Fraction. 20000 tiny increments of a third of a step:
    # summing rounded deltas would drift; rounding the absolute target cannot.
    cfg = StepperConfig()
    step_deg = Fraction(360, 200 * 16)
    inc = float(step_deg / 3)
    deg = np.cumsum(np.full(20000, inc))
    stream = _stream_of_deg(np.stack([deg, -deg], 1), period=0.001)
    sig = stepper_steps(stream, cfg)
    d = np.rad2deg(stream.q)
    for k in (0, 1, 2, 9999, 19998, 19999):
        assert sig.steps[k, 0] == _exact_steps(d[k, 0], 0.0, 200, 16, 1.0, 1)
        assert sig.steps[k, 1] == _exact_steps(d[k, 1], 0.0, 200, 16, 1.0, 1)
    assert np.array_equal(np.cumsum(sig.delta, 0) + sig.steps[0], sig.steps)
    assert np.all(sig.worst_angle_error <= cfg.step_rad / 2 + 1e-12)


def test_quantised_angles_are_within_half_a_step_of_the_command():
    arm = default_arm()
    stream = _line_stream(arm)
    cfg = StepperConfig(microsteps=4)
    q = quantised_angles(stream, stepper_steps(stream, cfg))
    assert np.all(np.abs(q - stream.q) <= cfg.step_rad / 2 + 1e-12)


@pytest.mark.parametrize("name", example_arms())
def test_pen_error_through_jacobian_agrees_with_forward_kinematics(name):
    # Reference: first-order error propagation |dp| = |J dq| <= ||J||_2 |dq|
    # (J. J. Craig, Introduction to Robotics, ch. 5), checked against the
    # FK-measured error of the reached angles.
    arm = load_arm(name)
    rect = largest_rectangle(workspace_map(arm, cells=80), aspect=1.0)
    c = rect.corners()
    stream = _line_stream(arm, n=200, a=c[0] * 0.9 + c[2] * 0.1, b=c[2] * 0.9 + c[0] * 0.1)
    cfg = StepperConfig(microsteps=2)
    err = worst_pen_error_mm(stream, arm, cfg)
    assert 0 < err.fk_mm <= err.bound_mm * 1.01
    assert err.linear_mm == pytest.approx(err.fk_mm, rel=0.05)
    assert err.linear_mm <= err.bound_mm * (1 + 1e-9)


def test_step_rate_over_the_configured_maximum_is_refused():
    stream = _stream_of_deg([[0.0, 0.0], [1.0, 0.0], [2.0, 0.0]], period=0.001)
    # 1 degree per ms at 8.89 steps/deg is about 8889 steps/s.
    ok = stepper_steps(stream, StepperConfig(max_step_rate_hz=10000.0))
    assert ok.max_rate_hz[0] == pytest.approx(9000.0)  # the rounded steps: 9 per row
    with pytest.raises(InkreachError, match="motor 1 needs 9000 steps/s at t=0.001 s"):
        stepper_steps(stream, StepperConfig(max_step_rate_hz=5000.0))


def test_stepper_config_reads_the_arm_file_table():
    text = arm_to_toml(default_arm()) + (
        "\n[stepper]\nsteps_per_rev = 200\nmicrosteps = [16, 8]\ngear_ratio = 3.0\n"
        "zero_deg = [90.0, 45.0]\ndirection = [1, -1]\nmax_step_rate_hz = 20000.0\n")
    arm = parse_arm(text)
    cfg = stepper_config_from_arm(arm)
    assert cfg.microsteps == (16, 8) and cfg.gear_ratio == (3.0, 3.0)
    assert cfg.zero_deg == (90.0, 45.0) and cfg.direction == (1, -1)
    assert stepper_config_from_arm(parse_arm(arm_to_toml(arm))) == cfg
    # Without zero_deg the home posture is step 0.
    assert stepper_config_from_arm(default_arm()).zero_deg == (120.0, 60.0)


@pytest.mark.parametrize("stepper, words", [
    ("spin = 1", "unknown key spin"),
    ("direction = [1, 2]", "direction must be 1 or -1"),
    ("microsteps = 1.5", "whole number"),
    ("gear_ratio = 0.0", "gear_ratio must be greater than zero"),
    ("zero_deg = [1.0, 2.0, 3.0]", "pair"),
    ("max_step_rate_hz = -1.0", "max_step_rate_hz"),
])
def test_stepper_config_from_arm_names_the_bad_key(stepper, words):
    arm = parse_arm(arm_to_toml(default_arm()) + "\n[stepper]\n" + stepper + "\n")
    with pytest.raises(InkreachError, match=words) as info:
        stepper_config_from_arm(arm)
    assert "\n" not in str(info.value)


# --- cases found by mutation testing (tests/MUTATION.md) ---------------------

@pytest.mark.parametrize("kw, words", [
    ({"steps_per_rev": "abc"}, "steps_per_rev"),
    ({"steps_per_rev": 200.5}, "steps_per_rev"),
    ({"microsteps": 0}, "microsteps"),
    ({"steps_per_rev": 0}, "steps_per_rev"),
    ({"zero_deg": "north"}, "zero_deg"),
])
def test_bad_stepper_settings_are_refused_by_name(kw, words):
    with pytest.raises(InkreachError, match=words):
        StepperConfig(**kw)


def test_step_positions_beyond_32_bits_are_refused():
    s = stream_of_deg([[0.0, 0.0], [170.0, 0.0]])
    with pytest.raises(InkreachError, match="does not fit in 32 bits; check zero_deg"):
        stepper_steps(s, StepperConfig(gear_ratio=1e7))   # 170 deg -> 1.5e10 steps


# Cases found by the second mutation-testing round (tests/MUTATION.md).

def test_stepper_steps_refuse_bad_streams_with_their_own_line():
    # Any object with q, pen, t and period is accepted (duck typing), so the
    # shape rule must hold for a row of three angles too; the messages are
    # compared whole, a bound chosen here so text added around them fails.
    from types import SimpleNamespace
    three = SimpleNamespace(q=np.zeros((2, 3)), pen=np.ones(2, np.int8), t=np.arange(2) * 0.01,
                            period=0.01)
    with pytest.raises(InkreachError) as err:
        stepper_steps(three)
    assert str(err.value) == "the joint stream must hold two angles per row"
    flat = SimpleNamespace(q=np.zeros(4), pen=np.ones(4, np.int8), t=np.arange(4) * 0.01,
                           period=0.01)
    with pytest.raises(InkreachError, match="^the joint stream must hold two angles per row$"):
        stepper_steps(flat)
    bad = stream_of_deg([[0.0, 0.0], [np.nan, 1.0]])
    with pytest.raises(InkreachError) as err:
        stepper_steps(bad)
    assert str(err.value) == "the joint stream holds angles that are not finite; re-plan it"


def test_pen_error_of_an_empty_stream_is_zero():
    # No rows, no rounding: every error is exactly zero (a maximum over an
    # empty set is taken as 0 here, by choice, so an empty plan reports 0 mm).
    from types import SimpleNamespace
    empty = SimpleNamespace(q=np.zeros((0, 2)), pen=np.zeros(0, np.int8), t=np.zeros(0),
                            period=0.01)
    err = worst_pen_error_mm(empty, default_arm())
    assert (err.linear_mm, err.fk_mm, err.bound_mm) == (0.0, 0.0, 0.0)
    assert all(type(v) is float for v in (err.linear_mm, err.fk_mm, err.bound_mm))
