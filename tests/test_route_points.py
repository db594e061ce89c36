import numpy as np
import pytest
from hypothesis import given, settings, strategies as st

from inkreach.errors import InkreachError
from inkreach.route import order_points


def _path_length(p, order):
    return float(np.hypot(*np.diff(p[order], axis=0).T).sum())


def test_order_points_finds_the_open_polygon_on_a_circle():
    # Known optimum (elementary geometry): for the vertices of a regular
    # polygon the shortest open path is the perimeter minus one edge.
    n = 60
    t = np.linspace(0, 2 * np.pi, n, endpoint=False)
    p = np.column_stack([np.cos(t), np.sin(t)]) * 50
    p = p[np.random.default_rng(3).permutation(n)]
    chord = 2 * 50 * np.sin(np.pi / n)
    assert _path_length(p, order_points(p)) == pytest.approx((n - 1) * chord, rel=1e-9)


def test_order_points_on_a_unit_grid_reaches_the_hamiltonian_path_length():
    # Classical result (from memory): an m x n unit grid has a Hamiltonian
    # path of length m*n - 1, which is optimal (every step is >= 1).
    g = np.stack(np.meshgrid(np.arange(12), np.arange(10)), -1).reshape(-1, 2).astype(float)
    g = g[np.random.default_rng(0).permutation(len(g))]
    length = _path_length(g, order_points(g))
    assert length <= (len(g) - 1) * 1.04


def test_order_points_starts_near_the_given_start():
    p = np.random.default_rng(1).random((300, 2)) * 100
    o = order_points(p, start=(0.0, 0.0))
    near = np.argsort(np.hypot(*p.T))[:5]
    assert o[0] in near


@settings(max_examples=30, deadline=None)
@given(st.lists(st.tuples(st.floats(-50, 50), st.floats(-50, 50)), min_size=0, max_size=40),
       st.booleans())
def test_order_points_returns_a_permutation(pts, with_start):
    p = np.array(pts, dtype=float).reshape(-1, 2)
    o = order_points(p, start=(0, 0) if with_start else None)
    assert sorted(o.tolist()) == list(range(len(p)))


def test_order_points_rejects_a_wrong_shape_with_one_line():
    with pytest.raises(InkreachError, match="shape"):
        order_points(np.zeros((4, 3)))


@pytest.mark.parametrize("start", [(np.nan, 0.0), (1.0, 2.0, 3.0)])
def test_order_points_rejects_a_start_that_is_not_a_finite_point(start):
    with pytest.raises(InkreachError, match="start"):
        order_points(np.zeros((4, 2)), start=start)
