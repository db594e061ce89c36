"""Order and direction of strokes: fewest pen-up millimetres."""

import time
from dataclasses import dataclass

import numpy as np
from scipy.spatial import cKDTree

from ..errors import InkreachError
from ._greedy import greedy_path
from ._nearest import nearest_walk
from ._orient import orient
from ._search import UNITS_PER_SECOND, PathSearch, default_budget
from .stats import TravelStats, travel_stats

__all__ = ["Route", "order_strokes", "greedy_order"]

# Closed loops offer at most this many entry vertices to the construction.
_LOOP_SAMPLES = 64
# Candidate list length of the local search.
_NEIGHBOURS = 10
# Most kicks tried per stroke (when the budget allows).
_KICKS_PER_ITEM = 30


@dataclass(frozen=True, eq=False)
class Route:
    """Strokes in drawing order and direction, with how they were derived.

    Attributes
    ----------
    strokes : list of ndarray, shape (N_i, 2)
        The strokes, ordered and oriented.
    order : ndarray of int
        Index into the input strokes for each output position.
    reversed : ndarray of bool
        True where the stroke is drawn from its last point to its first.
    entry : ndarray of int
        For closed strokes the vertex the loop was rotated to start at
        (index into the input stroke); 0 for the others.
    stats : TravelStats
        Figures of the ordered strokes.
    """

    strokes: list
    order: np.ndarray
    reversed: np.ndarray
    entry: np.ndarray
    stats: TravelStats


def _as_strokes(strokes):
    out = []
    for i, s in enumerate(strokes):
        a = np.asarray(s, dtype=float)
        if a.ndim != 2 or a.shape[1] != 2:
            raise InkreachError(f"stroke {i} has shape {a.shape}; each stroke must be an (N, 2) array")
        if len(a) == 0:
            raise InkreachError(f"stroke {i} has no points; drop empty strokes before routing")
        if not np.all(np.isfinite(a)):
            raise InkreachError(f"stroke {i} contains NaN or infinity; clean the strokes first")
        out.append(a)
    return out


def _is_closed(s):
    return len(s) >= 3 and s[0, 0] == s[-1, 0] and s[0, 1] == s[-1, 1]


