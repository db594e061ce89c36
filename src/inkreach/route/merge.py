"""Join strokes whose ends meet, and close loops."""

import numpy as np
from scipy.spatial import cKDTree

from ..errors import InkreachError

__all__ = ["merge_strokes"]


def merge_strokes(strokes, tol=0.5):
    """Join strokes end to end where their ends meet within ``tol``.

    Ends are paired greedily, closest pairs first, each end joining at most
    one other (either end to either end), so chains of several strokes
    become one; where three or more ends meet, the closest two join. A
    stroke (or a chain) whose first and last points lie within ``tol`` is
    made exactly closed by appending a copy of its first point, unless they
    are already equal. Closed input strokes are left alone.

    Parameters
    ----------
    strokes : list of array_like, shape (N_i, 2)
        Polylines.
    tol : float
        Largest gap between two ends that still counts as touching, in the
        strokes' unit.

    Returns
    -------
    list of ndarray, shape (M_i, 2)
        The merged strokes, ordered by the first input stroke each holds.
        Every input point appears once, in its stroke's order or reversed;
        where two ends are exactly equal the duplicate point is dropped.

    References
    ----------
    .. [1] J. L. Bentley, "Multidimensional binary search trees used for
       associative searching", Comm. ACM 18(9), 1975 (the KD-tree over ends).

    Examples
    --------
    >>> import numpy as np
    >>> a = np.array([[0., 0], [1, 0]])
    >>> b = np.array([[1.2, 0], [1, 1]])
    >>> c = np.array([[0., 0.1], [1, 1]])
    >>> [m.tolist() for m in merge_strokes([a, b, c], tol=0.3)]
    [[[0.0, 0.0], [1.0, 0.0], [1.2, 0.0], [1.0, 1.0], [0.0, 0.1], [0.0, 0.0]]]
    """
    tol = float(tol)
    if not tol >= 0:
        raise InkreachError(f"tol must be zero or more, got {tol}; pass a gap in the strokes' unit")
    strokes = [np.asarray(s, dtype=float).reshape(-1, 2) for s in strokes]
    strokes = [s for s in strokes if len(s)]
    n = len(strokes)
    if n == 0:
        return []
    ends = np.array([[s[0], s[-1]] for s in strokes]).reshape(-1, 2)  # end e of stroke e // 2
    gap_self = np.hypot(*(ends[0::2] - ends[1::2]).T)
    closed_in = np.array([len(s) >= 3 for s in strokes]) & (gap_self <= tol)
    link = np.full(2 * n, -1, dtype=np.int64)
    pairs = cKDTree(ends).query_pairs(tol, output_type="ndarray")
    if len(pairs):
        a, b = pairs[:, 0], pairs[:, 1]
        ok = (a // 2 != b // 2) & ~closed_in[a // 2] & ~closed_in[b // 2]
        a, b = a[ok], b[ok]
        d = np.hypot(*(ends[a] - ends[b]).T)
        order = np.lexsort((b, a, d))
        used = bytearray(2 * n)
        for x, y in zip(a[order].tolist(), b[order].tolist()):
            if not used[x] and not used[y]:
                used[x] = used[y] = 1
                link[x], link[y] = y, x

    seen = bytearray(n)
    chains = []  # (first stroke index, list of (stroke, forward))

    def walk(e):
        chain = []
        while True:
            i = e // 2
            if seen[i]:
                return chain
            seen[i] = 1
            chain.append((i, e % 2 == 0))
            e = link[e ^ 1]
            if e < 0:
                return chain

    link = link.tolist()
    for e in range(2 * n):  # open chains, from a free end
        if link[e] < 0 and not seen[e // 2]:
            chain = walk(e)
            ring = len(chain) == 1 and bool(closed_in[chain[0][0]])
            chains.append((min(i for i, _ in chain), chain, ring))
    for i in range(n):  # what is left are rings
        if not seen[i]:
            chain = walk(2 * i)
            chains.append((min(j for j, _ in chain), chain, True))
    chains.sort(key=lambda c: c[0])

    out = []
    for _, chain, ring in chains:
        parts = []
        for i, fwd in chain:
            s = strokes[i] if fwd else strokes[i][::-1]
            if parts and np.array_equal(parts[-1][-1], s[0]):
                s = s[1:]
            parts.append(s)
        m = np.concatenate(parts) if len(parts) > 1 else parts[0].copy()
        if ring and not np.array_equal(m[0], m[-1]):
            m = np.vstack([m, m[:1]])
        out.append(m)
    return out
