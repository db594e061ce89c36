"""The calibration model: a parameter vector <-> an arm, and the predicted dots.

Model: the angle a motor really turns to is ``scale * commanded + offset``
(the correction :mod:`inkreach.signals.correction` applies); the pen then
sits at the forward kinematics of the true geometry at those angles.
Internal units: mm for lengths and positions, radians for offsets, plain
numbers for scales.
"""

import dataclasses

import numpy as np

from ..signals.correction import angle_correction, from_commanded

__all__ = []

_FIVEBAR = (
    ("left_motor_x", "motors"), ("left_motor_y", "motors"),
    ("right_motor_x", "motors"), ("right_motor_y", "motors"),
    ("left_upper", "lengths"), ("right_upper", "lengths"),
    ("left_lower", "lengths"), ("right_lower", "lengths"),
    ("pen_extension", "pen_extension"),
)
_SERIAL = (
    ("shoulder_x", "motors"), ("shoulder_y", "motors"),
    ("upper", "lengths"), ("lower", "lengths"),
)
_ANGLES = (("offset1", "offsets"), ("offset2", "offsets"),
           ("scale1", "scales"), ("scale2", "scales"))
GROUPS = ("lengths", "motors", "pen_extension", "offsets", "scales")


def param_spec(arm):
    """Names and groups of the model parameters of an arm, in vector order."""
    geo = _FIVEBAR if arm.kind == "five-bar" else _SERIAL
    names = tuple(n for n, _ in geo + _ANGLES)
    groups = tuple(g for _, g in geo + _ANGLES)
    return names, groups


def to_vector(arm):
    """The arm's parameter vector (its existing calibration included)."""
    off, sc = angle_correction(arm)
    if arm.kind == "five-bar":
        geo = [*arm.left_motor, *arm.right_motor, arm.left_upper, arm.right_upper,
               arm.left_lower, arm.right_lower, arm.pen_extension]
    else:
        geo = [*arm.shoulder, arm.upper, arm.lower]
    return np.array([*geo, *off, *sc], dtype=float)


def bounds(arm):
    """Lower and upper bounds of the parameters (lengths and scales positive)."""
    groups = np.array(param_spec(arm)[1])
    lo = np.select([np.isin(groups, ("lengths", "scales")), groups == "pen_extension"],
                   [1e-6, 0.0], -np.inf)
    return lo, np.full(len(groups), np.inf)


def predict(arm, v, q):
    """Pen positions (N, 2) for commanded angles ``q`` under parameters ``v``."""
    a = corrected_arm(arm, v)
    return a.fk(from_commanded(q, a))


def corrected_arm(arm, v):
    """The arm with the geometry of ``v`` and its angle correction in the hardware."""
    v = np.asarray(v, float)
    if arm.kind == "five-bar":
        kw = dict(left_motor=(float(v[0]), float(v[1])), right_motor=(float(v[2]), float(v[3])),
                  left_upper=float(v[4]), right_upper=float(v[5]), left_lower=float(v[6]),
                  right_lower=float(v[7]), pen_extension=float(v[8]))
    else:
        kw = dict(shoulder=(float(v[0]), float(v[1])), upper=float(v[2]), lower=float(v[3]))
    hw = dict(arm.hardware or {})
    hw["calibration"] = {"offset_deg": [float(x) for x in np.rad2deg(v[-4:-2])],
                         "scale": [float(x) for x in v[-2:]]}
    return dataclasses.replace(arm, hardware=hw, **kw)
