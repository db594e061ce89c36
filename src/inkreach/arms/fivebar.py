"""Five-bar (5R) parallel arm driven by two base motors."""

from dataclasses import dataclass

import numpy as np

from ._base import Arm
from ._linalg import LIMIT_TOL, circle_intersection, wrap_into

__all__ = ["FiveBar"]

# Smallest accepted sine-like measure of the assembly, relative to
# left_lower * right_lower: below it the two elbows (nearly) coincide and the
# pen joint is not determined by the angles (the distal links overlap).
_ASSEMBLY_EPS = 1e-9
_BLOCK = 1 << 16     # points per block in ik_conditioning (8 x 64 k = 512 kB arrays)


@dataclass(frozen=True, eq=False)
class FiveBar(Arm):
    """A planar five-bar linkage with a pen at (or beyond) the distal joint.

    Conventions (millimetres, radians, x right, y away from the motors):
    ``elbow_L = left_motor + left_upper (cos t1, sin t1)`` and
    ``elbow_R = right_motor + right_upper (cos t2, sin t2)``, both angles
    absolute and counter-clockwise from +x. The pen joint P is the meeting
    point of circle(elbow_L, left_lower) and circle(elbow_R, right_lower)
    to the left of the directed line elbow_L -> elbow_R. The pen sits
    ``pen_extension`` mm beyond P along elbow_L -> P. With ``elbows="out"``
    the left elbow lies left of the line left_motor -> P and the right
    elbow right of right_motor -> P; ``"in"`` is the opposite.

    Parameters
    ----------
    left_motor, right_motor : tuple of float
        Motor axis positions, mm.
    left_upper, right_upper : float
        Driven (proximal) link lengths, mm.
    left_lower, right_lower : float
        Distal link lengths, elbow to pen joint, mm.
    pen_extension : float
        Distance of the pen beyond the pen joint, along the left distal link.
    elbows : {"out", "in"}
        Working mode of the two legs.

    References
    ----------
    .. [1] C. Gosselin and J. Angeles, "Singularity analysis of closed-loop
       kinematic chains", IEEE Trans. Robotics and Automation 6(3), 1990.
    .. [2] X.-J. Liu, J. Wang and G. Pritschow, "Kinematics, singularity and
       workspace of planar 5R symmetrical parallel mechanisms", Mechanism
       and Machine Theory 41(2), 2006.

    Examples
    --------
    >>> import numpy as np
    >>> arm = FiveBar(left_motor=(-30, 0), right_motor=(30, 0),
    ...               left_upper=90, right_upper=90,
    ...               left_lower=120, right_lower=120)
    >>> q = arm.ik(np.array([[0.0, 150.0]]))
    >>> np.allclose(arm.fk(q), [[0.0, 150.0]])
    True
    """

    left_motor: tuple = (-30.0, 0.0)
    right_motor: tuple = (30.0, 0.0)
    left_upper: float = 90.0
    right_upper: float = 90.0
    left_lower: float = 120.0
    right_lower: float = 120.0
    pen_extension: float = 0.0
    elbows: str = "out"

    kind = "five-bar"

    # --- geometry helpers -------------------------------------------------
    def _motors(self):
        return np.asarray(self.left_motor, float), np.asarray(self.right_motor, float)

    def elbows_at(self, q):
        """Elbow positions (left, right) for joint angles ``q``, each (N, 2)."""
        q = np.atleast_2d(np.asarray(q, dtype=float))
        mL, mR = self._motors()
        eL = mL + self.left_upper * np.stack([np.cos(q[:, 0]), np.sin(q[:, 0])], 1)
        eR = mR + self.right_upper * np.stack([np.cos(q[:, 1]), np.sin(q[:, 1])], 1)
        return eL, eR

    def _assemble(self, q):
        """Elbows and pen joint (each (N, 2)) in the assembly of the conventions."""
        eL, eR = self.elbows_at(q)
        return eL, eR, circle_intersection(eL, self.left_lower, eR, self.right_lower, 1.0)

    def joints(self, q):
        """Every joint of the linkage for drawing it.

        Returns
        -------
        dict of ndarray, each (N, 2)
            ``left_motor``, ``left_elbow``, ``pen_joint``, ``right_elbow``,
            ``right_motor`` and ``pen``.
        """
        q = np.atleast_2d(np.asarray(q, dtype=float))
        eL, eR, P = self._assemble(q)
        mL, mR = self._motors()
        n = len(q)
        return {
            "left_motor": np.broadcast_to(mL, (n, 2)),
            "left_elbow": eL,
            "pen_joint": P,
            "right_elbow": eR,
            "right_motor": np.broadcast_to(mR, (n, 2)),
            "pen": self._pen_from(eL, P),
        }

    def _pen_from(self, eL, P):
        if self.pen_extension == 0:
            return P
        return P + (self.pen_extension / self.left_lower) * (P - eL)

    # --- kinematics -------------------------------------------------------
    def fk(self, q):
        """Pen position for joint angles.

        Parameters
        ----------
        q : array_like, shape (N, 2) or (2,)
            ``(theta1, theta2)``, radians.

        Returns
        -------
        ndarray, shape (N, 2) or (2,)
            Pen position in mm; NaN where the loop cannot close.
        """
        q = np.asarray(q, dtype=float)
        single = q.ndim == 1
        eL, _, P = self._assemble(q)
        X = self._pen_from(eL, P)
        return X[0] if single else X

    def ik(self, p):
        """Joint angles that put the pen at ``p`` in the configured mode.

        Parameters
        ----------
        p : array_like, shape (N, 2) or (2,)
            Pen positions, mm.

        Returns
        -------
        ndarray, shape (N, 2) or (2,)
            ``(theta1, theta2)`` in radians, each wrapped into
            ``[lower limit - 1e-9, lower limit - 1e-9 + 2 pi)`` (so an angle
            on a limit stays there instead of jumping by 2 pi); NaN where a
            leg cannot reach, where the linkage would assemble the other way
            (its forward kinematics would then give a different point), or
            where the two elbows coincide (the pen joint is then not
            determined by the angles).
        """
        p = np.asarray(p, dtype=float)
        single = p.ndim == 1
        q, _ = self._ik_parts(np.atleast_2d(p))
        return q[0] if single else q

    def ik_conditioning(self, p):
        """Inverse kinematics and the conditioning there, in one pass.

        The same values as ``q = ik(p)`` then ``conditioning(q)``, but the
        elbows and pen joint found by the inverse kinematics are reused for
        the Jacobian instead of being assembled again from the angles.

        Parameters
        ----------
        p : array_like, shape (N, 2) or (2,)
            Pen positions, mm.

        Returns
        -------
        q : ndarray, shape (N, 2) or (2,)
            As :meth:`ik`.
        c : ndarray, shape (N,) or ()
            As ``conditioning(ik(p))`` (0 where ``q`` is NaN, as there).
        """
        p = np.asarray(p, dtype=float)
        single = p.ndim == 1
        X = np.atleast_2d(p)
        q = np.empty((len(X), 2))
        c = np.empty(len(X))
        # Blocks of points keep the ~40 temporaries in cache (a loop over
        # blocks, each fully vectorised; the values do not depend on it).
        for i in range(0, len(X), _BLOCK):
            qb, parts = self._ik_parts(X[i:i + _BLOCK])
            cb = _ratio(*self._k_entries(*parts)[:4])
            cb[np.isnan(qb[:, 0])] = 0.0
            q[i:i + _BLOCK], c[i:i + _BLOCK] = qb, cb
        return (q[0], c[0]) if single else (q, c)

    def conditioning_at(self, points):
        """Conditioning at pen positions (NaN where IK fails)."""
        return self.ik_conditioning(points)[1]

    def _ik_parts(self, X):
        """Angles (N, 2) and the joint components found on the way."""
        mLx, mLy = (float(v) for v in self.left_motor)
        mRx, mRy = (float(v) for v in self.right_motor)
        sgn = 1.0 if self.elbows == "out" else -1.0
        px = np.ascontiguousarray(X[:, 0])
        py = np.ascontiguousarray(X[:, 1])
        with np.errstate(invalid="ignore", divide="ignore"):
            # Left leg: motor -> elbow (upper) -> pen (lower + extension), a
            # two-link chain; its elbow lies left of motor -> pen for "out".
            reach_L = self.left_lower + self.pen_extension
            eLx, eLy, okL = _meet(mLx, mLy, self.left_upper, px, py, reach_L, sgn)
            if self.pen_extension == 0:
                Px, Py = px, py
            else:
                f = self.left_lower / reach_L
                Px, Py = eLx + f * (px - eLx), eLy + f * (py - eLy)
            eRx, eRy, okR = _meet(mRx, mRy, self.right_upper, Px, Py, self.right_lower, -sgn)
            # Assembly check: P must lie left of elbow_L -> elbow_R.
            cr = (eRx - eLx) * (Py - eLy) - (eRy - eLy) * (Px - eLx)
            ok = okL & okR & (cr > _ASSEMBLY_EPS * self.left_lower * self.right_lower)
            uLx, uLy = eLx - mLx, eLy - mLy
            uRx, uRy = eRx - mRx, eRy - mRy
            q = np.empty((len(px), 2))
            q[:, 0] = wrap_into(np.arctan2(uLy, uLx), self.limits.theta1[0] - LIMIT_TOL)
            q[:, 1] = wrap_into(np.arctan2(uRy, uRx), self.limits.theta2[0] - LIMIT_TOL)
        q[~ok] = np.nan
        # d(elbow)/d(theta) is the motor-to-elbow vector turned +90 degrees.
        return q, (eLx, eLy, eRx, eRy, Px, Py, -uLy, uLx, -uRy, uRx)

    def _q_parts(self, q):
        """The joint components of :meth:`_ik_parts` assembled from angles (N, 2)."""
        mLx, mLy = (float(v) for v in self.left_motor)
        mRx, mRy = (float(v) for v in self.right_motor)
        c1, s1 = np.cos(q[:, 0]), np.sin(q[:, 0])
        c2, s2 = np.cos(q[:, 1]), np.sin(q[:, 1])
        uL, uR = self.left_upper, self.right_upper
        eLx, eLy = mLx + uL * c1, mLy + uL * s1
        eRx, eRy = mRx + uR * c2, mRy + uR * s2
        with np.errstate(invalid="ignore", divide="ignore"):
            Px, Py, ok = _meet(eLx, eLy, self.left_lower, eRx, eRy, self.right_lower, 1.0)
        Px[~ok] = np.nan
        Py[~ok] = np.nan
        return eLx, eLy, eRx, eRy, Px, Py, -uL * s1, uL * c1, -uR * s2, uR * c2

    def _k_entries(self, eLx, eLy, eRx, eRy, Px, Py, dLx, dLy, dRx, dRy):
        """Entries of det(A) * Jacobian and det(A), see :meth:`jacobian`."""
        ax, ay = Px - eLx, Py - eLy
        bx, by = Px - eRx, Py - eRy
        bL = ax * dLx + ay * dLy
        bR = bx * dRx + by * dRy
        detA = ax * by - ay * bx
        # adj(A) = [[b_y, -a_y], [-b_x, a_x]]; dP = adj(A) B / det A
        k00, k01, k10, k11 = by * bL, -ay * bR, -bx * bL, ax * bR
        if self.pen_extension:
            k = self.pen_extension / self.left_lower
            g = 1.0 + k
            k00 = g * k00 - k * dLx * detA
            k10 = g * k10 - k * dLy * detA
            k01 = g * k01
            k11 = g * k11
        return k00, k01, k10, k11, detA

    def jacobian(self, q):
        """Analytic Jacobian d(pen)/d(theta), mm per radian.

        Obtained by differentiating the two loop-closure constraints
        ``|P - elbow_L|^2 = left_lower^2`` and ``|P - elbow_R|^2 =
        right_lower^2``: ``A dP = B dtheta`` with ``A`` the rows
        ``(P - elbow_i)^T`` and ``B`` diagonal. ``det A = 0`` is the
        type-II (parallel) singularity, a zero diagonal of ``B`` the type-I
        (serial) one.

        Parameters
        ----------
        q : array_like, shape (N, 2) or (2,)

        Returns
        -------
        ndarray, shape (N, 2, 2) or (2, 2)
            Infinite entries at an exact type-II singularity, NaN where the
            loop cannot close.

        References
        ----------
        .. [1] C. Gosselin and J. Angeles, "Singularity analysis of
           closed-loop kinematic chains", IEEE Trans. Robotics and
           Automation 6(3), 1990.
        """
        q = np.asarray(q, dtype=float)
        single = q.ndim == 1
        K, detA = self._jacobian_parts(np.atleast_2d(q))
        with np.errstate(invalid="ignore", divide="ignore"):
            J = K / detA[:, None, None]
        return J[0] if single else J

    def _jacobian_parts(self, q):
        k00, k01, k10, k11, detA = self._k_entries(*self._q_parts(q))
        K = np.empty((len(q), 2, 2))
        K[:, 0, 0], K[:, 0, 1], K[:, 1, 0], K[:, 1, 1] = k00, k01, k10, k11
        return K, detA

    def conditioning(self, q):
        """Inverse condition number sigma_min / sigma_max of the Jacobian.

        As :meth:`Arm.conditioning`, evaluated on the joint components
        directly (the closed form of :func:`inverse_condition`).
        """
        q = np.asarray(q, dtype=float)
        single = q.ndim == 1
        c = _ratio(*self._k_entries(*self._q_parts(np.atleast_2d(q)))[:4])
        return c[0] if single else c

    def _jacobian_scaled(self, q):
        K, _ = self._jacobian_parts(q)
        return K

    def reach_box(self):
        mL, mR = self._motors()
        rL = self.left_upper + self.left_lower + self.pen_extension
        rR = self.right_upper + self.right_lower + self.pen_extension
        lo = np.minimum(mL - rL, mR - rR)
        hi = np.maximum(mL + rL, mR + rR)
        return float(lo[0]), float(lo[1]), float(hi[0]), float(hi[1])


