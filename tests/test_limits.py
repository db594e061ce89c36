"""Hostile values: every one is refused with one line, before the work it would cause.

Each case here is a value a user can type (on the command line, in an arm
file or on the page) that once became an internal error, a multi-gigabyte
allocation or minutes of work. The "before the work" part is checked without
timing: the planner's progress callback shows which stages had started when
the refusal came.
"""

import io
import json
import re
import warnings

import numpy as np
import pytest
from PIL import Image, ImageDraw

import inkreach
from inkreach.arms.armfile import builtin_arm_text
from inkreach.cli import main
from inkreach.errors import InkreachError


def _limits():
    # imported inside the tests, so that this file also runs (and fails)
    # against a planner without the module
    from inkreach import limits
    return limits


@pytest.fixture(scope="module")
def pic(tmp_path_factory):
    path = tmp_path_factory.mktemp("pic") / "pic.png"
    im = Image.new("L", (200, 160), 255)
    ImageDraw.Draw(im).ellipse([40, 30, 160, 130], outline=0, width=4)
    im.save(path)
    return path


def _run(args, capsys):
    try:
        code = main(args)
    except SystemExit as e:  # argparse refuses before anything runs
        code = e.code
    cap = capsys.readouterr()
    return code, cap.err, cap.out


def _clean_refusal(code, err, out_dir, *words):
    lines = [ln for ln in err.splitlines() if ln.strip()]
    assert code == 2, err
    assert len(lines) == 1, err
    assert "internal error" not in err and "Traceback" not in err
    assert "load_image" not in err and "pen_px" not in err
    assert len(err) < 400, err  # never hundreds of digits echoed back
    for w in words:
        assert w.lower() in err.lower(), err
    assert not out_dir.exists()


def _arm(tmp_path, text, name="arm.toml"):
    p = tmp_path / name
    p.write_text(text)
    return p


_DEFAULT = builtin_arm_text("default")


@pytest.mark.parametrize("args,words", [
    (["--period", "1e308"], ["period", "far too large", "0.001 to 1 s"]),
    (["--period", "1" + "0" * 300], ["period", "far too large"]),
    (["--set", "detail=1" + "0" * 300], ["detail"]),
    (["--style", "stipple", "--set", "mode=" + "x" * 300], ["mode"]),
    (["--set", "rotations=abc"], ["rotations"]),
    (["--set", "rotations=1e308"], ["rotations"]),
    (["--style", "hatch", "--set", "spacing=1e-9"], ["spacing"]),
    (["--style", "hatch", "--set", "spacing=0.01"], ["spacing"]),
    (["--style", "hatch", "--set", "spacing=0.05"], ["spacing"]),
    (["--set", "joint_order=abc"], ["joint_order", "true or false"]),
    (["--set", "fidelity=abc"], ["fidelity", "true or false"]),
    (["--set", "joint_order=yes"], ["joint_order", "true or false"]),
    (["--set", "size=50", "--size", "40"], ["size", "once"]),
    (["--margin", "10"], ["margin", "paper"]),
    (["--tip-speed", "0.1"], ["tip_speed", "rows"]),
    (["--style", "stipple", "--set", "dots=200000", "--set", "iterations=500",
      "--set", "max_side=2400"], ["dots", "iterations"]),
    (["--style", "stipple", "--set", "dots=200000"], ["dots"]),
    (["--budget", "rows=abc"], ["budget"]),
])
def test_hostile_options_are_refused_in_one_line(args, words, pic, tmp_path, capsys):
    out = tmp_path / "out"
    code, err, _ = _run(["plan", str(pic), "--out", str(out), "-q"] + args, capsys)
    _clean_refusal(code, err, out, *words)


