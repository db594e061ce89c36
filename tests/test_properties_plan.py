"""Properties of the whole job on random arms and random drawings."""

import tomllib

import numpy as np
from hypothesis import HealthCheck, given, settings, strategies as st
from PIL import Image, ImageDraw

import inkreach
from inkreach import InkreachError
from inkreach.arms import FiveBar, Limits, SerialArm, arm_to_toml

from _independent import check_joints


@st.composite
def random_arms(draw):
    d = np.deg2rad
    speed = d(draw(st.floats(60, 300)))
    accel = d(draw(st.floats(300, 3000)))
    floor = draw(st.floats(0.1, 0.5))
    if draw(st.booleans()):
        half = draw(st.floats(10, 70))
        up = draw(st.floats(60, 140))
        lo = up * draw(st.floats(1.1, 1.8))
        lim = Limits(theta1=(d(draw(st.floats(0, 40))), d(draw(st.floats(180, 230)))),
                     theta2=(d(draw(st.floats(-50, -10))), d(draw(st.floats(140, 180)))),
                     max_speed=speed, max_accel=accel, min_conditioning=floor)
        return FiveBar(left_motor=(-half, 0.0), right_motor=(half, 0.0), left_upper=up,
                       right_upper=up * draw(st.floats(0.9, 1.1)), left_lower=lo,
                       right_lower=lo * draw(st.floats(0.9, 1.1)),
                       pen_extension=draw(st.sampled_from([0.0, 10.0])), limits=lim)
    up = draw(st.floats(80, 200))
    lim = Limits(theta1=(d(-30.0), d(210.0)), theta2=(d(10.0), d(170.0)), max_speed=speed,
                 max_accel=accel, min_conditioning=floor)
    return SerialArm(upper=up, lower=up * draw(st.floats(0.5, 1.0)), limits=lim)


@st.composite
def line_pictures(draw):
    w, h = draw(st.integers(60, 160)), draw(st.integers(60, 160))
    im = Image.new("L", (w, h), 255)
    g = ImageDraw.Draw(im)
    for _ in range(draw(st.integers(1, 4))):
        pts = [(draw(st.integers(2, w - 3)), draw(st.integers(2, h - 3))) for _ in range(2)]
        g.line(pts, fill=0, width=3)
    return im


@settings(max_examples=15, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(arm=random_arms(), picture=line_pictures())
def test_random_drawings_on_random_arms_give_a_checked_stream_or_a_clean_error(arm, picture):
    try:
        p = inkreach.plan(picture, arm=arm, style="centerline", fidelity=False, max_side=200)
    except InkreachError as exc:
        assert "\n" not in str(exc)
        return
    fig = check_joints(p.files()["joints.csv"], tomllib.loads(arm_to_toml(arm)))
    # same bounds as the end-to-end tests: only the CSV's rounding as slack
    assert fig["fk_error_mm"] < 1e-3
    assert fig["in_limits"]
    assert fig["max_speed"] <= fig["speed_limit"] * (1 + 1e-4)
    assert fig["max_accel"] <= fig["accel_limit"] * (1 + 1e-4)
    assert p.report.min_conditioning >= arm.limits.min_conditioning