def _meet(x0, y0, r0, x1, y1, r1, side):
    """Circle meeting point by components: x, y and where the circles meet.

    As :func:`circle_intersection` (``side`` +1: left of centre 0 -> 1),
    on separate coordinate arrays to keep every operation contiguous.
    """
    dx = x1 - x0
    dy = y1 - y0
    d2 = dx * dx + dy * dy
    inv = 1.0 / d2
    a = 0.5 * (1.0 + (r0 * r0 - r1 * r1) * inv)
    h2 = r0 * r0 * inv - a * a
    ok = (d2 > 0) & (h2 >= 0)
    h = np.sqrt(h2)
    if side != 1.0:
        h *= side
    return x0 + a * dx - h * dy, y0 + a * dy + h * dx, ok


def _ratio(a, b, c, d):
    """sigma_min / sigma_max of [[a, b], [c, d]] (see :func:`inverse_condition`)."""
    # sqrt of a sum of squares instead of hypot: entries are products of
    # lengths (below ~1e9 mm^3), far from overflow, and sqrt is much faster.
    u, v = a + d, b - c
    p = np.sqrt(u * u + v * v)
    u, v = a - d, b + c
    q = np.sqrt(u * u + v * v)
    s = p + q
    with np.errstate(invalid="ignore", divide="ignore"):
        r = np.abs(p - q) / s
    r[~(s > 0)] = 0.0      # as inverse_condition: 0 for the zero matrix and for NaN
    return r
