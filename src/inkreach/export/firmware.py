"""A C header holding the motor signals, to compile into a microcontroller program."""

import re
import textwrap

import numpy as np

from ..errors import InkreachError
from ._text import join_rows, line_breaks, number_matrix
from .safety import SAFETY_TEXT

__all__ = ["firmware_header"]

_PER_LINE = 8  # rows (or bytes) per source line


def _rows(values, per_line=_PER_LINE):
    """C initialiser lines ``{a, b}, {c, d}, ...`` for an (N, 2) integer array."""
    v = np.asarray(values, dtype=np.int64).reshape(-1, 2)
    n = len(v)
    starts = np.where(np.arange(n) % per_line == 0, b"  {", b"{")
    seps = line_breaks(n, per_line, b", ", b",\n")
    return join_rows([starts, number_matrix(v[:, 0], 0), b", ", number_matrix(v[:, 1], 0),
                      b"}", seps], n)


_HEX = np.array([b"0x%02x" % i for i in range(256)])


def _bytes(values, per_line=16):
    """C initialiser lines ``0x01, 0x02, ...`` of byte values, ``per_line`` a line."""
    v = np.asarray(values, dtype=np.int64)
    n = len(v)
    starts = np.where(np.arange(n) % per_line == 0, b"  ", b"")
    return join_rows([starts, _HEX[v], line_breaks(n, per_line, b", ", b",\n")], n)


