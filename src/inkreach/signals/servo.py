"""Joint angle to hobby-servo pulse width, from a measured calibration table."""

from dataclasses import dataclass

import numpy as np

from ..errors import InkreachError
from ._hardware import hardware_table

__all__ = ["ServoCalibration", "ServoSignals", "servo_pulses", "servo_calibration_from_arm"]

# Common practice: hobby servos read one pulse per 20 ms frame (50 Hz) and
# turn through about 180 degrees as the pulse goes from about 500 to 2500 us.
_FRAME_HZ = 50.0
_PULSE_LO_US = 500.0
_PULSE_HI_US = 2500.0
_SPAN_DEG = 180.0
# Common practice: a pen-lift servo a few hundred microseconds either side of centre.
_PEN_UP_US = 1200.0
_PEN_DOWN_US = 1700.0

_DEFAULT_TABLE = ((0.0, _PULSE_LO_US), (_SPAN_DEG, _PULSE_HI_US))
_SERVO_KEYS = ("motor1", "motor2", "pen_up_us", "pen_down_us", "frame_hz")


def _check_table(table, where):
    """Validate one motor's (angle_deg, pulse_us) table; return it as (K, 2) floats."""
    try:
        a = np.asarray(table, dtype=float)
    except (TypeError, ValueError):
        raise InkreachError(f"{where} must be a list of [angle_deg, pulse_us] pairs, "
                            f"like [[0.0, 500.0], [180.0, 2500.0]]") from None
    if a.ndim != 2 or a.shape[1] != 2:
        raise InkreachError(f"{where} must be a list of [angle_deg, pulse_us] pairs, "
                            f"like [[0.0, 500.0], [180.0, 2500.0]]")
    if len(a) < 2:
        raise InkreachError(f"{where} needs at least two [angle_deg, pulse_us] pairs; "
                            "measure the servo at two angles or more")
    if not np.all(np.isfinite(a)):
        raise InkreachError(f"{where} holds a value that is not a finite number; fix the table")
    for col, what in ((0, "angles"), (1, "pulses")):
        d = np.diff(a[:, col])
        if not (np.all(d > 0) or np.all(d < 0)):
            raise InkreachError(f"{where} {what} must rise (or fall) strictly from pair to "
                                "pair; remove repeated or out-of-order measurements")
    if np.any(a[:, 1] <= 0):
        raise InkreachError(f"{where} pulses must be greater than zero microseconds")
    return a


