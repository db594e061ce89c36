"""The angles the motors will really reach, for a faithful simulated preview."""

import numpy as np

from ..errors import InkreachError
from .correction import from_commanded
from .servo import ServoSignals
from .stepper import StepperSignals, reached_angles

__all__ = ["quantised_angles"]


def quantised_angles(stream, *signals):
    """Joint angles the motors reach when driven by the given signals.

    Parameters
    ----------
    stream : JointStream
        The stream the signals were made from.
    *signals : StepperSignals, ServoSignals or dict of them
        Stepper positions (angles rounded to whole steps) or servo pulses
        (angles read back through the calibration table, so rounding the
        pulses to their tick shows). A dict as made by
        :func:`make_signals` uses its stepper signals when present, else
        its servo signals, else the stream's own angles. An arm given
        before the signals applies its ``[calibration]`` correction, so the
        result is in the model's angles.

    Returns
    -------
    ndarray, shape (N, 2)
        Reached joint angles, radians; feed them to ``arm.fk`` for the pen
        path the arm will draw.

    Examples
    --------
    >>> import numpy as np
    >>> from inkreach.motion import JointStream
    >>> from inkreach.signals import stepper_steps
    >>> q = np.deg2rad([[10.01, 20.0]])
    >>> s = JointStream(t=np.zeros(1), q=q, pen=np.ones(1, np.int8),
    ...                 xy=np.zeros((1, 2)), period=0.01)
    >>> np.rad2deg(quantised_angles(s, stepper_steps(s))).round(4).tolist()
    [[10.0125, 20.025]]
    """
    arm = None
    if signals and hasattr(signals[0], "fk"):
        arm, signals = signals[0], signals[1:]
    sig = signals[-1] if signals else None
    if isinstance(sig, dict):
        sig = sig.get("stepper", sig.get("servo"))
    if sig is None:
        return np.asarray(stream.q, dtype=float).copy()
    if not isinstance(sig, (StepperSignals, ServoSignals)):
        raise InkreachError("signals must come from stepper_steps or servo_pulses")
    if len(sig) != len(stream):
        raise InkreachError(f"the signals hold {len(sig)} rows but the stream "
                            f"{len(stream)}; make them from the same stream")
    if isinstance(sig, StepperSignals):
        q = reached_angles(sig.steps, sig.config)
    else:
        cal = sig.calibration
        p = np.asarray(sig.pulse_us, dtype=float)
        q = np.deg2rad(np.stack([cal.angle(0, p[:, 0]), cal.angle(1, p[:, 1])], axis=1))
    # signals are made from commanded angles; a calibrated arm turns them
    # into the angles it really reaches
    return q if arm is None else from_commanded(q, arm)
