"""The planner's stages one by one, timed, for the benchmark.

`run_stages` makes the same public stage calls as :func:`inkreach.plan.plan`
on a picture (load, trace, merge, place, route, motion, check, signals) with
the default options, timing each and keeping its output; `end_to_end` times
the real planner and its export (:func:`inkreach.export.plan_files`).
"""

import time

T = time.perf_counter


def reference_workload(gray):
    """The fixed yardstick: OpenCV Canny plus scikit-image skeletonize of the picture.

    Parameters
    ----------
    gray : ndarray of uint8, shape (H, W)

    Returns
    -------
    float
        Seconds.
    """
    import cv2
    from skimage.morphology import skeletonize

    t = T()
    cv2.Canny(gray, 50, 150)
    skeletonize(gray < 128)
    return T() - t


def run_stages(image, style, arm=None, wmap=None, max_side=1200):
    """Run every stage once, as the planner does; returns (seconds by stage, outputs)."""
    from inkreach.arms import default_arm, workspace_map
    from inkreach.motion import check_stream, plan_motion
    from inkreach.place import drawing_region, pen_width_px, place_drawing
    from inkreach.route import merge_strokes, route_strokes, start_posture
    from inkreach.signals import checked_signals, reached_positions
    from inkreach.trace import load_image, merge_tolerance, trace_picture

    arm = default_arm() if arm is None else arm
    times = {}

    def timed(stage, fn, *args, **kw):
        t = T()
        out = fn(*args, **kw)
        times[stage] = T() - t
        return out

    if wmap is None:
        wmap = timed("arm map", workspace_map, arm)
    pic = timed("load", load_image, image, max_side=max_side)
    pen_px = pen_width_px(pic, arm, wmap=wmap)
    strokes = timed("trace", trace_picture, pic, style, pen_px=pen_px)
    merged = timed("merge", merge_strokes, strokes, tol=merge_tolerance(pic))
    t = T()
    placement = place_drawing(merged, arm, wmap=wmap, image_size=pic.original_size)
    strokes_mm = placement.apply_all(merged)
    times["place"] = T() - t
    q0 = start_posture(arm, placement)
    route = timed("route", route_strokes, strokes_mm, arm, q0)
    stream = timed("motion", plan_motion, route.strokes, arm, start=q0, end=q0,
                   region=drawing_region(placement))
    report = timed("check", check_stream, stream, arm, strokes=route.strokes,
                   tip_speed=stream.tip_speed)
    t = T()
    signals, _ = checked_signals(stream, arm)
    reached_positions(stream, arm, signals)
    times["signals"] = T() - t
    out = {"picture": pic, "strokes_px": strokes, "strokes_mm": strokes_mm, "route": route,
           "stream": stream, "report": report, "placement": placement, "arm": arm,
           "wmap": wmap, "start": arm.fk(q0), "start_q": q0, "signals": signals}
    return times, out


def end_to_end(image, style, arm=None):
    """Plan and export in memory with the real planner.

    Returns
    -------
    seconds : float
        Planning and export together.
    plan : Plan
    export_seconds : float
        The export (:func:`inkreach.export.plan_files`) alone.
    """
    from inkreach.export import plan_files
    from inkreach.plan import plan

    t = T()
    p = plan(image, arm=arm, style=style)
    t_export = T()
    plan_files(p)
    done = T()
    return done - t, p, done - t_export
