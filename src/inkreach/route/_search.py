"""Local search for an open path through items of one or two ends.

Every item (a point, a closed loop, or an open stroke) is one node or two
nodes joined by a fixed edge (the stroke itself). The open path is closed
into a cycle with two extra nodes: ``S`` (the start point, or free when
there is none) and ``D`` (free: distance 0 to everything), joined by a
fixed edge like a stroke. A cycle allows segment reversals on the shorter
side, and an edge into ``D`` costs nothing, so the cycle's cost is the
open path's cost.

The tour is an array of nodes with an inverse position array. Moves are
2-opt (reverse a segment; fixed edges are never cut, so the strokes in it
turn round with it), Or-opt (move a chain of one to three items to
another gap, either way round), sequential 3-opt of the two-reversal kind
(evaluated on the tour the first reversal would leave) and segment
insertion of a run of any length, over candidate lists (nearest nodes
and nearest per quadrant; the start node is a candidate of the nodes
near it) with a queue of active nodes (don't-look bits), followed by
random segment-swap kicks (iterated local search) while work is left.

Work is counted in deterministic units (node activations plus moved
array entries), so a given seed gives the same result on any machine; a
wall-clock guard stops runaway searches on very slow machines.
"""

import math
import time
from array import array
from collections import deque

import numpy as np
from scipy.spatial import cKDTree

from ..motion import trapezoid_time

__all__ = []

_EPS = 1e-9

# Work units per second of budget, measured on the development machine
# (two cores, busy): one unit is one node activation, one 3-opt search from
# a node, or one array move (plus one per 2048 entries moved).
UNITS_PER_SECOND = 140_000.0


def default_budget(n_items, per_item=100e-6):
    """Default search budget in seconds for ``n_items`` items.

    ``per_item`` per item, but at least 1.2 ms per item up to 0.3 s (small
    sets gain most from kicks), and at most 10 s.
    """
    return float(min(max(per_item * n_items, min(0.3, 1.2e-3 * n_items)), 10.0))


def improve_path(xy, partner, order, start, budget, seed, kicks, min_gain=0.0, **options):
    """Local search, then ``kicks`` kicks, from an initial order within ``budget`` seconds.

    The kicks stop after a round of them gains less than ``min_gain``
    (:meth:`PathSearch.kick_search`). ``options`` go to :class:`PathSearch`.
    Returns the search (read its ``path()`` and ``cost``) and the cost of
    ``order`` before it.
    """
    work_limit = budget * UNITS_PER_SECOND
    deadline = time.perf_counter() + 4.0 * budget + 1.0
    search = PathSearch(xy, partner, order, start=start, **options)
    before = search.cost
    search.run(work_limit=work_limit, deadline=deadline)
    search.kick_search(np.random.default_rng(seed), kicks=kicks, work_limit=work_limit,
                       deadline=deadline, min_gain=min_gain)
    return search, before


