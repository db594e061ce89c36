"""One-pixel skeletons to a small stroke graph, and that graph to few trails.

A skeleton is cut at its junction pixels; what is left falls apart into
simple pixel paths, the graph's edges.  Junction clusters and free ends are
its nodes.  At every node the incident edge ends are paired, straightest
continuation first, and the pairings are followed into trails; closed trails
are then spliced into the trails they touch.  A connected figure with ``2k``
odd nodes comes out as exactly ``max(1, k)`` strokes, the fewest possible.
Given the ink's depth, the skeleton around junctions where lines merge is
first replaced by curves that join the lone lines through the junction.
"""

from collections import defaultdict, deque

import numpy as np
from scipy import ndimage, sparse
from scipy.sparse import csgraph
from scipy.spatial import cKDTree

from .simplify import polyline_lengths, simplify_polylines
from .smooth import smooth_polylines

__all__ = ["trace_skeleton", "trail_decomposition"]

_EIGHT = np.ones((3, 3), dtype=bool)
_TANGENT_PX = 6  # how far along an edge its end direction is measured


# ---------------------------------------------------------------- trails ---

def _pair_ends(node_of_end, dirs, n_nodes):
    """Pair edge ends at each node, most nearly straight-through first.

    Returns ``partner`` with the paired end, or -1 for the (at most one per
    node) end left over.
    """
    n_ends = len(node_of_end)
    partner = np.full(n_ends, -1, dtype=np.int64)
    order = np.argsort(node_of_end, kind="stable")
    bounds = np.searchsorted(node_of_end[order], np.arange(n_nodes + 1))
    for v in range(n_nodes):
        ends = order[bounds[v]:bounds[v + 1]]
        d = len(ends)
        if d < 2:
            continue
        if d == 2:
            partner[ends[0]], partner[ends[1]] = ends[1], ends[0]
            continue
        u = dirs[ends]
        # Going in along end i and out along end j turns by the angle between
        # -u_i and u_j: the most negative dot product is the straightest.
        score = u @ u.T
        iu, ju = np.triu_indices(d, 1)
        free = np.ones(d, dtype=bool)
        for k in np.argsort(score[iu, ju], kind="stable"):
            i, j = iu[k], ju[k]
            if free[i] and free[j]:
                free[i] = free[j] = False
                partner[ends[i]], partner[ends[j]] = ends[j], ends[i]
    return partner


def _follow(partner, n_edges):
    """Follow pairings into trails: lists of entry ends (edge e entered at
    end ``2e`` runs forward, at ``2e + 1`` backward)."""
    used = np.zeros(n_edges, dtype=bool)
    trails, closed = [], []

    def walk(start):
        steps, a = [], start
        while True:
            used[a >> 1] = True
            steps.append(a)
            b = partner[a ^ 1]
            if b < 0 or used[b >> 1]:
                return steps, b == start
            a = b

    for a in np.flatnonzero(partner < 0):
        if not used[a >> 1]:
            steps, _ = walk(int(a))
            trails.append(steps)
            closed.append(False)
    for e in np.flatnonzero(~used):
        if not used[e]:
            steps, _ = walk(int(2 * e))
            trails.append(steps)
            closed.append(True)
    return trails, closed


def _splice(trails, closed, node_of_end):
    """Splice closed trails into trails that share a node (Hierholzer)."""
    def nodes_of(steps):
        return [node_of_end[steps[0]]] + [node_of_end[a ^ 1] for a in steps]

    seq = [nodes_of(s) for s in trails]
    circuits_at = defaultdict(list)
    for t, (c, ns) in enumerate(zip(closed, seq)):
        if c:
            for v in set(ns):
                circuits_at[v].append(t)
    attached = np.zeros(len(trails), dtype=bool)
    children = [defaultdict(list) for _ in trails]
    claimed = set()

    def grow(root):
        queue = deque([root])
        attached[root] = True
        while queue:
            t = queue.popleft()
            for pos, v in enumerate(seq[t]):
                if v in claimed:
                    continue
                claimed.add(v)
                for c in circuits_at.get(v, ()):
                    if attached[c]:
                        continue
                    attached[c] = True
                    j = seq[c].index(v)
                    trails[c] = trails[c][j:] + trails[c][:j]
                    seq[c] = nodes_of(trails[c])
                    children[t][pos].append(c)
                    queue.append(c)

    roots = [t for t, c in enumerate(closed) if not c]
    for t in roots:
        grow(t)
    for t in range(len(trails)):
        if not attached[t]:
            roots.append(t)
            grow(t)

    out = []
    for r in roots:
        steps, stack = [], [(r, 0, 0)]
        while stack:
            t, i, c = stack.pop()
            kids = children[t].get(i, ())
            if c < len(kids):
                stack.append((t, i, c + 1))
                stack.append((kids[c], 0, 0))
            elif i < len(trails[t]):
                steps.append(trails[t][i])
                stack.append((t, i + 1, 0))
        out.append(steps)
    return out


