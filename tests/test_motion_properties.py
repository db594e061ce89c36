"""Property: a random line drawing yields a checked stream or a clear error."""

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from inkreach.arms import largest_rectangle, load_arm, workspace_map
from inkreach.errors import InkreachError
from inkreach.motion import check_stream, plan_motion

_BOXES = {}


def _arm_and_box(name):
    arm = load_arm(name)
    if name not in _BOXES:
        r = largest_rectangle(workspace_map(arm, cells=120))
        _BOXES[name] = (np.array([r.x0, r.y0]), np.array([r.width, r.height]))
    return arm, _BOXES[name]


unit = st.floats(0.0, 1.0, allow_nan=False)
stroke = st.lists(st.tuples(unit, unit), min_size=1, max_size=6)
drawing = st.lists(stroke, min_size=1, max_size=4)


@pytest.mark.parametrize("name", ["default", "wide", "serial"])
@settings(max_examples=20, deadline=None)
@given(drawing=drawing, tip=st.sampled_from([None, 20.0, 150.0]))
def test_random_line_drawing_gives_a_checked_stream_or_an_error(name, drawing, tip):
    arm, (origin, size) = _arm_and_box(name)
    strokes = [origin + np.array(s) * size for s in drawing]
    try:
        s = plan_motion(strokes, arm, tip_speed=tip)
    except InkreachError as exc:
        assert "\n" not in str(exc)
        return
    report = check_stream(s, arm, strokes=strokes)
    assert report.max_deviation_mm <= 0.05
    lim = arm.limits
    deg = np.round(np.rad2deg(s.q), 4)  # as an outside reader of joints.csv sees it
    assert np.abs(np.diff(deg, axis=0)).max(initial=0) / s.period <= np.rad2deg(lim.max_speed)
    assert np.abs(np.diff(deg, n=2, axis=0)).max(initial=0) / s.period ** 2 <= \
        np.rad2deg(lim.max_accel)
    for i, p in enumerate(strokes):
        rows = np.flatnonzero((s.pen == 1) & (s.stroke == i))
        np.testing.assert_allclose(s.xy[rows[0]], p[0], atol=1e-9)
        np.testing.assert_allclose(s.xy[rows[-1]], p[-1], atol=1e-9)
