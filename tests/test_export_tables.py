import csv
import io
import json
import shutil
import subprocess

import numpy as np
import pytest

from inkreach.arms import default_arm, parse_arm
from inkreach.errors import InkreachError
from inkreach.export import (SAFETY_TEXT, firmware_header, joints_csv, plan_json, servo_csv,
                             stepper_csv)
from inkreach.motion import JointStream
from inkreach.signals import (servo_calibration_from_arm, servo_pulses, stepper_steps,
                              StepperConfig)

from _streams import line_stream


def _line_stream(n=50, arm=None):
    """A short line on the default arm, built by hand from its IK; pen up for 5 rows."""
    return line_stream(default_arm() if arm is None else arm, n, pen=np.arange(n) >= 5)


STATS = {"strokes": 2, "pen_lifts": 1, "pen_down_mm": 71.5, "pen_up_mm": 12.25,
         "estimated_s": 3.5, "min_conditioning": 0.41}


def test_joints_csv_parses_with_csv_and_loadtxt_and_has_one_row_per_sample():
    # References: Python's csv module and numpy.loadtxt as independent readers.
    s = _line_stream()
    text = joints_csv(s)
    assert text.splitlines()[0] == "t_s,theta1_deg,theta2_deg,pen,x_mm,y_mm"
    rows = list(csv.reader(io.StringIO(text)))
    assert rows[0] == ["t_s", "theta1_deg", "theta2_deg", "pen", "x_mm", "y_mm"]
    assert len(rows) == len(s) + 1 and all(len(r) == 6 for r in rows)
    a = np.loadtxt(io.StringIO(text), delimiter=",", skiprows=1)
    assert a.shape == (len(s), 6)
    np.testing.assert_allclose(a[:, 0], s.t, atol=5e-5)
    np.testing.assert_allclose(a[:, 1:3], np.rad2deg(s.q), atol=5e-7)
    assert a[:, 3].tolist() == s.pen.tolist()
    np.testing.assert_allclose(a[:, 4:6], s.xy, atol=5e-5)
    assert {r[3] for r in rows[1:]} == {"0", "1"}


def test_servo_and_stepper_csv_hold_the_signals_row_for_row():
    s = _line_stream()
    sv = servo_pulses(s, servo_calibration_from_arm(default_arm()))
    st = stepper_steps(s, StepperConfig())
    a = np.loadtxt(io.StringIO(servo_csv(s, sv)), delimiter=",", skiprows=1)
    assert servo_csv(s, sv).splitlines()[0] == "t_s,motor1_us,motor2_us,pen_us"
    assert a[:, 1:3].tolist() == sv.pulse_us.tolist() and a[:, 3].tolist() == sv.pen_us.tolist()
    b = np.loadtxt(io.StringIO(stepper_csv(s, st)), delimiter=",", skiprows=1)
    assert stepper_csv(s, st).splitlines()[0] == "t_s,motor1_steps,motor2_steps,pen"
    assert b[:, 1:3].astype(np.int64).tolist() == st.steps.tolist()


def test_plan_json_has_the_design_fields_and_is_byte_identical_for_equal_inputs():
    # Reference: Python's json module (RFC 8259 JSON) parses the text.
    strokes = [np.array([[0.0, 150.0], [10.123456789, 160.0]]), np.array([[5.0, 170.0]])]
    M = [[0.25, 0.0, -20.0], [0.0, -0.25, 200.0]]
    extra = {"arm": default_arm(), "style": "outline", "options": {"size": 100.0, "b": [1, 2]}}
    text = plan_json(strokes, M, STATS, extra)
    again = plan_json([s.copy() for s in strokes], np.array(M), dict(reversed(STATS.items())),
                      {"options": {"b": [1, 2], "size": 100.0}, "style": "outline",
                       "arm": default_arm()})
    assert text.encode() == again.encode()
    d = json.loads(text)
    assert d["strokes"] == [[[0.0, 150.0], [10.1235, 160.0]], [[5.0, 170.0]]]
    assert d["image_to_arm"] == M
    for k in ("strokes", "pen_lifts", "pen_down_mm", "pen_up_mm", "estimated_s",
              "min_conditioning"):
        assert d["stats"][k] == STATS[k]
    assert d["safety"] == SAFETY_TEXT
    assert d["arm"]["geometry"]["left_upper"] == default_arm().left_upper
    assert parse_arm(d["arm"]).left_motor == default_arm().left_motor
    assert d["units"]["length"] == "mm" and d["style"] == "outline"


