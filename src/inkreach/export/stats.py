"""The figures recorded with a plan (``stats`` of plan.json)."""

import numpy as np

__all__ = ["plan_stats"]


def plan_stats(strokes, stream, report, placement, arm, style, *, start_xy=None,
               warnings=(), reached_xy=None, notes=None):
    """The plan's figures: travel, time split, limits reached, placement.

    Parameters
    ----------
    strokes : list of ndarray
        Polylines in arm mm, in drawing order and direction.
    stream : JointStream
    report : StreamReport
        What the safety check measured.
    placement : Placement
    arm : FiveBar or SerialArm
    style : str
    start_xy : array_like of 2 floats, optional
        Where the pen starts, arm mm (counted in the pen-up travel).
    warnings : sequence of str
        What was not drawn, recorded as ``warnings``.
    reached_xy : ndarray, shape (N, 2), optional
        Pen positions from the rounded motor signals; gives
        ``signal_rounding_mm``, the worst distance from the planned ones.
    notes : dict, optional
        Further entries (as :func:`inkreach.signals.checked_signals` gives);
        they replace entries of the same name.

    Returns
    -------
    dict
    """
    from ..place import paper_note
    from ..route import travel_stats

    travel = travel_stats(strokes, start=start_xy)
    pen = stream.pen.astype(bool)
    dt = stream.period
    # every stroke is lowered onto and lifted off the paper for lift_s each,
    # rounded up to whole sample periods (as the motion stage holds still)
    n_dwell = max(1, int(np.ceil(arm.pen.lift_s / dt - 1e-9)))
    lift_s = 2.0 * len(strokes) * n_dwell * dt
    down_s = max(float(pen.sum()) * dt - len(strokes) * n_dwell * dt, 0.0)
    x0, y0, w, h = placement.bbox
    t = travel.as_dict()
    stats = {
        "style": style,
        "strokes": int(t["strokes"]),
        "pen_lifts": int(t["pen_lifts"]),
        "pen_down_mm": round(float(t["pen_down_mm"]), 3),
        "pen_up_mm": round(float(t["pen_up_mm"]), 3),
        "estimated_s": round(float(stream.duration), 3),
        "pen_down_s": round(down_s, 3),
        "pen_up_s": round(max(float(stream.duration) - down_s - lift_s, 0.0), 3),
        "lift_dwell_s": round(lift_s, 3),
        "min_conditioning": round(float(report.min_conditioning), 4),
        "drawing_mm": [round(float(w), 2), round(float(h), 2)],
        "drawing_origin_mm": [round(float(x0), 2), round(float(y0), 2)],
        "rotation_deg": round(float(np.rad2deg(placement.rotation)), 3),
        "mm_per_px": round(float(placement.scale), 6),
        "rows": int(len(stream)),
        "period_s": float(stream.period),
        "max_speed_deg_s": round(float(np.max(report.max_speed_deg_s)), 3),
        "max_accel_deg_s2": round(float(np.max(report.max_accel_deg_s2)), 3),
        "max_deviation_mm": round(float(report.max_deviation_mm), 5),
        "arm": arm.name,
    }
    note = paper_note(stats["rotation_deg"])
    if note:
        stats["paper_note"] = note
    stats["warnings"] = list(warnings)
    if reached_xy is not None:
        # the worst pen-position error that rounding the angles to whole
        # steps or whole microseconds causes, by forward kinematics
        stats["signal_rounding_mm"] = round(
            float(np.nanmax(np.hypot(*(reached_xy - stream.xy).T))), 5)
    notes = dict(notes or {})
    # warnings from the signals join those about the input, not replace them
    stats["warnings"] += list(notes.pop("warnings", ()))
    stats.update(notes)
    return stats
