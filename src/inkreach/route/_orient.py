"""Best direction and loop entry of every stroke for a fixed visiting order."""

import math

import numpy as np

__all__ = []


def orient(first, last, loops, order, start=None):
    """Exact choice of stroke directions and loop entries for a fixed order.

    A Viterbi pass over the sequence: each open stroke has two states
    (forwards, backwards), a single point one, a closed loop one per
    candidate entry vertex; the cost of a transition is the straight
    pen-up hop from one state's exit to the next state's entry.

    Parameters
    ----------
    first, last : ndarray, shape (n, 2)
        First and last point of every item (equal for points and loops).
    loops : dict of int to ndarray, shape (V, 2)
        Candidate entry vertices of the closed loops, by item.
    order : ndarray of int
        Visiting order of the items.
    start : ndarray of shape (2,), optional
        Where the pen is before the first item.

    Returns
    -------
    cost : float
        Pen-up length of the best choice (approach from ``start`` included).
    state : ndarray of int
        For each position of ``order``: 1 if the open stroke is drawn
        backwards, else 0; for a loop the index of its entry among its
        candidate vertices.

    References
    ----------
    .. [1] A. J. Viterbi, "Error bounds for convolutional codes and an
       asymptotically optimum decoding algorithm", IEEE Trans. Information
       Theory 13(2), 1967 (the dynamic programme over a chain of states).
    """
    order = np.asarray(order, dtype=np.int64)
    n = len(order)
    if n == 0:
        return 0.0, np.zeros(0, dtype=np.int64)
    f = np.asarray(first, float)[order]
    g = np.asarray(last, float)[order]
    # Hops between consecutive items for the four open-stroke state pairs:
    # exit of k (last if forwards, first if backwards) to entry of k + 1.
    ex = (g[:-1], f[:-1])
    en = (f[1:], g[1:])
    hop = [[np.hypot(*(en[b] - ex[a]).T).tolist() for b in (0, 1)] for a in (0, 1)]
    h00, h01, h10, h11 = hop[0][0], hop[0][1], hop[1][0], hop[1][1]
    is_loop = np.zeros(n, dtype=bool)
    if loops:
        is_loop = np.isin(order, np.fromiter(loops, dtype=np.int64))
    two = ~np.all(f == g, axis=1) & ~is_loop
    two_l = two.tolist()
    loop_l = is_loop.tolist()
    order_l = order.tolist()

    if start is not None:
        s = np.asarray(start, float)
        if loop_l[0]:
            c = np.hypot(*(loops[order_l[0]] - s).T)
        else:
            c0 = math.hypot(*(f[0] - s))
            c1 = math.hypot(*(g[0] - s)) if two_l[0] else math.inf
            c = (c0, c1)
    else:
        c = np.zeros(len(loops[order_l[0]])) if loop_l[0] else (0.0, 0.0 if two_l[0] else math.inf)
    back = [None] * n
    inf = math.inf
    for k in range(1, n):
        pl, cl = loop_l[k - 1], loop_l[k]
        if not pl and not cl:
            c0, c1 = c
            a0 = c0 + h00[k - 1]
            a1 = c1 + h10[k - 1]
            if two_l[k]:
                b0 = c0 + h01[k - 1]
                b1 = c1 + h11[k - 1]
                if b0 <= b1:
                    n1, p1 = b0, 0
                else:
                    n1, p1 = b1, 1
            else:
                n1, p1 = inf, 0
            if a0 <= a1:
                c, back[k] = (a0, n1), (0, p1)
            else:
                c, back[k] = (a1, n1), (1, p1)
            continue
        # A step touching a loop: small dense arrays.
        if pl:
            e_prev = loops[order_l[k - 1]]
            cp = c
        else:
            e_prev = np.array([g[k - 1], f[k - 1]])
            cp = np.array(c)
        if cl:
            e_cur = loops[order_l[k]]
        else:
            e_cur = np.array([f[k], g[k]])
        d = np.hypot(e_cur[None, :, 0] - e_prev[:, None, 0], e_cur[None, :, 1] - e_prev[:, None, 1])
        d += cp[:, None]
        arg = d.argmin(axis=0)
        best = d[arg, np.arange(d.shape[1])]
        if not cl:
            if not two_l[k]:
                best[1] = inf
            c = (float(best[0]), float(best[1]))
        else:
            c = best
        back[k] = arg.tolist()
    state = np.zeros(n, dtype=np.int64)
    cl = np.asarray(c, dtype=float)
    s = int(np.argmin(cl))
    cost = float(cl[s])
    for k in range(n - 1, -1, -1):
        state[k] = s
        if k:
            s = int(back[k][s])
    return cost, state