class _Items:
    """Nodes and construction entry points of a list of strokes.

    Open strokes are two nodes (start, end) joined by a fixed edge; single
    points and closed loops are one node (for a loop, at its entry vertex).
    """

    def __init__(self, strokes):
        n = len(strokes)
        self.strokes = strokes
        closed = np.array([_is_closed(s) for s in strokes], dtype=bool)
        single = np.array([len(s) == 1 for s in strokes], dtype=bool)
        self.closed = closed
        nn = np.where(closed | single, 1, 2)
        self.nnodes = nn
        self.base = np.concatenate([[0], np.cumsum(nn)[:-1]]).astype(np.int64)
        nnode = int(nn.sum())
        self.item_of_node = np.repeat(np.arange(n), nn)
        self.partner = np.arange(nnode)
        two = self.base[nn == 2]
        self.partner[two] = two + 1
        self.partner[two + 1] = two
        firsts = np.array([s[0] for s in strokes]).reshape(-1, 2)
        lasts = np.array([s[-1] for s in strokes]).reshape(-1, 2)
        self.first, self.last = firsts, lasts
        self.xy = np.empty((nnode, 2))
        self.xy[self.base] = firsts
        self.xy[two + 1] = lasts[nn == 2]
        self.vertex = np.zeros(n, dtype=np.int64)  # entry vertex of loops

        # Construction entry points: both ends of open strokes, points, and
        # up to _LOOP_SAMPLES vertices of each loop.
        opn = np.flatnonzero(nn == 2)
        sg = np.flatnonzero(single)
        cl = np.flatnonzero(closed)
        no = len(opn)
        pxy = [firsts[opn], lasts[opn], firsts[sg]]
        pexit = [np.arange(no, 2 * no), np.arange(no), 2 * no + np.arange(len(sg))]
        pitem = [opn, opn, sg]
        pnode = [self.base[opn], self.base[opn] + 1, self.base[sg]]
        pvert = [np.zeros(2 * no + len(sg), int)]
        count = 2 * no + len(sg)
        self.loop_candidates = {}  # item -> (sampled entry vertices, their points)
        for i in cl.tolist():
            m = len(strokes[i]) - 1
            v = np.unique(np.linspace(0, m - 1, min(m, _LOOP_SAMPLES)).round().astype(int))
            pxy.append(strokes[i][v])
            pexit.append(count + np.arange(len(v)))
            count += len(v)
            pitem.append(np.full(len(v), i))
            pnode.append(np.full(len(v), self.base[i]))
            pvert.append(v)
            self.loop_candidates[i] = (v, strokes[i][v])
        self.pxy = np.concatenate(pxy)
        self.pexit = np.concatenate(pexit)
        self.pitem = np.concatenate(pitem)
        self.pnode = np.concatenate(pnode)
        self.pvert = np.concatenate(pvert)
        # Point index of stroke 0 entered at its start (or its first vertex).
        self.first_point = int(np.flatnonzero((self.pitem == 0) & (self.pnode == 0))[0]) if n else 0

    def initial(self, start):
        """Nearest-neighbour node order; sets loop entry vertices."""
        pts = nearest_walk(self.pxy, self.pexit, self.pitem, len(self.strokes), start=start,
                           first=None if start is not None else self.first_point)
        pts = np.asarray(pts, dtype=np.int64)
        items = self.pitem[pts]
        nodes = self.pnode[pts]
        cl = self.closed[items]
        self.vertex[items[cl]] = self.pvert[pts[cl]]
        for i, v in zip(items[cl].tolist(), self.pvert[pts[cl]].tolist()):
            self.xy[self.base[i]] = self.strokes[i][v]
        two = self.nnodes[items] == 2
        second = np.where(two, self.partner[nodes], -1)
        seq = np.column_stack([nodes, second]).ravel()
        return seq[seq >= 0]

    def seed_entries(self):
        """Enter each loop at the sampled vertex closest to two other items.

        A cheap stand-in for the loop's neighbours before any order exists:
        the vertex whose two nearest entry points of other items are
        nearest (sum of the two distances).
        """
        cl = np.flatnonzero(self.closed)
        if not len(cl):
            return
        sel = np.flatnonzero(self.closed[self.pitem])
        k = min(8, len(self.pxy))
        d, j = cKDTree(self.pxy).query(self.pxy[sel], k=k, workers=-1 if len(sel) > 20_000 else 1)
        d = np.asarray(d).reshape(len(sel), k)
        j = np.asarray(j).reshape(len(sel), k)
        foreign = self.pitem[np.minimum(j, len(self.pxy) - 1)] != self.pitem[sel][:, None]
        d = np.where(foreign & (j < len(self.pxy)), d, np.inf)
        d.sort(axis=1)
        score = d[:, 0] + (d[:, 1] if k > 1 else 0.0)
        it = self.pitem[sel]
        o = np.lexsort((score, it))
        keep = np.ones(len(o), dtype=bool)
        keep[1:] = it[o][1:] != it[o][:-1]
        best = sel[o[keep]]
        self.vertex[self.pitem[best]] = self.pvert[best]
        self.xy[self.base[self.pitem[best]]] = self.pxy[best]

    def greedy(self, start):
        """Greedy-edge node order (loop entries as set)."""
        return greedy_path(self.xy, self.partner, start)

    def orient(self, path, start):
        """Best directions and loop entries (sampled) for the order of ``path``.

        Returns the new node order, its pen-up cost, and the loop nodes
        whose entry changed.
        """
        path = np.asarray(path, dtype=np.int64)
        items = self.item_of_node[path]
        keep = np.ones(len(path), dtype=bool)
        keep[1:] = items[1:] != items[:-1]
        order = items[keep]
        cands = {}
        for i, (vi, pts) in self.loop_candidates.items():
            v = self.vertex[i]
            cands[i] = (np.append(vi, v), np.vstack([pts, self.strokes[i][v:v + 1]]))
        cost, state = orient(self.first, self.last, {i: c[1] for i, c in cands.items()}, order, start)
        cl = self.closed[order]
        moved = []
        for k in np.flatnonzero(cl).tolist():
            i = int(order[k])
            vi, pts = cands[i]
            v = int(vi[state[k]])
            if v != self.vertex[i]:
                moved.append(int(self.base[i]))
                self.vertex[i] = v
                self.xy[self.base[i]] = pts[state[k]]
        two = self.nnodes[order] == 2
        b = self.base[order]
        rev = two & (state == 1)
        a1 = np.where(rev, b + 1, b)
        a2 = np.where(two, np.where(rev, b, b + 1), -1)
        seq = np.column_stack([a1, a2]).ravel()
        return seq[seq >= 0], cost, moved

    def route(self, path, start):
        """Route from an open path of nodes."""
        path = np.asarray(path, dtype=np.int64)
        items = self.item_of_node[path]
        keep = np.ones(len(path), dtype=bool)
        keep[1:] = items[1:] != items[:-1]
        order = items[keep]
        first_nodes = path[keep]
        rev = (self.nnodes[order] == 2) & (first_nodes != self.base[order])
        entry = np.where(self.closed[order], self.vertex[order], 0)
        out = []
        for i, r, e in zip(order.tolist(), rev.tolist(), entry.tolist()):
            s = self.strokes[i]
            if r:
                s = s[::-1].copy()
            elif e:
                v = s[:-1]
                s = np.concatenate([v[e:], v[:e], v[e:e + 1]])
            else:
                s = s.copy()
            out.append(s)
        return Route(out, order, rev, entry.astype(np.int64), travel_stats(out, start))

    def improve_entries(self, path, start):
        """Re-pick each loop's entry vertex given its neighbours on the path.

        Returns the loop nodes that moved and their new coordinates.
        """
        path = np.asarray(path, dtype=np.int64)
        items = self.item_of_node[path]
        where = np.flatnonzero(self.closed[items])
        moved, new = [], []
        xy = self.xy
        for k in where.tolist():
            i = int(items[k])
            node = int(path[k])
            v = self.strokes[i][:-1]
            d = np.zeros(len(v))
            if k > 0:
                d += np.hypot(*(v - xy[path[k - 1]]).T)
            elif start is not None:
                d += np.hypot(*(v - start).T)
            if k + 1 < len(path):
                d += np.hypot(*(v - xy[path[k + 1]]).T)
            best = int(np.argmin(d))
            if d[best] < d[self.vertex[i]] - 1e-9:
                self.vertex[i] = best
                xy[node] = v[best]
                moved.append(node)
                new.append(v[best])
        return moved, new


