"""Serial two-link (RR) planar arm."""

from dataclasses import dataclass

import numpy as np

from ._base import Arm
from ._linalg import LIMIT_TOL, wrap_into

__all__ = ["SerialArm"]


@dataclass(frozen=True, eq=False)
class SerialArm(Arm):
    """A two-link serial arm: shoulder motor, elbow motor, pen at the tip.

    ``elbow = shoulder + upper (cos t1, sin t1)`` and ``pen = elbow + lower
    (cos(t1 + t2), sin(t1 + t2))``; ``t1`` is absolute, ``t2`` relative to
    the upper link. ``elbow="ccw"`` means ``t2`` in (0, pi), ``"cw"`` means
    ``t2`` in (-pi, 0).

    Parameters
    ----------
    shoulder : tuple of float
        Shoulder axis position, mm.
    upper, lower : float
        Link lengths, mm.
    elbow : {"ccw", "cw"}
        Elbow sense.

    References
    ----------
    .. [1] J. J. Craig, *Introduction to Robotics: Mechanics and Control*,
       3rd ed., Pearson, 2005, sections 3.6 and 4.4 (planar two-link arm).
    .. [2] T. Yoshikawa, "Manipulability of robotic mechanisms", Int. J.
       Robotics Research 4(2), 1985.

    Examples
    --------
    >>> import numpy as np
    >>> arm = SerialArm(upper=100, lower=100)
    >>> np.rad2deg(arm.ik(np.array([100.0, 100.0]))).round(6)
    array([ 0., 90.])
    """

    shoulder: tuple = (0.0, 0.0)
    upper: float = 100.0
    lower: float = 100.0
    elbow: str = "ccw"

    kind = "serial"

    def joints(self, q):
        """Shoulder, elbow and pen positions for drawing the arm."""
        q = np.atleast_2d(np.asarray(q, dtype=float))
        s = np.asarray(self.shoulder, float)
        e = s + self.upper * np.stack([np.cos(q[:, 0]), np.sin(q[:, 0])], 1)
        t = q[:, 0] + q[:, 1]
        p = e + self.lower * np.stack([np.cos(t), np.sin(t)], 1)
        return {"shoulder": np.broadcast_to(s, (len(q), 2)), "elbow": e, "pen": p}

    def fk(self, q):
        """Pen position for joint angles ``q`` (radians), shape (N, 2) or (2,)."""
        q = np.asarray(q, dtype=float)
        single = q.ndim == 1
        p = self.joints(q)["pen"]
        return p[0] if single else p

    def ik(self, p):
        """Joint angles for pen positions ``p`` in the configured elbow sense.

        Returns NaN where the point is out of reach (farther than
        ``upper + lower`` or nearer than ``|upper - lower|``). ``t1`` is
        wrapped into ``[lower limit - 1e-9, lower limit - 1e-9 + 2 pi)``, so an
        angle on a limit stays there; ``t2`` keeps its sign from the elbow
        sense.
        """
        p = np.asarray(p, dtype=float)
        single = p.ndim == 1
        X = np.atleast_2d(p) - np.asarray(self.shoulder, float)
        l1, l2 = self.upper, self.lower
        r2 = np.einsum("ij,ij->i", X, X)
        c2 = (r2 - l1 * l1 - l2 * l2) / (2.0 * l1 * l2)
        with np.errstate(invalid="ignore"):
            bad = ~(np.abs(c2) <= 1.0)
        sgn = 1.0 if self.elbow == "ccw" else -1.0
        t2 = sgn * np.arccos(np.clip(c2, -1.0, 1.0))
        t1 = np.arctan2(X[:, 1], X[:, 0]) - np.arctan2(l2 * np.sin(t2), l1 + l2 * np.cos(t2))
        q = np.stack([wrap_into(t1, self.limits.theta1[0] - LIMIT_TOL), t2], axis=1)
        q[bad] = np.nan
        return q[0] if single else q

    def jacobian(self, q):
        """Analytic Jacobian d(pen)/d(theta), mm per radian.

        ``det J = upper * lower * sin(t2)`` (Yoshikawa 1985).
        """
        q = np.asarray(q, dtype=float)
        single = q.ndim == 1
        q2 = np.atleast_2d(q)
        t1, t12 = q2[:, 0], q2[:, 0] + q2[:, 1]
        l1, l2 = self.upper, self.lower
        J = np.empty((len(q2), 2, 2))
        J[:, 0, 0] = -l1 * np.sin(t1) - l2 * np.sin(t12)
        J[:, 0, 1] = -l2 * np.sin(t12)
        J[:, 1, 0] = l1 * np.cos(t1) + l2 * np.cos(t12)
        J[:, 1, 1] = l2 * np.cos(t12)
        return J[0] if single else J

    def manipulability(self, q):
        """Yoshikawa's manipulability ``|det J|`` (mm^2 per rad^2)."""
        return np.abs(np.linalg.det(self.jacobian(q)))

    def reach_box(self):
        s = np.asarray(self.shoulder, float)
        r = self.upper + self.lower
        return float(s[0] - r), float(s[1] - r), float(s[0] + r), float(s[1] + r)
