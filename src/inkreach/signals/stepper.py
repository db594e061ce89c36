"""Joint angle to absolute stepper-motor step counts, without drift."""

from dataclasses import dataclass

import numpy as np

from ..errors import InkreachError
from ._hardware import hardware_table

__all__ = ["StepperConfig", "StepperSignals", "PenError", "stepper_steps",
           "stepper_config_from_arm", "worst_pen_error_mm"]

_STEPPER_KEYS = ("steps_per_rev", "microsteps", "gear_ratio", "zero_deg", "direction",
                 "max_step_rate_hz")


def _pair_of(value, name, integer=False):
    """A number or a pair of numbers as a pair of floats (or ints), validated."""
    vals = value if isinstance(value, (list, tuple, np.ndarray)) else (value, value)
    if len(vals) != 2:
        raise InkreachError(f"stepper {name} must be a number or a pair [motor1, motor2]")
    out = []
    for v in vals:
        if isinstance(v, bool) or not isinstance(v, (int, float, np.integer, np.floating)) \
                or not np.isfinite(v):
            raise InkreachError(f"stepper {name} must be a number or a pair of numbers, "
                                f"got {value!r}")
        if integer and float(v) != int(v):
            raise InkreachError(f"stepper {name} must be a whole number, got {v!r}")
        out.append(int(v) if integer else float(v))
    return tuple(out)


@dataclass(frozen=True)
class StepperConfig:
    """How joint angles map to stepper-motor steps.

    Parameters
    ----------
    steps_per_rev : int or pair of int
        Full steps per motor revolution (200 is common practice: 1.8 degree
        motors).
    microsteps : int or pair of int
        Microsteps per full step set on the driver (16 is common practice).
    gear_ratio : float or pair of float
        Motor revolutions per joint revolution (1 for direct drive).
    zero_deg : pair of float
        The joint angle of each motor at step 0, degrees.
    direction : pair of {1, -1}
        +1 when positive steps turn the joint counter-clockwise, -1 when the
        motor is mounted the other way.
    max_step_rate_hz : float, optional
        Largest step rate the drivers and firmware can sustain, steps per
        second; checked per row when given.

    Examples
    --------
    >>> StepperConfig().steps_per_deg.tolist()
    [8.88888888888889, 8.88888888888889]
    """

    steps_per_rev: tuple = 200
    microsteps: tuple = 16
    gear_ratio: tuple = 1.0
    zero_deg: tuple = (0.0, 0.0)
    direction: tuple = (1, 1)
    max_step_rate_hz: float = None

    def __post_init__(self):
        spr = _pair_of(self.steps_per_rev, "steps_per_rev", integer=True)
        ms = _pair_of(self.microsteps, "microsteps", integer=True)
        gear = _pair_of(self.gear_ratio, "gear_ratio")
        zero = _pair_of(self.zero_deg, "zero_deg")
        dirs = _pair_of(self.direction, "direction", integer=True)
        if min(spr) < 1 or min(ms) < 1:
            raise InkreachError("stepper steps_per_rev and microsteps must be 1 or more")
        if min(gear) <= 0:
            raise InkreachError("stepper gear_ratio must be greater than zero; use direction "
                                "= -1 for a reversed motor")
        if any(d not in (1, -1) for d in dirs):
            raise InkreachError(f"stepper direction must be 1 or -1 for each motor, got {dirs}")
        rate = self.max_step_rate_hz
        if rate is not None:
            if isinstance(rate, bool) or not isinstance(rate, (int, float, np.integer,
                                                               np.floating)) \
                    or not np.isfinite(rate) or rate <= 0:
                raise InkreachError(f"stepper max_step_rate_hz must be a number greater than "
                                    f"zero, got {rate!r}")
            rate = float(rate)
        for k, v in (("steps_per_rev", spr), ("microsteps", ms), ("gear_ratio", gear),
                     ("zero_deg", zero), ("direction", dirs), ("max_step_rate_hz", rate)):
            object.__setattr__(self, k, v)

    @property
    def _steps_per_turn(self):
        """Steps per whole joint turn for each motor, shape (2,)."""
        return (np.asarray(self.steps_per_rev, float) * np.asarray(self.microsteps, float)
                * np.asarray(self.gear_ratio, float))

    @property
    def steps_per_deg(self):
        """Steps per degree of joint rotation for each motor, shape (2,)."""
        return self._steps_per_turn / 360.0

    @property
    def step_rad(self):
        """Joint angle of one step for each motor, radians, shape (2,)."""
        return np.deg2rad(1.0 / self.steps_per_deg)


