import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from inkreach.arms import default_arm, parse_arm, arm_to_toml
from inkreach.errors import InkreachError
from inkreach.signals import (ServoCalibration, quantised_angles, servo_calibration_from_arm,
                              servo_pulses)

from _streams import line_stream, stream_of_deg


def _bare_default():
    """The default arm without its hardware tables (the tests add their own)."""
    from dataclasses import replace
    return replace(default_arm(), hardware={})


def _line_stream(n=40, arm=None):
    """A short line on the default arm, built by hand from its IK; pen up for 3 rows."""
    return line_stream(_bare_default() if arm is None else arm, n, pen=np.arange(n) >= 3)


def _stream_of_deg(deg):
    return stream_of_deg(deg, period=0.02, pen=0)


@st.composite
def _table(draw):
    """A random strictly monotonic (angle, pulse) table, pulses rising or falling."""
    k = draw(st.integers(2, 7))
    ang = np.cumsum(draw(st.lists(st.floats(0.5, 60.0), min_size=k, max_size=k))) - 20.0
    steps = np.array(draw(st.lists(st.floats(1.0, 400.0), min_size=k, max_size=k)))
    rising = draw(st.booleans())
    pulses = 500.0 + np.cumsum(steps) if rising else 2900.0 - np.cumsum(steps)
    return np.stack([ang, pulses], 1)


@settings(max_examples=60, deadline=None)
@given(_table(), st.lists(st.floats(0.0, 1.0), min_size=1, max_size=30), st.booleans())
def test_servo_pulse_matches_numpy_interp_for_monotonic_and_reversed_tables(tab, u, flip):
    # Reference: numpy.interp (piecewise-linear interpolation, NumPy documentation).
    given_tab = tab[::-1] if flip else tab  # angles may be listed falling too
    cal = ServoCalibration(motor1=given_tab.tolist(), motor2=tab.tolist())
    lo, hi = tab[0, 0], tab[-1, 0]
    ang = lo + np.asarray(u) * (hi - lo)
    got = cal.pulse(0, ang)
    want = np.interp(ang, tab[:, 0], tab[:, 1])
    np.testing.assert_allclose(got, want, rtol=0, atol=1e-9)


@settings(max_examples=40, deadline=None)
@given(_table(), st.lists(st.floats(0.0, 1.0), min_size=1, max_size=30))
def test_servo_angle_inverts_pulse(tab, u):
    # Reference: numpy.interp on the swapped table (the inverse of a monotonic
    # piecewise-linear map is piecewise linear on the same knots).
    cal = ServoCalibration(motor1=tab.tolist())
    ang = tab[0, 0] + np.asarray(u) * (tab[-1, 0] - tab[0, 0])
    p = cal.pulse(0, ang)
    order = np.argsort(tab[:, 1])
    np.testing.assert_allclose(cal.angle(0, p), np.interp(p, tab[order, 1], tab[order, 0]),
                               atol=1e-9)
    np.testing.assert_allclose(cal.angle(0, p), ang, atol=1e-7)


def test_servo_defaults_are_common_practice_500_to_2500_over_180_degrees():
    # Common practice (hobby servos): 50 Hz frames, about 500-2500 us over 0-180 deg.
    cal = ServoCalibration()
    assert cal.frame_hz == 50.0
    np.testing.assert_allclose(cal.pulse(0, [0.0, 90.0, 180.0]), [500.0, 1500.0, 2500.0])


def test_an_arm_without_a_servo_table_gets_500_to_2500_us_centred_on_its_limits():
    # Common practice (hobby servos): 500 us at one end of a 180 deg turn, 1500 us
    # at its centre, 2500 us at the other end, rising with the angle; centred on
    # the middle of each joint's limits. Written out for the desk arm's limits
    # theta1 [30, 210] deg (centre 120) and theta2 [-30, 150] deg (centre 60):
    # pulse = 1500 + (angle - centre) * 2000 / 180.
    cal = servo_calibration_from_arm(_bare_default())
    for motor, centre in ((0, 120.0), (1, 60.0)):
        ang = centre + np.array([-90.0, -45.0, 0.0, 30.0, 90.0])
        np.testing.assert_allclose(cal.pulse(motor, ang),
                                   1500.0 + (ang - centre) * 2000.0 / 180.0, atol=1e-9)
        np.testing.assert_allclose(cal.pulse(motor, [centre - 90, centre + 90]), [500, 2500])


def test_servo_pulses_refuse_angles_outside_the_table():
    s = _stream_of_deg([[10.0, 10.0], [181.0, 10.0]])
    with pytest.raises(InkreachError, match="motor 1 angle 181.000 deg is outside"):
        servo_pulses(s, ServoCalibration())