def _decompose(edge_u, edge_v, dirs, n_nodes):
    """Edge-disjoint trails covering every edge once, fewest per component.

    ``dirs[2e]`` is edge e's direction leaving node ``edge_u[e]``,
    ``dirs[2e + 1]`` leaving ``edge_v[e]``.  Returns lists of entry ends.
    """
    n_edges = len(edge_u)
    if n_edges == 0:
        return []
    node_of_end = np.empty(2 * n_edges, dtype=np.int64)
    node_of_end[0::2] = edge_u
    node_of_end[1::2] = edge_v
    norm = np.linalg.norm(dirs, axis=1, keepdims=True)
    dirs = np.divide(dirs, norm, out=np.zeros_like(dirs, dtype=float), where=norm > 0)
    partner = _pair_ends(node_of_end, dirs, n_nodes)
    trails, closed = _follow(partner, n_edges)
    return _splice(trails, closed, node_of_end.tolist())


def trail_decomposition(G, pos="pos"):
    """Split a graph's edges into the fewest trails.

    Parameters
    ----------
    G : networkx.Graph or networkx.MultiGraph
        Undirected graph; self-loops and parallel edges are allowed.
    pos : str, optional
        Node attribute with an ``(x, y)`` position.  Where present, trails
        continue through each node along the straightest pairing of edges;
        otherwise the pairing is arbitrary.

    Returns
    -------
    list of list of tuple
        Each trail as its edges in walking order, ``(u, v)`` for a Graph or
        ``(u, v, key)`` for a MultiGraph, oriented in the walking direction.
        Each edge appears exactly once.  A connected part with ``2k`` odd
        nodes gives ``max(1, k)`` trails; a closed trail starts and ends at
        the same node.

    Notes
    -----
    A connected graph with ``2k > 0`` odd vertices is the union of ``k``
    edge-disjoint trails and of no fewer; with none it has an Euler circuit
    [1]_, [2]_.  Pairing edge ends at every node leaves one end over at each
    odd node, which gives the ``k`` open trails plus closed ones; closed
    trails are spliced into trails they share a node with, as in
    Hierholzer's construction of an Euler circuit [3]_.

    References
    ----------
    .. [1] J. A. Bondy and U. S. R. Murty, *Graph Theory*, Springer GTM 244,
       2008, section 3.3 (Euler tours).
    .. [2] L. Euler, "Solutio problematis ad geometriam situs pertinentis",
       1736.
    .. [3] C. Hierholzer, "Ueber die Moeglichkeit, einen Linienzug ohne
       Wiederholung und ohne Unterbrechung zu umfahren", Math. Ann. 6, 1873.

    Examples
    --------
    >>> import networkx as nx
    >>> len(trail_decomposition(nx.star_graph(4)))  # four odd leaves
    2
    >>> len(trail_decomposition(nx.cycle_graph(5)))
    1
    """
    multi = G.is_multigraph()
    edges = list(G.edges(keys=True)) if multi else list(G.edges())
    nodes = list(G.nodes())
    index = {v: i for i, v in enumerate(nodes)}
    eu = np.array([index[e[0]] for e in edges], dtype=np.int64)
    ev = np.array([index[e[1]] for e in edges], dtype=np.int64)
    dirs = np.zeros((2 * len(edges), 2))
    if len(edges) and all(pos in G.nodes[v] for v in nodes):
        P = np.array([G.nodes[v][pos] for v in nodes], dtype=float)[:, :2]
        dirs[0::2] = P[ev] - P[eu]
        dirs[1::2] = P[eu] - P[ev]
    out = []
    for steps in _decompose(eu, ev, dirs, len(nodes)):
        trail = []
        for a in steps:
            e = edges[a >> 1]
            u, v = (e[0], e[1]) if a % 2 == 0 else (e[1], e[0])
            trail.append((u, v, e[2]) if multi else (u, v))
        out.append(trail)
    return out


# ------------------------------------------------------- skeleton graph ---

def _neighbour_count(mask):
    return ndimage.convolve(mask.astype(np.uint8), _EIGHT.astype(np.uint8),
                            mode="constant") - mask


def _shift_pairs(mask, index):
    """Index pairs of 8-adjacent True pixels (each pair once)."""
    pairs = []
    for a_sl, b_sl in (
        ((slice(None), slice(None, -1)), (slice(None), slice(1, None))),
        ((slice(None, -1), slice(None)), (slice(1, None), slice(None))),
        ((slice(None, -1), slice(None, -1)), (slice(1, None), slice(1, None))),
        ((slice(None, -1), slice(1, None)), (slice(1, None), slice(None, -1))),
    ):
        both = mask[a_sl] & mask[b_sl]
        pairs.append(np.stack([index[a_sl][both], index[b_sl][both]], axis=1))
    return np.concatenate(pairs, axis=0)