def test_plan_json_accepts_the_arm_as_toml_text_and_writes_non_finite_figures_as_null():
    from inkreach.arms import arm_to_toml
    d = json.loads(plan_json([], np.eye(2, 3), {**STATS, "min_conditioning": float("nan")},
                             {"arm": arm_to_toml(default_arm())}))
    assert d["stats"]["min_conditioning"] is None and d["strokes"] == []
    assert d["arm"]["name"] == default_arm().name


@pytest.mark.parametrize("stats, M, words", [
    ({"strokes": 1}, np.eye(2, 3), "missing pen_lifts"),
    (STATS, np.eye(3), "2 x 3"),
])
def test_plan_json_refuses_missing_figures_and_a_bad_matrix(stats, M, words):
    with pytest.raises(InkreachError, match=words):
        plan_json([], M, stats)


_PROGRAM = r"""
#include <stdio.h>
#include "plan.h"
int main(void) {
    unsigned long on = 0, k;
    for (k = 0; k < INKREACH_PLAN_ROWS; ++k) on += INKREACH_PLAN_PEN(k);
    printf("%lu %lu %u %u %ld %ld %lu\n", (unsigned long)INKREACH_PLAN_ROWS,
           (unsigned long)INKREACH_PLAN_PERIOD_US,
           (unsigned)inkreach_plan_pulse_ticks[0][0], (unsigned)inkreach_plan_pulse_ticks[0][1],
           (long)inkreach_plan_steps[INKREACH_PLAN_ROWS - 1][0],
           (long)inkreach_plan_steps[INKREACH_PLAN_ROWS - 1][1], on);
    return 0;
}
"""


@pytest.mark.skipif(shutil.which("gcc") is None, reason="gcc is not installed")
def test_firmware_header_compiles_with_gcc_and_holds_the_right_values(tmp_path):
    # Reference: the GNU C compiler (gcc, -std=c99 -Wall -Werror) reads the header,
    # and the compiled program prints the values back.
    s = _line_stream(n=37)
    sv = servo_pulses(s, servo_calibration_from_arm(default_arm()))
    st = stepper_steps(s, StepperConfig(zero_deg=(90.0, 90.0), direction=(1, -1)))
    header = firmware_header(s, servo_signals=sv, stepper_signals=st)
    assert "Caution" in header.split("#ifndef")[0]
    (tmp_path / "plan.h").write_text(header)
    (tmp_path / "main.c").write_text(_PROGRAM)
    exe = tmp_path / "main"
    subprocess.run(["gcc", "-std=c99", "-Wall", "-Werror", "-o", str(exe),
                    str(tmp_path / "main.c")], check=True, cwd=tmp_path, capture_output=True)
    out = subprocess.run([str(exe)], check=True, capture_output=True, text=True).stdout.split()
    # pulses go in as 1/16 us ticks
    assert out == [str(len(s)), "10000", str(int(sv.pulse_us[0, 0] * 16)),
                   str(int(sv.pulse_us[0, 1] * 16)),
                   str(st.steps[-1, 0]), str(st.steps[-1, 1]), str(int(s.pen.sum()))]


@pytest.mark.skipif(shutil.which("gcc") is None, reason="gcc is not installed")
def test_firmware_header_without_signals_holds_angles_and_compiles(tmp_path):
    # Reference: gcc compiles it; the angles come back in millidegrees.
    s = _line_stream(n=9)
    (tmp_path / "p.h").write_text(firmware_header(s, name="card"))
    (tmp_path / "m.c").write_text('#include <stdio.h>\n#include "p.h"\nint main(void){'
                                  'printf("%ld\\n",(long)card_angle_mdeg[8][1]);return 0;}\n')
    subprocess.run(["gcc", "-std=c99", "-Wall", "-Werror", "-o", "m", "m.c"], check=True,
                   cwd=tmp_path, capture_output=True)
    out = subprocess.run([str(tmp_path / "m")], check=True, capture_output=True, text=True)
    assert int(out.stdout) == int(np.rint(np.rad2deg(s.q[8, 1]) * 1000))


