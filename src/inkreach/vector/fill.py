"""Hatching the inside of filled shapes with parallel lines."""

import numpy as np

from ..errors import InkreachError

__all__ = ["hatch_fill"]

#: Most hatch lines for one shape (a bound we chose: a 200 mm shape at
#: 0.1 mm spacing).
MAX_LINES = 20_000


def hatch_fill(rings, spacing, angle=np.pi / 4, rule="nonzero"):
    """Parallel line segments covering the inside of a filled shape.

    Parameters
    ----------
    rings : list of ndarray, shape (N_i, 2)
        The shape's subpaths (each taken as closed, as SVG fills them).
    spacing : float
        Distance between neighbouring lines, in the rings' units.
    angle : float
        Direction of the lines, radians from the x axis.
    rule : {"nonzero", "evenodd"}
        The SVG fill rule deciding what is inside.

    Returns
    -------
    list of ndarray, shape (2, 2)

    References
    ----------
    .. [1] W3C, "SVG 1.1 (Second Edition)", 2011, section 11.3 (the
       fill-rule property: nonzero winding and even-odd).
    .. [2] J. D. Foley, A. van Dam, S. K. Feiner and J. F. Hughes,
       "Computer Graphics: Principles and Practice", 2nd ed., 1990,
       section 3.6 (scan-line polygon filling).

    Examples
    --------
    >>> sq = [np.array([[0, 0], [4, 0], [4, 4], [0, 4], [0, 0]], float)]
    >>> [s[:, 1].tolist() for s in hatch_fill(sq, 1.0, angle=0.0)]
    [[0.5, 0.5], [1.5, 1.5], [2.5, 2.5], [3.5, 3.5]]
    """
    if not (np.isfinite(spacing) and spacing > 0):
        raise InkreachError(f"fill hatch spacing {spacing!r} must be a positive number")
    if rule not in ("nonzero", "evenodd"):
        rule = "nonzero"
    c, s = np.cos(angle), np.sin(angle)
    rot = np.array([[c, s], [-s, c]])            # into a frame where the lines run along x
    a_list, b_list = [], []
    for r in rings:
        r = np.asarray(r, float)
        if len(r) < 3:
            continue
        r = r @ rot.T
        if np.any(r[0] != r[-1]):
            r = np.vstack([r, r[:1]])
        a_list.append(r[:-1])
        b_list.append(r[1:])
    if not a_list:
        return []
    A, B = np.concatenate(a_list), np.concatenate(b_list)
    y0, y1 = min(A[:, 1].min(), B[:, 1].min()), max(A[:, 1].max(), B[:, 1].max())
    n = int(np.floor((y1 - y0) / spacing))
    if n + 1 > MAX_LINES:
        raise InkreachError("the fill hatch would need too many lines; raise the spacing")
    ys = y0 + spacing * (np.arange(n + 1) + 0.5)
    ys = ys[ys < y1]
    up = B[:, 1] > A[:, 1]
    lo = np.where(up, A[:, 1], B[:, 1])
    hi = np.where(up, B[:, 1], A[:, 1])
    d = np.where(up, 1, -1)
    dy = B[:, 1] - A[:, 1]
    out = []
    back = rot.T
    for k, y in enumerate(ys):
        hit = (lo <= y) & (y < hi)               # half-open: a vertex counts once
        if hit.sum() < 2:
            continue
        t = (y - A[hit, 1]) / dy[hit]
        x = A[hit, 0] + t * (B[hit, 0] - A[hit, 0])
        order = np.argsort(x, kind="stable")
        x, w = x[order], np.cumsum(d[hit][order])
        inside = (w != 0) if rule == "nonzero" else (w % 2 != 0)
        # runs of inside intervals make one segment each
        ins = inside[:-1]
        starts = np.flatnonzero(ins & ~np.r_[False, ins[:-1]])
        ends = np.flatnonzero(ins & ~np.r_[ins[1:], False]) + 1
        for i, j in zip(starts, ends):
            if x[j] > x[i]:
                seg = np.array([[x[i], y], [x[j], y]])
                if k % 2:
                    seg = seg[::-1]
                out.append(seg @ back.T)
    return out