def firmware_header(stream, servo_signals=None, stepper_signals=None, name="inkreach_plan"):
    """The plan as a C header: period, row count, signal arrays, packed pen flags.

    The header has an include guard, needs only ``<stdint.h>``, and puts
    every array in storage given by the macro ``INKREACH_STORAGE`` (``const``
    unless defined before the ``#include``; on AVR boards define it as
    ``const PROGMEM`` and read the arrays with ``pgm_read_word`` /
    ``pgm_read_dword``). With neither signal kind given, the joint angles go
    in as ``int32_t`` millidegrees.

    Symbols (for ``name="inkreach_plan"``):

    * ``INKREACH_PLAN_PERIOD_US``, ``INKREACH_PLAN_ROWS``;
    * ``inkreach_plan_pulse_ticks[ROWS][2]`` (``uint16_t``, pulse widths in
      1/16 us, ``INKREACH_PLAN_TICKS_PER_US``), with
      ``INKREACH_PLAN_PEN_UP_US`` and ``INKREACH_PLAN_PEN_DOWN_US``;
    * ``inkreach_plan_steps[ROWS][2]`` (``int32_t``, absolute positions);
    * ``inkreach_plan_pen_bits[(ROWS + 7) / 8]``: row k's pen flag (1 = on
      the paper) is bit ``k % 8`` of byte ``k / 8``, read with
      ``INKREACH_PLAN_PEN(k)``.

    Parameters
    ----------
    stream : JointStream
    servo_signals : ServoSignals, optional
    stepper_signals : StepperSignals, optional
    name : str
        A C identifier prefixing every symbol.

    Returns
    -------
    str

    Raises
    ------
    InkreachError
        For an empty stream, a bad name, or values that do not fit the C types.

    References
    ----------
    .. [1] ISO/IEC 9899:2011 (C11), 7.20 "Integer types <stdint.h>".

    Examples
    --------
    >>> import numpy as np
    >>> from inkreach.motion import JointStream
    >>> from inkreach.signals import servo_pulses
    >>> s = JointStream(t=np.array([0.0, 0.02]), q=np.deg2rad([[90.0, 90.0], [91.0, 90.0]]),
    ...                 pen=np.array([0, 1], np.int8), xy=np.zeros((2, 2)), period=0.02)
    >>> h = firmware_header(s, servo_signals=servo_pulses(s))
    >>> "#define INKREACH_PLAN_ROWS 2UL" in h
    True
    """
    if not re.fullmatch(r"[A-Za-z_][A-Za-z0-9_]*", name or ""):
        raise InkreachError(f"firmware name {name!r} must be a C identifier (letters, digits, "
                            "underscores; not starting with a digit)")
    n = len(stream)
    if n == 0:
        raise InkreachError("the joint stream is empty; there is nothing to put in the header")
    period_us = int(round(float(stream.period) * 1e6))
    if period_us <= 0:
        raise InkreachError("the stream's sample period is under a microsecond; re-plan it "
                            "with a longer period")
    up = name.upper()
    guard = f"{up}_H"
    caution = "\n".join(" * " + line for line in textwrap.wrap(SAFETY_TEXT, 74))
    out = [
        "/*",
        f" * {name}.h: a drawing plan made by inkreach, {n} rows every {period_us} us.",
        " *",
        caution,
        " */",
        f"#ifndef {guard}",
        f"#define {guard}",
        "",
        "#include <stdint.h>",
        "",
        "#ifndef INKREACH_STORAGE",
        "#define INKREACH_STORAGE const",
        "#endif",
        "",
        f"#define {up}_PERIOD_US {period_us}UL",
        f"#define {up}_ROWS {n}UL",
        "",
    ]
    if servo_signals is not None:
        # 1/16 us ticks (a 16-bit timer at 16 MHz), as the reference firmware
        p = np.rint(np.asarray(servo_signals.pulse_us, dtype=float) * 16).astype(np.int64)
        if len(p) != n:
            raise InkreachError("servo signals and stream differ in rows; make them together")
        if p.min() < 0 or p.max() > 65535:
            raise InkreachError("a servo pulse does not fit in 16 bits of 1/16 us (4095 us); "
                                "check the servo table")
        cal = servo_signals.calibration
        out += [
            f"#define {up}_HAS_PULSES 1",
            f"#define {up}_FRAME_HZ {int(round(cal.frame_hz))}UL",
            f"#define {up}_PEN_UP_US {int(round(cal.pen_up_us))}U",
            f"#define {up}_PEN_DOWN_US {int(round(cal.pen_down_us))}U",
            f"#define {up}_TICKS_PER_US 16U",
            "/* servo pulse widths, 1/16 us ticks: {motor1, motor2} per row */",
            f"static INKREACH_STORAGE uint16_t {name}_pulse_ticks[{n}][2] = {{",
            _rows(p),
            "};",
            "",
        ]
    if stepper_signals is not None:
        s = np.asarray(stepper_signals.steps, dtype=np.int64)
        if len(s) != n:
            raise InkreachError("stepper signals and stream differ in rows; make them together")
        if np.abs(s).max() > 2**31 - 1:
            raise InkreachError("a step position does not fit in 32 bits; check the stepper table")
        out += [
            f"#define {up}_HAS_STEPS 1",
            "/* absolute step positions: {motor1, motor2} per row */",
            f"static INKREACH_STORAGE int32_t {name}_steps[{n}][2] = {{",
            _rows(s),
            "};",
            "",
        ]
    if servo_signals is None and stepper_signals is None:
        mdeg = np.rint(np.rad2deg(np.asarray(stream.q, dtype=float)) * 1000).astype(np.int64)
        out += [
            f"#define {up}_HAS_ANGLES 1",
            "/* joint angles, millidegrees: {theta1, theta2} per row */",
            f"static INKREACH_STORAGE int32_t {name}_angle_mdeg[{n}][2] = {{",
            _rows(mdeg),
            "};",
            "",
        ]
    bits = np.packbits((np.asarray(stream.pen) != 0).astype(np.uint8), bitorder="little")
    out += [
        "/* pen flags, 1 = on the paper: row k is bit (k % 8) of byte (k / 8) */",
        f"static INKREACH_STORAGE uint8_t {name}_pen_bits[{len(bits)}] = {{",
        _bytes(bits),
        "};",
        f"#define {up}_PEN(k) (({name}_pen_bits[(k) >> 3] >> ((k) & 7)) & 1u)",
        "",
        f"#endif /* {guard} */",
        "",
    ]
    return "\n".join(out)