def test_firmware_header_refuses_a_bad_name_and_an_empty_stream():
    s = _line_stream(n=3)
    with pytest.raises(InkreachError, match="C identifier"):
        firmware_header(s, name="9 lives")
    empty = JointStream(t=np.zeros(0), q=np.zeros((0, 2)), pen=np.zeros(0, np.int8),
                        xy=np.zeros((0, 2)), period=0.01)
    with pytest.raises(InkreachError, match="empty"):
        firmware_header(empty)


# --- vectorised formatting gives the same text as Python's % formatting ---

from hypothesis import given, settings, strategies as st  # noqa: E402
from hypothesis.extra import numpy as hnp  # noqa: E402

from inkreach.export._text import number_matrix, scaled  # noqa: E402
from inkreach.export.firmware import _bytes, _rows  # noqa: E402
from inkreach.export.planfile import _strokes_text  # noqa: E402
from inkreach.export.tables import _table, _table_slow  # noqa: E402

_FLOATS = hnp.arrays(float, st.integers(1, 40),
                     elements=st.floats(-1e6, 1e6, allow_nan=False, width=64)
                     | st.sampled_from([0.0, -0.0, 5e-5, -5e-5, 2.5e-7, -1e-9, 0.5, 1.00005]))


@settings(max_examples=60, deadline=None)
@given(_FLOATS, st.sampled_from(["%.3f", "%.4f", "%.6f"]))
def test_table_rows_match_python_percent_formatting_of_rounded_values(v, fmt):
    # Reference: Python's printf-style "%.Nf" (correctly rounded decimal text)
    # applied to numpy.round(v, N), the formatting used before vectorising.
    ints = np.rint(v).astype(np.int64)
    cols = [v, ints, v[::-1].copy()]
    formats = [fmt, "%d", fmt]
    d = int(fmt[2:-1])
    want = "".join(f"{fmt % (float(np.round(a, d)) + 0.0)},{int(b)},"
                   f"{fmt % (float(np.round(c, d)) + 0.0)}\n" for a, b, c in zip(*cols))
    assert _table("h", cols, formats) == "h\n" + want
    assert _table_slow(cols, formats) == want  # the fallback for values beyond 2**52


def test_table_values_beyond_exact_scaled_integers_fall_back_to_percent_formatting():
    # Reference: Python's "%.6f" % 1e12 is "1000000000000.000000"; 1e12 * 10**6
    # is beyond 2**52, where the scaled integers stop being exact.
    assert _table("h", [np.array([1e12]), np.array([3])], ["%.6f", "%d"]) == \
        "h\n1000000000000.000000,3\n"


@settings(max_examples=60, deadline=None)
@given(_FLOATS)
def test_shortest_number_text_matches_repr_of_values_rounded_to_four_places(v):
    # Reference: Python's float repr (the shortest text that reads back the
    # same double), which json.dumps writes.
    r = np.round(v, 4) + 0.0
    m = number_matrix(scaled(r, 4), 4, strip=True)
    assert [bytes(row[row != 0]).decode() for row in m] == [repr(float(x)) for x in r]


def _percent_rows(v, per_line=8):
    # The format of the C initialisers written with Python's % operator.
    items = ["{%d, %d}" % (a, b) for a, b in v.tolist()]
    return ",\n".join("  " + ", ".join(items[i:i + per_line])
                      for i in range(0, len(items), per_line))


@settings(max_examples=40, deadline=None)
@given(hnp.arrays(np.int64, st.tuples(st.integers(1, 30), st.just(2)),
                  elements=st.integers(-2**31 + 1, 2**31 - 1)))
def test_c_initialiser_rows_match_python_formatting(v):
    # Reference: Python's "%d" formatting; gcc reads the result in the tests above.
    assert _rows(v) == _percent_rows(v)
    b = (np.abs(v[:, 0]) % 256)
    lines = [", ".join("0x%02x" % x for x in b[i:i + 16]) for i in range(0, len(b), 16)]
    assert _bytes(b) == ",\n".join("  " + s for s in lines)


def test_plan_json_strokes_text_matches_json_dumps_of_the_rounded_points():
    # Reference: Python's json module writes each rounded stroke.
    rng = np.random.default_rng(7)
    strokes = [rng.normal(0, 80, (int(k), 2)) for k in rng.integers(1, 12, 40)]
    want = "[\n    " + ",\n    ".join(
        json.dumps((np.round(s, 4) + 0.0).tolist(), separators=(", ", ": ")) for s in strokes
    ) + "\n  ]"
    assert _strokes_text(strokes) == want
    assert _strokes_text([]) == "[]"
