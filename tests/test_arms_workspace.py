"""Workspace maps and the largest rectangle."""

import numpy as np
import pytest

from inkreach.arms import (Limits, SerialArm, default_arm, largest_rectangle, load_arm,
                           workspace_map)
from inkreach.arms.workspace import WorkspaceMap


def test_serial_reach_area_is_the_annulus():
    # The reach of an unlimited two-link arm is the annulus between
    # |l1 - l2| and l1 + l2: area pi ((l1 + l2)^2 - (l1 - l2)^2) = 4 pi l1 l2.
    arm = SerialArm(upper=100, lower=60, limits=Limits(theta1=(-np.pi, np.pi),
                                                       theta2=(0.0, np.pi)))
    m = workspace_map(arm, cells=500)
    assert m.reach_area == pytest.approx(4 * np.pi * 100 * 60, rel=0.01)


def test_conditioning_floor_shrinks_the_usable_area():
    # The usable cells are exactly the reachable, in-limit cells whose
    # conditioning, recomputed outside the project (forward kinematics from
    # the README conventions, central differences, numpy's SVD), is at or
    # above the floor; a higher floor gives a strictly smaller subset.
    import dataclasses

    from _independent import fk_fivebar

    arm = default_arm()
    m = workspace_map(arm, cells=120)
    assert 0 < m.usable_area < m.reach_area
    X, Y = np.meshgrid(m.x, m.y)
    pts = np.column_stack([X[m.in_limits], Y[m.in_limits]])
    q = np.rad2deg(arm.ik(pts))
    geo = {k: getattr(arm, k) for k in ("left_motor", "right_motor", "left_upper",
                                        "right_upper", "left_lower", "right_lower",
                                        "pen_extension")}
    h = 1e-4   # deg
    J = np.empty((len(q), 2, 2))
    for j in range(2):
        dq = np.zeros(2)
        dq[j] = h
        plus = np.column_stack(fk_fivebar(geo, *(q + dq).T))
        minus = np.column_stack(fk_fivebar(geo, *(q - dq).T))
        J[:, :, j] = (plus - minus) / (2 * np.deg2rad(h))
    sv = np.linalg.svd(J, compute_uv=False)
    c = sv[:, 1] / sv[:, 0]
    floor = arm.limits.min_conditioning
    clear = np.abs(c - floor) > 1e-6          # cells not sitting on the floor itself
    np.testing.assert_array_equal(m.usable[m.in_limits][clear], (c >= floor)[clear])
    higher = workspace_map(dataclasses.replace(
        arm, limits=dataclasses.replace(arm.limits, min_conditioning=0.5)), cells=120)
    assert higher.usable_area < m.usable_area
    assert not (higher.usable & ~m.usable).any()


def _brute_force(mask, aspect):
    ny, nx = mask.shape
    best = 0
    for h in range(1, ny + 1):
        w = max(1, int(round(aspect * h)))
        if w > nx:
            break
        found = False
        for i in range(ny - h + 1):
            for j in range(nx - w + 1):
                if mask[i:i + h, j:j + w].all():
                    found = True
                    break
            if found:
                break
        if found:
            best = h * w
    return best


@pytest.mark.parametrize("seed", range(6))
@pytest.mark.parametrize("aspect", [1.0, 4 / 3, 0.5])
def test_largest_rectangle_matches_brute_force(seed, aspect):
    rng = np.random.default_rng(seed)
    yy, xx = np.mgrid[0:24, 0:30]
    blob = ((xx - 15) ** 2 / rng.uniform(40, 200) + (yy - 12) ** 2 / rng.uniform(30, 150)) < 1
    blob &= rng.random(blob.shape) > 0.03
    m = WorkspaceMap(x=np.arange(30.0), y=np.arange(24.0), step=1.0, reach=blob,
                     in_limits=blob, conditioning=np.where(blob, 0.5, np.nan), usable=blob)
    r = largest_rectangle(m, aspect)
    want = _brute_force(blob, aspect)
    if want == 0:
        assert r is None or r.area <= 1
        return
    assert r.area == pytest.approx(want)
    # the rectangle covers usable cells only
    i0, j0 = int(round(r.y0 - m.extent[2])), int(round(r.x0 - m.extent[0]))
    assert blob[i0:i0 + int(round(r.height)), j0:j0 + int(round(r.width))].all()


def test_best_rectangle_lies_inside_the_usable_region_exactly():
    for name in ("default", "wide", "serial"):
        arm = load_arm(name)
        m = workspace_map(arm, cells=300)
        r = largest_rectangle(m, 4 / 3)
        assert r.width / r.height == pytest.approx(4 / 3, rel=0.02)
        u = np.linspace(0.02, 0.98, 25)
        pts = np.stack(np.meshgrid(r.x0 + u * r.width, r.y0 + u * r.height), -1).reshape(-1, 2)
        assert arm.reachable(pts).mean() > 0.99
        assert r.worst_conditioning >= arm.limits.min_conditioning
