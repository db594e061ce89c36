"""The saved-plan check: a clean plan passes, each broken promise is named.

Every test starts from a real plan written by ``inkreach.plan(...).save``
and edits plan.json or joints.csv to break exactly one promise, by a little
more than the slack the printed decimals allow (angles 1e-6 deg, x/y and
times 1e-4): just past each limit, never far past it, so a check that
loosened or dropped one joint's test would let it through.
"""

import json
import shutil

import numpy as np
import pytest
from PIL import Image, ImageDraw

import inkreach
from inkreach.check import PROMISES, check_plan
from inkreach.check import _kinematics as kin
from inkreach.cli import main

_FMT = ("%.4f", "%.6f", "%.6f", "%d", "%.4f", "%.4f")   # joints.csv as the exporter writes it
_HEADER = "t_s,theta1_deg,theta2_deg,pen,x_mm,y_mm"


@pytest.fixture(scope="module")
def picture(tmp_path_factory):
    im = Image.new("L", (240, 240), 255)
    d = ImageDraw.Draw(im)
    d.rectangle([40, 40, 200, 200], outline=0, width=6)
    d.line([60, 180, 180, 60], fill=0, width=6)
    d.ellipse([90, 90, 150, 150], outline=0, width=6)
    pic = tmp_path_factory.mktemp("pic") / "pic.png"
    im.save(pic)
    return pic


def _save_plan(pic, out, **options):
    inkreach.plan(str(pic), style="centerline", fidelity=False, **options).save(out)
    meta = json.loads((out / "plan.json").read_text())
    # The tip-speed promise is tested on its own below (with the limit set
    # around the measured speed); the other tests leave it unrecorded.
    meta["options"]["tip_speed"] = None
    (out / "plan.json").write_text(json.dumps(meta))
    return out


@pytest.fixture(scope="module")
def saved(tmp_path_factory, picture):
    return _save_plan(picture, tmp_path_factory.mktemp("plan"))


@pytest.fixture(scope="module")
def saved_plain(tmp_path_factory, picture):
    """The same picture planned with plain rows on sharp vertices (no corner blend)."""
    return _save_plan(picture, tmp_path_factory.mktemp("plain"), corner_blend=False)


def _copy(saved, tmp_path):
    dst = tmp_path / "plan"
    shutil.copytree(saved, dst)
    return dst


def _rows(folder):
    return np.loadtxt(folder / "joints.csv", delimiter=",", skiprows=1)


def _write_rows(folder, rows):
    np.savetxt(folder / "joints.csv", rows, fmt=_FMT, delimiter=",", header=_HEADER,
               comments="")


def _meta(folder):
    return json.loads((folder / "plan.json").read_text())


def _write_meta(folder, meta):
    (folder / "plan.json").write_text(json.dumps(meta))


def _mirror(folder):
    """Mirror the plan in x = 0: the symmetric desk arm's joints swap roles.

    With motors at (+-40, 0) and equal legs, the pen at (-x, y) is reached
    by (180 - theta2, 180 - theta1) deg, so theta1's worst values become
    theta2's and the second joint's checks are exercised with real data.
    """
    r = _rows(folder)
    r[:, 1], r[:, 2] = 180.0 - r[:, 2], 180.0 - r[:, 1].copy()
    r[:, 4] = -r[:, 4]
    _write_rows(folder, r)
    m = _meta(folder)
    lo1, hi1 = m["arm"]["limits"]["theta1_deg"]
    lo2, hi2 = m["arm"]["limits"]["theta2_deg"]
    m["arm"]["limits"]["theta1_deg"] = [180.0 - hi2, 180.0 - lo2]
    m["arm"]["limits"]["theta2_deg"] = [180.0 - hi1, 180.0 - lo1]
    m["strokes"] = [[[-x, y] for x, y in s] for s in m["strokes"]]
    _write_meta(folder, m)


def _only(result, promise):
    assert not result.ok
    assert result.broken == (promise,), (result.broken, result.problem)
    assert result.problem.startswith(promise + ":")
    assert "\n" not in result.problem


def test_the_clean_plan_and_its_mirror_pass(saved, tmp_path):
    r = check_plan(saved)
    assert r.ok and r.problem is None and r.broken == (), r.problem
    assert r.figures["rows"] == len(_rows(saved))
    assert "not checked" in r.figures["tip speed"]
    p = _copy(saved, tmp_path)
    _mirror(p)
    assert check_plan(p).ok, check_plan(p).problem


def test_own_kinematics_match_hand_worked_postures():
    # Worked by hand from the README conventions: motors (+-40, 0), uppers
    # 100, lowers 150 at (120, 60) deg put the elbows at (-+90, 86.6025) and
    # the pen at (0, 86.6025 + sqrt(150^2 - 90^2)) = (0, 206.6025).
    five = {"kind": "five-bar", "geometry": dict(left_motor=[-40, 0], right_motor=[40, 0],
                                                 left_upper=100, right_upper=100,
                                                 left_lower=150, right_lower=150,
                                                 pen_extension=0.0)}
    np.testing.assert_allclose(kin.fk(five, np.radians([[120.0, 60.0]])),
                               [[0.0, 50 * 3 ** 0.5 + 120.0]], atol=1e-9)
    # Serial (Craig 2005, sec. 3.6): (0, 90) deg with links 150, 110 -> (150, 110).
    ser = {"kind": "serial", "geometry": dict(shoulder=[0, 0], upper=150, lower=110)}
    np.testing.assert_allclose(kin.fk(ser, np.radians([[0.0, 90.0]])), [[150.0, 110.0]],
                               atol=1e-9)
    # Conditioning of the serial arm at (0, 90): J = [[-110, -110], [150, 0]];
    # its singular values by hand (eigenvalues of J^T J) give the ratio.
    ev = np.linalg.eigvalsh(np.array([[-110.0, -110.0], [150.0, 0.0]]).T
                            @ np.array([[-110.0, -110.0], [150.0, 0.0]]))
    c, _ = kin.conditioning(ser, np.radians([[0.0, 90.0]]))
    np.testing.assert_allclose(c, np.sqrt(ev[0] / ev[1]), rtol=1e-7)


