from collections import Counter

import networkx as nx
import numpy as np
import pytest
from hypothesis import given, settings, strategies as st
from scipy.spatial import cKDTree
from skimage.draw import circle_perimeter, line
from skimage.morphology import skeletonize

from inkreach.trace import trace_skeleton, trail_decomposition


def _check_trails(G, trails):
    """Every edge used exactly once; per connected part max(1, odd / 2) trails.

    The count is the classical bound: a connected graph with 2k odd vertices
    is covered by k edge-disjoint trails and no fewer (Euler 1736; Bondy &
    Murty, Graph Theory, 2008, section 3.3).
    """
    multi = G.is_multigraph()
    used = Counter()
    for t in trails:
        for a, b in zip(t, t[1:]):
            assert a[1] == b[0]                       # consecutive edges meet
        for e in t:
            key = (frozenset(e[:2]), e[2]) if multi else frozenset(e[:2])
            used[key] += 1
    expected = Counter((frozenset(e[:2]), e[2]) if multi else frozenset(e[:2])
                       for e in (G.edges(keys=True) if multi else G.edges()))
    assert used == expected
    comp = {v: i for i, c in enumerate(nx.connected_components(G)) for v in c}
    per_part = Counter(comp[t[0][0]] for t in trails)
    for i, c in enumerate(nx.connected_components(G)):
        H = G.subgraph(c)
        if H.number_of_edges() == 0:
            continue
        odd = sum(d % 2 for _, d in H.degree())
        assert per_part[i] == max(1, odd // 2)


def _with_pos(G):
    layout = nx.spring_layout(G, seed=1)
    nx.set_node_attributes(G, {v: tuple(p) for v, p in layout.items()}, "pos")
    return G


@pytest.mark.parametrize("G", [
    nx.grid_2d_graph(5, 7),
    nx.grid_2d_graph(1, 6),
    nx.complete_graph(5),                 # Eulerian: one closed trail
    nx.complete_graph(6),                 # six odd vertices: three trails
    nx.random_labeled_tree(40, seed=3),
    nx.petersen_graph(),
    nx.disjoint_union(nx.cycle_graph(4), nx.path_graph(5)),
], ids=["grid", "path-grid", "K5", "K6", "tree", "petersen", "two-parts"])
def test_trail_count_is_half_the_odd_nodes_per_part(G):
    _check_trails(G, trail_decomposition(G))
    _check_trails(G, trail_decomposition(_with_pos(G.copy())))


def test_figure_eight_multigraph_is_one_closed_trail():
    # Two loops at one node and a parallel pair: all degrees even.
    G = nx.MultiGraph([(0, 0), (0, 0), (0, 1), (0, 1)])
    trails = trail_decomposition(G)
    _check_trails(G, trails)
    assert len(trails) == 1 and trails[0][0][0] == trails[0][-1][1]


@settings(max_examples=40, deadline=None)
@given(st.integers(2, 25), st.floats(0.05, 0.6), st.integers(0, 10_000))
def test_trail_decomposition_on_random_graphs(n, p, seed):
    G = nx.gnp_random_graph(n, p, seed=seed)
    _check_trails(G, trail_decomposition(G))


def _raster(shape, *paths):
    sk = np.zeros(shape, bool)
    for (r0, c0, r1, c1) in paths:
        rr, cc = line(r0, c0, r1, c1)
        sk[rr, cc] = True
    return sk


def _all_pixels_near(strokes, sk, tol=1.5):
    """Every skeleton pixel within ``tol`` of a stroke point (junction
    clusters are drawn through their centre)."""
    tree = cKDTree(np.concatenate(strokes))
    r, c = np.nonzero(sk)
    d, _ = tree.query(np.stack([c, r], axis=1))
    return d.max() <= tol


def test_plus_sign_is_two_straight_strokes():
    sk = _raster((41, 41), (20, 2, 20, 38), (2, 20, 38, 20))
    strokes = trace_skeleton(sk)
    assert len(strokes) == 2
    for s in strokes:            # straight through the crossing, not turning
        d = s[-1] - s[0]
        assert min(abs(d[0]), abs(d[1])) <= 1 and np.hypot(*d) > 30
    assert _all_pixels_near(strokes, sk)


def test_circle_without_junctions_is_one_closed_stroke():
    sk = np.zeros((60, 60), bool)
    rr, cc = circle_perimeter(30, 30, 20)
    sk[rr, cc] = True
    sk = skeletonize(sk)
    (s,) = trace_skeleton(sk)
    np.testing.assert_array_equal(s[0], s[-1])
    assert len(s) == sk.sum() + 1
    assert np.hypot(*np.diff(s, axis=0).T).max() < 1.5     # no jumps


def test_figure_eight_from_pixels_is_one_closed_stroke():
    sk = np.zeros((60, 100), bool)
    for cx in (30, 70):
        rr, cc = circle_perimeter(30, cx, 19)
        sk[rr, cc] = True
    sk = _raster(sk.shape, (30, 49, 30, 51)) | sk    # make them touch
    strokes = trace_skeleton(skeletonize(sk))
    assert len(strokes) == 1
    np.testing.assert_allclose(strokes[0][0], strokes[0][-1])


def test_star_of_three_arms_is_two_strokes_and_t_is_two():
    # Degree-3 junction plus three ends: four odd nodes, two strokes.
    sk = _raster((50, 50), (25, 2, 25, 47), (25, 25, 47, 25))
    assert len(trace_skeleton(sk)) == 2


def test_grid_of_pixels_traces_with_half_the_odd_nodes():
    # A 4 x 4 lattice drawn as lines: 8 odd border junctions -> 4 strokes.
    lines = [(r, 5, r, 95) for r in (5, 35, 65, 95)] + [(5, c, 95, c) for c in (5, 35, 65, 95)]
    sk = skeletonize(_raster((101, 101), *lines))
    strokes = trace_skeleton(sk)
    assert len(strokes) == 4
    assert _all_pixels_near(strokes, sk)


def test_spurs_shorter_than_prune_are_removed():
    sk = _raster((50, 80), (25, 2, 25, 77), (25, 40, 21, 40))   # a 4-px spur
    assert len(trace_skeleton(sk)) == 2
    strokes = trace_skeleton(sk, prune=6)
    assert len(strokes) == 1 and np.ptp(strokes[0][:, 1]) <= 1


def test_min_length_and_simplify():
    sk = _raster((50, 80), (10, 2, 10, 77), (30, 10, 30, 13))
    strokes = trace_skeleton(sk, min_length=10, simplify=0.5)
    assert len(strokes) == 1 and len(strokes[0]) == 2


def test_empty_skeleton_gives_no_strokes():
    assert trace_skeleton(np.zeros((20, 20), bool)) == []


def test_distinct_labels_match_numpy_unique_per_row():
    # Reference: np.unique of each row's positive labels (numpy).
    from inkreach.trace.graph import _distinct_labels

    near = np.random.default_rng(3).integers(0, 5, (400, 8))
    cnt, first, second = _distinct_labels(near)
    for row, c, f, s in zip(near, cnt, first, second):
        u = np.unique(row[row > 0]) - 1
        assert c == len(u)
        assert f == (u[0] if len(u) else -1)
        assert s == (u[1] if len(u) > 1 else -1)
