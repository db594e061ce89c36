"""The joint stream: what goes to the motors, one row per fixed period."""

from dataclasses import dataclass

import numpy as np

__all__ = ["JointStream"]


@dataclass(frozen=True, eq=False)
class JointStream:
    """Time-stamped joint angles at a fixed sample period.

    Attributes
    ----------
    t : ndarray, shape (N,)
        Sample times, seconds, ``t[k] = k * period``.
    q : ndarray, shape (N, 2)
        Joint angles, radians (``theta1``, ``theta2``).
    pen : ndarray of int8, shape (N,)
        1 while the pen is on the paper, 0 while lifted.
    xy : ndarray, shape (N, 2)
        Pen position of each row's angles (forward kinematics), mm.
    period : float
        Sample period, seconds.
    stroke : ndarray of int, shape (N,)
        Index of the stroke a pen-down row belongs to, -1 for pen-up rows.
    execution : str
        How the board plays the rows: ``"hold"`` (zero-order hold: each
        row's angles and pen state are commanded at ``t[k]`` and held for
        one period). Dwells are counted in whole rows under this model.
    tip_speed : float or None
        The pen-tip speed limit the stream was planned under, mm/s.
    straight : ndarray of bool, shape (N,), or None
        True on row ``k`` when the step from row ``k - 1`` to it is part of
        a straight (Cartesian) pen-up move, which the tip-speed limit binds
        too; None when no row is so marked.
    """

    t: np.ndarray
    q: np.ndarray
    pen: np.ndarray
    xy: np.ndarray
    period: float
    stroke: np.ndarray = None
    execution: str = "hold"
    tip_speed: float = None
    straight: np.ndarray = None

    def __len__(self):
        return len(self.t)

    @property
    def duration(self):
        """Time of the last row, seconds."""
        return float(self.t[-1]) if len(self.t) else 0.0