def test_a_different_arm_is_refused(saved, tmp_path):
    p = _copy(saved, tmp_path)
    arm_file = tmp_path / "arm.toml"
    from inkreach.arms import arm_to_toml, parse_arm
    text = arm_to_toml(parse_arm(_meta(p)["arm"])).replace("width_mm = 0.5", "width_mm = 0.6")
    arm_file.write_text(text)
    _only(check_plan(p, arm=str(arm_file)), "arm")
    assert "pen.width_mm" in check_plan(p, arm=str(arm_file)).problem


def test_a_row_off_the_fixed_period_is_refused(saved, tmp_path):
    p = _copy(saved, tmp_path)
    r = _rows(p)
    r[300, 0] += 2e-4          # two printed units: past the 5e-5 s rounding slack
    _write_rows(p, r)
    _only(res := check_plan(p), "period")
    assert "row 302 of joints.csv" in res.problem


def test_a_pen_value_other_than_zero_or_one_is_refused(saved, tmp_path):
    p = _copy(saved, tmp_path)
    r = _rows(p)
    r[0, 3] = 2                # row 0 is the rest posture, pen lifted
    _write_rows(p, r)
    _only(check_plan(p), "pen")


@pytest.mark.parametrize("joint", [0, 1])
@pytest.mark.parametrize("side", ["lower", "upper"])
def test_each_joint_just_past_each_limit_is_refused(saved, tmp_path, joint, side):
    p = _copy(saved, tmp_path)
    r = _rows(p)
    m = _meta(p)
    key = ("theta1_deg", "theta2_deg")[joint]
    lo, hi = m["arm"]["limits"][key]
    # 1e-3 deg past the stream's extreme: 2000 times the printed rounding.
    if side == "lower":
        lo = float(r[:, 1 + joint].min()) + 1e-3
    else:
        hi = float(r[:, 1 + joint].max()) - 1e-3
    m["arm"]["limits"][key] = [lo, hi]
    if "home" in m["arm"]:
        del m["arm"]["home"]   # the rest posture may now sit outside; not the point here
    _write_meta(p, m)
    res = check_plan(p)
    _only(res, "joint limits")
    assert f"theta{joint + 1} = " in res.problem and side in res.problem


def test_x_y_that_is_not_the_forward_kinematics_is_refused(saved, tmp_path):
    p = _copy(saved, tmp_path)
    r = _rows(p)
    r[0, 4] += 3e-4            # pen-up row; slack is about 7e-5 mm
    _write_rows(p, r)
    _only(check_plan(p), "kinematics")


def test_conditioning_just_below_the_floor_is_refused(saved, tmp_path):
    p = _copy(saved, tmp_path)
    c, _ = kin.conditioning(_meta(p)["arm"], np.radians(_rows(p)[:, 1:3]))
    m = _meta(p)
    m["arm"]["limits"]["min_conditioning"] = float(c.min()) + 1e-4   # 1e-4 below the floor
    _write_meta(p, m)
    _only(res := check_plan(p), "conditioning")
    # and a floor 1e-4 under the worst row passes (the check is not simply stricter)
    m["arm"]["limits"]["min_conditioning"] = float(c.min()) - 1e-4
    _write_meta(p, m)
    assert check_plan(p).ok, check_plan(p).problem
    assert "below the floor" in res.problem


@pytest.mark.parametrize("mirror", [False, True])
def test_speed_just_past_the_limit_is_refused(saved, tmp_path, mirror):
    p = _copy(saved, tmp_path)
    if mirror:
        _mirror(p)
    q = _rows(p)[:, 1:3]
    worst = np.abs(np.diff(q, axis=0)).max(axis=0) / 0.02
    j = int(np.argmax(worst))
    assert worst[j] - worst[1 - j] > 1.0     # only joint j is past the new limit
    m = _meta(p)
    m["arm"]["limits"]["max_speed_deg_s"] = float(worst[j]) - 0.05   # slack: 5e-5 deg/s
    _write_meta(p, m)
    res = check_plan(p)
    _only(res, "speed")
    assert f"theta{j + 1} speed" in res.problem


@pytest.mark.parametrize("j", [0, 1])
def test_acceleration_just_past_the_limit_is_refused(saved, tmp_path, j):
    # Push one joint of one resting pen-up row sideways by delta: its second
    # difference becomes 2 delta / T^2 there (delta / T^2 beside it), so the
    # limit is passed by 0.1 % on that joint alone, at that row alone.
    p = _copy(saved, tmp_path)
    m = _meta(p)
    r = _rows(p)
    amax = m["arm"]["limits"]["max_accel_deg_s2"]
    d2 = np.abs(np.diff(r[:, 1:3], n=2, axis=0)).max(axis=1)
    still = (d2[:-2] < 1e-9) & (d2[1:-1] < 1e-9) & (d2[2:] < 1e-9) & (r[2:-2, 3] == 0)
    k = int(np.argmax(still)) + 2            # a row at rest, pen up, rest around it
    assert still.any()
    r[k, 1 + j] += 1.001 * amax * 0.02 ** 2 / 2
    r[:, 4:6] = kin.fk(m["arm"], np.radians(r[:, 1:3]))
    _write_rows(p, r)
    res = check_plan(p)
    _only(res, "acceleration")
    assert f"theta{j + 1} acceleration" in res.problem
    # the offending second difference is centred on the pushed row
    assert any(f"t = {(k + i) * 0.02:.4f} s" in res.problem for i in (-1, 0, 1)), res.problem


def test_tip_speed_just_past_the_recorded_limit_is_refused(saved, tmp_path):
    p = _copy(saved, tmp_path)
    m = _meta(p)
    r = _rows(p)
    x = kin.fk(m["arm"], np.radians(r[:, 1:3]))
    down = (r[:-1, 3] == 1) & (r[1:, 3] == 1)
    worst = float((np.hypot(*np.diff(x, axis=0).T) / 0.02)[down].max())
    m["options"]["tip_speed"] = worst - 1e-3
    _write_meta(p, m)
    _only(check_plan(p), "tip speed")
    m["options"]["tip_speed"] = worst + 1e-3
    _write_meta(p, m)
    res = check_plan(p)
    assert res.ok, res.problem
    assert "limit" in res.figures["tip speed"]


