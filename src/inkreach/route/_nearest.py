"""Nearest-neighbour construction over item entry points with a KD-tree."""

import numpy as np
from scipy.spatial import cKDTree

__all__ = []

_K = 12


def nearest_walk(pxy, pexit, pitem, n_items, start=None, first=None):
    """Greedy walk: always go to the nearest entry point of an unvisited item.

    Parameters
    ----------
    pxy : ndarray, shape (P, 2)
        Entry points (both ends of an open stroke, a point, sampled vertices
        of a closed loop).
    pexit : ndarray of int, shape (P,)
        Index of the entry point where the pen leaves the item when it
        enters at each point (the other end of an open stroke, else itself).
    pitem : ndarray of int, shape (P,)
        Item of each entry point.
    n_items : int
    start : array_like of shape (2,), optional
        Where the pen is before the first item.
    first : int, optional
        Entry point to begin with (used when ``start`` is None; default 0).

    Returns
    -------
    list of int
        Entry point index for each item, in visiting order.

    Notes
    -----
    Each point's nearest entry points of other items are found in one
    vectorised KD-tree query; the walk scans that list and only queries the
    tree when every listed item is already drawn. The tree cannot delete
    points, so it is rebuilt over the unvisited points once half of its
    points are dead, which keeps those queries short.

    References
    ----------
    .. [1] D. J. Rosenkrantz, R. E. Stearns and P. M. Lewis, "An analysis of
       several heuristics for the traveling salesman problem", SIAM J.
       Computing 6(3), 1977 (nearest neighbour).
    .. [2] J. L. Bentley, "K-d trees for semidynamic point sets", Proc. 6th
       ACM Symposium on Computational Geometry, 1990.
    """
    pxy = np.asarray(pxy, dtype=float)
    pitem = np.asarray(pitem, dtype=np.int64)
    P = len(pxy)
    npts = np.bincount(pitem, minlength=n_items).tolist()
    exits = np.asarray(pexit, dtype=np.int64).tolist()
    items = pitem.tolist()
    visited = bytearray(n_items)
    full = cKDTree(pxy)
    k = min(_K + 1, P)
    _, near = full.query(pxy, k=k, workers=-1 if P > 20_000 else 1)
    near = np.asarray(near).reshape(P, k).tolist()

    out = []
    if start is None:
        first = 0 if first is None else first
    if first is not None:
        out.append(first)
        visited[items[first]] = 1
        cur = exits[first]
    else:
        cur = -1
        here = [float(start[0]), float(start[1])]

    state = {"sub": None, "sub_items": None, "tree": None, "dead": 0}

    def rebuild():
        alive = np.frombuffer(bytes(visited), dtype=np.uint8)[pitem] == 0
        sub = np.flatnonzero(alive)
        state.update(sub=sub.tolist(), sub_items=pitem[sub].tolist(), tree=cKDTree(pxy[sub]), dead=0)

    def query(x):
        if state["tree"] is None or 2 * state["dead"] > len(state["sub"]):
            rebuild()
        sub, sub_items, tree = state["sub"], state["sub_items"], state["tree"]
        size = len(sub)
        kk = min(8, size)
        while True:
            _, idx = tree.query(x, k=kk)
            for j in (np.atleast_1d(idx).tolist()):
                if j < size and not visited[sub_items[j]]:
                    return sub[j]
            if kk >= size:
                rebuild()
                sub, sub_items, tree = state["sub"], state["sub_items"], state["tree"]
                size = len(sub)
                kk = min(8, size)
            else:
                kk = min(4 * kk, size)

    while len(out) < n_items:
        p = -1
        if cur >= 0:
            for j in near[cur]:
                if not visited[items[j]]:
                    p = j
                    break
            if p < 0:
                p = query(pxy[cur])
        else:
            p = query(here)
        it = items[p]
        visited[it] = 1
        state["dead"] += npts[it]
        out.append(p)
        cur = exits[p]
    return out