class PathSearch:
    """Tour state and moves; see the module docstring.

    Parameters
    ----------
    xy : ndarray, shape (n, 2)
        Coordinates of the real nodes (mm, or joint angles for ``kind="joint"``).
    partner : ndarray of int, shape (n,)
        The other end of each node's item (the node itself for one-node items).
    order : sequence of int
        Initial open path through every real node; both ends of a two-node
        item must be next to each other.
    start : array_like of shape (2,) or None
        Fixed start point; None leaves the path free at both ends.
    kind : {"euclidean", "joint"}
        Distance: straight line, or the trapezoid time of the slower joint.
    vmax, amax : float
        Joint speed and acceleration limits for ``kind="joint"``.
    k : int
        Candidate list length.
    quad_pool : int
        With more than 1, the lists mix the nearest nodes with the nearest
        in each quadrant, drawn from the ``quad_pool * k`` nearest.
    """

    def __init__(self, xy, partner, order, start=None, kind="euclidean",
                 vmax=1.0, amax=1.0, k=8, quad_pool=1):
        xy = np.asarray(xy, dtype=float)
        n = len(xy)
        self.n = n
        self.S, self.D = n, n + 1
        self.M = n + 2
        self.kind = kind
        self.k = k
        self.xs = xy[:, 0].tolist()
        self.ys = xy[:, 1].tolist()
        self.partner = list(np.asarray(partner, dtype=np.int64).tolist()) + [n + 1, n]
        self.has_start = start is not None
        self.start = (0.0, 0.0) if start is None else (float(start[0]), float(start[1]))
        self.vmax, self.amax = float(vmax), float(amax)
        # array.array gives fast scalar reads in the search loop; the numpy
        # views over the same memory do the bulk moves.
        t = np.concatenate([[self.S], np.asarray(order, dtype=np.int64), [self.D]])
        self.tour = array("q", t.astype(np.int64).tobytes())
        self.pos = array("q", bytes(8 * self.M))
        self.tn = np.frombuffer(self.tour, dtype=np.int64)
        self.pn = np.frombuffer(self.pos, dtype=np.int64)
        self.pn[self.tn] = np.arange(self.M)
        self._build_dist()
        self.quad_pool = quad_pool
        self.live = n + 1 if self.has_start else n  # nodes that can be activated
        self.neigh, self.neigh_d = self._neighbours()
        self.cost = self._tour_cost()
        self.work = 0
        self._log = None

    # -- distances ---------------------------------------------------------
    def _build_dist(self):
        xs, ys, n, S, D = self.xs, self.ys, self.n, self.S, self.D
        has_start = self.has_start
        sx, sy = self.start
        if self.kind == "euclidean":
            base = math.hypot
        else:
            # Scalar form of motion.trapezoid_time on the larger angle change
            # (a numpy call per edge would dominate the search).
            v, a = self.vmax, self.amax
            knee = v * v / a
            inv_v, v_over_a = 1.0 / v, v / a
            sqrt = math.sqrt

            def base(dx, dy):
                d = max(abs(dx), abs(dy))
                return d * inv_v + v_over_a if d > knee else 2.0 * sqrt(d / a)

        def dist(u, w):
            if u < n and w < n:
                return base(xs[u] - xs[w], ys[u] - ys[w])
            if u == D or w == D or not has_start:
                return 0.0
            if u == S:
                u = w
            return base(xs[u] - sx, ys[u] - sy)
        self.dist = dist

    def _neighbours(self):
        """Candidate lists (nearest first) of all nodes, and their distances."""
        n = self.n
        if n < 2:
            return [[] for _ in range(n + 2)], [[] for _ in range(n + 2)]
        xy = np.column_stack([self.xs, self.ys])
        p = 2 if self.kind == "euclidean" else np.inf
        tree = cKDTree(xy)
        k = self.k
        kq = min(self.quad_pool * k + 2, n)
        dd, idx = tree.query(xy, k=kq, p=p, workers=-1 if n > 20_000 else 1)
        idx = np.asarray(idx).reshape(n, kq)
        dd = np.asarray(dd).reshape(n, kq)
        partner = np.asarray(self.partner[:n])
        nodes = np.arange(n)
        bad = (idx == nodes[:, None]) | (idx == partner[:, None]) | (idx >= n)
        # Half the list is the nearest nodes, the rest the nearest few in
        # each quadrant around the node (for clustered sets), then the next
        # nearest; kept in order of distance.
        good = ~bad
        rank = np.cumsum(good, axis=1, dtype=np.int16) - 1
        sel = good & (rank < k // 2)
        if kq > k + 2:
            rel = xy[np.minimum(idx, n - 1)] - xy[:, None, :]
            quad = (rel[..., 0] > 0) + 2 * (rel[..., 1] > 0)
            per = max(1, k // 8)
            for qd in range(4):
                in_q = good & (quad == qd)
                sel |= in_q & (np.cumsum(in_q, axis=1, dtype=np.int16) <= per)
        key = np.where(bad, 2, np.where(sel, 0, 1)) * kq + np.arange(kq)
        cols = np.sort(np.argsort(key, axis=1)[:, :k], axis=1)
        idx = np.take_along_axis(idx, cols, 1)
        dd = np.take_along_axis(dd, cols, 1)
        bad = np.take_along_axis(bad, cols, 1)
        if self.kind != "euclidean":
            dd = trapezoid_time(dd, self.vmax, self.amax)
        out = idx.tolist()
        dist_out = dd.tolist()
        if bad.any():
            for r in np.flatnonzero(bad.any(axis=1)).tolist():
                out[r] = idx[r][~bad[r]].tolist()
                dist_out[r] = dd[r][~bad[r]].tolist()
        s_list, s_dist = [], []
        if self.has_start:
            # The start node is a candidate of the nodes nearest to it, so
            # moves can change where the path begins.
            _, near = tree.query(self.start, k=min(k, n), p=p)
            for v in np.atleast_1d(near).tolist():
                if v >= n:
                    continue
                lst, dl = out[v], dist_out[v]
                ds = self.dist(v, self.S)
                j = 0
                while j < len(dl) and dl[j] <= ds:
                    j += 1
                lst.insert(j, self.S)
                dl.insert(j, ds)
                s_list.append(v)
                s_dist.append(ds)
        return out + [s_list, []], dist_out + [s_dist, []]


    def set_xy(self, nodes, xy):
        """Move ``nodes`` to new coordinates and refresh candidate lists."""
        for v, (x, y) in zip(nodes, np.asarray(xy, float).reshape(-1, 2).tolist()):
            self.xs[v], self.ys[v] = x, y
        self.neigh, self.neigh_d = self._neighbours()
        self.cost = self._tour_cost()

    def set_order(self, order):
        """Replace the tour by the open path ``order`` of real nodes."""
        t = np.concatenate([[self.S], np.asarray(order, dtype=np.int64), [self.D]])
        self.tn[:] = t
        self.pn[t] = np.arange(self.M)
        self.cost = self._tour_cost()

    def edge_costs(self, u, w):
        """Vectorised distance between node arrays ``u`` and ``w``."""
        u = np.asarray(u, dtype=np.int64)
        w = np.asarray(w, dtype=np.int64)
        xy = np.column_stack([self.xs, self.ys]) if self.n else np.zeros((0, 2))
        ext = np.vstack([xy, [self.start, self.start]])
        d = ext[u] - ext[w]
        if self.kind == "euclidean":
            c = np.hypot(d[:, 0], d[:, 1])
        else:
            c = trapezoid_time(np.abs(d).max(axis=1), self.vmax, self.amax)
        dummy = (u == self.D) | (w == self.D) | (u == self.S) & (w == self.S)
        if not self.has_start:
            dummy |= (u == self.S) | (w == self.S)
        return np.where(dummy, 0.0, c)

    def _tour_cost(self):
        t = self.tn
        u, w = t, np.roll(t, -1)
        free = np.asarray(self.partner)[u] != w
        return float(self.edge_costs(u[free], w[free]).sum())

    # -- array primitives --------------------------------------------------
    def _read(self, i, L):
        tn, M = self.tn, self.M
        if i + L <= M:
            return tn[i:i + L].copy()
        return np.concatenate([tn[i:], tn[:i + L - M]])

    def _write(self, i, vals):
        tn, pn, M = self.tn, self.pn, self.M
        L = len(vals)
        if self._log is not None:
            self._log.append((i, self._read(i, L)))
        if i + L <= M:
            tn[i:i + L] = vals
            pn[vals] = np.arange(i, i + L)
        else:
            cut = M - i
            tn[i:] = vals[:cut]
            tn[:L - cut] = vals[cut:]
            pn[vals[:cut]] = np.arange(i, M)
            pn[vals[cut:]] = np.arange(L - cut)
        self.work += 1 + (L >> 11)

    def _reverse(self, i, j):
        """Reverse forward positions i..j (cyclic, inclusive), shorter side."""
        M = self.M
        L = (j - i) % M + 1
        if 2 * L > M:
            i, j, L = (j + 1) % M, (i - 1) % M, M - L
        if L < 2:
            return
        self._write(i, self._read(i, L)[::-1])

    def _move_segment(self, i, L, q, a, c):
        """Move the segment at forward positions i..i+L-1 into gap (q, q+1).

        Afterwards node ``a`` (an end of the segment) is next to node ``c``
        (one side of the gap).
        """
        M = self.M
        seg = self._read(i, L)
        if (self.tour[q] == c) != (seg[0] == a):
            seg = seg[::-1]
        j = (i + L - 1) % M
        nb = (q - j) % M
        nb2 = M - L - nb
        if nb <= nb2:
            self._write(i, np.concatenate([self._read((j + 1) % M, nb), seg]))
        else:
            q1 = (q + 1) % M
            self._write(q1, np.concatenate([seg, self._read(q1, nb2)]))

    # -- local search ------------------------------------------------------
    def run(self, active=None, work_limit=math.inf, deadline=math.inf):
        """2-opt and Or-opt from the active nodes until no move improves."""
        tour, pos, partner, neigh, dist = self.tour, self.pos, self.partner, self.neigh, self.dist
        M = self.M
        if M < 5:
            return
        live = self.live
        queue = deque(range(live) if active is None else active)
        inq = bytearray(M)
        for v in queue:
            inq[v] = 1
        clock = time.perf_counter
        tick = 0
        while queue:
            a = queue.popleft()
            inq[a] = 0
            self.work += 1
            tick += 1
            if tick & 255 == 0 and (self.work > work_limit or clock() > deadline):
                break
            touched = self._improve_node(a, tour, pos, partner, neigh, dist, M)
            if touched:
                for v in touched:
                    if v < live and not inq[v]:
                        inq[v] = 1
                        queue.append(v)
                if not inq[a]:
                    inq[a] = 1
                    queue.append(a)

    def _improve_node(self, a, tour, pos, partner, neigh, dist, M):
        pa = pos[a]
        na = neigh[a]
        nda = self.neigh_d[a]
        for sdir in (1, -1):
            b = tour[(pa + sdir) % M]
            if partner[a] == b:
                continue
            dab = dist(a, b)
            # 2-opt: remove (a, b) and (c, d), add (a, c) and (b, d).
            for c, dac in zip(na, nda):
                if dac >= dab:
                    break
                pc = pos[c]
                d = tour[(pc + sdir) % M]
                if d == a or partner[c] == d:
                    continue
                delta = dab + dist(c, d) - dac - dist(b, d)
                if delta > _EPS:
                    if sdir == 1:
                        self._reverse(pa + 1 if pa + 1 < M else 0, pc)
                    else:
                        self._reverse(pc, pa - 1 if pa else M - 1)
                    self.cost -= delta
                    return (a, b, c, d)
            # Or-opt: the chain starting at a, running away from b.
            seg = []
            cur = a
            pcur = pa
            for _ in range(3):
                seg.append(cur)
                pp = partner[cur]
                if pp != cur:
                    seg.append(pp)
                    pcur = pos[pp]
                e = seg[-1]
                nxt = tour[(pcur - sdir) % M]
                if len(seg) + 2 > M or nxt == b:
                    break
                g1 = dab + dist(e, nxt) - dist(b, nxt)
                if g1 > _EPS:
                    for c, dac in zip(na, nda):
                        if dac >= g1:
                            break
                        if c in seg:
                            continue
                        pc = pos[c]
                        for t in (1, -1):
                            f = tour[(pc + t) % M]
                            if partner[c] == f or f in seg:
                                continue
                            delta = g1 + dist(c, f) - dac - dist(e, f)
                            if delta > _EPS:
                                L = len(seg)
                                i = pos[e] if sdir == 1 else pa
                                q = pc if t == 1 else (pc - 1) % M
                                self._move_segment(i, L, q, a, c)
                                self.cost -= delta
                                return (a, b, e, nxt, c, f)
                cur = nxt
                pcur = pos[cur]
        return self._three_opt(a, tour, pos, partner, neigh, dist, M)

    def _three_opt(self, a, tour, pos, partner, neigh, dist, M, breadth=5):
        """Sequential 3-opt move of the two-reversal kind from node ``a``.

        In Lin-Kernighan terms t2 = a, t1 its tour neighbour: add (t2, t3),
        drop (t3, t4) (a 2-opt that would close with (t4, t1)), then add
        (t4, t5), drop (t5, t6) and close with (t6, t1). The second step is
        evaluated on the tour as the first reversal would leave it, without
        applying it; an improving move is applied as two reversals.
        """
        pa = pos[a]
        na = neigh[a]
        nda = self.neigh_d[a]
        neigh_d = self.neigh_d
        self.work += 1
        for sdir in (1, -1):
            t1 = tour[(pa + sdir) % M]
            if partner[a] == t1:
                continue
            p1 = pos[t1]
            d12 = dist(a, t1)
            for t3, d23 in zip(na, nda):
                g1 = d12 - d23
                if g1 <= _EPS:
                    break
                if t3 == t1:
                    continue
                p3 = pos[t3]
                t4 = tour[(p3 + sdir) % M]
                if t4 == a or partner[t3] == t4:
                    continue
                g = g1 + dist(t3, t4)
                span = (p3 - p1) * sdir % M  # the segment t1..t3, walking sdir
                for t5, d45 in zip(neigh[t4][:breadth], neigh_d[t4]):
                    g2 = g - d45
                    if g2 <= _EPS:
                        break
                    if t5 == t1 or t5 == t3:
                        continue
                    p5 = pos[t5]
                    if (p5 - p1) * sdir % M <= span:
                        t6 = tour[(p5 + sdir) % M]
                    else:
                        t6 = tour[(p5 - sdir) % M]
                    if t6 == t4 or partner[t5] == t6:
                        continue
                    delta = g2 + dist(t5, t6) - dist(t6, t1)
                    if delta > _EPS:
                        if sdir == 1:
                            self._reverse(p1, p3)
                        else:
                            self._reverse(p3, p1)
                        p1 = pos[t1]
                        if tour[(p1 + 1) % M] == t4:
                            self._reverse(pos[t4], pos[t6])
                        else:
                            self._reverse(pos[t6], pos[t4])
                        self.cost -= delta
                        return (a, t1, t3, t4, t5, t6)
            # Segment insertion (or-3opt): the run from a, walking away from
            # t1, up to some s2 goes between c and f, a next to c and s2
            # next to f; t1 joins q, the node after s2.
            w = -sdir
            for c, dac in zip(na, nda):
                g1 = d12 - dac
                if g1 <= _EPS:
                    break
                oc = (pos[c] - pa) * w % M
                for f in (tour[(pos[c] + 1) % M], tour[(pos[c] - 1) % M]):
                    if partner[c] == f:
                        continue
                    of = (pos[f] - pa) * w % M
                    g2 = g1 + dist(c, f)
                    lim = min(oc, of)  # the run must stop short of c and f
                    for s2, df2 in zip(neigh[f][:breadth], neigh_d[f]):
                        g3 = g2 - df2
                        if g3 <= _EPS:
                            break
                        o2 = (pos[s2] - pa) * w % M
                        if o2 >= lim:
                            continue
                        q = tour[(pos[s2] + w) % M]
                        if partner[s2] == q or q == t1:
                            continue
                        delta = g3 + dist(s2, q) - dist(t1, q)
                        if delta > _EPS:
                            L = o2 + 1
                            i = pa if w == 1 else pos[s2]
                            pc = pos[c]
                            gap = pc if tour[(pc + 1) % M] == f else (pc - 1) % M
                            self._move_segment(i, L, gap, a, c)
                            self.cost -= delta
                            return (a, t1, c, f, s2, q)
        return None

    # -- perturbation ------------------------------------------------------
    def kick_search(self, rng, kicks, work_limit=math.inf, deadline=math.inf, window=50,
                    min_gain=0.0, round_size=None):
        """Iterated local search: random segment swaps kept when they pay.

        Each kick swaps two adjacent short segments (a double bridge whose
        fourth edge is far away), repairs with local search from the six
        touched nodes, and is undone unless the path got shorter. Kicks go
        in rounds of ``round_size`` (default: one per two nodes, at least
        100); the search stops after three rounds in a row that each
        shortened the path by less than ``min_gain`` (cost units).
        """
        M, n = self.M, self.n
        if n < 8:
            return
        partner, tour, dist = self.partner, self.tour, self.dist
        w = min(window, M - 2)
        draws = rng.integers(0, 1 << 62, size=(kicks, 3))
        per_round = max(1, max(M, 200) // 2 if round_size is None else int(round_size))
        round_start, poor = self.cost, 0
        for kick, (p0, r1, r2) in enumerate(draws.tolist()):
            if self.work > work_limit or time.perf_counter() > deadline:
                break
            if kick and kick % per_round == 0:
                # A round that gains little may be followed by one that
                # gains much (kicks are random): stop after three in a row.
                poor = poor + 1 if round_start - self.cost < min_gain else 0
                if poor == 3:
                    break
                round_start = self.cost
            p0 %= M
            o1 = 1 + r1 % (w - 2)
            o2 = o1 + 1 + r2 % (w - 1 - o1)
            # A cut on a fixed edge moves on by one (fixed edges never touch).
            c0, c1, c2 = p0, (p0 + o1) % M, (p0 + o2) % M
            if partner[tour[c0]] == tour[(c0 + 1) % M]:
                c0 = (c0 + 1) % M
            if partner[tour[c1]] == tour[(c1 + 1) % M]:
                c1 = (c1 + 1) % M
            if partner[tour[c2]] == tour[(c2 + 1) % M]:
                c2 = (c2 + 1) % M
            o1, o2 = (c1 - c0) % M, (c2 - c0) % M
            if not 0 < o1 < o2 < M - 1:
                continue
            a0, a1, a2 = tour[c0], tour[c1], tour[c2]
            b0, b1, b2 = tour[(c0 + 1) % M], tour[(c1 + 1) % M], tour[(c2 + 1) % M]
            before = self.cost
            self._log = []
            # A B C E -> A C B E: swap the segments B = b0..a1 and C = b1..a2.
            delta = (dist(a0, b0) + dist(a1, b1) + dist(a2, b2)
                     - dist(a0, b1) - dist(a2, b0) - dist(a1, b2))
            i = (c0 + 1) % M
            B = self._read(i, o1)
            C = self._read((c1 + 1) % M, o2 - o1)
            self._write(i, np.concatenate([C, B]))
            self.cost -= delta
            self.run([v for v in (a0, b0, a1, b1, a2, b2) if v < self.live], work_limit, deadline)
            log, self._log = self._log, None
            if self.cost > before - _EPS:
                for j, old in reversed(log):
                    self._write(j, old)
                self.cost = before

    # -- result ------------------------------------------------------------
    def path(self):
        """The open path of real nodes, from the start end."""
        t = self.tn.copy()
        ps = self.pos[self.S]
        t = np.roll(t, -ps)
        if t[1] == self.D:
            t = np.roll(t[::-1], 1)
        return t[1:-1]
