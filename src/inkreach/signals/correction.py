"""Motor angle corrections from a calibration: model angles <-> commanded angles."""

from dataclasses import replace

import numpy as np

__all__ = ["angle_correction", "to_commanded", "from_commanded", "commanded_stream"]


def angle_correction(arm):
    """(offset rad, scale) per motor from the arm's ``[calibration]`` table.

    The calibration fit models each motor as really turning to ``scale *
    commanded + offset``; without a table the correction is the identity.

    Examples
    --------
    >>> from inkreach.arms import default_arm
    >>> angle_correction(default_arm())
    (array([0., 0.]), array([1., 1.]))
    """
    cal = (getattr(arm, "hardware", None) or {}).get("calibration") or {}
    off = np.deg2rad(np.asarray(cal.get("offset_deg", [0.0, 0.0]), dtype=float))
    scale = np.asarray(cal.get("scale", [1.0, 1.0]), dtype=float)
    return off, scale


def to_commanded(q, arm):
    """Angles to command so the motors really reach the model angles ``q``."""
    off, scale = angle_correction(arm)
    return (np.asarray(q, dtype=float) - off) / scale


def from_commanded(q_cmd, arm):
    """Angles the motors really reach when commanded ``q_cmd``."""
    off, scale = angle_correction(arm)
    return scale * np.asarray(q_cmd, dtype=float) + off


def commanded_stream(stream, arm):
    """The stream with its angles replaced by the commanded ones (same rows)."""
    off, scale = angle_correction(arm)
    if np.all(off == 0) and np.all(scale == 1):
        return stream
    return replace(stream, q=to_commanded(stream.q, arm))