def _shift_end(stroke, at_start, by):
    s = np.asarray(stroke, float)
    if at_start:
        u = s[0] - s[1]
        s[0] = s[0] + by * u / np.hypot(*u)
    else:
        u = s[-1] - s[-2]
        s[-1] = s[-1] + by * u / np.hypot(*u)
    return s.round(4).tolist()


@pytest.mark.parametrize("at_start,words", [(False, "lifts"), (True, "touches down")])
def test_a_stroke_end_moved_a_little_is_refused(saved, tmp_path, at_start, words):
    # 0.01 mm along the stroke's own direction: every row stays on the
    # stroke and every stroke point near the drawn path; only the exact
    # touch-down or lift at the end is broken.
    p = _copy(saved, tmp_path)
    m = _meta(p)
    m["strokes"][0] = _shift_end(m["strokes"][0], at_start, 0.01)
    _write_meta(p, m)
    res = check_plan(p)
    _only(res, "strokes")
    assert words in res.problem and "stroke 0" in res.problem


def test_strokes_in_the_wrong_order_or_direction_are_refused(saved, tmp_path):
    p = _copy(saved, tmp_path)
    m = _meta(p)
    assert len(m["strokes"]) >= 2
    m["strokes"] = m["strokes"][::-1]
    _write_meta(p, m)
    _only(check_plan(p), "strokes")
    m["strokes"] = [s[::-1] for s in m["strokes"][::-1]]
    _write_meta(p, m)
    _only(check_plan(p), "strokes")


def test_a_stroke_not_drawn_whole_is_refused(saved, tmp_path):
    # A 1 mm there-and-back spur in the middle of stroke 0: the rows stay on
    # the stroke and its ends are exact, but the spur's tip is never drawn.
    p = _copy(saved, tmp_path)
    m = _meta(p)
    s = m["strokes"][0]
    k = len(s) // 2
    a, b = np.array(s[k]), np.array(s[k + 1])
    n = np.array([-(b - a)[1], (b - a)[0]]) / np.hypot(*(b - a))
    m["strokes"][0] = s[:k + 1] + [(a + n).round(4).tolist(), s[k]] + s[k + 1:]
    _write_meta(p, m)
    res = check_plan(p)
    _only(res, "strokes")
    assert "not drawn whole" in res.problem


def test_a_pen_down_row_off_its_stroke_is_refused(saved, tmp_path):
    # Move one inner stroke point 0.2 mm sideways (chord_tol is 0.05 mm):
    # rows drawn there are now off the stroke; the ends stay exact.
    p = _copy(saved, tmp_path)
    m = _meta(p)
    s = np.array(m["strokes"][0])
    k = len(s) // 2
    u = s[k + 1] - s[k - 1]
    s[k] += 0.2 * np.array([-u[1], u[0]]) / np.hypot(*u)
    m["strokes"][0] = s.round(4).tolist()
    _write_meta(p, m)
    res = check_plan(p)
    _only(res, "strokes")
    assert "off stroke 0" in res.problem


