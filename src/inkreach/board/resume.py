"""Where an interrupted run stands, and the stream that finishes it.

A plan's pen-down rows come in runs of pen = 1, the k-th run drawing the
k-th stroke of ``plan.json``. Progress is kept as a cursor ``(stroke, s)``:
every stroke before ``stroke`` is drawn, and ``stroke`` is drawn from its
start up to arc length ``s`` (mm). The stream that resumes from a cursor is
a pen-up approach from the board's posture to the point at ``s``, the pen
lowering there (the arm's ``lift_s``), the rest of that stroke re-timed from
rest, and then the plan's own rows from the lift after that stroke on; it
is checked by :func:`~inkreach.motion.check_stream` before it is sent.
"""

from dataclasses import dataclass

import numpy as np


__all__ = ["Cursor", "stroke_runs", "arc_position", "cut_stroke", "cursor_after_row",
           "resume_stream", "approach_stream"]

_DONE_MM = 1e-3   # a stroke drawn to within this of its end is finished (chosen: far
#                   below the 0.05 mm chord tolerance)


@dataclass(frozen=True)
class Cursor:
    """Progress through a plan: strokes before ``stroke`` drawn, ``stroke`` up to ``s`` mm.

    ``stroke == -1`` means every stroke is drawn and only the way home is left.
    """

    stroke: int
    s: float = 0.0


def stroke_runs(pen):
    """First and last row of every run of pen = 1, shape (K, 2).

    Examples
    --------
    >>> stroke_runs(np.array([0, 1, 1, 0, 1, 0])).tolist()
    [[1, 2], [4, 4]]
    """
    p = np.concatenate([[0], np.asarray(pen, dtype=np.int8) != 0, [0]]).astype(np.int8)
    d = np.diff(p)
    return np.stack([np.flatnonzero(d == 1), np.flatnonzero(d == -1) - 1], axis=1)


def _cum(stroke):
    seg = np.hypot(*np.diff(stroke, axis=0).T) if len(stroke) > 1 else np.zeros(0)
    return np.concatenate([[0.0], np.cumsum(seg)])


def arc_position(stroke, xy):
    """Arc length (mm) of the point of polyline ``stroke`` nearest to ``xy``.

    Examples
    --------
    >>> arc_position(np.array([[0.0, 0.0], [10.0, 0.0], [10.0, 5.0]]), [10.2, 2.0])
    12.0
    """
    stroke = np.asarray(stroke, dtype=float)
    xy = np.asarray(xy, dtype=float)
    if len(stroke) < 2:
        return 0.0
    a, b = stroke[:-1], stroke[1:]
    ab = b - a
    L2 = np.einsum("ij,ij->i", ab, ab)
    with np.errstate(invalid="ignore", divide="ignore"):
        u = np.clip(np.where(L2 > 0, np.einsum("ij,ij->i", xy - a, ab) / L2, 0.0), 0.0, 1.0)
    d = np.hypot(*(a + u[:, None] * ab - xy).T)
    k = int(np.argmin(d))
    return float(_cum(stroke)[k] + u[k] * np.sqrt(L2[k]))


def cut_stroke(stroke, s):
    """The part of polyline ``stroke`` from arc length ``s`` to its end.

    Examples
    --------
    >>> cut_stroke(np.array([[0.0, 0.0], [10.0, 0.0], [10.0, 5.0]]), 4.0).tolist()
    [[4.0, 0.0], [10.0, 0.0], [10.0, 5.0]]
    """
    stroke = np.asarray(stroke, dtype=float)
    c = _cum(stroke)
    if len(stroke) < 2 or s <= 0:
        return stroke.copy()
    k = min(int(np.searchsorted(c, s, side="right")) - 1, len(stroke) - 2)
    u = (s - c[k]) / max(c[k + 1] - c[k], 1e-300)
    p = stroke[k] + min(max(u, 0.0), 1.0) * (stroke[k + 1] - stroke[k])
    rest = stroke[k + 1:]
    if len(rest) and np.hypot(*(rest[0] - p)) < 1e-9:
        rest = rest[1:]
    return np.vstack([p[None], rest]) if len(rest) else p[None]


def cursor_after_row(row, pen, xy, strokes):
    """The cursor once plan rows ``0 ... row`` are executed (``row = -1``: none)."""
    runs = stroke_runs(pen)
    if row < 0:
        return Cursor(0 if len(runs) else -1)
    if pen[row]:
        k = int(np.searchsorted(runs[:, 0], row, side="right") - 1)
        if row == runs[k, 1]:
            return Cursor(k + 1 if k + 1 < len(runs) else -1)
        return Cursor(k, arc_position(strokes[k], xy[row]))
    k = int(np.searchsorted(runs[:, 0], row, side="right"))
    return Cursor(k if k < len(runs) else -1)


def _skip_done(cursor, strokes):
    k, s = cursor.stroke, cursor.s
    while k >= 0 and len(strokes[k]) > 1 and s >= _cum(strokes[k])[-1] - _DONE_MM:
        k, s = (k + 1, 0.0) if k + 1 < len(strokes) else (-1, 0.0)
    return Cursor(k, s)


