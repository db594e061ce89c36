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

# The geometry fields of each kind in parameter-vector order: (arm field,
# whether it is an (x, y) pair, group). Names, the vector and the corrected
# arm are all read from this one table.
_GEOMETRY = {
    "five-bar": (("left_motor", True, "motors"), ("right_motor", True, "motors"),
                 ("left_upper", False, "lengths"), ("right_upper", False, "lengths"),
                 ("left_lower", False, "lengths"), ("right_lower", False, "lengths"),
                 ("pen_extension", False, "pen_extension")),
    "serial": (("shoulder", True, "motors"), ("upper", False, "lengths"),
               ("lower", False, "lengths")),
}
_ANGLES = (("offset1", "offsets"), ("offset2", "offsets"),
           ("scale1", "scales"), ("scale2", "scales"))
GROUPS = ("lengths", "motors", "pen_extension", "offsets", "scales")


def param_spec(arm):
    """Names and groups of the model parameters of an arm, in vector order."""
    geo = []
    for field, pair, group in _GEOMETRY[arm.kind]:
        geo += [(f"{field}_x", group), (f"{field}_y", group)] if pair else [(field, group)]
    names = tuple(n for n, _ in geo + list(_ANGLES))
    groups = tuple(g for _, g in geo + list(_ANGLES))
    return names, groups


def to_vector(arm):
    """The arm's parameter vector (its existing calibration included)."""
    off, sc = angle_correction(arm)
    geo = []
    for field, pair, _ in _GEOMETRY[arm.kind]:
        value = getattr(arm, field)
        geo += list(value) if pair else [value]
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
    kw, i = {}, 0
    for field, pair, _ in _GEOMETRY[arm.kind]:
        kw[field] = (float(v[i]), float(v[i + 1])) if pair else float(v[i])
        i += 2 if pair else 1
    hw = dict(arm.hardware or {})
    hw["calibration"] = {"offset_deg": [float(x) for x in np.rad2deg(v[-4:-2])],
                         "scale": [float(x) for x in v[-2:]]}
    return dataclasses.replace(arm, hardware=hw, **kw)