def _skeleton_graph(skel):
    """Nodes, node positions and edge pixel paths of a skeleton image.

    Returns ``(node_xy, edge_u, edge_v, paths)`` with each path an (N, 2)
    float array of (x, y) from node u's position to node v's position.
    """
    skel = np.asarray(skel, dtype=bool)
    h, w = skel.shape
    count = _neighbour_count(skel)
    junction = skel & (count >= 3)
    plain = skel & ~junction
    jlab, n_j = ndimage.label(junction, structure=_EIGHT)
    # Junction nodes 0..n_j-1 at the centroids of their pixel clusters.
    jr, jc = np.nonzero(junction)
    jl = jlab[jr, jc] - 1
    cnt = np.maximum(np.bincount(jl, minlength=n_j), 1).astype(float)
    mx, my = np.bincount(jl, jc, n_j) / cnt, np.bincount(jl, jr, n_j) / cnt
    # Each node sits on the cluster pixel nearest the cluster's centroid, so
    # strokes only pass through skeleton pixels.
    d2 = (jc - mx[jl]) ** 2 + (jr - my[jl]) ** 2
    pick = np.lexsort((d2, jl))
    first = pick[np.searchsorted(jl[pick], np.arange(n_j))]
    node_xy = [np.stack([jc[first], jr[first]], axis=1).astype(float).reshape(-1, 2)]

    pr, pc = np.nonzero(plain)
    n = len(pr)
    if n == 0:
        return np.concatenate(node_xy), np.zeros(0, int), np.zeros(0, int), []
    index = np.full((h, w), -1, dtype=np.int64)
    index[pr, pc] = np.arange(n)
    plab, n_p = ndimage.label(plain, structure=_EIGHT)
    lab = plab[pr, pc] - 1
    pairs = _shift_pairs(plain, index)
    deg = np.bincount(pairs.ravel(), minlength=n)
    # One start pixel per piece: an end (degree <= 1) if it has one, else any
    # pixel of the loop.  A depth-first walk from a root joined to all starts
    # runs along each piece in turn, pixel after pixel.
    key = np.where(deg <= 1, 0, 1) * (n + 1) + np.arange(n)
    first = np.full(n_p, np.iinfo(np.int64).max, dtype=np.int64)
    np.minimum.at(first, lab, key)
    start = first % (n + 1)
    is_loop = first >= (n + 1)
    rows = np.concatenate([pairs[:, 0], np.full(n_p, n)])
    cols = np.concatenate([pairs[:, 1], start])
    A = sparse.coo_matrix((np.ones(len(rows), np.int8), (rows, cols)),
                          shape=(n + 1, n + 1)).tocsr()
    order = csgraph.depth_first_order(A, n, directed=False,
                                      return_predecessors=False)[1:]
    olab = lab[order]
    cut = np.flatnonzero(np.diff(olab)) + 1
    bounds = np.concatenate([[0], cut, [len(order)]])

    # Junction labels around every plain pixel (for the ends of pieces).
    jpad = np.pad(jlab, 1)
    offs = [(dr, dc) for dr in (-1, 0, 1) for dc in (-1, 0, 1) if dr or dc]

    def junctions_near(r, c):
        return np.stack([jpad[r + 1 + dr, c + 1 + dc] for dr, dc in offs], axis=1)

    head = order[bounds[:-1]]
    tail = order[bounds[1:] - 1]
    piece = olab[bounds[:-1]]
    # The distinct junctions beside each piece's ends, smallest label first
    # (what np.unique per piece gives): how many, and the first two.
    h_cnt, h_1st, h_2nd = _distinct_labels(junctions_near(pr[head], pc[head]))
    t_cnt, t_1st, _ = _distinct_labels(junctions_near(pr[tail], pc[tail]))
    h_cnt, h_1st, h_2nd = h_cnt.tolist(), h_1st.tolist(), h_2nd.tolist()
    t_cnt, t_1st = t_cnt.tolist(), t_1st.tolist()

    next_node = n_j
    extra_xy = []
    edge_u, edge_v, paths = [], [], []
    xy = np.stack([pc, pr], axis=1).astype(float)
    jxy = node_xy[0]
    for k in range(len(head)):
        pix = order[bounds[k]:bounds[k + 1]]
        pts = xy[pix]
        if is_loop[piece[k]]:
            u = v = next_node
            next_node += 1
            extra_xy.append(pts[0])
            edge_u.append(u)
            edge_v.append(v)
            paths.append(np.concatenate([pts, pts[:1]]))
            continue
        if len(pix) == 1:
            if h_cnt[k] == 0:
                continue  # an isolated pixel: no edge
            a = h_1st[k]
            b = h_2nd[k] if h_cnt[k] > 1 else None
            u_pts = [jxy[a]]
            if b is None:
                u, v = a, next_node
                next_node += 1
                extra_xy.append(pts[0])
                path = np.concatenate([u_pts, pts])
            else:
                u, v = a, b
                path = np.concatenate([u_pts, pts, [jxy[b]]])
        else:
            parts = [pts]
            if h_cnt[k]:
                u = h_1st[k]
                parts.insert(0, jxy[u][None])
            else:
                u = next_node
                next_node += 1
                extra_xy.append(pts[0])
            if t_cnt[k]:
                v = t_1st[k]
                parts.append(jxy[v][None])
            else:
                v = next_node
                next_node += 1
                extra_xy.append(pts[-1])
            path = np.concatenate(parts)
        edge_u.append(int(u))
        edge_v.append(int(v))
        paths.append(path)
    if extra_xy:
        node_xy.append(np.asarray(extra_xy, dtype=float).reshape(-1, 2))
    return (np.concatenate(node_xy), np.asarray(edge_u, dtype=np.int64),
            np.asarray(edge_v, dtype=np.int64), paths)


