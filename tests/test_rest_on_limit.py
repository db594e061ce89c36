"""A rest posture exactly on a joint limit: plans start and end there."""

import dataclasses

import numpy as np
import pytest

from inkreach.arms import default_arm, load_arm
from inkreach.motion import check_stream, plan_motion


@pytest.mark.parametrize("name,home,line", [
    # desk five-bar: theta2's lower limit is -30 deg; (120, -30) has conditioning 0.51
    ("default", (120.0, -30.0), [[20.0, 120.0], [50.0, 120.0]]),
    # serial arm: theta1's lower limit is -30 deg
    ("serial", (-30.0, 90.0), [[150.0, 60.0], [150.0, 90.0]]),
])
def test_a_plan_starts_and_ends_on_a_limit(name, home, line):
    arm = dataclasses.replace(load_arm(name) if name != "default" else default_arm(),
                              home_deg=home)
    strokes = [np.array(line)]
    s = plan_motion(strokes, arm)
    np.testing.assert_allclose(np.rad2deg(s.q[[0, -1]]), [home, home], atol=1e-9)
    check_stream(s, arm, strokes=strokes)
