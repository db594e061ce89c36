"""Small closed forms for stacks of 2 x 2 matrices."""

import numpy as np

__all__ = ["inverse_condition", "circle_intersection", "wrap_into"]

# rad: how far outside a joint limit an angle still counts as on it (float
# round-off of the kinematics); within_limits uses the same.
LIMIT_TOL = 1e-9


def inverse_condition(J):
    """Inverse condition number ``sigma_min / sigma_max`` of 2 x 2 matrices.

    Parameters
    ----------
    J : ndarray, shape (..., 2, 2)
        Matrices. The ratio is scale invariant, so ``J`` may be multiplied by
        any non-zero scalar per matrix (for example a determinant, to keep a
        Jacobian finite near a singularity).

    Returns
    -------
    ndarray, shape (...)
        Values in [0, 1]; NaN where ``J`` has a NaN, 0 for the zero matrix.

    Notes
    -----
    For ``J = [[a, b], [c, d]]`` the singular values are ``(p + q) / 2`` and
    ``|p - q| / 2`` with ``p = hypot(a + d, b - c)`` and ``q = hypot(a - d,
    b + c)``, so the ratio is ``|p - q| / (p + q)``: no square root of a
    difference, hence accurate near 1 as well as near 0.

    References
    ----------
    .. [1] G. H. Golub and C. F. Van Loan, *Matrix Computations*, 4th ed.,
       Johns Hopkins, 2013, section 2.4 (singular values).

    Examples
    --------
    >>> import numpy as np
    >>> float(inverse_condition(np.diag([2.0, 1.0])))
    0.5
    >>> float(inverse_condition(np.array([[1.0, 1.0], [1.0, 1.0]])))
    0.0
    """
    J = np.asarray(J, dtype=float)
    a, b = J[..., 0, 0], J[..., 0, 1]
    c, d = J[..., 1, 0], J[..., 1, 1]
    p = np.hypot(a + d, b - c)
    q = np.hypot(a - d, b + c)
    s = p + q
    with np.errstate(invalid="ignore", divide="ignore"):
        r = np.where(s > 0, np.abs(p - q) / s, 0.0)
    return r


def circle_intersection(c0, r0, c1, r1, side):
    """Intersection of two circles on a chosen side of the centre line.

    Parameters
    ----------
    c0, c1 : ndarray, shape (N, 2)
        Centres.
    r0, r1 : float or ndarray, shape (N,)
        Radii.
    side : float or ndarray, shape (N,)
        +1 for the point to the left of the directed line ``c0 -> c1``
        (positive cross product), -1 for the point to its right.

    Returns
    -------
    ndarray, shape (N, 2)
        The intersection points; NaN where the circles do not meet.

    Examples
    --------
    >>> import numpy as np
    >>> circle_intersection(np.array([[0.0, 0.0]]), 5.0,
    ...                     np.array([[6.0, 0.0]]), 5.0, 1.0)
    array([[3., 4.]])
    """
    c0 = np.asarray(c0, dtype=float)
    c1 = np.asarray(c1, dtype=float)
    x0, y0 = c0[..., 0], c0[..., 1]
    dx = c1[..., 0] - x0
    dy = c1[..., 1] - y0
    d2 = dx * dx + dy * dy
    with np.errstate(invalid="ignore", divide="ignore"):
        inv_d2 = 1.0 / d2
        # a / d and h / d: distances along and across the centre line, as
        # fractions of the centre distance
        a_d = 0.5 * (1.0 + (r0 * r0 - r1 * r1) * inv_d2)
        h2_d2 = r0 * r0 * inv_d2 - a_d * a_d
        h_d = np.sqrt(h2_d2)  # NaN where the circles do not meet
        h_d = h_d * side
        out = np.empty(np.broadcast(dx, x0).shape + (2,))
        out[..., 0] = x0 + a_d * dx - h_d * dy
        out[..., 1] = y0 + a_d * dy + h_d * dx
        bad = ~(d2 > 0) | ~(h2_d2 >= 0)
    if bad.any():
        out[bad] = np.nan
    return out


def wrap_into(theta, lo):
    """Wrap angles into ``[lo, lo + 2 pi)``.

    Examples
    --------
    >>> import numpy as np
    >>> round(float(wrap_into(-np.pi / 2, 0.0)), 6)
    4.712389
    """
    # floor instead of np.mod (several times faster on large arrays); the
    # remainder is the same: exact when one turn is added or taken away.
    two_pi = 2.0 * np.pi
    r = np.asarray(theta, dtype=float) - lo
    turns = np.floor(r * (1.0 / two_pi))
    r = r - turns * two_pi
    r = np.where(r < 0.0, r + two_pi, r)
    r = np.where(r >= two_pi, r - two_pi, r)
    return lo + r


def cross2(a, b):
    """z component of the cross product of stacks of 2-vectors."""
    return a[..., 0] * b[..., 1] - a[..., 1] * b[..., 0]
