"""Nearest-neighbour construction over item entry points with a KD-tree."""

import numpy as np
from scipy.spatial import cKDTree

__all__ = []


def nearest_walk(pxy, pexit, pitem, n_items, start=None, first=None):
    """Greedy walk: always go to the nearest entry point of an unvisited item.

    Parameters
    ----------
    pxy : ndarray, shape (P, 2)
        Entry points (both ends of an open stroke, a point, sampled vertices
        of a closed loop).
    pexit : ndarray, shape (P, 2)
        Where the pen leaves the item when it enters at that point.
    pitem : ndarray of int, shape (P,)
        Item of each entry point.
    n_items : int
    start : array_like of shape (2,), optional
        Where the pen is before the first item.
    first : int, optional
        Entry point to begin with (used when ``start`` is None).

    Returns
    -------
    list of int
        Entry point index for each item, in visiting order.

    Notes
    -----
    The tree cannot delete points, so visited items stay in it and are
    skipped; the tree is rebuilt over the unvisited points once half of
    its points are dead, which keeps each query short.

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
    npts = np.bincount(pitem, minlength=n_items).tolist()
    exits = np.asarray(pexit, dtype=float).tolist()
    visited = bytearray(n_items)
    out = []
    dead = 0
    if start is None:
        first = 0 if first is None else first
    if first is not None:
        out.append(first)
        it = int(pitem[first])
        visited[it] = 1
        dead += npts[it]
        cur = exits[first]
    else:
        cur = [float(start[0]), float(start[1])]

    def rebuild():
        alive = np.frombuffer(bytes(visited), dtype=np.uint8)[pitem] == 0
        sub = np.flatnonzero(alive)
        return sub.tolist(), pitem[sub].tolist(), cKDTree(pxy[sub])

    sub, sub_items, tree = rebuild()
    dead = 0
    while len(out) < n_items:
        if 2 * dead > len(sub):
            sub, sub_items, tree = rebuild()
            dead = 0
        size = len(sub)
        k = min(8, size)
        found = -1
        while found < 0:
            _, idx = tree.query(cur, k=k)
            for j in (idx.tolist() if k > 1 else [int(idx)]):
                if j < size and not visited[sub_items[j]]:
                    found = j
                    break
            if found < 0:
                if k >= size:
                    sub, sub_items, tree = rebuild()
                    dead = 0
                    size = len(sub)
                    k = min(8, size)
                else:
                    k = min(4 * k, size)
        p = sub[found]
        it = sub_items[found]
        visited[it] = 1
        dead += npts[it]
        out.append(p)
        cur = exits[p]
    return out