def _distinct_labels(near):
    """Per row of labels (0 = none): count of distinct labels, the smallest
    two minus one (node numbers; -1 where missing)."""
    srt = np.sort(near, axis=1)
    new = srt > 0
    new[:, 1:] &= srt[:, 1:] != srt[:, :-1]
    cnt = new.sum(axis=1)
    rank = np.cumsum(new, axis=1)
    first = np.where(new & (rank == 1), srt, 0).max(axis=1) - 1
    second = np.where(new & (rank == 2), srt, 0).max(axis=1) - 1
    return cnt, first, second


def _end_dirs(paths):
    """Direction of each path leaving its start, then leaving its end."""
    n = np.array([len(p) for p in paths], dtype=np.intp)
    first = np.cumsum(n) - n
    last = first + n - 1
    k = np.minimum(_TANGENT_PX, n - 1)
    P = np.concatenate(paths)
    dirs = np.empty((2 * len(paths), 2))
    dirs[0::2] = P[first + k] - P[first]
    dirs[1::2] = P[last - k] - P[last]
    return dirs


def _prune_spurs(edge_u, edge_v, paths, prune):
    """Drop end branches shorter than ``prune`` that hang off a junction."""
    if prune <= 0 or len(paths) == 0:
        return edge_u, edge_v, paths
    n_nodes = int(max(edge_u.max(), edge_v.max())) + 1
    deg = np.bincount(edge_u, minlength=n_nodes) + np.bincount(edge_v, minlength=n_nodes)
    length = polyline_lengths(paths)
    free_u, free_v = deg[edge_u] == 1, deg[edge_v] == 1
    spur = (length < prune) & (free_u ^ free_v) & (edge_u != edge_v)
    junction_end = np.where(free_u, edge_v, edge_u)
    # Never strip a junction of all its branches: keep it at degree >= 2.
    spur_count = np.bincount(junction_end[spur], minlength=n_nodes)
    drop = spur & (deg[junction_end] - spur_count[junction_end] >= 2)
    if not drop.any():
        return edge_u, edge_v, paths
    keep = ~drop
    return edge_u[keep], edge_v[keep], [p for p, k in zip(paths, keep) if k]


# ------------------------------------------------------ junction repair ---

def _hermite(p0, p1, m0, m1, step=0.5):
    """Cubic Hermite curve from ``p0`` to ``p1`` with end tangents ``m0``, ``m1``."""
    n = max(2, int(np.ceil(np.hypot(*(p1 - p0)) / step)) + 1)
    t = np.linspace(0.0, 1.0, n)[:, None]
    t2, t3 = t * t, t * t * t
    return ((2 * t3 - 3 * t2 + 1) * p0 + (t3 - 2 * t2 + t) * m0
            + (-2 * t3 + 3 * t2) * p1 + (t3 - t2) * m1)


def _depth_at(depth, pts):
    """``depth`` at the pixels nearest to points (x, y); 0 outside the picture."""
    h, w = depth.shape
    c = np.rint(pts[:, 0]).astype(np.intp)
    r = np.rint(pts[:, 1]).astype(np.intp)
    ok = (r >= 0) & (r < h) & (c >= 0) & (c < w)
    out = np.zeros(len(pts))
    out[ok] = depth[r[ok], c[ok]]
    return out


def _angle(a, b):
    """Angles between the rows of ``a`` and ``b`` (radians)."""
    na = np.linalg.norm(a, axis=-1)
    nb = np.linalg.norm(b, axis=-1)
    cos = np.sum(a * b, axis=-1) / np.maximum(na * nb, 1e-12)
    return np.arccos(np.clip(cos, -1.0, 1.0))