@pytest.mark.parametrize("table, words", [
    ([[0.0, 500.0]], "at least two"),
    ([], "pairs"),
    ([[0.0, 500.0], [90.0, 1500.0], [80.0, 1600.0]], "angles must rise"),
    ([[0.0, 500.0], [90.0, 1500.0], [180.0, 1400.0]], "pulses must rise"),
    ([[0.0, 500.0], [90.0, 500.0]], "pulses must rise"),
    ([[0.0, 500.0, 3.0], [90.0, 500.0, 3.0]], "pairs"),
    ([[0.0, float("nan")], [90.0, 500.0]], "finite"),
])
def test_servo_calibration_refuses_bad_tables_with_one_line(table, words):
    with pytest.raises(InkreachError, match=words) as info:
        ServoCalibration(motor1=table)
    assert "\n" not in str(info.value)


@pytest.mark.parametrize("tick", [1.0, 1.0 / 16.0])
def test_servo_pulses_are_whole_ticks_and_pen_pulses_follow_pen(tick):
    # a uniform quantiser errs by at most half a step (Widrow & Kollar 2008)
    s = _line_stream()
    sig = servo_pulses(s, servo_calibration_from_arm(_bare_default()), tick_us=tick)
    assert sig.pulse_us.shape == (len(s), 2)
    np.testing.assert_array_equal(sig.pulse_us / tick, np.rint(sig.pulse_us / tick))
    cal = sig.calibration
    assert np.all(sig.pen_us[s.pen == 1] == cal.pen_down_us)
    assert np.all(sig.pen_us[s.pen == 0] == cal.pen_up_us)
    exact = servo_pulses(s, cal, tick_us=None).pulse_us
    err = np.abs(exact - sig.pulse_us)
    assert err.max() <= tick / 2 + 1e-9
    assert err.max() > tick / 4        # the rounding really is to this tick


def test_default_servo_pulses_are_sixteenths_of_a_microsecond():
    # the reference firmware's 16-bit timer at 16 MHz: 62.5 ns a tick
    s = _line_stream()
    sig = servo_pulses(s, servo_calibration_from_arm(_bare_default()))
    np.testing.assert_array_equal(sig.pulse_us * 16, np.rint(sig.pulse_us * 16))
    assert np.any(sig.pulse_us != np.rint(sig.pulse_us))


def test_servo_quantised_angles_are_within_half_a_tick_of_the_command():
    s = _line_stream()
    cal = servo_calibration_from_arm(_bare_default())
    q = quantised_angles(s, servo_pulses(s, cal))
    # 2000 us over 180 deg: half a 1/16 us tick is 0.0028 deg.
    assert np.max(np.abs(np.rad2deg(q - s.q))) <= 0.5 / 16 * 180.0 / 2000.0 + 1e-9
    q_exact = quantised_angles(s, servo_pulses(s, cal, tick_us=None))
    np.testing.assert_allclose(q_exact, s.q, atol=1e-9)


def test_servo_calibration_reads_the_arm_file_table_and_survives_a_round_trip():
    text = arm_to_toml(_bare_default()) + (
        "\n[servo]\nmotor1 = [[20.0, 2400.0], [120.0, 1500.0], [220.0, 600.0]]\n"
        "pen_up_us = 1000.0\npen_down_us = 1900.0\nframe_hz = 50.0\n")
    arm = parse_arm(text)
    cal = servo_calibration_from_arm(arm)
    assert cal.pen_up_us == 1000.0 and cal.pen_down_us == 1900.0
    np.testing.assert_allclose(cal.pulse(0, [70.0]), [1950.0])
    again = servo_calibration_from_arm(parse_arm(arm_to_toml(arm)))
    assert again == cal
    # motor 2 has no table: centred on the middle of theta2's limits (-40..160 -> 60).
    assert cal.angle_range(1) == (-30.0, 150.0)


@pytest.mark.parametrize("servo, words", [
    ("wobble = 3", "unknown key wobble"),
    ("motor2 = [[0.0, 500.0]]", r"\[servo\]: servo motor2 needs at least two"),
    ("pen_up_us = -5.0", "pen_up_us must be a number greater than zero"),
    ("frame_hz = 400.0\nmotor1 = [[0.0, 500.0], [180.0, 2500.0]]", "does not fit"),
])
def test_servo_calibration_from_arm_names_the_bad_key(servo, words):
    arm = parse_arm(arm_to_toml(_bare_default()) + "\n[servo]\n" + servo + "\n")
    with pytest.raises(InkreachError, match=words):
        servo_calibration_from_arm(arm)


# --- cases found by mutation testing (tests/MUTATION.md) ---------------------

def test_servo_pulses_use_the_given_table_and_default_to_500_to_2500():
    s = stream_of_deg([[45.0, 90.0], [90.0, 135.0]])
    own = ServoCalibration(motor1=[[0.0, 1000.0], [180.0, 2000.0]],
                           motor2=[[0.0, 1000.0], [180.0, 2000.0]])
    # linear tables written out: 1000 + angle * 1000 / 180, and the common
    # practice default 500 + angle * 2000 / 180
    np.testing.assert_array_equal(servo_pulses(s, own).pulse_us, [[1250, 1500], [1500, 1750]])
    np.testing.assert_array_equal(servo_pulses(s).pulse_us, [[1000, 1500], [1500, 2000]])


