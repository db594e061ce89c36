"""Reference pen-up routes from LKH (through elkai), for the benchmark only.

The stroke-ordering problem is put to LKH as a symmetric TSP on stroke ends:
each stroke is a pair of nodes (its two ends) joined by a free edge, every
other edge costs its straight length plus a constant that makes dropping a
free edge dear, and a dummy node tied to the start turns the closed tour
into an open path from the start (the usual construction, common practice).
Closed loops count as a stroke whose two ends coincide (entered at their
first point); the planner may enter them anywhere, so it can only do better.

References
----------
K. Helsgaun, "An effective implementation of the Lin-Kernighan traveling
salesman heuristic", European Journal of Operational Research 126(1), 2000.
"""

import time

import numpy as np

__all__ = ["lkh_order", "path_travel"]

_UNIT = 100.0   # LKH takes integer weights: distances in 1/100 of the unit


def path_travel(starts, ends, order, reversed_, start):
    """Pen-up length (approach included) of strokes taken in ``order``."""
    a = np.where(reversed_[:, None], ends[order], starts[order])
    b = np.where(reversed_[:, None], starts[order], ends[order])
    hops = np.hypot(*(a[1:] - b[:-1]).T).sum()
    return float(np.hypot(*(a[0] - start)) + hops)


def lkh_order(strokes, start, runs=1):
    """Order and direction of strokes from LKH; returns (order, reversed, seconds)."""
    import elkai

    t0 = time.perf_counter()
    s = np.array([np.asarray(p, float)[0] for p in strokes])
    e = np.array([np.asarray(p, float)[-1] for p in strokes])
    n = len(strokes)
    # node 0 = start, 1 = dummy, 2 + 2i = start of stroke i, 3 + 2i = its end
    pts = np.vstack([np.asarray(start, float)[None], np.asarray(start, float)[None],
                     np.column_stack([s, e]).reshape(-1, 2)])
    d = np.rint(np.hypot(*(pts[:, None, :] - pts[None, :, :]).transpose(2, 0, 1)) * _UNIT)
    d = d.astype(np.int64)
    d[1, :] = 0
    d[:, 1] = 0
    big = int(d.max()) * 3 + 1
    d += big
    idx = np.arange(n)
    d[2 + 2 * idx, 3 + 2 * idx] = 0
    d[3 + 2 * idx, 2 + 2 * idx] = 0
    d[0, 1] = d[1, 0] = 0
    np.fill_diagonal(d, 0)
    tour = elkai.DistanceMatrix(d.tolist()).solve_tsp(runs=runs)[:-1]
    seconds = time.perf_counter() - t0
    tour = np.asarray(tour)
    k = int(np.flatnonzero(tour == 0)[0])
    tour = np.roll(tour, -k)
    if tour[1] == 1:               # walk away from the dummy
        tour = np.concatenate([[0], tour[1:][::-1]])
    path = tour[1:]
    path = path[path != 1]
    first = path[0::2]
    second = path[1::2]
    if not np.all(first // 2 == second // 2):
        raise RuntimeError("LKH split a stroke; raise the pairing constant")
    order = (first - 2) // 2
    rev = (first % 2) == 1
    return order, rev, seconds