@dataclass(frozen=True, eq=False)
class StepperSignals:
    """Absolute step positions for every row of a joint stream.

    Attributes
    ----------
    steps : ndarray of int64, shape (N, 2)
        Absolute step position of each motor at each row (0 at ``zero_deg``).
    delta : ndarray of int64, shape (N, 2)
        Steps to make during each row: ``steps[k] - steps[k - 1]``; the first
        row's is 0 (the motors must stand at ``steps[0]`` before the start).
    worst_angle_error : ndarray, shape (2,)
        Largest difference between a commanded and a reached angle, radians.
    max_rate_hz : ndarray, shape (2,)
        Largest step rate over the rows, steps per second.
    config : StepperConfig
    """

    steps: np.ndarray
    delta: np.ndarray
    worst_angle_error: np.ndarray
    max_rate_hz: np.ndarray
    config: StepperConfig

    def __len__(self):
        return len(self.steps)


@dataclass(frozen=True)
class PenError:
    """Worst pen-position error that step quantisation causes, mm.

    Attributes
    ----------
    linear_mm : float
        ``max |J(q) (q_reached - q)|`` over the rows (first-order estimate).
    fk_mm : float
        ``max |fk(q_reached) - fk(q)|`` over the rows (measured).
    bound_mm : float
        ``max ||J(q)||_2 * |half step|``: the first-order bound for any
        rounding of the angles to whole steps.
    """

    linear_mm: float
    fk_mm: float
    bound_mm: float


def _steps_of(deg, cfg):
    """Absolute steps, rounded from the absolute target of each row (no accumulation)."""
    zero = np.asarray(cfg.zero_deg, float)
    dirs = np.asarray(cfg.direction, np.int64)
    # (deg - zero) * turn / 360 rather than * steps_per_deg: the product first keeps
    # whole-step targets exact, so an exact half step rounds the same on every arm
    return dirs * np.rint((deg - zero) * cfg._steps_per_turn / 360.0).astype(np.int64)


def reached_angles(steps, cfg):
    """Joint angles (radians) the motors reach at absolute step positions.

    Parameters
    ----------
    steps : array_like of int, shape (N, 2)
    cfg : StepperConfig

    Returns
    -------
    ndarray, shape (N, 2)
    """
    s = np.asarray(steps, dtype=float) * np.asarray(cfg.direction, float)
    return np.deg2rad(np.asarray(cfg.zero_deg, float) + s / cfg.steps_per_deg)


def stepper_steps(stream, cfg=None):
    """Absolute stepper positions for a joint stream.

    Each row's target angle is rounded to the nearest whole step on its
    own, so rounding errors never accumulate however long the stream: the
    reached angle is always within half a step of the commanded one.

    Parameters
    ----------
    stream : JointStream
    cfg : StepperConfig, optional
        Defaults to ``StepperConfig()`` (common-practice values).

    Returns
    -------
    StepperSignals

    Raises
    ------
    InkreachError
        If ``cfg.max_step_rate_hz`` is set and some row needs more steps
        per second than that.

    References
    ----------
    .. [1] B. Widrow and I. Kollar, *Quantization Noise*, Cambridge
       University Press, 2008 (uniform quantisation, error within half a
       step).

    Examples
    --------
    >>> import numpy as np
    >>> from inkreach.motion import JointStream
    >>> q = np.deg2rad([[0.0, 10.0], [0.1, 10.2], [0.2, 10.4]])
    >>> s = JointStream(t=np.arange(3) * 0.01, q=q, pen=np.ones(3, np.int8),
    ...                 xy=np.zeros((3, 2)), period=0.01)
    >>> sig = stepper_steps(s)
    >>> sig.steps.tolist(), sig.delta.tolist()
    ([[0, 89], [1, 91], [2, 92]], [[0, 0], [1, 2], [1, 1]])
    """
    cfg = StepperConfig() if cfg is None else cfg
    q = np.asarray(stream.q, dtype=float)
    if q.ndim != 2 or q.shape[1] != 2:
        raise InkreachError("the joint stream must hold two angles per row")
    if not np.all(np.isfinite(q)):
        raise InkreachError("the joint stream holds angles that are not finite; re-plan it")
    steps = _steps_of(np.rad2deg(q), cfg)
    if np.any(np.abs(steps) > np.iinfo(np.int32).max):
        raise InkreachError("a step position does not fit in 32 bits; check zero_deg, "
                            "microsteps and gear_ratio")
    delta = np.zeros_like(steps)
    delta[1:] = np.diff(steps, axis=0)
    err = np.abs(reached_angles(steps, cfg) - q)
    worst = err.max(axis=0) if len(q) else np.zeros(2)
    period = float(stream.period)
    rate = np.abs(delta).max(axis=0) / period if len(q) else np.zeros(2)
    sig = StepperSignals(steps=steps, delta=delta, worst_angle_error=worst,
                         max_rate_hz=rate.astype(float), config=cfg)
    check_step_rate(sig, stream)
    return sig