@pytest.mark.parametrize("old,new,words", [
    ("max_speed_deg_s = 180.0", "max_speed_deg_s = 1e-9", ["max_speed_deg_s"]),
    ("max_accel_deg_s2 = 1500.0", "max_accel_deg_s2 = 1e-9", ["max_accel_deg_s2"]),
    ("lift_s = 0.12", "lift_s = 1e6", ["lift_s", "far too large"]),
    ("lift_s = 0.12", "lift_s = 1e308", ["lift_s", "far too large"]),
    ("lift_s = 0.12", "lift_s = 100", ["lift_s"]),
    ('name = "desk five-bar"', 'name = "desk\\nfive-bar"', ["name", "one line"]),
    ("[home]", "[stepper]\nzero_deg = " + "[" * 5000 + "]" * 5000 + "\n[home]",
     ["deeply"]),
    ("[home]", "[stepper]\ngear_ratio = 1e300\n[home]", ["gear_ratio"]),
    ("[home]", "[stepper]\nsteps_per_rev = 1\nmicrosteps = 1\n[home]", ["mm", "microsteps"]),
])
def test_hostile_arm_files_are_refused_in_one_line(old, new, words, pic, tmp_path, capsys):
    assert old in _DEFAULT
    arm = _arm(tmp_path, _DEFAULT.replace(old, new))
    out = tmp_path / "out"
    with warnings.catch_warnings():
        warnings.simplefilter("error", RuntimeWarning)  # no overflow warning either
        code, err, _ = _run(["plan", str(pic), "--arm", str(arm), "--out", str(out), "-q",
                             "--signals", "both"], capsys)
    _clean_refusal(code, err, out, *words)


def test_a_serial_arm_with_kilometre_links_is_refused(pic, tmp_path, capsys):
    text = re.sub(r"\b(upper|lower) = [0-9.]+", r"\1 = 1e6", builtin_arm_text("serial"))
    out = tmp_path / "out"
    code, err, _ = _run(["plan", str(pic), "--arm", str(_arm(tmp_path, text)), "--out",
                         str(out), "-q"], capsys)
    _clean_refusal(code, err, out, "upper", "10000 mm")


def _stages_until_refused(pic, arm=None, **options):
    seen = []
    with pytest.raises(InkreachError) as exc:
        inkreach.plan(pic, arm=arm, progress=lambda s, d, t: seen.append(s), **options)
    return seen, exc.value


@pytest.mark.parametrize("options,last", [
    # refused before the picture is even read
    (dict(period=1e308), None),
    (dict(style="stipple", dots=200000, iterations=500, max_side=2400), None),
    (dict(style="stipple", dots=60000), "arm"),
    # refused once the picture's working size is known, before tracing
    (dict(style="hatch", spacing=0.6, layers=8, budget={"pixels": 100_000}), "load"),
    # refused once the strokes are placed, before they are ordered and timed
    (dict(tip_speed=0.1), "place"),
])
def test_work_above_the_budget_is_refused_before_it_starts(options, last, pic):
    seen, exc = _stages_until_refused(pic, **options)
    assert (seen[-1] if seen else None) == last, seen
    if last is not None:
        assert isinstance(exc, _limits().BudgetError)


def test_a_slow_arm_is_refused_before_its_motion_is_timed(tmp_path, capsys):
    from inkreach.cli.demo import emblem
    arm = _DEFAULT.replace("max_speed_deg_s = 180.0", "max_speed_deg_s = 0.1")
    seen, exc = _stages_until_refused(emblem(400), arm=arm)
    assert isinstance(exc, _limits().BudgetError) and exc.key == "rows"
    assert seen[-1] == "place"
    assert "max_speed_deg_s" in str(exc)


def test_a_larger_budget_lets_the_same_plan_through(pic):
    # the budget is a limit, not a fixed refusal: raised, the plan runs
    seen, exc = _stages_until_refused(pic, tip_speed=0.1)
    need = exc.needed
    p = inkreach.plan(pic, tip_speed=1.0, fidelity=False,
                      budget=_limits().Budget(rows=need * 2))
    assert p.stats["rows"] <= need * 2


def test_the_row_estimate_is_a_lower_bound_of_the_real_stream(pic):
    # the estimate may refuse only plans that really are above the budget
    for arm in ("default", "serial"):
        p = inkreach.plan(pic, arm=arm, fidelity=False)
        est = _limits().estimate_seconds(p.strokes, p.arm, p.stream.q[0], p.stream.period)
        assert est["total"] <= p.stats["estimated_s"] + p.stream.period
        # and not a useless one: within a factor of 20 of the truth (our own bound)
        assert est["total"] > p.stats["estimated_s"] / 20