def _bridge(arm_a, arm_b, span, step=0.5):
    """A curve from the first point of ``arm_a`` to the first of ``arm_b``.

    One cubic in arc length is fitted by least squares to both arms' first
    ``span`` pixels, the gap between them counted as its chord; its stretch
    over the gap, shifted linearly to meet both tips exactly, is the bridge.
    Fitting both sides at once uses the arms' bending as well as their
    directions, so long bridges (lines that run side by side) keep to them.
    """
    def arc(p):
        return np.concatenate([[0.0], np.cumsum(np.hypot(*np.diff(p, axis=0).T))])
    sa, sb = arc(arm_a), arc(arm_b)
    na = int(np.searchsorted(sa, span, side="right"))
    nb = int(np.searchsorted(sb, span, side="right"))
    gap = float(np.hypot(*(arm_b[0] - arm_a[0])))
    s = np.concatenate([-sa[:na][::-1], gap + sb[:nb]])
    q = np.concatenate([arm_a[:na][::-1], arm_b[:nb]])
    scale = max(gap + sa[na - 1] + sb[nb - 1], 1.0)
    V = np.vander(s / scale, 4)
    coef, *_ = np.linalg.lstsq(V, q, rcond=None)
    n = max(2, int(np.ceil(gap / step)) + 1)
    t = np.linspace(0.0, gap, n)
    f = np.vander(t / scale, 4) @ coef
    u = (t / max(gap, 1e-12))[:, None]
    return f + (1 - u) * (arm_a[0] - f[0]) + u * (arm_b[0] - f[-1])


def _padded(paths, width):
    """The first ``width`` points of each path in one (m, width, 2) array, with
    the count of real points per row; padding repeats each path's last point."""
    m = len(paths)
    n = np.array([min(len(p), width) for p in paths], dtype=np.intp)
    out = np.empty((m, width, 2))
    for k, p in enumerate(paths):
        out[k, :n[k]] = p[:n[k]]
        out[k, n[k]:] = p[n[k] - 1]
    return out, n


def _tip_directions(arms, span):
    """Unit directions into the first point of each arm (from its second point to
    its first), from a least-squares parabola in arc length over the arm's
    first ``span`` pixels (a line where it has fewer than five points), which
    the pixel staircase and the arm's bending bias far less than a two-point
    difference."""
    q, n = _padded(arms, int(2 * span) + 2)
    seg = np.hypot(*np.moveaxis(np.diff(q, axis=1), 2, 0))
    s = np.concatenate([np.zeros((len(arms), 1)), np.cumsum(seg, axis=1)], axis=1)
    idx = np.arange(q.shape[1])
    use = np.maximum(3, np.minimum((s <= span).sum(axis=1), n))
    w = (idx[None, :] < use[:, None]).astype(float)
    s = s / span
    V = np.stack([np.ones_like(s), s, s * s], axis=2) * w[..., None]
    G = np.einsum("kni,knj->kij", V, V)
    G[:, 2, 2] += np.where(use < 5, 1e6, 1e-9)
    G[:, 1, 1] += 1e-9
    coef = np.linalg.solve(G, np.einsum("kni,knd->kid", V, q * w[..., None]))
    d = -coef[:, 1, :]
    norm = np.hypot(*d.T)
    fallback = q[:, 0] - q[np.arange(len(arms)), use - 1]
    d = np.where((norm < 1e-9)[:, None], fallback, d)
    return d / np.maximum(np.hypot(*d.T), 1e-12)[:, None]


def _cut_indices(arms, depth, centres, radius, lone, caps):
    """How many points to cut from the start of each arm: up to where it has left
    its junction's disc and the ink around it is a lone line's again (at most
    ``caps``)."""
    q, n = _padded(arms, int(caps.max()) + 1)
    d = np.hypot(*np.moveaxis(q - centres[:, None, :], 2, 0))
    dep = _depth_at(depth, q.reshape(-1, 2)).reshape(d.shape)
    idx = np.arange(q.shape[1])
    ok = ((d > np.maximum(radius, lone)[:, None]) & (dep <= lone)
          & (idx[None, :] >= 1) & (idx[None, :] <= caps[:, None]) & (idx[None, :] < n[:, None]))
    return np.where(ok.any(axis=1), np.argmax(ok, axis=1), caps)


