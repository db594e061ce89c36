"""Joint streams built by hand for the signal and export tests (invented data)."""

import numpy as np

from inkreach.motion import JointStream


def line_stream(arm, n, a=(-30.0, 150.0), b=(30.0, 190.0), pen=None, period=0.01):
    """A straight line from ``a`` to ``b`` (mm) in ``n`` rows, angles from the arm's IK.

    ``pen`` gives the rows' pen flags (all on the paper by default); pen-down
    rows belong to stroke 0, lifted ones to stroke -1.
    """
    xy = np.linspace(a, b, n)
    q = arm.ik(xy)
    pen = np.ones(n, np.int8) if pen is None else np.asarray(pen).astype(np.int8)
    return JointStream(t=np.arange(n) * period, q=q, pen=pen, xy=arm.fk(q), period=period,
                       stroke=np.where(pen == 1, 0, -1))


def stream_of_deg(deg, period=0.01, pen=1):
    """A stream of the given joint angles (degrees, (N, 2)), every row's pen flag ``pen``."""
    deg = np.asarray(deg, float)
    n = len(deg)
    return JointStream(t=np.arange(n) * period, q=np.deg2rad(deg), pen=np.full(n, pen, np.int8),
                       xy=np.zeros((n, 2)), period=period)