def test_a_pulse_wider_than_the_frame_is_refused_for_either_motor():
    # 400 Hz frames last 2500 us: a 2600 us pulse on motor 1 alone cannot fit
    with pytest.raises(InkreachError, match="does not fit"):
        ServoCalibration(motor1=[[0.0, 500.0], [180.0, 2600.0]],
                         motor2=[[0.0, 500.0], [180.0, 1000.0]], frame_hz=400.0)


def test_an_angle_outside_the_table_names_its_motor():
    cal = ServoCalibration()
    with pytest.raises(InkreachError, match=r"extend \[servo\] motor2"):
        cal.pulse(1, [200.0])
    with pytest.raises(InkreachError, match=r"extend \[servo\] motor1"):
        cal.pulse(0, [-5.0])


def test_servo_pulses_refuse_bad_streams_and_give_whole_ticks():
    from types import SimpleNamespace
    s = stream_of_deg([[45.1, 90.0], [90.0, 135.0]])
    sig = servo_pulses(s)
    # 45.1 deg on the 500-2500 us / 0-180 deg table: 1001.111 us, to the nearest 1/16
    assert sig.pulse_us[0, 0] == 1001.125 and sig.pen_us.tolist() == [1700.0, 1700.0]
    with pytest.raises(InkreachError, match="pulse tick"):
        servo_pulses(s, tick_us=0.0)
    three = SimpleNamespace(q=np.zeros((2, 3)), pen=np.zeros(2, np.int8))
    with pytest.raises(InkreachError, match="the joint stream must hold two angles per row"):
        servo_pulses(three)
    bad = SimpleNamespace(q=np.array([[0.5, np.nan]]), pen=np.zeros(1, np.int8))
    with pytest.raises(InkreachError, match="not finite; re-plan it"):
        servo_pulses(bad)
    with pytest.raises(InkreachError, match="must rise .* strictly from pair to pair; remove "
                                            "repeated or out-of-order measurements"):
        ServoCalibration(motor1=[[0.0, 500.0], [90.0, 1500.0], [90.0, 1600.0]])


def test_servo_pulses_give_the_whole_not_finite_message():
    # Compared whole (found by mutation testing: a search for a part of it let
    # text added around it pass).
    from types import SimpleNamespace
    bad = SimpleNamespace(q=np.array([[0.5, np.inf]]), pen=np.zeros(1, np.int8))
    with pytest.raises(InkreachError) as err:
        servo_pulses(bad)
    assert str(err.value) == "the joint stream holds angles that are not finite; re-plan it"
    three = SimpleNamespace(q=np.zeros((2, 3)), pen=np.zeros(2, np.int8))
    with pytest.raises(InkreachError, match="^the joint stream must hold two angles per row$"):
        servo_pulses(three)


# --- second round of cases found by mutation testing (after 1/16 us ticks) ---

def test_a_table_of_whole_numbers_is_stored_as_floats():
    # The arm file may write [0, 500]; the calibration keeps floats, as the
    # arm file writer and the pulse arithmetic expect.
    cal = ServoCalibration(motor1=((0, 500), (180, 2500)))
    assert cal.motor1 == ((0.0, 500.0), (180.0, 2500.0))
    assert all(type(v) is float for pair in cal.motor1 for v in pair)


@pytest.mark.parametrize("pulse, refused", [(0.0, True), (-1.0, True), (0.5, False)])
def test_the_pulse_rule_is_greater_than_zero_exactly(pulse, refused):
    # The rule as its message states it: any pulse above 0 us is a pulse.
    table = ((0.0, pulse), (180.0, 2500.0))
    if refused:
        with pytest.raises(InkreachError, match="pulses must be greater than zero"):
            ServoCalibration(motor1=table)
    else:
        assert ServoCalibration(motor1=table).pulse(0, [0.0]).tolist() == [pulse]


@pytest.mark.parametrize("table", [((30.0, 500.0), (210.0, 2500.0)),
                                   ((-0.5, 1400.0), (0.5, 1600.0))])
def test_angles_within_float_noise_of_a_table_edge_take_the_edge_pulse(table):
    # Degrees from radians carry a few ulps of noise (np.rad2deg(np.deg2rad(210))
    # is 210.00000000000003), so the table edges allow 1e-9 of the larger of
    # 1 deg and the edge angles (a tolerance chosen far below any servo's
    # resolution, far above float noise); the pulse there is the edge pulse
    # exactly, never extrapolated (Press et al., Numerical Recipes, sec. 3.1).
    cal = ServoCalibration(motor1=table)
    (lo, p_lo), (hi, p_hi) = table
    tol = 1e-9 * max(1.0, abs(lo), abs(hi))
    assert cal.pulse(0, [lo - 0.8 * tol, hi + 0.8 * tol]).tolist() == [p_lo, p_hi]
    for x in (lo - 2.0 * tol, hi + 2.0 * tol):
        with pytest.raises(InkreachError, match="outside its servo table"):
            cal.pulse(0, [x])
