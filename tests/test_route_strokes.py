import numpy as np
import pytest
from hypothesis import given, settings, strategies as st

from inkreach.errors import InkreachError
from inkreach.route import Route, greedy_order, order_strokes, travel_stats


def _same_stroke(src, out, closed):
    if np.array_equal(src, out) or np.array_equal(src[::-1], out):
        return True
    if closed and len(src) == len(out) and np.array_equal(out[0], out[-1]):
        ring = src[:-1]
        return any(np.array_equal(np.roll(ring, -k, 0), out[:-1]) or
                   np.array_equal(np.roll(ring[::-1], -k, 0), out[:-1]) for k in range(len(ring)))
    return False


coord = st.integers(-40, 40).map(float)
point = st.tuples(coord, coord)


@st.composite
def stroke_sets(draw):
    out = []
    for _ in range(draw(st.integers(0, 25))):
        kind = draw(st.sampled_from(["open", "dot", "loop"]))
        if kind == "dot":
            out.append(np.array([draw(point)]))
        else:
            pts = draw(st.lists(point, min_size=2 if kind == "open" else 3, max_size=6))
            if kind == "loop":
                pts = pts + [pts[0]]
            out.append(np.array(pts))
    return out


@settings(max_examples=60, deadline=None)
@given(stroke_sets(), st.booleans())
def test_order_strokes_returns_every_stroke_once_intact_reversed_or_rotated(strokes, with_start):
    # Invariant: the route is a permutation of the input; each stroke is
    # unchanged or reversed, a closed one possibly rotated.
    r = order_strokes(strokes, start=(0.0, 0.0) if with_start else None)
    assert sorted(r.order.tolist()) == list(range(len(strokes)))
    assert len(r.strokes) == len(strokes) == len(r.reversed) == len(r.entry)
    for i, out, rev, e in zip(r.order, r.strokes, r.reversed, r.entry):
        src = strokes[i]
        closed = len(src) >= 3 and np.array_equal(src[0], src[-1])
        assert _same_stroke(src, out, closed)
        if rev:
            assert np.array_equal(src[::-1], out)
        if closed:
            assert np.array_equal(out[0], src[e])
    assert r.stats == travel_stats(r.strokes, (0.0, 0.0) if with_start else None)


@st.composite
def open_stroke_sets(draw):
    out = []
    for _ in range(draw(st.integers(1, 8))):
        n = draw(st.sampled_from([1, 2, 3]))
        out.append(np.array(draw(st.lists(point, min_size=n, max_size=n))))
    return out


@settings(max_examples=60, deadline=None)
@given(open_stroke_sets(), st.booleans())
def test_order_strokes_draws_each_stroke_the_best_way_round_for_its_order(strokes, with_start):
    # Checked by exhaustive enumeration: no other choice of directions for
    # the returned order has less pen-up travel (approach included).
    import itertools

    start = np.array([0.0, 0.0]) if with_start else None
    r = order_strokes(strokes, start=start)
    src = [strokes[i] for i in r.order]
    best = np.inf
    for flips in itertools.product([False, True], repeat=len(src)):
        t = travel_stats([s[::-1] if f else s for s, f in zip(src, flips)], start)
        best = min(best, t.pen_up_mm + t.approach_mm)
    assert r.stats.pen_up_mm + r.stats.approach_mm <= best + 1e-9


def test_order_strokes_never_travels_more_than_the_greedy_baseline():
    rng = np.random.default_rng(5)
    a = rng.random((400, 2)) * 100
    s = [np.array([p, p + rng.normal(0, 2, 2)]) for p in a]
    assert order_strokes(s).stats.pen_up_mm <= greedy_order(s).stats.pen_up_mm


def test_order_strokes_on_a_unit_grid_of_dots_finds_the_hamiltonian_path():
    # Classical result (from memory): an m x n unit grid has a Hamiltonian
    # path of length m*n - 1, optimal since each hop is at least 1.
    g = np.stack(np.meshgrid(np.arange(10), np.arange(8)), -1).reshape(-1, 2).astype(float)
    g = g[np.random.default_rng(2).permutation(len(g))]
    r = order_strokes([p[None] for p in g])
    assert r.stats.pen_up_mm <= (len(g) - 1) * 1.03


def test_order_strokes_turns_collinear_segments_into_one_sweep():
    # Known optimum: unit segments on a line, shuffled and half reversed,
    # chain up with zero pen-up travel.
    rng = np.random.default_rng(0)
    segs = [np.array([[i, 0.0], [i + 1, 0.0]]) for i in range(0, 60, 2)]
    segs = [s[::-1] if rng.random() < 0.5 else s for s in segs]
    segs = [segs[i] for i in rng.permutation(len(segs))]
    r = order_strokes(segs)
    assert r.stats.pen_up_mm == pytest.approx(30 - 1, abs=1e-9)


def test_order_strokes_enters_a_loop_at_the_vertex_nearest_the_start():
    square = np.array([[0, 0], [10, 0], [10, 10], [0, 10], [0, 0]], float)
    r = order_strokes([square], start=(11, 11))
    assert r.entry.tolist() == [2]
    assert r.strokes[0][0].tolist() == [10, 10] and r.strokes[0][-1].tolist() == [10, 10]
    assert r.stats.approach_mm == pytest.approx(np.sqrt(2))


def test_order_strokes_picks_loop_entries_between_neighbours():
    # Two dots either side of a big square loop: the best entry is the
    # corner between them, not the first vertex.
    square = np.array([[0, 0], [50, 0], [50, 50], [0, 50], [0, 0]], float)
    dots = [np.array([[60.0, 45.0]]), np.array([[45.0, 60.0]])]
    r = order_strokes([dots[0], square, dots[1]], start=(60.0, 45.0))
    assert r.strokes[1][0].tolist() == [50, 50]


def test_order_strokes_is_deterministic_for_a_seed():
    rng = np.random.default_rng(9)
    s = [rng.random((3, 2)) * 100 for _ in range(300)]
    a, b = order_strokes(s, seed=4), order_strokes(s, seed=4)
    assert np.array_equal(a.order, b.order) and np.array_equal(a.reversed, b.reversed)


def test_order_strokes_begins_near_the_start_point():
    rng = np.random.default_rng(3)
    s = [rng.random((2, 2)) * 100 for _ in range(200)]
    r = order_strokes(s, start=(0.0, 0.0))
    ends = np.array([[x[0], x[-1]] for x in s]).reshape(-1, 2)
    assert r.stats.approach_mm <= np.sort(np.hypot(*ends.T))[5]


def test_route_is_a_frozen_value():
    r = order_strokes([np.array([[0.0, 0.0], [1.0, 0.0]])])
    assert isinstance(r, Route)
    with pytest.raises(AttributeError):
        r.order = None


def test_order_strokes_handles_no_strokes():
    r = order_strokes([])
    assert r.strokes == [] and r.stats.strokes == 0


@pytest.mark.parametrize("bad", [[np.zeros((0, 2))], [np.zeros((3, 3))], [np.array([[0.0, np.nan]])]])
def test_order_strokes_rejects_bad_strokes_with_one_line(bad):
    with pytest.raises(InkreachError) as err:
        order_strokes(bad)
    assert "\n" not in str(err.value)


def test_travel_stats_counts_lifts_lengths_and_approach():
    s = [np.array([[0, 0], [3, 0], [3, 4]]), np.array([[6, 8], [6, 9]])]
    t = travel_stats(s, start=(0, -2))
    assert t.as_dict() == {"strokes": 2, "pen_lifts": 2, "pen_down_mm": 8.0,
                           "pen_up_mm": 5.0, "approach_mm": 2.0}