def _check_pair(value, message):
    """``value`` as two finite floats, None as None; else InkreachError(message)."""
    if value is None:
        return None
    s = np.asarray(value, dtype=float).reshape(-1)
    if s.shape != (2,) or not np.all(np.isfinite(s)):
        raise InkreachError(message)
    return s


def _check_start(start):
    return _check_pair(start, "start must be a finite point (x, y); pass two numbers or None")


def greedy_order(strokes, start=None):
    """Plain nearest-neighbour order: the usual baseline.

    From ``start`` (or the start of the first stroke) the pen always moves
    to the nearest free end of a stroke not yet drawn (any vertex of a
    closed loop, sampled), draws it, and repeats.

    Parameters
    ----------
    strokes : list of array_like, shape (N_i, 2)
    start : array_like of shape (2,), optional

    Returns
    -------
    Route

    References
    ----------
    .. [1] D. J. Rosenkrantz, R. E. Stearns and P. M. Lewis, "An analysis of
       several heuristics for the traveling salesman problem", SIAM J.
       Computing 6(3), 1977.
    """
    strokes = _as_strokes(strokes)
    start = _check_start(start)
    if not strokes:
        return _empty()
    items = _Items(strokes)
    return items.route(items.initial(start), start)


def _empty():
    z = np.zeros(0, dtype=np.int64)
    return Route([], z, z.astype(bool), z, travel_stats([]))