#: Positions of rows read back from joints.csv are trusted to this, mm (its angles
#: are printed to 1e-4 degree, a few 1e-4 mm at the pen on a desk arm).
_ROW_ATOL = 1e-3


def _motion_options(motion):
    """The plan's motion options (plan.json ``options``) the prefix is planned with."""
    from ..plan import MOTION_OPTIONS

    m = {k: (motion or {}).get(k, MOTION_OPTIONS[k]) for k in ("chord_tol", "tip_speed",
                                                              "corner_blend")}
    tip = m["tip_speed"]
    return {"chord_tol": float(m["chord_tol"]),
            "tip_speed": None if tip is None else float(tip),
            "corner_blend": bool(m["corner_blend"])}


def _straight_marks(prefix, n):
    """The prefix's straight pen-up rows, then none for the plan's own ``n`` rows."""
    mine = np.zeros(len(prefix.q), bool) if prefix.straight is None else prefix.straight
    return np.concatenate([np.asarray(mine, bool), np.zeros(n, bool)])


def _check_joined(q, pen, arm, period, strokes, opts, straight=None):
    """Check the joined stream under the plan's own limits.

    Rows read back from joints.csv are exact to ``_ROW_ATOL``, so distances
    get that much and speeds twice that per period on top of the plan's
    chord tolerance and tip speed.
    """
    from ..motion import JointStream, check_stream

    whole = JointStream(t=np.arange(len(q)) * period, q=q, pen=pen, xy=arm.fk(q),
                        period=period, straight=straight)
    tip = opts["tip_speed"]
    check_stream(whole, arm, strokes=strokes, chord_tol=opts["chord_tol"] + _ROW_ATOL,
                 atol=_ROW_ATOL,
                 tip_speed=None if tip is None else tip + 2 * _ROW_ATOL / period)


def resume_stream(cursor, posture, arm, q_rows, pen_rows, strokes, period, rehearse=False,
                  motion=None):
    """The stream that finishes a plan from ``cursor``, starting at rest at ``posture``.

    Parameters
    ----------
    cursor : Cursor
    posture : array_like, shape (2,)
        Where the motors are now, radians.
    q_rows, pen_rows : ndarray
        The plan's rows (radians, pen).
    strokes : list of ndarray
        The plan's strokes (mm), in drawing order.
    motion : dict, optional
        The plan's motion options (``chord_tol``, ``tip_speed``,
        ``corner_blend`` of plan.json's ``options``): the re-timed rest of
        the stroke is planned and checked under the same limits as the plan.

    Returns
    -------
    prefix : JointStream
        The approach, the pen lowering and the re-timed rest of the stroke.
    tail_from : int
        First plan row streamed after ``prefix`` (``len(q_rows)``: none).
    stroke, s0 : int, float
        The stroke the prefix finishes and where it starts on it.
    q, pen : ndarray
        The whole stream (prefix, then plan rows from ``tail_from``).

    Raises
    ------
    InkreachError
        When no safe approach exists or the joined stream fails the check.
    """
    from ..motion import plan_motion

    opts = _motion_options(motion)
    cursor = _skip_done(cursor, strokes)
    runs = stroke_runs(pen_rows)
    n = len(q_rows)
    if cursor.stroke < 0:
        draw, tail_from, end = [], n, q_rows[-1]
    else:
        k = cursor.stroke
        draw = [cut_stroke(strokes[k], cursor.s)]
        tail_from = int(runs[k, 1]) + 1
        end = q_rows[min(tail_from, n - 1)]
    prefix = plan_motion(draw, arm, start=np.asarray(posture, float), end=end, period=period,
                         **opts)
    q = np.concatenate([prefix.q, q_rows[tail_from:]])
    pen = np.concatenate([prefix.pen, pen_rows[tail_from:]]).astype(np.int8)
    if rehearse:
        pen[:] = 0
    later = strokes[cursor.stroke + 1:] if cursor.stroke >= 0 else []
    _check_joined(q, pen, arm, period, None if rehearse else draw + list(later), opts,
                  _straight_marks(prefix, n - tail_from))
    return prefix, tail_from, cursor.stroke, cursor.s, q, pen


def approach_stream(posture, arm, q_rows, pen_rows, strokes, period, rehearse=False,
                    motion=None):
    """A pen-up approach from ``posture`` to the plan's first row, then the whole plan.

    Returns the same tuple as :func:`resume_stream` (``stroke`` is -1: the
    prefix draws nothing); ``motion`` as there.
    """
    from ..motion import plan_motion

    opts = _motion_options(motion)
    prefix = plan_motion([], arm, start=np.asarray(posture, float), end=q_rows[0],
                         period=period, **opts)
    q = np.concatenate([prefix.q, q_rows])
    pen = np.concatenate([prefix.pen, pen_rows]).astype(np.int8)
    if rehearse:
        pen[:] = 0
    _check_joined(q, pen, arm, period, None if rehearse else list(strokes), opts,
                  _straight_marks(prefix, len(q_rows)))
    return prefix, 0, -1, 0.0, q, pen
