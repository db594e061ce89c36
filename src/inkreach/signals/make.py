"""Choose and compute the motor signals an arm needs."""

import numpy as np

from ..errors import InkreachError
from .servo import servo_calibration_from_arm, servo_pulses
from .correction import commanded_stream
from .stepper import stepper_config_from_arm, stepper_steps

__all__ = ["make_signals", "SIGNAL_KINDS"]

SIGNAL_KINDS = ("auto", "servo", "stepper", "both", "none")


def make_signals(stream, arm, kind="auto"):
    """Motor signals for a joint stream, from the arm file's hardware tables.

    Parameters
    ----------
    stream : JointStream
    arm : FiveBar or SerialArm
    kind : {"auto", "servo", "stepper", "both", "none"}
        ``"auto"`` makes the signals whose table (``[servo]``, ``[stepper]``)
        the arm file has; with neither, stepper steps always and servo
        pulses when every angle lies inside the default servo tables.

    Returns
    -------
    dict
        ``"servo"`` -> ServoSignals and/or ``"stepper"`` -> StepperSignals.

    Raises
    ------
    InkreachError
        For an unknown kind, a bad hardware table, an angle outside a servo
        table or a step rate above the configured maximum.

    Examples
    --------
    >>> import numpy as np
    >>> from inkreach.arms import default_arm
    >>> from inkreach.motion import JointStream
    >>> arm = default_arm()
    >>> q = arm.home()[None]
    >>> s = JointStream(t=np.zeros(1), q=q, pen=np.zeros(1, np.int8), xy=arm.fk(q),
    ...                 period=0.01)
    >>> sorted(make_signals(s, arm))   # the default arm has a [servo] table
    ['servo']
    """
    if kind not in SIGNAL_KINDS:
        raise InkreachError(f"signals {kind!r} is unknown; use one of {', '.join(SIGNAL_KINDS)}")
    hw = getattr(arm, "hardware", None) or {}
    # a calibrated arm: the motors are driven to the commanded angles that
    # make them really reach the stream's model angles
    stream = commanded_stream(stream, arm)
    out = {}
    if kind == "none":
        return out
    if kind == "auto":
        want = [k for k in ("servo", "stepper") if k in hw]
        if not want:
            out["stepper"] = stepper_steps(stream, stepper_config_from_arm(arm))
            cal = servo_calibration_from_arm(arm)
            deg = np.rad2deg(np.asarray(stream.q, dtype=float))
            fits = all(np.all((deg[:, m] >= cal.angle_range(m)[0] - 1e-9)
                              & (deg[:, m] <= cal.angle_range(m)[1] + 1e-9)) for m in (0, 1))
            if fits:
                out["servo"] = servo_pulses(stream, cal)
            return dict(sorted(out.items()))
    else:
        want = ["servo", "stepper"] if kind == "both" else [kind]
    if "servo" in want:
        out["servo"] = servo_pulses(stream, servo_calibration_from_arm(arm))
    if "stepper" in want:
        out["stepper"] = stepper_steps(stream, stepper_config_from_arm(arm))
    return out
