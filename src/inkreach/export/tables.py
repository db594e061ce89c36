"""Row-per-sample CSV files: joint angles, servo pulses, stepper positions."""

import numpy as np

from ..errors import InkreachError
from ._text import join_rows, number_matrix, scaled

__all__ = ["joints_csv", "servo_csv", "stepper_csv", "JOINTS_HEADER"]

JOINTS_HEADER = "t_s,theta1_deg,theta2_deg,pen,x_mm,y_mm"


def _table(header, columns, formats):
    """CSV text from equal-length columns with one %-format per column.

    Every column is scaled to integers once and laid out as characters by
    :func:`._text.number_matrix`, so the whole block is built by a few numpy
    operations; the text is the same as ``"%.Nf" % numpy.round(value, N)``
    row by row (and ``"%d"`` for whole columns).
    """
    cols = [np.asarray(c) for c in columns]
    n = len(cols[0])
    if any(len(c) != n for c in cols):
        raise InkreachError("signal rows and stream rows differ in number; make the "
                            "signals from the same stream")
    if n == 0:
        return header + "\n"
    places = [0 if f == "%d" else int(f[2:-1]) for f in formats]
    ints = [scaled(c.astype(np.int64) if f == "%d" else c, d)
            for c, f, d in zip(cols, formats, places)]
    if any(k is None for k in ints):
        return header + "\n" + _table_slow(cols, formats)
    parts = []
    for j, (k, d) in enumerate(zip(ints, places)):
        parts += [number_matrix(k, d), b"\n" if j == len(ints) - 1 else b","]
    return header + "\n" + join_rows(parts, n)


def _table_slow(cols, formats):
    """Rows formatted by Python's ``%`` (for values beyond exact scaled integers)."""
    row = ",".join(formats) + "\n"
    flat = np.empty((len(cols[0]), len(cols)), dtype=object)
    for j, (c, f) in enumerate(zip(cols, formats)):
        if f == "%d":
            flat[:, j] = c.astype(np.int64).tolist()
        else:
            # round first so that tiny negatives print as 0.0000, not -0.0000
            flat[:, j] = (np.round(c.astype(float), int(f[2:-1])) + 0.0).tolist()
    return (row * len(flat)) % tuple(flat.ravel().tolist())


def joints_csv(stream):
    """The joint stream as CSV text, header first.

    Columns ``t_s,theta1_deg,theta2_deg,pen,x_mm,y_mm``: time (4 decimals),
    joint angles in degrees (6 decimals), pen 1 = on paper / 0 = lifted,
    and the pen position of the row's angles (4 decimals). The safety
    caution is kept out of this file (a comment line before the header
    would trip readers that expect the header first); it goes in
    ``SAFETY.txt``, ``plan.json`` and the firmware header.

    Parameters
    ----------
    stream : JointStream

    Returns
    -------
    str

    Examples
    --------
    >>> import numpy as np
    >>> from inkreach.motion import JointStream
    >>> s = JointStream(t=np.array([0.0, 0.01]), q=np.deg2rad([[90.0, 45.0], [91.0, 46.0]]),
    ...                 pen=np.array([0, 1], np.int8), xy=np.array([[0.0, 150.0], [1.5, 150.25]]),
    ...                 period=0.01)
    >>> print(joints_csv(s), end="")
    t_s,theta1_deg,theta2_deg,pen,x_mm,y_mm
    0.0000,90.000000,45.000000,0,0.0000,150.0000
    0.0100,91.000000,46.000000,1,1.5000,150.2500
    """
    deg = np.rad2deg(np.asarray(stream.q, dtype=float))
    xy = np.asarray(stream.xy, dtype=float)
    pen = (np.asarray(stream.pen) != 0).astype(np.int64)
    return _table(JOINTS_HEADER, [stream.t, deg[:, 0], deg[:, 1], pen, xy[:, 0], xy[:, 1]],
                  ["%.4f", "%.6f", "%.6f", "%d", "%.4f", "%.4f"])


def servo_csv(stream, servo_signals):
    """Servo pulse widths as CSV: ``t_s,motor1_us,motor2_us,pen_us``.

    Parameters
    ----------
    stream : JointStream
    servo_signals : ServoSignals

    Returns
    -------
    str
    """
    p = np.asarray(servo_signals.pulse_us)
    # 1/16 us ticks print exactly with 4 decimals
    f = "%d" if np.issubdtype(p.dtype, np.integer) else "%.4f"
    pen = np.asarray(servo_signals.pen_us)
    fp = "%d" if np.issubdtype(pen.dtype, np.integer) else "%.4f"
    return _table("t_s,motor1_us,motor2_us,pen_us", [stream.t, p[:, 0], p[:, 1], pen],
                  ["%.4f", f, f, fp])


def stepper_csv(stream, stepper_signals):
    """Absolute stepper positions as CSV: ``t_s,motor1_steps,motor2_steps,pen``.

    Parameters
    ----------
    stream : JointStream
    stepper_signals : StepperSignals

    Returns
    -------
    str
    """
    s = np.asarray(stepper_signals.steps)
    pen = (np.asarray(stream.pen) != 0).astype(np.int64)
    return _table("t_s,motor1_steps,motor2_steps,pen", [stream.t, s[:, 0], s[:, 1], pen],
                  ["%.4f", "%d", "%d", "%d"])
