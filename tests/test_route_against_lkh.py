"""Pen-up travel against LKH, a general-purpose TSP solver (through elkai)."""

import numpy as np
import pytest

from inkreach.route import order_strokes

elkai = pytest.importorskip("elkai")


def lkh_pen_up(strokes, start=None, runs=1, scale=100.0):
    """Pen-up length of LKH's best open path through the strokes.

    The standard reduction (two nodes per cluster, as in Noon and Bean,
    "An efficient transformation of the generalized traveling salesman
    problem", INFOR 31(1), 1993): each stroke becomes its two end nodes,
    and every edge between different strokes costs a large constant more,
    so the best tour uses every stroke's own edge (cost 0) and decides its
    direction. The open path becomes a tour through one extra node at
    distance 0 from every end; with a start point there are two extra
    nodes, the start and the free node, joined like a stroke. Distances are
    scaled to integers as LKH needs.
    """
    ends = np.array([[s[0], s[-1]] for s in strokes], dtype=float).reshape(-1, 2)
    n = len(ends)
    xy = ends
    extra = 1 if start is None else 2
    m = n + extra
    d = np.zeros((m, m))
    d[:n, :n] = np.hypot(*(xy[:, None, :] - xy[None, :, :]).transpose(2, 0, 1))
    pair = np.arange(m)
    pair[0:n:2], pair[1:n:2] = np.arange(1, n, 2), np.arange(0, n, 2)
    if start is not None:
        s = np.hypot(*(xy - np.asarray(start, float)).T)
        d[n, :n] = d[:n, n] = s  # node n: the start; node n + 1: the free node
        pair[n], pair[n + 1] = n + 1, n
    big = 2.0 * d.max() + 1.0
    w = d + big
    w[np.arange(m), pair] = 0.0
    np.fill_diagonal(w, 0.0)
    w = np.rint(w * scale).astype(np.int64)
    tour = elkai.DistanceMatrix(w.tolist()).solve_tsp(runs=runs)[:-1]
    tour = np.asarray(tour)
    free = n if start is None else n + 1
    k = int(np.flatnonzero(tour == free)[0])
    path = np.roll(tour, -k - 1)[:-1]  # open path ending where the free node was
    if start is not None:
        if path[0] != n:
            path = path[::-1]
        assert path[0] == n
        path = path[1:]
    path = path.reshape(-1, 2)
    assert np.all(path[:, 0] // 2 == path[:, 1] // 2), "LKH broke a stroke"
    return float(np.hypot(*(xy[path[1:, 0]] - xy[path[:-1, 1]]).T).sum())