def check_step_rate(signals, stream):
    """Refuse a stream whose step rate exceeds the configured ``max_step_rate_hz``.

    Parameters
    ----------
    signals : StepperSignals
    stream : JointStream

    Raises
    ------
    InkreachError
        Naming the motor, the time and the rate.
    """
    cap = signals.config.max_step_rate_hz
    if cap is None or not len(signals):
        return
    need = np.abs(signals.delta) / float(stream.period)
    over = need > cap * (1 + 1e-12)
    if np.any(over):
        k, m = np.argwhere(over)[0]
        raise InkreachError(f"motor {m + 1} needs {need[k, m]:.0f} steps/s at "
                            f"t={float(stream.t[k]):.3f} s, above max_step_rate_hz "
                            f"{cap:g}; lower max_speed_deg_s or the microsteps")


def worst_pen_error_mm(stream, arm, cfg=None):
    """The worst pen-position error caused by rounding the angles to whole steps.

    Parameters
    ----------
    stream : JointStream
    arm : FiveBar or SerialArm
    cfg : StepperConfig, optional

    Returns
    -------
    PenError
        The first-order estimate through the Jacobian, the value measured
        by forward kinematics of the reached angles, and the half-step bound.

    References
    ----------
    .. [1] J. J. Craig, *Introduction to Robotics: Mechanics and Control*,
       3rd ed., Pearson, 2005, ch. 5 (the Jacobian maps small joint errors
       to end-effector errors).
    """
    cfg = StepperConfig() if cfg is None else cfg
    q = np.asarray(stream.q, dtype=float)
    if not len(q):
        return PenError(0.0, 0.0, 0.0)
    qr = reached_angles(_steps_of(np.rad2deg(q), cfg), cfg)
    J = arm.jacobian(q)
    dq = qr - q
    lin = np.linalg.norm(np.einsum("nij,nj->ni", J, dq), axis=1)
    fk = np.linalg.norm(arm.fk(qr) - arm.fk(q), axis=1)
    half = np.linalg.norm(cfg.step_rad / 2)
    bound = np.linalg.norm(J, ord=2, axis=(1, 2)) * half
    return PenError(linear_mm=float(np.nanmax(lin)), fk_mm=float(np.nanmax(fk)),
                    bound_mm=float(np.nanmax(bound)))


def stepper_config_from_arm(arm):
    """The stepper settings of an arm, from the ``[stepper]`` table of its arm file.

    The table's keys (all optional; a number applies to both motors, a pair
    gives [motor1, motor2])::

        [stepper]
        steps_per_rev = 200
        microsteps = 16
        gear_ratio = [1.0, 3.0]
        zero_deg = [90.0, 90.0]     # joint angle at step 0
        direction = [1, -1]
        max_step_rate_hz = 20000.0

    Without ``zero_deg`` the arm's home posture is step 0 (or 0 degrees
    when the arm has no home).

    Parameters
    ----------
    arm : FiveBar or SerialArm

    Returns
    -------
    StepperConfig

    Examples
    --------
    >>> from inkreach.arms import default_arm
    >>> stepper_config_from_arm(default_arm()).zero_deg
    (120.0, 60.0)
    """
    kw = hardware_table(arm, "stepper", _STEPPER_KEYS)
    if "zero_deg" not in kw:
        kw["zero_deg"] = tuple(arm.home_deg) if arm.home_deg is not None else (0.0, 0.0)
    try:
        return StepperConfig(**kw)
    except InkreachError as exc:
        raise InkreachError(f"arm file [stepper]: {exc}") from None
