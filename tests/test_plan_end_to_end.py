"""The whole job, checked from the outside: files, contracts, safety, determinism."""

import json
import tomllib

import numpy as np
import pytest
from PIL import Image, ImageDraw

import inkreach
from inkreach.arms import arm_to_toml, load_arm

from _independent import check_joints, point_segment_distance

STYLES = ("outline", "centerline", "hatch", "stipple", "contour")


@pytest.fixture(scope="module")
def still_life_small(tmp_path_factory):
    from inkreach.cli.demo import still_life
    path = tmp_path_factory.mktemp("pics") / "still.png"
    still_life(320, 240).save(path)
    return path


def _check_plan_files(files, arm, chord_tol=0.05):
    plan_json = json.loads(files["plan.json"])
    table = tomllib.loads(arm_to_toml(arm))
    fig = check_joints(files["joints.csv"], table)
    # README (output files): FK of each row's angles is the row's x, y (independent FK);
    # the CSV prints x, y to 1e-4 mm and angles to 1e-6 deg, hence 1e-3 mm
    assert fig["fk_error_mm"] < 1e-3
    assert fig["period_spread"] < 1e-6
    assert fig["in_limits"]
    # finite differences in degrees, as an outside check would compute them;
    # the slack covers the CSV's rounding of the angles: 1e-6 deg over a 20 ms
    # period is at most 5e-5 deg/s and 5e-3 deg/s^2, far below 1e-4 relative
    assert fig["max_speed"] <= fig["speed_limit"] * (1 + 1e-4)
    assert fig["max_accel"] <= fig["accel_limit"] * (1 + 1e-4)
    st = plan_json["stats"]
    strokes = [np.asarray(s, float) for s in plan_json["strokes"]]
    assert st["strokes"] == len(strokes) == fig["pen_downs"]
    ends = np.array([s[-1] for s in strokes[:-1]])
    starts = np.array([s[0] for s in strokes[1:]])
    if len(strokes) > 1:
        assert st["pen_up_mm"] == pytest.approx(np.hypot(*(starts - ends).T).sum(), rel=1e-3,
                                                abs=1e-2)
    down = sum(np.hypot(*np.diff(s, axis=0).T).sum() for s in strokes)
    assert st["pen_down_mm"] == pytest.approx(down, rel=1e-3, abs=1e-2)
    assert st["min_conditioning"] >= arm.limits.min_conditioning
    # the n-th run of pen-down rows draws the n-th stroke, within the chord
    # tolerance of it (distance to the polyline's segments)
    pen = fig["pen"] > 0
    edges = np.flatnonzero(np.diff(np.r_[0, pen.astype(int), 0]))
    runs = list(zip(edges[::2], edges[1::2]))
    assert len(runs) == len(strokes)
    worst = 0.0
    for (i0, i1), s in zip(runs, strokes):
        xy = fig["xy"][i0:i1]
        if len(s) == 1:
            worst = max(worst, np.hypot(*(xy - s[0]).T).max())
            continue
        d = np.min([point_segment_distance(xy, a, b) for a, b in zip(s[:-1], s[1:])], axis=0)
        worst = max(worst, d.max())
        # touch down exactly at the start, lift exactly at the end
        assert np.hypot(*(xy[0] - s[0])) < 1e-3 and np.hypot(*(xy[-1] - s[-1])) < 1e-3
    assert worst <= chord_tol + 1e-3
    return plan_json


@pytest.mark.parametrize("style", STYLES)
def test_every_style_plans_the_still_life_on_the_default_arm(style, still_life_small):
    p = inkreach.plan(still_life_small, style=style, max_side=320)
    files = p.files()
    for name in ("plan.json", "joints.csv", "preview.svg", "preview.png", "order.png",
                 "simulated.png", "plan.h", "SAFETY.txt"):
        assert name in files
    _check_plan_files(files, p.arm)
    from inkreach.trace import style_renders
    fid = p.stats["fidelity"]
    if style_renders(style) == "lines":      # line styles get line figures, no tone ones
        assert "tone_error" not in fid and 0.0 <= fid["lines_drawn"] <= 1.0
    else:
        assert 0.0 <= fid["tone_error"] <= 1.0


