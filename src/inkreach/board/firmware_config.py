"""The arm's limits, signal calibration and identity as the board's integer numbers."""

from dataclasses import dataclass, field
from fractions import Fraction
import math

import numpy as np

from ..errors import InkreachError
from ..signals import servo_calibration_from_arm, stepper_config_from_arm
from ..signals.correction import angle_correction
from .identity import arm_hash, board_name

__all__ = ["BoardConfig", "board_config", "config_header", "DRIVES", "DEFAULT_PINS",
           "UNITS_PER_DEG", "TICKS_PER_US"]

DRIVES = ("servo", "stepper")
UNITS_PER_DEG = 10_000        # angle unit: 1e-4 degree, as on the wire
TICKS_PER_US = 16             # pulse unit: 1/16 us = 62.5 ns, a 16-bit timer at 16 MHz
CAPACITY = 64                 # samples buffered: 9 bytes each, 576 bytes of RAM
# Our choice, from common practice: an 8-bit board polling step pins keeps up
# with about 20 000 steps per second; used when [stepper] has no max_step_rate_hz.
DEFAULT_STEP_RATE_HZ = 20_000.0
_MAX_TABLE = 16               # calibration pairs per servo (RAM on an 8-bit board)
# Default pins. Servo: the fine pulses come from timer 1's compare outputs, which
# are pins 9 and 10 on ATmega328P boards (Uno, Nano); the pen servo is any pin.
DEFAULT_PINS = {
    "servo": {"motor1": 9, "motor2": 10, "pen": 11},
    "stepper": {"step1": 2, "dir1": 3, "step2": 4, "dir2": 5, "enable": 8, "pen": 11},
}


@dataclass(frozen=True)
class BoardConfig:
    """Everything the board is built with, in its integer units.

    Angles are in units of 1e-4 degree, pulses in 1/16 us ticks; the servo
    tables hold (angle unit, tick) pairs sorted by angle, in model angles (the
    arm's ``[calibration]`` correction is folded in); a stepper position is
    ``dir * round((q - zero) * num / den)``.
    """

    name: str
    arm_hash: int
    drive: str
    period_us: int
    capacity: int
    q_min: tuple
    q_max: tuple
    dq_max: int
    ddq_max: int
    home: tuple
    servo: tuple
    pen_up_ticks: int
    pen_down_ticks: int
    step_num: tuple
    step_den: tuple
    step_zero: tuple
    step_dir: tuple
    max_steps_per_period: int
    pins: dict = field(default_factory=dict)

    @property
    def drive_code(self):
        """0 for servo, 1 for stepper, as in the identity message."""
        return DRIVES.index(self.drive)


def _units(deg):
    return int(round(float(deg) * UNITS_PER_DEG))


def _inward(lo_deg, hi_deg):
    """A degree range as whole angle units, rounded inwards."""
    return (math.ceil(lo_deg * UNITS_PER_DEG - 1e-6), math.floor(hi_deg * UNITS_PER_DEG + 1e-6))


def _servo_tables(arm, period_us):
    cal = servo_calibration_from_arm(arm)
    off, scale = angle_correction(arm)
    tables = []
    for m in (0, 1):
        t = cal.table(m)
        if len(t) > _MAX_TABLE:
            raise InkreachError(f"arm file [servo] motor{m + 1} has {len(t)} pairs; the board "
                                f"holds at most {_MAX_TABLE}, keep fewer measurements")
        model_deg = scale[m] * t[:, 0] + np.rad2deg(off[m])
        tables.append(tuple((_units(a), int(round(p * TICKS_PER_US)))
                            for a, p in zip(model_deg, t[:, 1])))
    widest = max(cal.pen_up_us, cal.pen_down_us, *(p for tab in tables for _, p in tab)) \
        / TICKS_PER_US
    if period_us < widest + 500:
        raise InkreachError(f"a {period_us / 1000:g} ms period is too short for servo pulses "
                            f"of {widest:g} us; use a period of 20 ms (the 50 Hz servo frame)")
    return tables, int(round(cal.pen_up_us * TICKS_PER_US)), \
        int(round(cal.pen_down_us * TICKS_PER_US))


