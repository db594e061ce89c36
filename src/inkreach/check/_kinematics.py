"""Forward kinematics and conditioning of an arm, written from its file alone.

Kept apart from :mod:`inkreach.arms` on purpose: the saved-plan check must
not share a line of kinematics with the planner it checks. The formulas are
the arm conventions of the README (degrees in the file, radians here).
"""

import numpy as np

__all__ = []

_STEP = 1e-6    # rad: central-difference step (truncation ~1e-12, rounding ~1e-10 relative)


def _fk_fivebar(g, q):
    """Pen of a five-bar: the circle meeting point left of elbow_L -> elbow_R.

    ``elbow_L = left_motor + left_upper (cos t1, sin t1)``, ``elbow_R =
    right_motor + right_upper (cos t2, sin t2)``; the pen joint P is the
    point at ``left_lower`` from elbow_L and ``right_lower`` from elbow_R
    with a positive cross product (elbow_R - elbow_L) x (P - elbow_L); the
    pen sits ``pen_extension`` beyond P along elbow_L -> P. NaN where the
    loop cannot close.
    """
    mL = np.asarray(g["left_motor"], float)
    mR = np.asarray(g["right_motor"], float)
    eL = mL + g["left_upper"] * np.column_stack([np.cos(q[:, 0]), np.sin(q[:, 0])])
    eR = mR + g["right_upper"] * np.column_stack([np.cos(q[:, 1]), np.sin(q[:, 1])])
    rL, rR = float(g["left_lower"]), float(g["right_lower"])
    d = eR - eL
    dist = np.hypot(d[:, 0], d[:, 1])
    with np.errstate(invalid="ignore", divide="ignore"):
        # Law of cosines: along = distance from elbow_L to the foot of P on
        # the elbow line, across = height of P over it (left side: +).
        along = (dist ** 2 + rL ** 2 - rR ** 2) / (2 * dist)
        across = np.sqrt(rL ** 2 - along ** 2)
        u = d / dist[:, None]
        n = np.column_stack([-u[:, 1], u[:, 0]])      # u turned +90 degrees
        P = eL + along[:, None] * u + across[:, None] * n
        ext = float(g.get("pen_extension", 0.0))
        pen = P + (ext / rL) * (P - eL)
    pen[~np.isfinite(pen).all(axis=1)] = np.nan
    return pen


def _fk_serial(g, q):
    """Pen of a two-link serial arm; t2 relative to the upper link."""
    s = np.asarray(g["shoulder"], float)
    a, b = q[:, 0], q[:, 0] + q[:, 1]
    return s + g["upper"] * np.column_stack([np.cos(a), np.sin(a)]) \
        + g["lower"] * np.column_stack([np.cos(b), np.sin(b)])


def fk(arm_dict, q):
    """Pen positions (N, 2) mm for joint angles ``q`` (N, 2) radians."""
    g = arm_dict["geometry"]
    q = np.asarray(q, dtype=float).reshape(-1, 2)
    if arm_dict["kind"] == "serial":
        return _fk_serial(g, q)
    return _fk_fivebar(g, q)


def jacobian(arm_dict, q):
    """Central-difference Jacobian d(pen)/d(theta), (N, 2, 2) mm per radian.

    References
    ----------
    .. [1] W. H. Press et al., *Numerical Recipes*, 3rd ed., Cambridge, 2007,
       section 5.7 (numerical derivatives; the step near eps**(1/3) scale).
    """
    q = np.asarray(q, dtype=float).reshape(-1, 2)
    J = np.empty((len(q), 2, 2))
    for j in range(2):          # two columns, not a loop over samples
        dq = np.zeros(2)
        dq[j] = _STEP
        J[:, :, j] = (fk(arm_dict, q + dq) - fk(arm_dict, q - dq)) / (2 * _STEP)
    return J


def conditioning(arm_dict, q):
    """sigma_min / sigma_max of the Jacobian (numpy's SVD), and sigma_max.

    References
    ----------
    .. [1] J. K. Salisbury and J. J. Craig, "Articulated hands: force
       control and kinematic issues", Int. J. Robotics Research 1(1), 1982.
    """
    J = jacobian(arm_dict, q)
    ok = np.isfinite(J).all(axis=(1, 2))
    s = np.full((len(J), 2), np.nan)
    if ok.any():
        s[ok] = np.linalg.svd(J[ok], compute_uv=False)
    with np.errstate(invalid="ignore", divide="ignore"):
        c = np.where(s[:, 0] > 0, s[:, 1] / s[:, 0], 0.0)
    c[~ok] = np.nan
    return c, s[:, 0]