@pytest.mark.parametrize("arm_name", ["wide", "serial"])
@pytest.mark.parametrize("style", ["centerline", "hatch"])
def test_example_arms_plan_and_pass_independent_checks(arm_name, style, tmp_path):
    from inkreach.cli.demo import emblem
    path = tmp_path / "emblem.png"
    emblem(300).save(path)
    arm = load_arm(arm_name)
    p = inkreach.plan(path, arm=arm, style=style, max_side=300)
    _check_plan_files(p.files(), arm)
    # rounding to whole steps moves the pen by at most |J| times half a step
    # (first-order bound, Craig ch. 5): a few tenths of a millimetre here
    assert 0.0 <= p.stats["signal_rounding_mm"] < 0.5


def test_image_to_arm_maps_input_pixels_to_the_drawn_strokes(tmp_path):
    # A 2400 x 1600 picture (downscaled inside to 600 px) with one thick line
    # from (300, 400) to (2000, 1300): every stroke point, mapped back through
    # the inverse of image_to_arm, must lie on that line in input pixels.
    im = Image.new("L", (2400, 1600), 255)
    ImageDraw.Draw(im).line([(300, 400), (2000, 1300)], fill=0, width=12)
    path = tmp_path / "line.png"
    im.save(path)
    p = inkreach.plan(path, style="centerline", max_side=600, fidelity=False)
    M = np.asarray(json.loads(p.files()["plan.json"])["image_to_arm"])
    A = np.vstack([M, [0, 0, 1]])
    inv = np.linalg.inv(A)[:2]
    pts = np.concatenate(p.strokes)
    uv = pts @ inv[:, :2].T + inv[:, 2]
    d = point_segment_distance(uv, (300, 400), (2000, 1300))
    assert d.max() < 4.0 * 1.5      # within 1.5 working px (4 input px each)
    # the whole line is drawn: its end points come back
    assert np.min(np.hypot(*(uv - (300, 400)).T)) < 12
    assert np.min(np.hypot(*(uv - (2000, 1300)).T)) < 12
    # rows go down in the image, y goes away from the motors: a flip
    assert np.linalg.det(M[:, :2]) < 0


def test_same_input_gives_byte_identical_plan_and_joints(still_life_small):
    a = inkreach.plan(still_life_small, style="hatch", max_side=240).files()
    b = inkreach.plan(still_life_small, style="hatch", max_side=240).files()
    assert a["plan.json"] == b["plan.json"]
    assert a["joints.csv"] == b["joints.csv"]
    assert a["plan.h"] == b["plan.h"]


def test_plan_accepts_a_pillow_image_and_an_array():
    from inkreach.cli.demo import emblem
    im = emblem(200)
    p1 = inkreach.plan(im, style="centerline", fidelity=False)
    p2 = inkreach.plan(np.asarray(im), style="centerline", fidelity=False)
    assert p1.stats["strokes"] == p2.stats["strokes"]
    assert p1.preview().size[0] > 100


def test_save_writes_every_file(tmp_path):
    from inkreach.cli.demo import emblem
    p = inkreach.plan(emblem(200), style="centerline", fidelity=False)
    written = p.save(tmp_path / "out")
    for name, path in written.items():
        assert (tmp_path / "out" / name).is_file()
    # no temporary files; the one hidden file is the record of what was written
    assert [f.name for f in (tmp_path / "out").iterdir()
            if f.name.startswith(".")] == [".inkreach-manifest.json"]
    assert not [f for f in tmp_path.iterdir() if f.name != "out"]


def test_progress_reports_every_stage_in_order_then_done():
    from inkreach.cli.demo import emblem
    from inkreach.plan import STAGES
    seen = []
    inkreach.plan(emblem(160), style="centerline", progress=lambda *a: seen.append(a))
    assert [s for s, _, _ in seen] == list(STAGES) + ["done"]
    assert [d for _, d, _ in seen] == list(range(len(STAGES) + 1))
    assert {t for _, _, t in seen} == {len(STAGES)}