def test_a_split_pen_down_run_is_refused(saved, tmp_path):
    p = _copy(saved, tmp_path)
    r = _rows(p)
    down = np.flatnonzero(r[:, 3] == 1)
    r[down[len(down) // 2], 3] = 0
    _write_rows(p, r)
    _only(check_plan(p), "strokes")


def test_every_promise_has_a_test():
    # the names above cover PROMISES; a new promise needs a new test here
    assert PROMISES == ("arm", "period", "pen", "joint limits", "kinematics", "conditioning",
                        "speed", "acceleration", "tip speed", "strokes")


def test_command_line_exit_codes(saved, tmp_path, capsys):
    assert main(["check", str(saved)]) == 0
    out = capsys.readouterr().out
    assert "every promise holds" in out and "conditioning" in out
    p = _copy(saved, tmp_path)
    r = _rows(p)
    r[0, 4] += 3e-4
    _write_rows(p, r)
    assert main(["check", str(p)]) == 1
    out = capsys.readouterr().out.strip().splitlines()
    assert len(out) == 1 and out[0].startswith("inkreach check: kinematics: row 2")
    assert main(["check", str(tmp_path / "missing")]) == 2
    (p / "joints.csv").write_text("not,a,plan\n")
    assert main(["check", str(p)]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 2 and all(e.startswith("inkreach: error:") for e in err)


def test_a_plan_made_with_a_tip_speed_keeps_it(saved, tmp_path):
    pic = next(saved.parent.glob("pic*/pic.png"))
    out = tmp_path / "tip"
    inkreach.plan(str(pic), style="centerline", fidelity=False, tip_speed=60).save(out)
    res = check_plan(out)
    assert res.ok, res.problem


# Cases found by mutation testing: every refusal of a folder that cannot be
# read as a plan has its own whole line (the house rule for bad input: one
# line saying what is wrong and what to do), and a plan.json without strokes
# is read as "no strokes", so the drawn runs break the strokes promise.

def test_folders_that_are_not_plans_are_refused_with_their_own_line(saved, tmp_path):
    from inkreach.errors import InkreachError
    nowhere = tmp_path / "nowhere"
    with pytest.raises(InkreachError) as err:
        check_plan(nowhere)
    assert str(err.value) == f"{nowhere} is not a folder; give the folder inkreach plan wrote"

    p = _copy(saved, tmp_path)
    (p / "joints.csv").unlink()
    with pytest.raises(InkreachError) as err:
        check_plan(p)
    assert str(err.value) == (f"{p} is not a readable plan folder ([Errno 2] No such file or "
                              f"directory: '{p / 'joints.csv'}'); plan it again with "
                              "inkreach plan")

    p = _copy(saved, tmp_path / "b")
    body = (p / "joints.csv").read_text().split("\n", 1)[1]
    (p / "joints.csv").write_text("q" * 70 + "\n" + body)
    with pytest.raises(InkreachError) as err:
        check_plan(p)
    assert str(err.value) == (f"{p} is not a readable plan folder (joints.csv starts with "
                              f"{'q' * 60!r}, not {_HEADER!r}); plan it again with inkreach plan")

    p = _copy(saved, tmp_path / "c")
    rows = _rows(p)
    np.savetxt(p / "joints.csv", rows[:, :5], fmt=_FMT[:5], delimiter=",", header=_HEADER,
               comments="")
    with pytest.raises(InkreachError) as err:
        check_plan(p)
    assert str(err.value) == (f"{p}/joints.csv has 5 columns and {len(rows)} rows; plan it "
                              "again with inkreach plan")

    p = _copy(saved, tmp_path / "d")
    m = _meta(p)
    m["strokes"] = [[1.0, 2.0, 3.0]]
    _write_meta(p, m)
    with pytest.raises(InkreachError) as err:
        check_plan(p)
    assert str(err.value) == (f"{p}/plan.json has strokes that are not lists of (x, y) points; "
                              "plan it again with inkreach plan")
    m["strokes"], m["arm"] = [], "desk"
    _write_meta(p, m)
    with pytest.raises(InkreachError) as err:
        check_plan(p)
    assert str(err.value) == f"{p}/plan.json holds no arm table; plan it again with inkreach plan"


def test_a_plan_without_strokes_breaks_the_strokes_promise(saved, tmp_path):
    p = _copy(saved, tmp_path)
    m = _meta(p)
    del m["strokes"]
    _write_meta(p, m)
    r = check_plan(p)
    _only(r, "strokes")
    assert "but plan.json has 0 strokes" in r.problem


# More cases found by mutation testing: the rounding slack is half a unit of
# the last printed place (common practice for rounded decimals) of the
# coarsest angle column, and no more; arms are compared to 1e-12 relative (a
# bound chosen here: a few ulps of float arithmetic, far below any length a
# workshop can measure), with the dotted key and both values named.

@pytest.mark.parametrize("past, refused", [(1.0e-6, True), (0.4e-6, False)])
def test_the_joint_limit_slack_is_half_a_printed_unit(saved, tmp_path, past, refused):
    p = _copy(saved, tmp_path)
    r = _rows(p)
    m = _meta(p)
    lo, hi = m["arm"]["limits"]["theta2_deg"]
    m["arm"]["limits"]["theta2_deg"] = [lo, float(r[:, 2].max()) - past]
    m["arm"].pop("home", None)
    _write_meta(p, m)
    res = check_plan(p)
    if refused:
        _only(res, "joint limits")
    else:
        assert res.ok, res.problem


def test_the_angle_slack_follows_the_coarsest_angle_column(saved, tmp_path):
    # theta1 printed to 4 decimals: its rounding (up to 5e-5 deg) moves the pen
    # by ~2e-4 mm, which only the slack of that column explains.
    p = _copy(saved, tmp_path)
    r = _rows(p)
    r[:, 1] = np.round(r[:, 1], 4)
    np.savetxt(p / "joints.csv", r, fmt=("%.4f", "%.4f") + _FMT[2:], delimiter=",",
               header=_HEADER, comments="")
    res = check_plan(p)
    assert res.ok, res.problem


def test_a_cell_in_exponent_notation_leaves_its_column_no_slack(saved, tmp_path):
    p = _copy(saved, tmp_path)
    lines = (p / "joints.csv").read_text().splitlines()
    cells = lines[1].split(",")
    # A number in exponent notation has no fixed last place, so x_mm and y_mm
    # lose their rounding slack and the 4-decimal rows no longer match FK.
    cells[4], cells[5] = ("%.4e" % float(c) for c in cells[4:6])
    lines[1] = ",".join(cells)
    (p / "joints.csv").write_text("\n".join(lines) + "\n")
    res = check_plan(p)
    assert "kinematics" in res.broken and "period" not in res.broken


def test_the_recorded_period_is_read_from_the_stats(saved, tmp_path):
    p = _copy(saved, tmp_path)
    m = _meta(p)
    assert m["stats"]["period_s"] > 0
    m["options"].pop("period", None)
    _write_meta(p, m)
    res = check_plan(p)
    assert res.ok, res.problem
    assert res.figures["period"].startswith(f"{m['stats']['period_s']:g} s, worst time error")


def test_a_bad_recorded_arm_names_plan_json(saved, tmp_path):
    from inkreach.errors import InkreachError
    p = _copy(saved, tmp_path)
    m = _meta(p)
    m["arm"]["kind"] = "tripod"
    _write_meta(p, m)
    with pytest.raises(InkreachError, match=f"^arm file {p}/plan.json: kind 'tripod'"):
        check_plan(p)


@pytest.mark.parametrize("old, new, where", [
    ("left_upper = 100.0", "left_upper = 100.00000001",
     "geometry.left_upper = 100.0 but the given arm has 100.00000001"),
    ("left_motor = [-40.0, 0.0]", "left_motor = [-40.0, 0.5]",
     "geometry.left_motor = [-40.0, 0.0] but the given arm has [-40.0, 0.5]"),
    ('elbows = "out"', 'elbows = "in"', "geometry.elbows = 'out' but the given arm has 'in'"),
    ("[home]\ntheta_deg = [120.0, 60.0]\n", "",
     "home = {'theta_deg': [120.0, 60.0]} but the given arm has None"),
    ("motor1 = [[30.0, 500.0], [210.0, 2500.0]]",
     "motor1 = [[30.0, 500.0], [120.0, 1500.0], [210.0, 2500.0]]",
     "servo.motor1 = [[30.0, 500.0], [210.0, 2500.0]] but the given arm has "
     "[[30.0, 500.0], [120.0, 1500.0], [210.0, 2500.0]]"),
])
def test_each_arm_difference_is_named_by_its_key(saved, tmp_path, old, new, where):
    from inkreach.arms import arm_to_toml, parse_arm
    p = _copy(saved, tmp_path)
    text = arm_to_toml(parse_arm(_meta(p)["arm"]))
    assert old in text
    arm_file = tmp_path / "arm.toml"
    arm_file.write_text(text.replace(old, new))
    res = check_plan(p, arm=str(arm_file))
    assert res.broken[0] == "arm"
    assert res.problem == f"arm: plan.json records {where}; plan again for this arm"
    assert res.figures["arm"] == f"differs at {where.split(' = ')[0]}"


def test_an_arm_equal_to_a_few_ulps_is_the_same_arm(saved, tmp_path):
    from inkreach.arms import arm_to_toml, parse_arm
    p = _copy(saved, tmp_path)
    text = arm_to_toml(parse_arm(_meta(p)["arm"]))
    arm_file = tmp_path / "arm.toml"
    arm_file.write_text(text.replace("left_upper = 100.0", "left_upper = 100.00000000000001"))
    res = check_plan(p, arm=str(arm_file))
    assert res.ok, res.problem


def test_without_a_recorded_period_it_is_taken_from_the_first_two_rows(saved, tmp_path):
    p = _copy(saved, tmp_path)
    m = _meta(p)
    T = m["stats"].pop("period_s")
    m["options"].pop("period", None)
    _write_meta(p, m)
    res = check_plan(p)
    assert res.ok, res.problem
    assert res.figures["period"].startswith(f"{T:g} s (not recorded; taken from the first two "
                                            "rows), worst time error")
    assert res.figures["arm"] == "recorded arm = given arm"
    r = _rows(p)
    r[:, 0] = 0.0              # every row at t = 0: no period at all
    _write_rows(p, r)
    res = check_plan(p)
    assert res.broken[0] == "period"
    assert res.problem == "period: the sample period is 0.0 s; it must be greater than zero"


def test_the_first_row_must_be_at_time_zero(saved, tmp_path):
    p = _copy(saved, tmp_path)
    r = _rows(p)
    r[0, 0] = 2e-4             # two printed units past t = 0
    _write_rows(p, r)
    res = check_plan(p)
    _only(res, "period")
    assert res.problem.startswith("period: row 2 of joints.csv (t = 0.0002 s)")


# No row closes here, so the lowest-conditioning figure is a minimum over NaN only.
@pytest.mark.filterwarnings("ignore:All-NaN slice encountered")
def test_a_linkage_that_cannot_close_is_refused_at_its_first_row(saved, tmp_path):
    # Lowers of 50 mm: at the first row (the rest posture, elbows 180 mm apart
    # by the README's conventions, cos 120 deg = -1/2) two 50 mm links cannot
    # meet, so no pen position exists (triangle inequality).
    p = _copy(saved, tmp_path)
    m = _meta(p)
    m["arm"]["geometry"]["left_lower"] = m["arm"]["geometry"]["right_lower"] = 50.0
    m["arm"].pop("home", None)
    _write_meta(p, m)
    r = _rows(p)
    g = m["arm"]["geometry"]
    th = np.radians(r[0, 1:3])
    el = np.array([g["left_motor"][0] + g["left_upper"] * np.cos(th[0]),
                   g["left_upper"] * np.sin(th[0])])
    er = np.array([g["right_motor"][0] + g["right_upper"] * np.cos(th[1]),
                   g["right_upper"] * np.sin(th[1])])
    assert np.hypot(*(er - el)) > 100.0
    res = check_plan(p)
    assert res.broken[0] == "kinematics", res.problem
    assert res.problem == (f"kinematics: row 2 of joints.csv (t = {r[0, 0]:.4f} s): the linkage "
                           f"cannot close at ({r[0, 1]:.6f}, {r[0, 2]:.6f}) deg")


@pytest.mark.parametrize("units, refused", [(2.5, True), (1.5, False)])
def test_the_speed_slack_is_two_half_units_of_angle_per_period(saved, tmp_path, units, refused):
    # A difference of two angles each rounded by h = 0.5e-6 deg is off by at
    # most 2h (interval arithmetic of rounded values, common practice), so the
    # speed slack is 2h / T: a limit 2.5 h / T below the worst speed is
    # refused, 1.5 h / T below passes.
    p = _copy(saved, tmp_path)
    r = _rows(p)
    m = _meta(p)
    T = m["stats"]["period_s"]
    worst = float((np.abs(np.diff(r[:, 1:3], axis=0)) / T).max())
    m["arm"]["limits"]["max_speed_deg_s"] = worst - units * 0.5e-6 / T
    _write_meta(p, m)
    res = check_plan(p)
    if refused:
        _only(res, "speed")
    else:
        assert res.ok, res.problem
        assert res.figures["speed"].startswith("worst theta1 ")
        assert res.figures["conditioning"].startswith("lowest ")
        assert res.figures["x, y against FK"].startswith("worst ")


def test_the_recorded_chord_tolerance_is_the_one_used(saved, tmp_path):
    p = _copy(saved, tmp_path)
    m = _meta(p)
    m["options"]["chord_tol"] = 1e-6      # far below the drawn path's chord error
    _write_meta(p, m)
    res = check_plan(p)
    _only(res, "strokes")
    assert "more than chord_tol 1e-06 mm" in res.problem


def test_a_stroke_never_drawn_is_named_at_the_last_pen_down_row(saved, tmp_path):
    p = _copy(saved, tmp_path)
    m = _meta(p)
    m["strokes"].append([[0.0, 200.0], [1.0, 200.0]])
    _write_meta(p, m)
    r = _rows(p)
    last = int(np.flatnonzero(r[:, 3] == 1)[-1])
    res = check_plan(p)
    _only(res, "strokes")
    n = len(m["strokes"])
    assert res.problem.startswith(f"strokes: row {last + 2} of joints.csv")
    assert f"the stream has {n - 1} pen-down runs but plan.json has {n} strokes" in res.problem


def _segment_distance(p, poly):
    """Distance of points to a polyline, written out (projection on each segment, clipped)."""
    a, b = poly[:-1][None], poly[1:][None]
    pp = p[:, None]
    ab = b - a
    u = np.clip(((pp - a) * ab).sum(-1) / (ab * ab).sum(-1), 0.0, 1.0)
    c = a + u[..., None] * ab
    return np.hypot(pp[..., 0] - c[..., 0], pp[..., 1] - c[..., 1]).min(axis=1)


def test_a_midpoint_off_its_stroke_is_refused_on_its_own(saved_plain, tmp_path):
    # chord_tol set between the rows' worst distance from their strokes (and
    # the stroke vertices' worst distance from the drawn path of rows and
    # midpoints) and the joint-space midpoints' worst distance, all measured
    # here with the planner's arm and the distance written out above, so
    # only the midpoint rule can refuse the plan. Planned without the corner
    # blend, whose rows near a sharp vertex put it further from the drawn
    # path than any midpoint is from its stroke.
    from inkreach.arms import parse_arm
    p = _copy(saved_plain, tmp_path)
    m = _meta(p)
    r = _rows(p)
    arm = parse_arm(m["arm"])
    q = np.radians(r[:, 1:3])
    down = r[:, 3] == 1
    starts = np.flatnonzero(down & ~np.r_[False, down[:-1]])
    ends = np.flatnonzero(down & ~np.r_[down[1:], False])
    worst_other = worst_mid = 0.0
    for s, k0, k1 in zip(m["strokes"], starts, ends):
        s = np.asarray(s, float)
        worst_other = max(worst_other, _segment_distance(arm.fk(q[k0:k1 + 1]), s).max())
        mid = arm.fk(0.5 * (q[k0:k1] + q[k0 + 1:k1 + 1]))
        worst_mid = max(worst_mid, _segment_distance(mid, s).max())
        drawn = np.empty((2 * (k1 - k0) + 1, 2))
        drawn[0::2], drawn[1::2] = arm.fk(q[k0:k1 + 1]), mid
        drawn = drawn[np.r_[True, np.any(np.diff(drawn, axis=0) != 0, axis=1)]]   # dwells
        worst_other = max(worst_other, _segment_distance(s, drawn).max())
    # the premise, with room for the printed-decimal slacks (~1.5e-4 mm)
    assert worst_mid - worst_other >= 4e-4, (worst_mid, worst_other)
    m["options"]["chord_tol"] = worst_other + 0.25 * (worst_mid - worst_other)
    _write_meta(p, m)
    res = check_plan(p)
    _only(res, "strokes")
    assert "the pen between this row and the next is" in res.problem


# Third round of cases found by mutation testing: the exact size of each
# slack (half a printed unit, carried through the kinematics), the details
# of each message, and rare but valid inputs (a dot drawn by a single
# pen-down row, a plan without two pen-down rows in a row, numbers written
# as strings or in exponent notation without a decimal point).

_H_Q = np.radians(0.5e-6)      # half a unit of the 6-decimal angle columns, rad


def _fk_slack(arm, q):
    """sigma_max * h * sqrt(2) + 1e-9 mm: the pen shift of two angles rounded by h.

    |J dq| <= sigma_max |dq| (the 2-norm bound, Golub & Van Loan, Matrix
    Computations, sec. 2.3) with |dq| <= h sqrt(2); the 1e-9 mm float term
    is the check's own stated constant.
    """
    smax = np.linalg.svd(arm.jacobian(q), compute_uv=False)[:, 0]
    return smax * _H_Q * np.sqrt(2) + 1e-9


def _dot_plan(p, rows, stroke, chord_tol=None):
    """Keep the pen down on ``rows`` only and record ``stroke`` as the one stroke."""
    r = _rows(p)
    r[:, 3] = 0
    r[rows, 3] = 1
    _write_rows(p, r)
    m = _meta(p)
    m["strokes"] = [stroke]
    if chord_tol is not None:
        m["options"]["chord_tol"] = chord_tol
    _write_meta(p, m)
    return r, m


def _rest_rows(r, n):
    """First n consecutive rows at one posture (the touch-down dwell of the plan)."""
    same = np.all(np.diff(r[:, 1:3], axis=0) == 0, axis=1)
    for k in range(len(same) - n + 2):
        if same[k:k + n - 1].all():
            return np.arange(k, k + n)
    pytest.skip(f"no {n} rows at rest in this plan")


def test_a_dot_is_held_to_the_stroke_point_rounding_on_every_rule(saved, tmp_path):
    # Four rows at rest draw a one-point stroke p at the printed grid point
    # nearest to the pen, so rows, joint-space midpoints and the stroke point
    # are all d <= h sqrt(2) from it (h = 0.5e-4 mm, half the last printed
    # place). With chord_tol = d every rule passes only by the stroke
    # rounding slack h sqrt(2); without it (or with it subtracted) the dot
    # is refused.
    from inkreach.arms import parse_arm
    p = _copy(saved, tmp_path)
    rows = _rest_rows(_rows(p), 4)
    r = _rows(p)
    arm = parse_arm(_meta(p)["arm"])
    x = arm.fk(np.radians(r[rows[0]:rows[0] + 1, 1:3]))[0]
    dot = np.round(x, 4)
    d = float(np.hypot(*(x - dot)))
    assert d <= 0.5e-4 * np.sqrt(2)
    _dot_plan(p, rows, [dot.tolist()], chord_tol=d)
    res = check_plan(p)
    assert res.ok, res.problem
    assert res.figures["strokes"].startswith("1 pen-down runs for 1 strokes")


def test_a_stroke_point_off_the_dot_by_the_vertex_slack_is_refused(saved, tmp_path):
    # One pen-down row; the stroke goes out to a point v and back. v is
    # chord_tol + h sqrt(2) + 2.5 fk_slack from the pen: past the vertex rule's
    # slack of two FK roundings (a path point between two rows), so the
    # stroke is not drawn whole; 0.5 fk_slack under it, it passes.
    from inkreach.arms import parse_arm
    p = _copy(saved, tmp_path)
    r = _rows(p)
    k = int(_rest_rows(r, 2)[0])
    arm = parse_arm(_meta(p)["arm"])
    q = np.radians(r[k:k + 1, 1:3])
    x = arm.fk(q)[0]
    fk = float(_fk_slack(arm, q)[0])
    dot = np.round(x, 4)
    v = dot + [0.01, 0.0]
    dv = float(np.hypot(*(v - x)))
    s_slack = 0.5e-4 * np.sqrt(2)
    for extra, refused in ((2.5, True), (1.5, False)):
        _dot_plan(p, [k], [dot.tolist(), v.tolist(), dot.tolist()],
                  chord_tol=dv - s_slack - extra * fk)
        res = check_plan(p)
        if refused:
            _only(res, "strokes")
            assert "point 1 of stroke 0" in res.problem and "not drawn whole" in res.problem
        else:
            assert res.ok, res.problem


def test_a_dot_touching_down_past_the_rounding_slack_is_refused(saved, tmp_path):
    # A one-row dot whose stroke point is 1.55 to 1.65 half-units from the
    # pen: beyond h sqrt(2) (+ fk_slack, under 0.1 h here), the most two
    # coordinates rounded to half a unit can hide (common practice for
    # rounded decimals), so the touch-down is refused.
    from inkreach.arms import parse_arm
    p = _copy(saved, tmp_path)
    r = _rows(p)
    arm = parse_arm(_meta(p)["arm"])
    q = np.radians(r[:, 1:3])
    x = arm.fk(q)
    h = 0.5e-4
    assert _fk_slack(arm, q).max() < 0.1 * h
    grid = np.round(x, 4)[:, None, :] + 1e-4 * np.array(
        [[i, j] for i in (-2, -1, 0, 1, 2) for j in (-2, -1, 0, 1, 2)])[None]
    dist = np.hypot(*(grid - x[:, None, :]).transpose(2, 0, 1))
    k, c = np.argwhere((dist > 1.55 * h) & (dist < 1.65 * h))[0]
    _dot_plan(p, [int(k)], [np.round(grid[k, c], 4).tolist()])
    res = check_plan(p)
    _only(res, "strokes")
    assert "touches down" in res.problem


def test_a_single_row_far_off_its_stroke_is_named(saved, tmp_path):
    # One pen-down row 0.5 mm off its two-point stroke: one bad row, and the
    # check names it with its slack, and does not fail on its own arrays.
    p = _copy(saved, tmp_path)
    r = _rows(p)
    k = int(_rest_rows(r, 2)[0])
    x = r[k, 4:6]
    _dot_plan(p, [k], [(x + [0.5, 0.0]).tolist(), (x + [0.5, 0.1]).tolist()])
    res = check_plan(p)
    _only(res, "strokes")
    m = _meta(p)
    m["strokes"] = [[x.tolist(), (x + [0.0, 0.4]).tolist(), x.tolist()]]
    m["options"]["chord_tol"] = 1e-3
    _write_meta(p, m)
    res = check_plan(p)           # the row on the stroke, the far point not drawn
    _only(res, "strokes")
    assert "point 1 of stroke 0" in res.problem


def test_the_lift_message_prints_the_stroke_rounding_slack(saved, tmp_path):
    p = _copy(saved, tmp_path)
    m = _meta(p)
    m["strokes"][0] = _shift_end(m["strokes"][0], False, 0.01)
    _write_meta(p, m)
    res = check_plan(p)
    _only(res, "strokes")
    slack = float(res.problem.rsplit("(slack ", 1)[1].split(" mm")[0])
    # h sqrt(2) for the stroke's 4-decimal points plus a few 1e-6 mm of FK rounding
    assert 0.5e-4 * np.sqrt(2) <= slack <= 0.5e-4 * np.sqrt(2) + 1e-5, res.problem


def test_the_worst_stroke_distance_figure_is_over_every_stroke(saved, tmp_path):
    # The figure is the largest distance of any row or joint-space midpoint
    # from its stroke, measured here with the planner's arm and the written
    # out distance above. So that a figure of the last stroke alone would
    # differ, one row in the middle of the first stroke is pushed 0.045 mm
    # off it, inside the 0.05 mm tolerance (a bound we chose: over the
    # planned rows' own distances, under the tolerance), the plan still
    # passing. The row is the one furthest from every vertex of the stroke,
    # so that the rows around a corner still draw it whole.
    from inkreach.arms import parse_arm
    p = _copy(saved, tmp_path)
    m = _meta(p)
    r = _rows(p)
    arm = parse_arm(m["arm"])
    down = r[:, 3] == 1
    starts = np.flatnonzero(down & ~np.r_[False, down[:-1]])
    ends = np.flatnonzero(down & ~np.r_[down[1:], False])
    s0 = np.asarray(m["strokes"][0], float)
    inner = np.arange(starts[0] + 1, ends[0])
    xi = arm.fk(np.radians(r[inner, 1:3]))
    k = int(inner[np.argmax(np.hypot(*(xi[:, None] - s0[None]).T).min(axis=0))])
    x = arm.fk(np.radians(r[k, 1:3]))
    a, b = s0[:-1], s0[1:]
    u = np.clip(((x - a) * (b - a)).sum(1) / ((b - a) ** 2).sum(1), 0.0, 1.0)
    feet = a + u[:, None] * (b - a)
    j = int(np.argmin(np.hypot(*(feet - x).T)))
    t = (b[j] - a[j]) / np.hypot(*(b[j] - a[j]))
    target = feet[j] + 0.045 * np.array([-t[1], t[0]])
    r[k, 1:3] = np.degrees(arm.ik(target))
    r[k, 4:6] = arm.fk(np.radians(r[k, 1:3]))
    _write_rows(p, r)
    q = np.radians(r[:, 1:3])
    per = []
    for st, k0, k1 in zip(m["strokes"], starts, ends):
        st = np.asarray(st, float)
        mid = arm.fk(0.5 * (q[k0:k1] + q[k0 + 1:k1 + 1]))
        per.append(max(_segment_distance(arm.fk(q[k0:k1 + 1]), st).max(),
                       _segment_distance(mid, st).max()))
    assert len(per) >= 2 and np.argmax(per) != len(per) - 1, per   # not the last stroke
    res = check_plan(p)
    assert res.ok, res.problem
    assert f"worst distance from its stroke {max(per):.4f} mm" in res.figures["strokes"]


def test_the_tip_speed_message_names_the_second_row_of_the_first_fast_pair(saved, tmp_path):
    from inkreach.arms import parse_arm
    p = _copy(saved, tmp_path)
    m = _meta(p)
    r = _rows(p)
    x = parse_arm(m["arm"]).fk(np.radians(r[:, 1:3]))
    down = (r[:-1, 3] == 1) & (r[1:, 3] == 1)
    speed = np.hypot(*np.diff(x, axis=0).T) / 0.02
    tip = float(speed[down].max()) - 0.05
    k = int(np.flatnonzero(down & (speed > tip + 0.01))[0])
    m["options"]["tip_speed"] = tip
    _write_meta(p, m)
    res = check_plan(p)
    _only(res, "tip speed")
    # pair (k, k + 1) is measured at row k + 1, line k + 3 of joints.csv
    assert res.problem.startswith(f"tip speed: row {k + 3} of joints.csv"), res.problem


def test_the_tip_speed_slack_is_each_pairs_own_fk_rounding(saved, tmp_path):
    # The limit that a drawing pair (k, k + 1) can just meet is its speed less
    # (fk_slack[k] + fk_slack[k + 1]) / T: 1e-9 mm/s under the lowest such
    # limit is refused, 1e-9 mm/s over it passes.
    from inkreach.arms import parse_arm
    p = _copy(saved, tmp_path)
    m = _meta(p)
    r = _rows(p)
    arm = parse_arm(m["arm"])
    q = np.radians(r[:, 1:3])
    x = arm.fk(q)
    fk = _fk_slack(arm, q)
    pair = np.flatnonzero((r[:-1, 3] == 1) & (r[1:, 3] == 1))
    speed = np.hypot(*(x[pair + 1] - x[pair]).T) / 0.02
    edge = float((speed - (fk[pair] + fk[pair + 1]) / 0.02).max())
    for by, refused in ((-1e-9, True), (1e-9, False)):
        m["options"]["tip_speed"] = edge + by
        _write_meta(p, m)
        res = check_plan(p)
        assert ("tip speed" in res.broken) == refused, (by, res.problem)


def test_a_pen_up_move_into_the_touch_down_is_not_a_drawing_speed(saved, tmp_path):
    # The row before the first touch-down, pen up, moved 2 mm away: the joint
    # limits may notice, the tip speed (a promise while drawing) must not.
    from inkreach.arms import parse_arm
    p = _copy(saved, tmp_path)
    m = _meta(p)
    r = _rows(p)
    arm = parse_arm(m["arm"])
    k0 = int(np.flatnonzero(r[:, 3] == 1)[0])
    assert k0 > 0 and r[k0 - 1, 3] == 0
    x = arm.fk(np.radians(r[:, 1:3]))
    speed = np.hypot(*np.diff(x, axis=0).T) / 0.02
    m["options"]["tip_speed"] = float(speed[(r[:-1, 3] == 1) & (r[1:, 3] == 1)].max()) + 1e-3
    _write_meta(p, m)
    r[k0 - 1, 1:3] = np.degrees(arm.ik(x[k0:k0 + 1] + [[2.0, 0.0]]))[0]
    r[:, 4:6] = arm.fk(np.radians(r[:, 1:3]))
    _write_rows(p, r)
    res = check_plan(p)
    assert "tip speed" not in res.broken, res.problem


def test_a_plan_without_two_pen_down_rows_in_a_row_is_checked(saved, tmp_path):
    # One-row dots only and a recorded tip speed: no drawing pair to measure.
    p = _copy(saved, tmp_path)
    r = _rows(p)
    k = int(_rest_rows(r, 2)[0])
    _dot_plan(p, [k], [np.round(r[k, 4:6], 4).tolist()])
    m = _meta(p)
    m["options"]["tip_speed"] = 60.0
    _write_meta(p, m)
    res = check_plan(p)
    assert res.ok, res.problem
    assert res.figures["tip speed"] == "worst 0.000 mm/s (limit 60)"


def test_strokes_written_as_number_strings_are_read_as_numbers(saved, tmp_path):
    # JSON numbers quoted as strings: read as the numbers they spell (Python's
    # float() of a decimal string), the same plan, and it passes.
    p = _copy(saved, tmp_path)
    m = _meta(p)
    m["strokes"] = [[[repr(float(a)), repr(float(b))] for a, b in s] for s in m["strokes"]]
    _write_meta(p, m)
    res = check_plan(p)
    assert res.ok, res.problem


def test_an_exponent_cell_without_a_decimal_point_has_no_rounding_slack(saved, tmp_path):
    # Row 1's time written "2001e-5" (0.02001 s): exponent notation has no
    # fixed last printed place, so its 1e-5 s off the 0.02 s period is not
    # rounding (the 4-decimal rows would allow 5e-5 s) and row 1 is refused.
    p = _copy(saved, tmp_path)
    lines = (p / "joints.csv").read_text().splitlines()
    cells = lines[2].split(",")
    assert cells[0] == "0.0200"
    cells[0] = "2001e-5"
    lines[2] = ",".join(cells)
    (p / "joints.csv").write_text("\n".join(lines) + "\n")
    res = check_plan(p)
    _only(res, "period")
    assert res.problem.startswith("period: row 3 of joints.csv (t = 0.0200 s)")


def test_the_conditioning_slack_is_its_gradient_times_the_angle_rounding(saved, tmp_path):
    # The check allows c + sqrt(2) h (|dc/dtheta1| + |dc/dtheta2|) + 1e-9
    # (first-order Taylor bound of rounding both angles by h, with the
    # check's stated sqrt(2) margin and float term). The gradient is taken
    # here by central differences with its own step (1e-6 rad); the floor
    # 1e-11 over the lowest such allowance is refused, 1e-11 under passes.
    p = _copy(saved, tmp_path)
    m = _meta(p)
    q = np.radians(_rows(p)[:, 1:3])
    c, _ = kin.conditioning(m["arm"], q)
    dc = np.zeros(len(q))
    for j in range(2):
        e = np.zeros(2)
        e[j] = 1e-6
        dc += np.abs(kin.conditioning(m["arm"], q + e)[0]
                     - kin.conditioning(m["arm"], q - e)[0]) / 2e-6
    edge = float((c + dc * _H_Q * np.sqrt(2) + 1e-9).min())
    for by, refused in ((1e-11, True), (-1e-11, False)):
        m["arm"]["limits"]["min_conditioning"] = edge + by
        _write_meta(p, m)
        res = check_plan(p)
        if refused:
            _only(res, "conditioning")
        else:
            assert res.ok, res.problem
