"""One-pixel skeletons to a small stroke graph, and that graph to few trails.

A skeleton is cut at its junction pixels; what is left falls apart into
simple pixel paths, the graph's edges.  Junction clusters and free ends are
its nodes.  At every node the incident edge ends are paired, straightest
continuation first, and the pairings are followed into trails; closed trails
are then spliced into the trails they touch.  A connected figure with ``2k``
odd nodes comes out as exactly ``max(1, k)`` strokes, the fewest possible.
"""

from collections import defaultdict, deque

import numpy as np
from scipy import ndimage, sparse
from scipy.sparse import csgraph

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


def trace_skeleton(skeleton, *, prune=0, min_length=0, simplify=0, smooth=0):
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
