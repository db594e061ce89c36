import numpy as np
import pytest
from hypothesis import given, settings, strategies as st

from inkreach.route import merge_strokes


def test_merge_strokes_joins_a_chain_in_any_direction():
    a = np.array([[0.0, 0], [1, 0]])
    b = np.array([[2.0, 0], [1.2, 0]])   # reversed, gap 0.2
    c = np.array([[2.1, 0.1], [3, 0]])   # gap ~0.14
    out = merge_strokes([c, a, b], tol=0.3)
    assert len(out) == 1
    m = out[0]
    assert {tuple(m[0]), tuple(m[-1])} == {(0.0, 0.0), (3.0, 0.0)}
    assert len(m) == 6


def test_merge_strokes_respects_the_tolerance():
    a = np.array([[0.0, 0], [1, 0]])
    b = np.array([[1.6, 0], [2, 0]])
    assert len(merge_strokes([a, b], tol=0.5)) == 2
    assert len(merge_strokes([a, b], tol=0.61)) == 1


def test_merge_strokes_drops_the_duplicate_point_at_an_exact_joint():
    a = np.array([[0.0, 0], [1, 0]])
    b = np.array([[1.0, 0], [1, 1]])
    assert merge_strokes([a, b])[0].tolist() == [[0, 0], [1, 0], [1, 1]]


def test_merge_strokes_closes_a_nearly_closed_stroke_exactly():
    s = np.array([[0.0, 0], [5, 0], [5, 5], [0.2, 0.1]])
    out = merge_strokes([s], tol=0.5)
    assert len(out) == 1 and np.array_equal(out[0][0], out[0][-1])
    assert len(out[0]) == 5


def test_merge_strokes_closes_a_ring_of_strokes():
    sq = [np.array([[0.0, 0], [4, 0]]), np.array([[4.0, 4], [4, 0.1]]),
          np.array([[0.0, 4], [4, 4]]), np.array([[0.0, 4], [0, 0]])]
    out = merge_strokes(sq, tol=0.2)
    assert len(out) == 1
    assert np.array_equal(out[0][0], out[0][-1])


def test_merge_strokes_joins_only_two_of_three_ends_meeting():
    # A junction of three strokes: the closest two join, the third stays.
    c = np.array([0.0, 0.0])
    arms = [np.array([c + 0.0, [5, 0]]), np.array([[0.05, 0.0], [0, 5]]), np.array([[0.3, 0.3], [-5, -5]])]
    out = merge_strokes(arms, tol=0.5)
    assert len(out) == 2


def test_merge_strokes_leaves_separate_strokes_unchanged_and_in_order():
    s = [np.array([[0.0, 0], [1, 0]]), np.array([[5.0, 5], [6, 6]])]
    out = merge_strokes(s)
    assert all(np.array_equal(a, b) for a, b in zip(out, s))


@settings(max_examples=50, deadline=None)
@given(st.lists(st.lists(st.tuples(st.integers(0, 6), st.integers(0, 6)), min_size=2, max_size=4),
                max_size=12))
def test_merge_strokes_keeps_every_point(raw):
    # Invariant: merging only joins; no point is lost or invented except
    # duplicates at exact joints and one closing point per ring.
    strokes = [np.array(s, float) for s in raw]
    out = merge_strokes(strokes, tol=0.5)
    before = sum(len(s) for s in strokes)
    after = sum(len(s) for s in out)
    assert len(out) <= len(strokes)
    assert after <= before + len(out)
    src = {tuple(p) for s in strokes for p in s}
    assert {tuple(p) for s in out for p in s} == src