def _stepper(arm):
    cfg = stepper_config_from_arm(arm)
    off, scale = angle_correction(arm)
    num, den, zero = [], [], []
    for m in (0, 1):
        # steps per angle unit, exactly from the arm file's numbers, then the
        # nearest ratio small enough for 64-bit products on the board
        k = (Fraction(cfg.steps_per_rev[m]) * cfg.microsteps[m] * Fraction(cfg.gear_ratio[m])
             / (360 * UNITS_PER_DEG * Fraction(float(scale[m]))))
        k = k.limit_denominator(10 ** 9)
        if k.numerator * 8 * 10 ** 6 >= 2 ** 62:
            raise InkreachError("arm file [stepper]: steps per revolution times microsteps "
                                "times gear_ratio is too large for the board")
        num.append(k.numerator)
        den.append(k.denominator)
        zero.append(_units(float(scale[m]) * cfg.zero_deg[m] + float(np.rad2deg(off[m]))))
    rate = cfg.max_step_rate_hz or DEFAULT_STEP_RATE_HZ
    return cfg, tuple(num), tuple(den), tuple(zero), tuple(int(d) for d in cfg.direction), rate


def board_config(arm, drive="servo", period=0.02, pins=None):
    """The board's integer configuration for an arm.

    Parameters
    ----------
    arm : FiveBar or SerialArm
    drive : {"servo", "stepper"}
    period : float
        Sample period, seconds: the plan's period (0.02 by default).
    pins : dict, optional
        Pin numbers overriding :data:`DEFAULT_PINS` for the drive.

    Returns
    -------
    BoardConfig

    Raises
    ------
    InkreachError
        For an unknown drive, a bad period or pin, or hardware tables the
        board cannot hold.

    Notes
    -----
    The per-period limits carry one angle unit of slack each, as the
    protocol says: ``dq_max = floor(speed * period) + 1`` and ``ddq_max =
    floor(accel * period**2) + 1`` in angle units. With servos the joint
    limits are narrowed to the calibration tables' range.

    Examples
    --------
    >>> from inkreach.arms import default_arm
    >>> cfg = board_config(default_arm())
    >>> cfg.dq_max, cfg.ddq_max, cfg.q_min, cfg.home
    (36001, 6001, (300000, -300000), (1200000, 600000))
    """
    if drive not in DRIVES:
        raise InkreachError(f"drive {drive!r} is unknown; use servo or stepper")
    if not (isinstance(period, (int, float)) and math.isfinite(period) and 0.001 <= period <= 1):
        raise InkreachError(f"period {period!r} s must be between 0.001 and 1 second")
    period_us = int(round(period * 1e6))
    lim = arm.limits
    q_min, q_max = [], []
    for lo, hi in (lim.theta1, lim.theta2):
        a, b = _inward(np.rad2deg(lo), np.rad2deg(hi))
        q_min.append(a)
        q_max.append(b)
    servo, pen_up, pen_down = ((), ()), 0, 0
    if drive == "servo":
        tables, pen_up, pen_down = _servo_tables(arm, period_us)
        servo = tuple(tables)
        for m in (0, 1):
            q_min[m] = max(q_min[m], tables[m][0][0])
            q_max[m] = min(q_max[m], tables[m][-1][0])
            if q_min[m] >= q_max[m]:
                raise InkreachError(f"the servo table of motor {m + 1} does not overlap the "
                                    "joint limits; fix [servo] or [limits]")
    scfg, num, den, zero, dirs, rate = _stepper(arm)
    if drive == "stepper":
        # the pen servo still needs its two pulses
        from ..signals import ServoCalibration
        cal = servo_calibration_from_arm(arm) if "servo" in (arm.hardware or {}) \
            else ServoCalibration()
        pen_up = int(round(cal.pen_up_us * TICKS_PER_US))
        pen_down = int(round(cal.pen_down_us * TICKS_PER_US))
    dq = math.floor(np.rad2deg(lim.max_speed) * period * UNITS_PER_DEG + 1e-6) + 1
    ddq = math.floor(np.rad2deg(lim.max_accel) * period ** 2 * UNITS_PER_DEG + 1e-6) + 1
    if arm.home_deg is not None:
        home = tuple(_units(h) for h in arm.home_deg)
    else:
        home = tuple((a + b) // 2 for a, b in zip(q_min, q_max))
    home = tuple(int(min(max(h, a), b)) for h, a, b in zip(home, q_min, q_max))
    all_pins = dict(DEFAULT_PINS[drive])
    for k, v in (pins or {}).items():
        if v is None:
            continue
        if k not in all_pins:
            raise InkreachError(f"pin {k!r} is not used by the {drive} board; "
                                f"its pins: {', '.join(all_pins)}")
        if isinstance(v, bool) or not isinstance(v, int) or not 0 <= v <= 255:
            raise InkreachError(f"pin {k} must be a whole number from 0 to 255, got {v!r}")
        all_pins[k] = v
    return BoardConfig(
        name=board_name(arm), arm_hash=arm_hash(arm), drive=drive, period_us=period_us,
        capacity=CAPACITY, q_min=tuple(q_min), q_max=tuple(q_max), dq_max=int(dq),
        ddq_max=int(ddq), home=home, servo=servo, pen_up_ticks=pen_up, pen_down_ticks=pen_down,
        step_num=num, step_den=den, step_zero=zero, step_dir=dirs,
        max_steps_per_period=int(math.floor(rate * period + 1e-9)), pins=all_pins)


def _c_string(text):
    out = []
    for b in text.encode("utf-8"):
        ch = chr(b)
        out.append(ch if 32 <= b < 127 and ch not in '"\\?' else f"\\{b:03o}")
    return '"' + "".join(out) + '"'


def _table_macro(tab):
    if not tab:
        return "{{0L, 0L}, {1L, 0L}}"
    return "{" + ", ".join(f"{{{a}L, {p}L}}" for a, p in tab) + "}"


def config_header(cfg, caution=""):
    """The text of ``inkreach_config.h`` for a :class:`BoardConfig`.

    Examples
    --------
    >>> from inkreach.arms import default_arm
    >>> "#define INK_DQ_MAX 36001L" in config_header(board_config(default_arm()))
    True
    """
    s1, s2 = cfg.servo if cfg.servo else ((), ())
    lines = [caution.rstrip("\n"),
             "/* inkreach_config.h: written by `inkreach firmware` for one arm; do not edit,",
             " * write it again from the arm file. Angles in 1e-4 degree, pulses in 1/16 us. */",
             "#ifndef INKREACH_CONFIG_H", "#define INKREACH_CONFIG_H", "",
             f"#define INK_ARM_NAME {_c_string(cfg.name)}",
             f"#define INK_ARM_HASH 0x{cfg.arm_hash:08X}UL",
             f"#define INK_DRIVE {cfg.drive_code} /* 0 servo, 1 stepper */",
             f"#define INK_PERIOD_US {cfg.period_us}UL",
             f"#define INK_CAPACITY {cfg.capacity}",
             f"#define INK_Q1_MIN {cfg.q_min[0]}L", f"#define INK_Q1_MAX {cfg.q_max[0]}L",
             f"#define INK_Q2_MIN {cfg.q_min[1]}L", f"#define INK_Q2_MAX {cfg.q_max[1]}L",
             f"#define INK_DQ_MAX {cfg.dq_max}L /* largest change per period */",
             f"#define INK_DDQ_MAX {cfg.ddq_max}L /* largest change of that change */",
             f"#define INK_HOME_Q1 {cfg.home[0]}L", f"#define INK_HOME_Q2 {cfg.home[1]}L",
             f"#define INK_TICKS_PER_US {TICKS_PER_US}",
             f"#define INK_SERVO1_POINTS {max(len(s1), 2)}",
             f"#define INK_SERVO1_TABLE {_table_macro(s1)}",
             f"#define INK_SERVO2_POINTS {max(len(s2), 2)}",
             f"#define INK_SERVO2_TABLE {_table_macro(s2)}",
             f"#define INK_PEN_UP_TICKS {cfg.pen_up_ticks}L",
             f"#define INK_PEN_DOWN_TICKS {cfg.pen_down_ticks}L"]
    for m in (0, 1):
        j = m + 1
        lines += [f"#define INK_STEP{j}_NUM {cfg.step_num[m]}LL",
                  f"#define INK_STEP{j}_DEN {cfg.step_den[m]}LL",
                  f"#define INK_STEP{j}_ZERO {cfg.step_zero[m]}L",
                  f"#define INK_STEP{j}_DIR {cfg.step_dir[m]}"]
    lines.append(f"#define INK_MAX_STEPS_PER_PERIOD {cfg.max_steps_per_period}L")
    for k, v in cfg.pins.items():
        lines.append(f"#define INK_PIN_{k.upper()} {v}")
    lines += ["", "#endif", ""]
    return "\n".join(lines)