@dataclass(frozen=True)
class ServoCalibration:
    """Measured pulse widths of the two arm servos and the pen servo.

    Parameters
    ----------
    motor1, motor2 : tuple of (angle_deg, pulse_us) pairs
        For each arm motor, at least two measured pairs: the joint angle
        (degrees, as in the arm file) and the pulse width that puts the
        motor there. Angles must be strictly monotonic and so must pulses,
        rising or falling (a servo mounted the other way round gives
        falling pulses). Between pairs the pulse is interpolated linearly.
    pen_up_us, pen_down_us : float
        Pulse widths of the pen servo with the pen lifted and on the paper.
    frame_hz : float
        The servo frame rate (pulses per second), 50 by common practice.

    Examples
    --------
    >>> cal = ServoCalibration(motor1=((0.0, 2400.0), (180.0, 600.0)))
    >>> cal.pulse(0, [90.0]).tolist()
    [1500.0]
    """

    motor1: tuple = _DEFAULT_TABLE
    motor2: tuple = _DEFAULT_TABLE
    pen_up_us: float = _PEN_UP_US
    pen_down_us: float = _PEN_DOWN_US
    frame_hz: float = _FRAME_HZ

    def __post_init__(self):
        for name in ("motor1", "motor2"):
            a = _check_table(getattr(self, name), f"servo {name}")
            object.__setattr__(self, name, tuple(map(tuple, a.tolist())))
        for name in ("pen_up_us", "pen_down_us", "frame_hz"):
            v = getattr(self, name)
            if isinstance(v, bool) or not isinstance(v, (int, float, np.floating, np.integer)) \
                    or not np.isfinite(v) or v <= 0:
                raise InkreachError(f"servo {name} must be a number greater than zero, "
                                    f"got {v!r}")
            object.__setattr__(self, name, float(v))
        frame_us = 1e6 / self.frame_hz
        widest = max(np.max(np.asarray(self.motor1)[:, 1]), np.max(np.asarray(self.motor2)[:, 1]),
                     self.pen_up_us, self.pen_down_us)
        if widest >= frame_us:
            raise InkreachError(f"servo pulse {widest:g} us does not fit in a "
                                f"{frame_us:g} us frame at {self.frame_hz:g} Hz; "
                                "check frame_hz and the pulse tables")

    def table(self, motor):
        """The sorted (angle_deg, pulse_us) table of motor 0 or 1, shape (K, 2)."""
        a = np.asarray(self.motor1 if motor == 0 else self.motor2, dtype=float)
        return a[np.argsort(a[:, 0])]

    def angle_range(self, motor):
        """(lowest, highest) angle the table of motor 0 or 1 covers, degrees."""
        a = self.table(motor)
        return float(a[0, 0]), float(a[-1, 0])

    def pulse(self, motor, angle_deg):
        """Pulse widths for angles of one motor, by linear interpolation.

        Parameters
        ----------
        motor : {0, 1}
        angle_deg : array_like
            Joint angles, degrees, inside the table's range.

        Returns
        -------
        ndarray of float
            Pulse widths, microseconds.

        Raises
        ------
        InkreachError
            If an angle lies outside the table (no extrapolation).
        """
        a = self.table(motor)
        x = np.asarray(angle_deg, dtype=float)
        lo, hi = a[0, 0], a[-1, 0]
        tol = 1e-9 * max(1.0, abs(lo), abs(hi))
        bad = ~((x >= lo - tol) & (x <= hi + tol))
        if np.any(bad):
            worst = x[bad].flat[0]
            raise InkreachError(f"motor {motor + 1} angle {worst:.3f} deg is outside its servo "
                                f"table ({lo:g} to {hi:g} deg); extend [servo] motor{motor + 1} "
                                "or move the drawing")
        return _interp(np.clip(x, lo, hi), a[:, 0], a[:, 1])

    def angle(self, motor, pulse_us):
        """Angles (degrees) that pulse widths of one motor give: the inverse of :meth:`pulse`."""
        a = self.table(motor)
        a = a[np.argsort(a[:, 1])]
        p = np.clip(np.asarray(pulse_us, dtype=float), a[0, 1], a[-1, 1])
        return _interp(p, a[:, 1], a[:, 0])


def _interp(x, xp, fp):
    """Piecewise-linear interpolation on increasing ``xp`` (x inside [xp[0], xp[-1]])."""
    k = np.clip(np.searchsorted(xp, x, side="right") - 1, 0, len(xp) - 2)
    x0, x1 = xp[k], xp[k + 1]
    y0, y1 = fp[k], fp[k + 1]
    return y0 + (x - x0) * (y1 - y0) / (x1 - x0)


@dataclass(frozen=True, eq=False)
class ServoSignals:
    """Pulse widths for every row of a joint stream.

    Attributes
    ----------
    pulse_us : ndarray, shape (N, 2)
        Arm motor pulse widths, microseconds, whole multiples of the tick
        they were rounded to (1/16 us by default).
    pen_us : ndarray, shape (N,)
        Pen servo pulse width of each row, microseconds.
    calibration : ServoCalibration
        The calibration the pulses come from.
    """

    pulse_us: np.ndarray
    pen_us: np.ndarray
    calibration: ServoCalibration

    def __len__(self):
        return len(self.pulse_us)


#: Resolution of servo pulse widths, microseconds: one tick of a 16-bit timer
#: counting at 16 MHz (62.5 ns), what the reference firmware outputs.
PULSE_TICK_US = 1.0 / 16.0


