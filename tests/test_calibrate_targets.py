"""Calibration targets: usable, spread out, ordered into a short path."""

import itertools

import numpy as np
import pytest
from hypothesis import given, settings, strategies as st
from scipy import ndimage

from inkreach.arms import default_arm, load_arm, workspace_map
from inkreach.calibrate import calibration_targets
from inkreach.calibrate.targets import _farthest_points, _short_path
from inkreach.errors import InkreachError


@pytest.mark.parametrize("name", ["default", "wide", "serial"])
def test_targets_are_usable_commanded_angles_that_round_trip(name):
    arm = load_arm(name)
    q = calibration_targets(arm, n=12)
    assert q.shape == (12, 2)
    xy = arm.fk(q)
    assert np.all(arm.reachable(xy))
    assert np.all(arm.within_limits(q))
    np.testing.assert_allclose(arm.ik(xy), q, atol=1e-9)


def test_targets_spread_over_the_usable_region():
    arm = default_arm()
    xy = arm.fk(calibration_targets(arm, n=12))
    d = np.hypot(*(xy[:, None] - xy[None]).transpose(2, 0, 1))
    d[np.eye(12, dtype=bool)] = np.inf
    assert d.min() > 20.0  # bound chosen here: 12 dots over a postcard-sized region, far apart
    sv = np.linalg.svd(xy - xy.mean(0), compute_uv=False) / np.sqrt(12)
    assert sv[1] > 30.0  # bound chosen here: spread in both directions, not close to a line
    # Gonzalez (1985): every sampled grid point lies within the smallest
    # separation s of a pick, so n discs of radius s + half a cell diagonal
    # cover the sampled region: s >= sqrt(area / (n pi)) - step / sqrt(2).
    # The region is the usable map eroded by the 5 mm margin (SciPy's
    # binary erosion as the reference).
    wmap = workspace_map(arm, cells=150)
    region = ndimage.binary_erosion(wmap.usable, iterations=int(np.ceil(5.0 / wmap.step)))
    area = region.sum() * wmap.step ** 2
    assert d.min() >= np.sqrt(area / (12 * np.pi)) - wmap.step / np.sqrt(2)


def test_seed_changes_the_targets_reproducibly():
    arm = default_arm()
    a, b = calibration_targets(arm, 8, seed=0), calibration_targets(arm, 8, seed=0)
    c = calibration_targets(arm, 8, seed=5)
    np.testing.assert_array_equal(a, b)
    assert not np.allclose(np.sort(a, 0), np.sort(c, 0))


def test_asking_for_more_dots_than_the_region_holds_is_refused():
    with pytest.raises(InkreachError, match="fewer dots"):
        calibration_targets(default_arm(), n=10_000, cells=40)


@settings(max_examples=40, deadline=None)
@given(st.integers(0, 2**31 - 1), st.integers(2, 15))
def test_farthest_point_sampling_covers_within_its_separation(seed, k):
    # Gonzalez (1985), Theoretical Computer Science 38, lemma behind the
    # 2-approximation: after k greedy picks every point lies within r of a
    # pick, where r is no larger than the smallest distance between picks.
    rng = np.random.default_rng(seed)
    pts = rng.uniform(0, 100, (200, 2))
    idx = _farthest_points(pts, k, 0)
    P = pts[idx]
    cover = np.hypot(*(pts[:, None] - P[None]).transpose(2, 0, 1)).min(1).max()
    sep = np.hypot(*(P[:, None] - P[None]).transpose(2, 0, 1))
    sep[np.eye(k, dtype=bool)] = np.inf
    assert cover <= sep.min() + 1e-9


def _length(P, order):
    return float(np.hypot(*np.diff(P[list(order)], axis=0).T).sum())


@settings(max_examples=25, deadline=None)
@given(st.integers(0, 2**31 - 1))
def test_dot_order_is_close_to_the_shortest_open_path(seed):
    # Exhaustive search over all 7! orders from a fixed first dot is the
    # reference; 2-opt tours are typically within a few per cent of the
    # optimum (Johnson & McGeoch, "The traveling salesman problem: a case
    # study in local optimization", 1997, from memory); 15 % is a bound chosen
    # here with room above that for 8 dots.
    P = np.random.default_rng(seed).uniform(0, 100, (8, 2))
    order = _short_path(P, start_xy=P[0])
    assert order[0] == 0 and sorted(order) == list(range(8))
    best = min(_length(P, (0,) + perm) for perm in itertools.permutations(range(1, 8)))
    assert _length(P, order) <= 1.15 * best + 1e-9