def order_strokes(strokes, start=None, *, time_budget=None, seed=0, min_gain=0.0):
    """Order and orient strokes for the least pen-up travel.

    Each stroke may be drawn either way; a closed stroke (first point equal
    to last) may be entered at any vertex. The order is built by greedy
    edge matching over stroke ends (KD-tree candidates, shortest first,
    then rounds over the free ends of the fragments), and improved by local
    search over 10 candidates per end (nearest and per quadrant) with
    don't-look bits: 2-opt (reversing a run of strokes, each turning
    round), Or-opt (moving a chain of one to three strokes, either way
    round), sequential 3-opt of the two-reversal kind, and segment
    insertion of runs of any length; then by an iterated local search of
    local double-bridge kicks, undone unless the path got shorter. After
    each phase the directions of all strokes and the loop entry vertices
    are chosen exactly for the order found, by a Viterbi pass, and loop
    entries are re-picked among all vertices.

    Parameters
    ----------
    strokes : list of array_like, shape (N_i, 2)
        Polylines, in any unit (mm or px).
    start : array_like of shape (2,), optional
        Where the pen is before the first stroke, in the strokes' unit; the
        approach from it counts in the search. Without it the construction
        begins with the first stroke, and both ends of the path are free.
    time_budget : float, optional
        Seconds of improvement (default 70 us per stroke, but at least
        1.2 ms per stroke up to 0.3 s, and at most 10 s). It is
        counted in machine-independent work units, so the result depends
        only on the input and ``seed``; a wall-clock guard at four times
        the budget stops very slow machines.
    seed : int
        Seed of the kicks.
    min_gain : float
        The kicks stop after three rounds in a row (a round is one kick per
        two stroke ends, at least 100) each shorten the pen-up travel by
        less than this, in the strokes' unit; 0 spends the whole budget.

    Returns
    -------
    Route

    References
    ----------
    .. [1] G. A. Croes, "A method for solving traveling-salesman problems",
       Operations Research 6(6), 1958 (2-opt).
    .. [2] I. Or, "Traveling salesman-type combinatorial problems and their
       relation to the logistics of regional blood banking", PhD thesis,
       Northwestern University, 1976 (Or-opt).
    .. [3] J. L. Bentley, "Fast algorithms for geometric traveling salesman
       problems", ORSA J. Computing 4(4), 1992 (neighbour lists,
       don't-look bits).
    .. [4] O. Martin, S. W. Otto and E. W. Felten, "Large-step Markov chains
       for the traveling salesman problem", Complex Systems 5, 1991 (kicks).
    .. [5] S. Lin and B. W. Kernighan, "An effective heuristic algorithm for
       the traveling-salesman problem", Operations Research 21(2), 1973
       (sequential 3-opt as a two-step move).
    .. [6] D. S. Johnson and L. A. McGeoch, "The traveling salesman
       problem: a case study in local optimization", in *Local Search in
       Combinatorial Optimization*, Wiley, 1997 (greedy starts, quadrant
       neighbours, iterated 3-opt).
    .. [7] A. J. Viterbi, "Error bounds for convolutional codes and an
       asymptotically optimum decoding algorithm", IEEE Trans. Information
       Theory 13(2), 1967 (the direction pass).

    Examples
    --------
    >>> import numpy as np
    >>> s = [np.array([[0., 0], [1, 0]]), np.array([[3., 0], [2, 0]]), np.array([[1., 0], [2, 0]])]
    >>> r = order_strokes(s)
    >>> r.order.tolist(), r.reversed.tolist(), r.stats.pen_up_mm
    ([0, 2, 1], [False, False, True], 0.0)
    """
    strokes = _as_strokes(strokes)
    start = _check_start(start)
    if not strokes:
        return _empty()
    items = _Items(strokes)
    items.seed_entries()
    seq, _, _ = items.orient(items.greedy(start), start)
    n = len(strokes)
    budget = default_budget(n, per_item=70e-6) if time_budget is None else float(time_budget)
    search = PathSearch(items.xy, items.partner, seq, start=start, k=_NEIGHBOURS, quad_pool=3)
    work_limit = budget * UNITS_PER_SECOND
    deadline = time.perf_counter() + 4.0 * budget + 1.0
    search.run(work_limit=work_limit, deadline=deadline)
    _reorient(items, search, start, work_limit, deadline)
    has_loops = bool(items.closed.any())
    if has_loops:
        _entry_rounds(items, search, start, work_limit, deadline)
    rng = np.random.default_rng(seed)
    search.kick_search(rng, kicks=_KICKS_PER_ITEM * n, work_limit=work_limit, deadline=deadline,
                       min_gain=float(min_gain))
    if has_loops:
        _entry_rounds(items, search, start, 1.1 * work_limit, deadline)
    _reorient(items, search, start, 1.1 * work_limit, deadline, final=True)
    return items.route(search.path(), start)


def _reorient(items, search, start, work_limit, deadline, rounds=4, final=False):
    """Exact directions and loop entries for the search's order; re-search if it paid.

    With ``final`` the last round applies the directions without searching
    again, so the result is the best orientation of its own order.
    """
    for r in range(rounds):
        old = search.path()
        seq, cost, moved = items.orient(old, start)
        if not cost < search.cost - 1e-9:
            return
        if moved:
            search.set_xy(moved, items.xy[moved])
        search.set_order(seq)
        if final and r == rounds - 1:
            return
        changed = np.flatnonzero(seq != old)
        active = np.unique(np.concatenate([seq[np.clip(changed + d, 0, len(seq) - 1)]
                                           for d in (-1, 0, 1)] + [np.asarray(moved, np.int64)]))
        if search.has_start:
            active = np.append(active, search.S)
        search.run(active.tolist(), work_limit=work_limit, deadline=deadline)
        if final:
            continue
        return


def _entry_rounds(items, search, start, work_limit, deadline, rounds=3):
    for _ in range(rounds):
        path = search.path()
        moved, new = items.improve_entries(path, start)
        if not moved:
            return
        search.set_xy(moved, new)
        pos = search.pos
        active = set(moved)
        M = search.M
        for v in moved:
            p = pos[v]
            active.update((search.tour[(p + 1) % M], search.tour[(p - 1) % M]))
        search.run(sorted(a for a in active if a < search.live), work_limit, deadline)