def servo_pulses(stream, cal=None, tick_us=PULSE_TICK_US):
    """Servo pulse widths for a joint stream.

    Each motor's pulse is interpolated linearly between the measured
    (angle, pulse) pairs of its calibration table; angles outside the table
    are refused rather than extrapolated.

    Parameters
    ----------
    stream : JointStream
    cal : ServoCalibration, optional
        Defaults to ``ServoCalibration()`` (common-practice values).
    tick_us : float or None
        Round the pulses to whole multiples of this, microseconds: by
        default 1/16 us, the tick of a 16-bit timer at 16 MHz that the
        reference firmware drives its servos with (whole microseconds alone
        move the pen by a tenth of a millimetre or more); 1 for whole
        microseconds; None for exact values.

    Returns
    -------
    ServoSignals

    Raises
    ------
    InkreachError
        If an angle lies outside a motor's table.

    References
    ----------
    .. [1] W. H. Press, S. A. Teukolsky, W. T. Vetterling and B. P. Flannery,
       *Numerical Recipes*, 3rd ed., Cambridge University Press, 2007,
       sec. 3.1 (searching an ordered table, linear interpolation).

    Examples
    --------
    >>> import numpy as np
    >>> from inkreach.motion import JointStream
    >>> q = np.deg2rad([[45.0, 90.0], [90.0, 135.0]])
    >>> s = JointStream(t=np.array([0.0, 0.01]), q=q, pen=np.array([0, 1], np.int8),
    ...                 xy=np.zeros((2, 2)), period=0.01)
    >>> sig = servo_pulses(s)
    >>> sig.pulse_us.tolist(), sig.pen_us.tolist()
    ([[1000.0, 1500.0], [1500.0, 2000.0]], [1200.0, 1700.0])
    >>> float(servo_pulses(s, tick_us=None).pulse_us[0, 0] - 1000.0) == 0.0
    True
    """
    cal = ServoCalibration() if cal is None else cal
    deg = np.rad2deg(np.asarray(stream.q, dtype=float))
    if deg.ndim != 2 or deg.shape[1] != 2:
        raise InkreachError("the joint stream must hold two angles per row")
    if not np.all(np.isfinite(deg)):
        raise InkreachError("the joint stream holds angles that are not finite; re-plan it")
    pulses = np.stack([cal.pulse(0, deg[:, 0]), cal.pulse(1, deg[:, 1])], axis=1)
    pen = np.asarray(stream.pen) != 0
    pen_us = np.where(pen, cal.pen_down_us, cal.pen_up_us)
    if tick_us is not None:
        if not (np.isfinite(tick_us) and tick_us > 0):
            raise InkreachError(f"the pulse tick must be a positive number of microseconds, "
                                f"got {tick_us!r}")
        pulses = np.rint(pulses / tick_us) * tick_us
        pen_us = np.rint(pen_us / tick_us) * tick_us
    return ServoSignals(pulse_us=pulses, pen_us=pen_us, calibration=cal)


def _default_for(arm):
    """A common-practice 180-degree servo table centred on each joint's limit range."""
    tables = []
    for lo, hi in (arm.limits.theta1, arm.limits.theta2):
        mid = round(float(np.rad2deg((lo + hi) / 2)), 9)
        tables.append(((mid - _SPAN_DEG / 2, _PULSE_LO_US), (mid + _SPAN_DEG / 2, _PULSE_HI_US)))
    return tables


def servo_calibration_from_arm(arm):
    """The servo calibration of an arm, from the ``[servo]`` table of its arm file.

    The table's keys (all optional)::

        [servo]
        motor1 = [[0.0, 500.0], [90.0, 1500.0], [180.0, 2500.0]]  # [angle_deg, pulse_us]
        motor2 = [[0.0, 2500.0], [180.0, 500.0]]                  # mounted reversed
        pen_up_us = 1200.0
        pen_down_us = 1700.0
        frame_hz = 50.0

    A motor without a table gets the common-practice 500 to 2500 us over
    180 degrees, centred on the middle of that joint's limits (so the
    servo's centre pulse, 1500 us, is the middle of the joint range).

    Parameters
    ----------
    arm : FiveBar or SerialArm

    Returns
    -------
    ServoCalibration

    Raises
    ------
    InkreachError
        One line naming the first bad key.

    Examples
    --------
    >>> from inkreach.arms import default_arm
    >>> cal = servo_calibration_from_arm(default_arm())
    >>> cal.angle_range(0)
    (30.0, 210.0)
    """
    table = hardware_table(arm, "servo", _SERVO_KEYS)
    m1, m2 = _default_for(arm)
    kw = {"motor1": table.get("motor1", m1), "motor2": table.get("motor2", m2)}
    for k in ("pen_up_us", "pen_down_us", "frame_hz"):
        if k in table:
            kw[k] = table[k]
    try:
        return ServoCalibration(**kw)
    except InkreachError as exc:
        raise InkreachError(f"arm file [servo]: {exc}") from None
