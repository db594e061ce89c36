"""What the board outputs for each sample: its integer signal maths, in numpy."""

import numpy as np

from ..errors import InkreachError
from .firmware_config import UNITS_PER_DEG, board_config

__all__ = ["angle_units", "servo_ticks", "stepper_positions", "executed_angles",
           "executed_deviation_mm"]


def angle_units(deg):
    """Degrees to the wire's integer angle units (1e-4 degree), rounded to nearest.

    Examples
    --------
    >>> angle_units([12.34567, -0.00005]).tolist()
    [123457, -1]
    """
    d = np.asarray(deg, dtype=float)
    if not np.all(np.isfinite(d)):
        raise InkreachError("angles must be finite numbers")
    # decimal halves (as written in joints.csv) go away from zero: clear the
    # binary noise of the product first
    x = np.round(d * UNITS_PER_DEG, 6)
    return (np.sign(x) * np.floor(np.abs(x) + 0.5)).astype(np.int64)


def _div_round_vec(a, b):
    a = np.asarray(a, dtype=np.int64)
    b = np.asarray(b, dtype=np.int64)
    mag = (np.abs(a) + b // 2) // b
    return np.where(a >= 0, mag, -mag)


def _ticks(q, table):
    t = np.asarray(table, dtype=np.int64)
    a, p = t[:, 0], t[:, 1]
    q = np.asarray(q, dtype=np.int64)
    k = np.clip(np.searchsorted(a, q, side="right") - 1, 0, len(a) - 2)
    mid = p[k] + _div_round_vec((q - a[k]) * (p[k + 1] - p[k]), a[k + 1] - a[k])
    return np.where(q <= a[0], p[0], np.where(q >= a[-1], p[-1], mid))


def servo_ticks(units, cfg):
    """Servo pulses in 1/16 us ticks for angles in 1e-4 degree, exactly as the board.

    Parameters
    ----------
    units : array_like of int, shape (N, 2)
    cfg : BoardConfig
        A servo configuration (:func:`board_config` with ``drive="servo"``).

    Returns
    -------
    ndarray of int64, shape (N, 2)

    Examples
    --------
    >>> from inkreach.arms import default_arm
    >>> from inkreach.board.firmware_config import board_config
    >>> servo_ticks([[1200000, 600000]], board_config(default_arm())).tolist()
    [[24000, 24000]]
    """
    u = np.asarray(units, dtype=np.int64).reshape(-1, 2)
    return np.stack([_ticks(u[:, m], cfg.servo[m]) for m in (0, 1)], axis=1)


def stepper_positions(units, cfg):
    """Absolute stepper positions for angles in 1e-4 degree, exactly as the board."""
    u = np.asarray(units, dtype=np.int64).reshape(-1, 2)
    cols = [cfg.step_dir[m] * _div_round_vec((u[:, m] - cfg.step_zero[m]) * cfg.step_num[m],
                                             cfg.step_den[m]) for m in (0, 1)]
    return np.stack(cols, axis=1)


def _servo_angle_units(ticks, table):
    t = np.asarray(table, dtype=float)
    t = t[np.argsort(t[:, 1])]
    return np.interp(ticks, t[:, 1], t[:, 0])


def executed_angles(stream_angles_deg, arm, drive="servo", period=0.02):
    """Joint angles (degrees) the board's outputs put the motors at, per sample.

    The stream angles are rounded to the wire's 1e-4 degree, turned into
    1/16 us servo ticks or whole steps by the same integer maths as the C
    core, and read back through the calibration (what ``simulate-board
    --trace`` writes). Model angles in, model angles out: the arm's
    ``[calibration]`` correction is folded into the board's tables.

    Parameters
    ----------
    stream_angles_deg : array_like, shape (N, 2)
    arm : FiveBar or SerialArm
    drive : {"servo", "stepper"}
    period : float
        Sample period, seconds (does not change the conversion; checked).

    Returns
    -------
    ndarray, shape (N, 2)

    Examples
    --------
    >>> from inkreach.arms import default_arm
    >>> executed_angles([[120.0, 60.0004]], default_arm()).round(6).tolist()
    [[120.0, 60.0]]
    """
    cfg = board_config(arm, drive, period)
    u = angle_units(np.asarray(stream_angles_deg, dtype=float).reshape(-1, 2))
    if drive == "servo":
        t = servo_ticks(u, cfg)
        back = np.stack([_servo_angle_units(t[:, m], cfg.servo[m]) for m in (0, 1)], axis=1)
    else:
        s = stepper_positions(u, cfg).astype(float)
        back = np.stack([cfg.step_zero[m] + cfg.step_dir[m] * s[:, m] * cfg.step_den[m]
                         / cfg.step_num[m] for m in (0, 1)], axis=1)
    return back / UNITS_PER_DEG


def executed_deviation_mm(stream, arm, drive="servo"):
    """Largest pen distance between what the board executes and the stream, pen-down rows.

    Parameters
    ----------
    stream : JointStream
    arm : FiveBar or SerialArm
    drive : {"servo", "stepper"}

    Returns
    -------
    float
        ``max |fk(executed) - fk(stream)|`` over pen-down rows, mm (0 when none).

    References
    ----------
    .. [1] J. J. Craig, *Introduction to Robotics*, 3rd ed., 2005, ch. 3
       (forward kinematics).
    """
    q = np.asarray(stream.q, dtype=float)
    ex = np.deg2rad(executed_angles(np.rad2deg(q), arm, drive, float(stream.period)))
    down = np.asarray(stream.pen) != 0
    if not down.any():
        return 0.0
    d = np.linalg.norm(arm.fk(ex[down]) - arm.fk(q[down]), axis=1)
    return float(np.nanmax(d))

