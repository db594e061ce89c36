"""Read a saved plan and check it (first version: the stream check on the saved rows)."""

import json
import os
from dataclasses import dataclass, field

import numpy as np

from ..errors import InkreachError

__all__ = ["PlanCheck", "check_plan"]


@dataclass(frozen=True)
class PlanCheck:
    """The outcome of :func:`check_plan`.

    Attributes
    ----------
    ok : bool
        True when every promise holds.
    problem : str or None
        One line naming the first broken promise (row and values), or None.
    figures : dict
        What was measured (rows, duration, worst speed, ...).
    arm : object
        The arm the plan was checked against.
    """

    ok: bool
    problem: str = None
    figures: dict = field(default_factory=dict)
    arm: object = None


def check_plan(folder, arm=None):
    """Check the plan saved in ``folder`` against ``arm`` (default: the arm in plan.json).

    Raises
    ------
    InkreachError
        When the folder cannot be read as a plan at all (missing or unreadable files).
    """
    from ..arms import parse_arm
    from ..motion import JointStream, check_stream
    from ..plan import resolve_arm

    folder = os.fspath(folder)
    try:
        with open(os.path.join(folder, "plan.json"), encoding="utf-8") as f:
            meta = json.load(f)
        rows = np.loadtxt(os.path.join(folder, "joints.csv"), delimiter=",", skiprows=1,
                          ndmin=2)
    except (OSError, ValueError) as e:
        raise InkreachError(f"{folder} is not a readable plan folder ({e}); "
                            "plan it again with inkreach plan") from None
    arm = parse_arm(meta["arm"], source="plan.json") if arm is None else resolve_arm(arm)
    t, q, pen, xy = rows[:, 0], np.deg2rad(rows[:, 1:3]), rows[:, 3].astype(np.int8), rows[:, 4:6]
    period = float(meta.get("stats", {}).get("period_s", t[1] - t[0] if len(t) > 1 else 0.02))
    stream = JointStream(t=t, q=q, pen=pen, xy=xy, period=period)
    strokes = [np.asarray(s, float) for s in meta.get("strokes", [])]
    try:
        report = check_stream(stream, arm, strokes=strokes, chord_tol=0.05 + 1e-3, atol=1e-3)
    except InkreachError as e:
        return PlanCheck(ok=False, problem=str(e), arm=arm)
    return PlanCheck(ok=True, figures={"rows": report.rows, "duration_s": report.duration},
                     arm=arm)
