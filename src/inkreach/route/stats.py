"""Travel figures of an ordered list of strokes."""

from dataclasses import asdict, dataclass

import numpy as np

from ..trace.simplify import polyline_lengths

__all__ = ["TravelStats", "travel_stats"]


@dataclass(frozen=True)
class TravelStats:
    """How much the pen draws and how far it travels lifted.

    Attributes
    ----------
    strokes : int
        Number of strokes.
    pen_lifts : int
        Times the pen lifts: once at the end of each stroke.
    pen_down_mm : float
        Summed polyline length of the strokes.
    pen_up_mm : float
        Summed straight distance from each stroke's end to the next
        stroke's start (the approach from the start point is not included).
    approach_mm : float
        Straight distance from the start point to the first stroke (0 when
        there is no start point).
    """

    strokes: int
    pen_lifts: int
    pen_down_mm: float
    pen_up_mm: float
    approach_mm: float

    def as_dict(self):
        """The figures as a plain dict (JSON-ready)."""
        return asdict(self)


def _ends(strokes):
    first = np.array([s[0] for s in strokes], dtype=float).reshape(-1, 2)
    last = np.array([s[-1] for s in strokes], dtype=float).reshape(-1, 2)
    return first, last


def travel_stats(strokes, start=None):
    """Stroke count, pen lifts, pen-down and pen-up length of a drawing order.

    Parameters
    ----------
    strokes : list of ndarray, shape (N_i, 2)
        Strokes in drawing order and direction (any length unit; the
        figures are in that unit, named mm as in the arm frame).
    start : array_like of shape (2,), optional
        Where the pen is before the first stroke.

    Returns
    -------
    TravelStats

    Examples
    --------
    >>> import numpy as np
    >>> s = [np.array([[0, 0], [3, 0]]), np.array([[3, 4], [0, 4]])]
    >>> travel_stats(s, start=(0, -1)).as_dict()
    {'strokes': 2, 'pen_lifts': 2, 'pen_down_mm': 6.0, 'pen_up_mm': 4.0, 'approach_mm': 1.0}
    """
    strokes = [np.asarray(s, dtype=float).reshape(-1, 2) for s in strokes]
    n = len(strokes)
    if n == 0:
        return TravelStats(0, 0, 0.0, 0.0, 0.0)
    down = float(polyline_lengths(strokes).sum())
    first, last = _ends(strokes)
    up = float(np.hypot(*(first[1:] - last[:-1]).T).sum())
    approach = 0.0
    if start is not None:
        approach = float(np.hypot(*(first[0] - np.asarray(start, dtype=float).reshape(2))))
    return TravelStats(n, n, down, up, approach)