def _reconnect(cluster, ends, eu, ev, paths, node_xy, depth, lone, cuts, junction):
    """Plan the repair of one junction cluster; None where it does not hold.

    ``ends`` are the entry ends (``2e`` for edge e's start, ``2e + 1`` for its
    end) at the cluster's nodes of the edges that stay.  Returns the points
    cut per end, the cut ends' tips, and the connecting curves as
    ``[i, j, pts]`` (ends i and j joined) or ``[i, -1, pts, (link, index)]``
    (end i joined to point ``index`` of another link's curve).
    """
    centres = node_xy[cluster]
    radius = _depth_at(depth, centres)
    span = max(8.0, 6.0 * lone)   # pixels of each arm that give its course
    reach = int(4 * span)         # the farthest a branch is cut back
    oriented, caps, at = [], [], []
    for a in ends:
        p = paths[a >> 1] if a % 2 == 0 else paths[a >> 1][::-1]
        node = eu[a >> 1] if a % 2 == 0 else ev[a >> 1]
        far = ev[a >> 1] if a % 2 == 0 else eu[a >> 1]
        # Leave the far half to a junction there that is still to be repaired.
        far_open = far < len(junction) and junction[far] and (a ^ 1) not in cuts
        cap = max(0, (len(p) - 1) // 2 - 1) if far_open else max(0, len(p) - 3)
        caps.append(min(cap, reach))
        oriented.append(p)
        at.append(int(np.flatnonzero(cluster == node)[0]))
    at, caps = np.asarray(at), np.asarray(caps)
    cut = _cut_indices(oriented, depth, centres[at], radius[at], lone, caps)
    arms = [p[i:] for p, i in zip(oriented, cut)]
    if min(len(p) for p in arms) < 3:
        return None
    tips = np.array([p[0] for p in arms])
    into = _tip_directions(arms, span)
    cut = cut.tolist()
    m = len(ends)
    # Pair the ends, the smallest turn first: in along one end's direction,
    # along the chord, out against the other's.
    iu, ju = np.triu_indices(m, 1)
    chord = tips[ju] - tips[iu]
    short = np.hypot(*chord.T) < 1.0
    turn = np.where(short, _angle(into[iu], -into[ju]),
                    _angle(into[iu], chord) + _angle(chord, -into[ju]))
    free = np.ones(m, bool)
    links = []
    for k in np.argsort(turn, kind="stable"):
        i, j = iu[k], ju[k]
        if free[i] and free[j]:
            free[i] = free[j] = False
            L = max(np.hypot(*(tips[j] - tips[i])), 1.0)
            ti = into[i] / max(np.linalg.norm(into[i]), 1e-12)
            tj = into[j] / max(np.linalg.norm(into[j]), 1e-12)
            if min(len(arms[i]), len(arms[j])) >= 6:
                links.append([i, j, _bridge(arms[i], arms[j], span)])
            else:
                links.append([i, j, _hermite(tips[i], tips[j], L * ti, -L * tj)])
    for i in np.flatnonzero(free):
        if not links:
            return None
        # A leftover end (a T's stem) meets the nearest connecting curve.
        near = centres[np.argmin(np.hypot(*(centres - tips[i]).T))]
        best = min(range(len(links)),
                   key=lambda q: np.hypot(*(links[q][2] - near).T).min())
        q = int(np.argmin(np.hypot(*(links[best][2] - near).T)))
        q = min(max(q, 1), len(links[best][2]) - 2)
        target = links[best][2][q]
        L = max(np.hypot(*(target - tips[i])), 1.0)
        ti = into[i] / max(np.linalg.norm(into[i]), 1e-12)
        pts = _hermite(tips[i], target, L * ti, target - tips[i])
        links.append([i, -1, pts, (best, q)])
    return cut, tips, links


def _repair_junctions(node_xy, eu, ev, paths, depth, max_span):
    """Replace the skeleton where lines merge by curves joining the lone lines.

    Around a cluster of junctions (joined by edges at most ``max_span``
    long) the medial axis of merged strokes is distorted [1]_: it runs
    between the strokes.  The branches are cut back to where the ink depth
    (distance to the paper) is a lone line's again, and the cut ends are
    paired, the smallest turn first, and joined by a cubic fitted to both
    arms (`_bridge`), so trails run straight through crossings; an end left
    over (a T's stem) is joined to the nearest bridge by a cubic Hermite
    curve along its direction.  A repair is kept only if its curves stay in
    the ink and every skeleton pixel it removes lies within the larger of
    its ink depth and a lone line's (plus half a pixel) of what is kept;
    otherwise the skeleton stays as it was (a cluster is then tried junction
    by junction if it is a pair).  Junction clusters: junctions joined by an
    edge at most ``max_span`` long that is short next to their ink depth,
    runs through ink deeper than a lone line's, or has the branches at both
    its ends fork away from it.  A lone junction is left alone.

    Returns ``(node_xy, edge_u, edge_v, paths)`` as `_skeleton_graph` does.

    References
    ----------
    .. [1] J. Y. Chiang, S. C. Tue and Y. C. Leu, "A new algorithm for line
       image vectorization", Pattern Recognition 31(10), 1998.
    """
    if len(paths) == 0:
        return node_xy, eu, ev, paths
    n_nodes = max(len(node_xy), int(max(eu.max(), ev.max())) + 1)
    deg = np.bincount(eu, minlength=n_nodes) + np.bincount(ev, minlength=n_nodes)
    junction = deg >= 3
    if not junction.any():
        return node_xy, eu, ev, paths
    allpts = np.concatenate(paths)
    # A lone line's ink depth along its skeleton (the upper quartile: the
    # discrete distance to the paper wobbles between diagonal and straight runs).
    lone = float(np.percentile(_depth_at(depth, allpts), 75))
    length = polyline_lengths(paths)
    # An edge between junctions is part of their merged zone when it is short
    # next to their ink depth, when the ink along it is deeper than a lone
    # line's (two lines running side by side), or when the branches at both
    # of its ends fork away from it (two lines crossing at a shallow angle).
    r_node = _depth_at(depth, np.asarray(node_xy, dtype=float))
    n_pts = np.array([len(p) for p in paths])
    mean_depth = (np.bincount(np.repeat(np.arange(len(paths)), n_pts),
                              _depth_at(depth, allpts), minlength=len(paths)) / n_pts)
    ends_at = defaultdict(list)
    for e in range(len(paths)):
        ends_at[eu[e]].append(2 * e)
        ends_at[ev[e]].append(2 * e + 1)
    raw = _end_dirs(paths)
    raw /= np.maximum(np.hypot(*raw.T), 1e-12)[:, None]

    def forks_away(a, node):
        others = [b for b in ends_at[node] if b != a]
        if len(others) != 2:
            return False
        u = raw[others]
        return bool(u[0] @ u[1] > 0.0 and (u @ raw[a] < 0.0).all())

    between = junction[eu] & junction[ev] & (eu != ev) & (length <= max_span)
    short = between & ((length <= np.maximum(2.0 * (r_node[eu] + r_node[ev]), 8.0 * lone))
                       | (mean_depth >= 1.2 * lone))
    for e in np.flatnonzero(between & ~short):
        short[e] = forks_away(2 * e, eu[e]) and forks_away(2 * e + 1, ev[e])
    A = sparse.coo_matrix((np.ones(short.sum()), (eu[short], ev[short])),
                          shape=(n_nodes, n_nodes))
    _, comp = csgraph.connected_components(A, directed=False)
    internal_of = defaultdict(list)
    for e in np.flatnonzero(short):
        internal_of[comp[eu[e]]].append(int(e))

    node_xy = np.asarray(node_xy, dtype=float)
    new_xy = list(node_xy)
    paths = list(paths)
    eu, ev = eu.copy(), ev.copy()
    drop = np.zeros(len(paths), bool)
    cuts = {}          # entry end -> points cut from that end
    extra = []         # (u, v, path)

    def attempt(cluster):
        internal = internal_of[comp[cluster[0]]] if len(cluster) > 1 else []
        ends = [a for v in cluster for a in ends_at[v]
                if (a >> 1) not in internal and not drop[a >> 1]]
        if len(ends) < 2:
            return False
        plan = _reconnect(cluster, ends, eu, ev, paths, node_xy, depth, lone, cuts,
                          junction)
        if plan is None:
            return False
        cut, tips, links = plan
        curves = np.concatenate([lk[2] for lk in links])
        if (_depth_at(depth, curves) < 1).any():
            return False
        removed = [paths[e] for e in internal]
        kept = [curves]
        for a, i in zip(ends, cut):
            p = paths[a >> 1] if a % 2 == 0 else paths[a >> 1][::-1]
            removed.append(p[:i])
            kept.append(p[i:i + reach])
        removed = np.concatenate(removed) if removed else np.zeros((0, 2))
        if len(removed):
            gap = cKDTree(np.concatenate(kept)).query(removed)[0]
            if (gap > np.maximum(_depth_at(depth, removed), lone) + 0.5).any():
                return False
        # Commit: cut ends get new nodes at their tips, joined by the curves.
        tip_node = []
        for a, i, t in zip(ends, cut, tips):
            cuts[a] = i
            v = len(new_xy)
            new_xy.append(t)
            tip_node.append(v)
            if a % 2 == 0:
                paths[a >> 1] = paths[a >> 1][i:]
                eu[a >> 1] = v
            else:
                paths[a >> 1] = paths[a >> 1][:len(paths[a >> 1]) - i]
                ev[a >> 1] = v
        for e in internal:
            drop[e] = True
        split = {}
        for lk in links:
            if lk[1] < 0:
                best, q = lk[3]
                split.setdefault(best, []).append((q, tip_node[lk[0]], lk[2]))
        for b, lk in enumerate(links):
            if lk[1] < 0:
                continue
            pts, u, v = lk[2], tip_node[lk[0]], tip_node[lk[1]]
            cutsat = sorted(split.get(b, []), key=lambda s: s[0])
            prev, start = u, 0
            for q, stem, stem_pts in cutsat:
                if q > start:
                    mid = len(new_xy)
                    new_xy.append(pts[q])
                    extra.append((prev, mid, pts[start:q + 1]))
                    prev, start = mid, q
                extra.append((stem, prev, stem_pts))
            extra.append((prev, v, pts[start:]))
        return True

    reach = int(8 * max(8.0, 6.0 * lone))   # removed pixels lie this near the tips
    jn = np.flatnonzero(junction)
    order = np.argsort(comp[jn], kind="stable")
    jn = jn[order]
    bounds = np.flatnonzero(np.diff(comp[jn])) + 1
    for cluster in np.split(jn, bounds):
        # A lone junction is left as it is: where lines cross at a shallow
        # angle or run side by side the skeleton has a pair of junctions or
        # more.  A pair whose joint repair does not hold is tried one by one;
        # larger clusters that fail (texture, hatching) stay as they are.
        if len(cluster) >= 2 and not attempt(cluster) and len(cluster) == 2:
            for v in cluster:
                attempt(np.array([v]))
    keep = ~drop
    out_u = [int(u) for u, k in zip(eu, keep) if k] + [u for u, _, _ in extra]
    out_v = [int(v) for v, k in zip(ev, keep) if k] + [v for _, v, _ in extra]
    out_p = [p for p, k in zip(paths, keep) if k] + [p for _, _, p in extra]
    return (np.asarray(new_xy, dtype=float).reshape(-1, 2), np.asarray(out_u, np.int64),
            np.asarray(out_v, np.int64), out_p)


def trace_skeleton(skeleton, *, prune=0, min_length=0, simplify=0, smooth=0, depth=None,
                   junction_span=0):
    """Trace a one-pixel-wide skeleton into the fewest polylines.

    Parameters
    ----------
    skeleton : ndarray of bool, shape (H, W)
        Curves one pixel wide, 8-connected (as from
        ``skimage.morphology.skeletonize``).
    prune : float, optional
        End branches (a free end to a junction) shorter than this many pixels
        are removed first.
    min_length : float, optional
        Strokes shorter than this many pixels are dropped at the end.
    simplify : float, optional
        Ramer-Douglas-Peucker tolerance in pixels; 0 keeps every pixel.
    smooth : float, optional
        Gaussian sigma in pixels along each stroke before simplifying, see
        `smooth_polylines`; ends on junctions stay put, free ends do not.
    depth : ndarray of float, shape (H, W), optional
        Ink depth, each ink pixel's distance to the paper (as from
        ``scipy.ndimage.distance_transform_edt`` of the ink mask the skeleton
        was thinned from).  When given, the skeleton around junctions, where
        lines merge, is replaced by curves that join the lone lines (see
        `_repair_junctions`).
    junction_span : float, optional
        With ``depth``: the longest edge between two junctions that may be
        part of one merged zone, in pixels.

    Returns
    -------
    list of ndarray, shape (N, 2)
        Strokes as (x = column, y = row) in pixels.  A closed figure's stroke
        ends where it starts.

    Notes
    -----
    Pixels with three or more 8-neighbours are junctions; adjacent junction
    pixels form one node, placed on its pixel nearest the cluster's centroid.  Removing them leaves simple paths (every other
    pixel has at most two neighbours), which are ordered by one depth-first
    walk.  Each connected figure with ``2k`` odd nodes becomes ``max(1, k)``
    strokes; see `trail_decomposition`.

    References
    ----------
    .. [1] J. A. Bondy and U. S. R. Murty, *Graph Theory*, Springer, 2008,
       section 3.3.
    .. [2] U. Ramer, "An iterative procedure for the polygonal approximation
       of plane curves", Computer Graphics and Image Processing 1, 1972;
       D. H. Douglas and T. K. Peucker, "Algorithms for the reduction of the
       number of points required to represent a digitized line or its
       caricature", Cartographica 10, 1973.

    Examples
    --------
    >>> import numpy as np
    >>> sk = np.zeros((9, 9), bool)
    >>> sk[4, 1:8] = True          # a horizontal bar ...
    >>> sk[1:8, 4] = True          # ... crossed by a vertical one
    >>> strokes = trace_skeleton(sk)
    >>> len(strokes)               # four odd ends: two strokes
    2
    """
    node_xy, eu, ev, paths = _skeleton_graph(skeleton)
    eu, ev, paths = _prune_spurs(eu, ev, paths, prune)
    if depth is not None and len(paths):
        node_xy, eu, ev, paths = _repair_junctions(node_xy, eu, ev, paths, depth,
                                                   junction_span)
    if len(paths) == 0:
        return []
    n_nodes = max(len(node_xy), int(max(eu.max(), ev.max())) + 1)
    deg = np.bincount(eu, minlength=n_nodes) + np.bincount(ev, minlength=n_nodes)
    node_of_end = np.stack([eu, ev], axis=1).ravel()
    strokes, pins = [], []
    for steps in _decompose(eu, ev, _end_dirs(paths), n_nodes):
        parts = []
        for a in steps:
            p = paths[a >> 1]
            p = p if a % 2 == 0 else p[::-1]
            parts.append(p if not parts else p[1:])
        strokes.append(np.concatenate(parts))
        # Entry end a of the first edge, exit end (a ^ 1) of the last.
        pins.append((deg[node_of_end[steps[0]]] > 1, deg[node_of_end[steps[-1] ^ 1]] > 1))
    if min_length > 0 and smooth > 0:
        # Drop the crumbs before smoothing them; the pixel staircase makes a
        # raw path at most sqrt(2) times longer than its smoothed curve.
        keep = polyline_lengths(strokes) >= min_length / np.sqrt(2.0)
        strokes = [s for s, k in zip(strokes, keep) if k]
        pins = [p for p, k in zip(pins, keep) if k]
    if smooth > 0:
        strokes = smooth_polylines(strokes, smooth, pinned=pins)
    if simplify > 0:
        strokes = simplify_polylines(strokes, simplify)
    if min_length > 0:
        lengths = polyline_lengths(strokes)
        strokes = [s for s, L in zip(strokes, lengths) if L >= min_length]
    return strokes
