"""The result of placing a drawing: an image-to-arm affine and what it covers."""

from dataclasses import dataclass

import numpy as np

from ._geometry import _apply, _inside_convex

__all__ = ["Placement"]


@dataclass(frozen=True, eq=False)
class Placement:
    """Where a drawing goes on the arm's paper, and how it gets there.

    Attributes
    ----------
    matrix : ndarray, shape (2, 3)
        Affine taking an image point (column, row), pixel centres at whole
        numbers, to arm millimetres: ``arm = matrix[:, :2] @ (c, r) + matrix[:, 2]``.
    scale : float
        Millimetres per image pixel.
    rotation : float
        Rotation of the drawing in the arm frame, radians, counter-clockwise.
    hull : ndarray, shape (M, 2)
        The drawing's convex hull placed in the arm frame, mm,
        counter-clockwise (one or two vertices for a dot or a line).
    bbox : tuple of float
        ``(x0, y0, width, height)`` of the placed content, mm.
    worst_conditioning : float
        Lowest inverse condition number over every checked point.

    Examples
    --------
    >>> import numpy as np
    >>> m = np.array([[0.5, 0.0, 10.0], [0.0, -0.5, 200.0]])
    >>> p = Placement(m, 0.5, 0.0, np.array([[10., 150.], [60., 150.], [60., 200.], [10., 200.]]),
    ...               (10.0, 150.0, 50.0, 50.0), 0.5)
    >>> p.size_mm
    (50.0, 50.0)
    >>> p.apply(np.array([[0.0, 0.0], [100.0, 100.0]]))
    array([[ 10., 200.],
           [ 60., 150.]])
    >>> p.apply(p.inverse() @ np.array([30.0, 170.0, 1.0]))
    array([ 30., 170.])
    >>> p.contains(np.array([[30.0, 170.0], [0.0, 0.0]]))
    array([ True, False])
    """

    matrix: np.ndarray
    scale: float
    rotation: float
    hull: np.ndarray
    bbox: tuple
    worst_conditioning: float

    @property
    def size_mm(self):
        """``(width, height)`` of the placed content's bounding box, mm (``bbox[2:]``)."""
        return (float(self.bbox[2]), float(self.bbox[3]))

    @property
    def flipped(self):
        """True when the affine mirrors (image rows down, arm y up)."""
        return bool(np.linalg.det(self.matrix[:, :2]) < 0)

    def apply(self, points):
        """Image (column, row) points to arm mm.

        Parameters
        ----------
        points : array_like, shape (N, 2) or (2,)

        Returns
        -------
        ndarray of the same shape
        """
        return _apply(self.matrix, points)

    def apply_all(self, strokes):
        """:meth:`apply` on every polyline of a list; returns a new list."""
        return [self.apply(s) for s in strokes]

    def inverse(self):
        """The (2, 3) affine taking arm mm back to image (column, row)."""
        Ai = np.linalg.inv(self.matrix[:, :2])
        return np.hstack([Ai, -(Ai @ self.matrix[:, 2])[:, None]])

    def contains(self, points, tol=1e-6):
        """True where arm points (mm) lie inside the placed hull (within ``tol`` mm).

        Parameters
        ----------
        points : array_like, shape (N, 2) or (2,)
        tol : float

        Returns
        -------
        ndarray of bool, shape (N,) or ()
        """
        p = np.asarray(points, dtype=float)
        ok = _inside_convex(self.hull, np.atleast_2d(p), tol)
        return ok[0] if p.ndim == 1 else ok
