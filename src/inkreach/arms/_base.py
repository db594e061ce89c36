"""What every arm model shares: limits, pen, and the reachability test."""

from dataclasses import dataclass, field

import numpy as np

from ._linalg import LIMIT_TOL, inverse_condition

__all__ = ["Limits", "PenSpec", "Arm"]


@dataclass(frozen=True)
class Limits:
    """Joint and conditioning limits of an arm, in radians inside the code.

    Parameters
    ----------
    theta1, theta2 : tuple of float
        Lowest and highest allowed angle of each motor, radians.
    max_speed : float
        Largest joint speed, rad/s (the same for both motors).
    max_accel : float
        Largest joint acceleration, rad/s^2.
    min_conditioning : float
        Floor on the inverse condition number of the Jacobian, in (0, 1].
    """

    theta1: tuple = (0.0, np.pi)
    theta2: tuple = (0.0, np.pi)
    max_speed: float = np.deg2rad(200.0)
    max_accel: float = np.deg2rad(2000.0)
    min_conditioning: float = 0.3

    @property
    def lower(self):
        """Lower joint limits as an array of shape (2,)."""
        return np.array([self.theta1[0], self.theta2[0]])

    @property
    def upper(self):
        """Upper joint limits as an array of shape (2,)."""
        return np.array([self.theta1[1], self.theta2[1]])


@dataclass(frozen=True)
class PenSpec:
    """The pen: its line width and how long it takes to lift or lower.

    Parameters
    ----------
    width_mm : float
        Width of the inked line, mm.
    lift_s : float
        Time for the pen to lift or to lower, seconds.
    """

    width_mm: float = 0.5
    lift_s: float = 0.12


@dataclass(frozen=True, eq=False)
class Arm:
    """Base of the arm models; use :class:`FiveBar` or :class:`SerialArm`.

    Angles are radians; lengths millimetres. All methods take and return
    numpy arrays of shape (N, 2) (or (2,) for a single point) and never
    raise for unreachable input: they give NaN there.
    """

    name: str = "arm"
    limits: Limits = field(default_factory=Limits)
    pen: PenSpec = field(default_factory=PenSpec)
    home_deg: tuple = None
    hardware: dict = None

    kind = "arm"

    # --- to be provided by subclasses -------------------------------------
    def fk(self, q):  # pragma: no cover - abstract
        raise NotImplementedError

    def ik(self, p):  # pragma: no cover - abstract
        raise NotImplementedError

    def jacobian(self, q):  # pragma: no cover - abstract
        raise NotImplementedError

    def _jacobian_scaled(self, q):
        """Jacobian times a per-sample non-zero scalar, finite everywhere."""
        return self.jacobian(q)

    def reach_box(self):  # pragma: no cover - abstract
        """(xmin, ymin, xmax, ymax) containing every point the pen can reach."""
        raise NotImplementedError

    # --- shared -----------------------------------------------------------
    def conditioning(self, q):
        """Inverse condition number sigma_min / sigma_max of the Jacobian.

        Parameters
        ----------
        q : array_like, shape (N, 2) or (2,)
            Joint angles, radians.

        Returns
        -------
        ndarray, shape (N,) or ()
            In [0, 1]: 1 is isotropic, 0 a singularity of either kind;
            NaN where the posture does not assemble.

        References
        ----------
        .. [1] C. Gosselin and J. Angeles, "Singularity analysis of
           closed-loop kinematic chains", IEEE Trans. Robotics and
           Automation 6(3), 1990.
        .. [2] J. K. Salisbury and J. J. Craig, "Articulated hands: force
           control and kinematic issues", Int. J. Robotics Research 1(1),
           1982 (the condition number as a dexterity measure).
        """
        q = np.asarray(q, dtype=float)
        single = q.ndim == 1
        c = inverse_condition(self._jacobian_scaled(np.atleast_2d(q)))
        return c[0] if single else c

    def within_limits(self, q):
        """True where both joint angles lie inside their limits.

        Parameters
        ----------
        q : array_like, shape (N, 2) or (2,)

        Returns
        -------
        ndarray of bool, shape (N,) or ()
        """
        q = np.asarray(q, dtype=float)
        eps = LIMIT_TOL
        ok = np.all((q >= self.limits.lower - eps) & (q <= self.limits.upper + eps), axis=-1)
        return ok

    def conditioning_at(self, points):
        """Conditioning at pen positions (NaN where IK fails)."""
        return self.conditioning(self.ik(points))

    def reachable(self, points, tol=1e-6):
        """True where a point can be drawn safely.

        A point is reachable when inverse kinematics exists in the
        configured assembly and working mode, the angles lie inside the
        joint limits, forward kinematics gives the point back within
        ``tol`` mm, and the conditioning is at or above the floor.

        Parameters
        ----------
        points : array_like, shape (N, 2) or (2,)
            Pen positions, mm.
        tol : float
            Round-trip tolerance, mm.

        Returns
        -------
        ndarray of bool, shape (N,) or ()
        """
        p = np.asarray(points, dtype=float)
        single = p.ndim == 1
        p2 = np.atleast_2d(p)
        q = self.ik(p2)
        back = self.fk(q)
        with np.errstate(invalid="ignore"):
            ok = np.all(np.isfinite(q), axis=1)
            ok &= np.hypot(*(back - p2).T) <= tol
            ok &= self.within_limits(q)
            ok &= self.conditioning(q) >= self.limits.min_conditioning
        return ok[0] if single else ok

    def home(self):
        """Joint angles of the rest posture (radians), or None if unset."""
        if self.home_deg is None:
            return None
        return np.deg2rad(np.asarray(self.home_deg, dtype=float))