def test_rest_to_rest_bound_matches_the_bang_bang_formula():
    # a joint that starts and ends at rest under |a| <= A covers at most A T^2 / 4
    # in time T (bang-bang, Lynch & Park, Modern Robotics, 2017, sec. 9.2): a
    # 90 degree move at A = 1 rad/s^2 and unlimited speed takes 2 sqrt(d / A)
    from inkreach.limits import _move_time
    d = np.pi / 2
    assert _move_time(np.array([d, 0.0]), 1e9, 1.0) == pytest.approx(2 * np.sqrt(d))
    assert _move_time(np.array([d, 0.0]), 1.0, 1e9) == pytest.approx(d)


def test_set_for_a_key_with_a_flag_is_honoured(pic, tmp_path, capsys):
    out = tmp_path / "out"
    code, err, text = _run(["plan", str(pic), "--out", str(out), "--format", "json",
                            "--set", "size=50", "--set", "fidelity=false"], capsys)
    assert code == 0, err
    stats = json.loads(text)["stats"]
    assert max(stats["drawing_mm"]) == pytest.approx(50, abs=0.05)


def test_signals_none_writes_no_signal_files(pic, tmp_path, capsys):
    out = tmp_path / "out"
    code, err, _ = _run(["plan", str(pic), "--out", str(out), "-q", "--signals", "none",
                         "--set", "fidelity=false"], capsys)
    assert code == 0, err
    names = {p.name for p in out.iterdir()}
    assert "joints.csv" in names and not names & {"servo.csv", "stepper.csv"}


def test_a_very_thin_picture_is_refused_in_the_users_terms(tmp_path, capsys):
    path = tmp_path / "thin.png"
    a = np.full((8, 20000), 255, np.uint8)
    a[2:6, 100:19900] = 0
    Image.fromarray(a).save(path)
    out = tmp_path / "out"
    code, err, _ = _run(["plan", str(path), "--out", str(out), "-q"], capsys)
    _clean_refusal(code, err, out, "20000x8")


def test_a_budget_refusal_on_the_command_line_says_how_to_raise_it(pic, tmp_path, capsys):
    out = tmp_path / "out"
    code, err, _ = _run(["plan", str(pic), "--out", str(out), "-q", "--tip-speed", "0.1"],
                        capsys)
    assert code == 2 and "--budget rows=" in err


def test_check_rows_names_lift_s_when_pen_lifts_dominate():
    arm = inkreach.load_arm("default")
    strokes = [np.array([[0.0, 180.0 + i * 0.1]]) for i in range(2000)]
    lim = _limits()
    with pytest.raises(lim.BudgetError, match="lift_s"):
        lim.check_rows(strokes, arm, arm.home(), 0.02, budget=lim.Budget(rows=1000))


def test_stalled_plan_message_says_what_to_change():
    from inkreach.limits import in_user_terms
    msg = in_user_terms("row 12 strays 0.2 mm from stroke 3; plan the motion again", 0.02, 0.05)
    assert "plan the motion again" not in msg and "shorter period" in msg


def test_web_form_booleans_are_true_or_false_only():
    from inkreach.web import parse_options
    assert parse_options([("joint_order", "yes")]) == {"joint_order": "yes"}
    with pytest.raises(InkreachError, match="true or false"):
        inkreach.plan(io.BytesIO(b""), joint_order="yes")


def test_coarse_stepper_signals_are_warned_with_a_number_and_a_fix(pic, tmp_path, capsys):
    # 200 full steps x 4 microsteps: 0.45 degree steps, rounding errs by up
    # to 0.225 degree (half a step, Widrow & Kollar 2008), about 1 mm at the pen
    arm = _arm(tmp_path, _DEFAULT.replace("[home]", "[stepper]\nsteps_per_rev = 200\n"
                                                    "microsteps = 4\n[home]"))
    out = tmp_path / "out"
    code, err, _ = _run(["plan", str(pic), "--arm", str(arm), "--out", str(out),
                         "--signals", "stepper", "--set", "fidelity=false", "--format",
                         "json"], capsys)
    assert code == 0, err
    assert "warning" in err and "stepper" in err and "microsteps" in err
    assert re.search(r"\d+(\.\d+)? mm", err)
    stats = json.loads((out / "plan.json").read_text())["stats"]
    assert stats["warnings"] and 0.25 < stats["signal_rounding_mm"] <= 2.0
