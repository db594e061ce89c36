"""Greedy-edge construction of an open path through items of one or two ends."""

import numpy as np
from scipy.spatial import cKDTree

from ._nearest import nearest_walk

__all__ = []

_K = 8
_ROUNDS = 12


def greedy_path(xy, partner, start=None, k=_K):
    """Open path through every node, built by greedy edge matching.

    Every node of a two-node item (an open stroke) already has its fixed
    edge to ``partner`` and takes one more; a one-node item takes two.
    Candidate edges (the ``k`` nearest nodes of each node, from a KD-tree)
    are accepted shortest first unless a node is full or the edge would
    close a cycle (union-find over fragments). The fragments left over are
    joined into one path by a nearest-neighbour walk over their free ends.

    Parameters
    ----------
    xy : ndarray, shape (n, 2)
        Node coordinates.
    partner : ndarray of int, shape (n,)
        The other node of each node's item (itself for one-node items).
    start : ndarray of shape (2,), optional
        Where the pen is before the path: one more node, of one free edge,
        where the path begins.
    k : int
        Candidate neighbours per node.

    Returns
    -------
    ndarray of int
        Node order; the two nodes of an item are next to each other.

    References
    ----------
    .. [1] J. L. Bentley, "Fast algorithms for geometric traveling salesman
       problems", ORSA J. Computing 4(4), 1992 (greedy matching with
       neighbour lists).
    .. [2] D. S. Johnson and L. A. McGeoch, "The traveling salesman
       problem: a case study in local optimization", in *Local Search in
       Combinatorial Optimization*, Wiley, 1997 (greedy starts for 2-opt
       and 3-opt).
    """
    xy = np.asarray(xy, dtype=float)
    partner = np.asarray(partner, dtype=np.int64)
    n_real = len(xy)
    if n_real <= 2:
        return np.arange(n_real)
    if start is not None:
        # The start is one more node, with room for one edge (its other
        # side is the pen's position before the path).
        xy = np.vstack([xy, np.asarray(start, float).reshape(1, 2)])
        partner = np.append(partner, n_real)
    n = len(xy)
    single = partner == np.arange(n)
    cap = np.where(single, 2, 1).astype(np.int64)
    if start is not None:
        cap[n_real] = 1
    cap = cap.tolist()
    # union-find over nodes; an item's nodes start in one set
    parent = np.minimum(np.arange(n), partner).tolist()
    adj_a = [-1] * n
    adj_b = [-1] * n

    def find(x):
        r = x
        while parent[r] != r:
            r = parent[r]
        while parent[x] != r:
            parent[x], x = r, parent[x]
        return r

    def accept(lo, hi):
        added = 0
        for a, b in zip(lo, hi):
            if not cap[a] or not cap[b]:
                continue
            ra, rb = find(a), find(b)
            if ra == rb:
                continue
            parent[ra] = rb
            cap[a] -= 1
            cap[b] -= 1
            if adj_a[a] < 0:
                adj_a[a] = b
            else:
                adj_b[a] = b
            if adj_a[b] < 0:
                adj_a[b] = a
            else:
                adj_b[b] = a
            added += 1
        return added

    # Rounds of greedy matching over the nodes that still have room: the
    # first over every node, later ones over the fragments' free ends only
    # (so far-apart fragments still join shortest first, as in the greedy
    # algorithm over all edges).
    live = np.arange(n)
    kk = k
    for _ in range(_ROUNDS):
        m = len(live)
        if m < 2:
            break
        kq = min(kk + 2, m)
        dd, idx = cKDTree(xy[live]).query(xy[live], k=kq, workers=-1 if m > 20_000 else 1)
        u = np.repeat(live, kq)
        v = live[np.minimum(idx.ravel(), m - 1)]
        d = dd.ravel()
        ok = (idx.ravel() < m) & (v != u) & (v != partner[u])
        root = np.array([find(x) for x in live.tolist()], dtype=np.int64)
        ok &= np.repeat(root, kq) != root[np.searchsorted(live, v)]
        u, v, d = u[ok], v[ok], d[ok]
        lo, hi = np.minimum(u, v), np.maximum(u, v)
        key, first = np.unique(lo * n + hi, return_index=True)
        o = np.argsort(d[first], kind="stable")
        added = accept((key[o] // n).tolist(), (key[o] % n).tolist())
        live = np.flatnonzero(np.asarray(cap) > 0)
        kk = k if added else 2 * kk
        if kk > 64:
            break

    # Walk each fragment from one free end to the other.
    frags = []
    seen = bytearray(n)
    first_nodes = [n_real] if start is not None else []
    for s in first_nodes + list(range(n)):
        if seen[s] or not (cap[s] or s == n_real):
            continue
        seq = [s]
        seen[s] = 1
        prev, cur = -1, s
        while True:
            p = partner[cur] if not single[cur] else cur
            if p != cur and p != prev and not seen[p]:
                nxt = int(p)
            else:
                nxt = -1
                for w in (adj_a[cur], adj_b[cur]):
                    if w >= 0 and w != prev and not seen[w]:
                        nxt = w
                        break
            if nxt < 0:
                break
            seen[nxt] = 1
            seq.append(nxt)
            prev, cur = cur, nxt
        frags.append(seq)
    ends = np.array([[f[0], f[-1]] for f in frags], dtype=np.int64)
    nf = len(frags)
    one = ends[:, 0] == ends[:, 1]
    # entry points: both ends of multi-node fragments, the node of the others
    two = np.flatnonzero(~one)
    pt_node = np.concatenate([ends[two, 0], ends[two, 1], ends[one, 0]])
    pt_frag = np.concatenate([two, two, np.flatnonzero(one)])
    m2 = len(two)
    pexit = np.concatenate([np.arange(m2, 2 * m2), np.arange(m2), 2 * m2 + np.arange(int(one.sum()))])
    # Fragment 0 begins at the start node when there is one.
    first = int(np.flatnonzero((pt_frag == 0) & (pt_node == frags[0][0]))[0])
    walk = nearest_walk(xy[pt_node], pexit, pt_frag, nf, first=first)
    out = []
    for p in walk:
        f = frags[pt_frag[p]]
        out.extend(f if pt_node[p] == f[0] else f[::-1])
    out = np.asarray(out, dtype=np.int64)
    return out[out < n_real]
