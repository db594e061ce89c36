"""Polyline lengths and Ramer-Douglas-Peucker simplification."""

import numpy as np
import cv2

__all__ = ["simplify_polylines", "polyline_lengths"]


def polyline_lengths(polylines):
    """Length of each polyline.

    Parameters
    ----------
    polylines : list of ndarray, shape (N, 2)

    Returns
    -------
    ndarray, shape (len(polylines),)

    Examples
    --------
    >>> import numpy as np
    >>> polyline_lengths([np.array([[0, 0], [3, 4]]), np.zeros((1, 2))]).tolist()
    [5.0, 0.0]
    """
    if len(polylines) == 0:
        return np.zeros(0)
    sizes = np.array([len(p) for p in polylines])
    pts = np.concatenate([np.asarray(p, dtype=float).reshape(-1, 2) for p in polylines])
    seg = np.linalg.norm(np.diff(pts, axis=0), axis=1)
    # Zero the segments that jump from one polyline to the next.
    ends = np.cumsum(sizes)[:-1] - 1
    seg[ends[ends < len(seg)]] = 0.0
    idx = np.repeat(np.arange(len(sizes)), sizes)[:len(seg)]
    if len(seg) == 0:
        return np.zeros(len(sizes))
    return np.bincount(idx, seg, minlength=len(sizes))


def simplify_polylines(polylines, tolerance):
    """Simplify polylines with the Ramer-Douglas-Peucker algorithm.

    Parameters
    ----------
    polylines : list of array_like, shape (N, 2)
    tolerance : float
        Largest distance, in the polylines' units, between a dropped point
        and the simplified line.  0 returns copies.

    Returns
    -------
    list of ndarray, shape (M, 2), float
        End points are kept, so closed polylines stay closed.

    References
    ----------
    .. [1] U. Ramer, "An iterative procedure for the polygonal approximation
       of plane curves", Computer Graphics and Image Processing 1(3), 1972.
    .. [2] D. H. Douglas and T. K. Peucker, "Algorithms for the reduction of
       the number of points required to represent a digitized line or its
       caricature", Cartographica 10(2), 1973.

    Examples
    --------
    >>> import numpy as np
    >>> line = np.array([[0, 0], [1, 0.01], [2, 0], [2, 5]])
    >>> simplify_polylines([line], 0.1)[0].tolist()
    [[0.0, 0.0], [2.0, 0.0], [2.0, 5.0]]
    """
    out = []
    for p in polylines:
        p = np.asarray(p, dtype=float).reshape(-1, 2)
        if tolerance > 0 and len(p) > 2:
            if len(p) > 3 and np.array_equal(p[0], p[-1]):
                # A closed curve: split it at the point farthest from its
                # start, as the end-to-end chord of a loop has no length.
                far = int(np.argmax(np.hypot(*(p - p[0]).T)))
                a = _rdp(p[:far + 1], tolerance)
                b = _rdp(p[far:], tolerance)
                p = np.concatenate([a, b[1:]])
            else:
                p = _rdp(p, tolerance)
        out.append(np.array(p, dtype=float))
    return out


def _rdp(p, tolerance):
    if len(p) <= 2:
        return p
    # OpenCV's approxPolyDP is the same recursive algorithm, in C; as an
    # open curve it keeps both end points.
    q = cv2.approxPolyDP(p.astype(np.float32).reshape(-1, 1, 2), float(tolerance), False)
    q = q.reshape(-1, 2).astype(float)
    q[0], q[-1] = p[0], p[-1]   # exact ends, not their float32 copies
    return q
