"""Pen positions the motors really reach once their signals are rounded."""

from .quantised import quantised_angles

__all__ = ["reached_positions"]


def reached_positions(stream, arm, signals):
    """Pen positions (arm mm) reached from the rounded motor signals, row by row.

    The angles are rounded to whole steps or whole microseconds as the
    signals give them (:func:`quantised_angles`), then taken through the
    arm's forward kinematics.

    Parameters
    ----------
    stream : JointStream
    arm : FiveBar or SerialArm
    signals : dict
        As :func:`checked_signals` returns.

    Returns
    -------
    ndarray, shape (N, 2)

    References
    ----------
    .. [1] B. Widrow and I. Kollar, *Quantization Noise*, Cambridge University
       Press, 2008 (a uniform quantiser errs by at most half a step).
    """
    return arm.fk(quantised_angles(stream, arm, signals))
