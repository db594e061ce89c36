"""The planner's stages one by one, timed, for the benchmark.

`run_stages` follows the same steps as :func:`inkreach.plan.plan` (load,
trace, merge, place, route, motion, check) so each can be timed on its own
and its outputs kept; `end_to_end` times the real planner and its export.
"""

import time

import numpy as np

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
    from inkreach.place import place_drawing, provisional_scale
    from inkreach.plan import joint_order_budget
    from inkreach.route import merge_strokes, order_strokes, reorder_joint_space
    from inkreach.trace import load_image, trace

    arm = default_arm() if arm is None else arm
    times = {}
    if wmap is None:
        t = T()
        wmap = workspace_map(arm)
        times["arm map"] = T() - t
    t = T()
    pic = load_image(image, max_side=max_side)
    times["load"] = T() - t
    W, H = pic.original_size
    s0 = provisional_scale((W, H), arm, wmap=wmap)
    pen_px = arm.pen.width_mm / (s0 / min(pic.scale_xy))
    t = T()
    strokes_w = trace(pic.luminance, style, pen_px=pen_px)
    times["trace"] = T() - t
    strokes_o = [pic.to_original(s) for s in strokes_w]
    t = T()
    strokes_o = merge_strokes(strokes_o, tol=0.5 / max(min(pic.scale_xy), 1e-9))
    times["merge"] = T() - t
    t = T()
    placement = place_drawing(strokes_o, arm, wmap=wmap, image_size=(W, H))
    strokes_mm = placement.apply_all(strokes_o)
    times["place"] = T() - t
    q0 = arm.home()
    if q0 is None:
        q0 = arm.ik(placement.hull.mean(0))
    start = arm.fk(q0)
    t = T()
    r = order_strokes(strokes_mm, start=start)
    # the planner's budget for the joint-space pass (inkreach.plan.plan)
    r = reorder_joint_space(r, arm, start_q=q0,
                            time_budget=joint_order_budget(len(r.strokes)))
    times["route"] = T() - t
    region = placement.hull if len(placement.hull) >= 3 else None
    t = T()
    stream = plan_motion(r.strokes, arm, start=q0, end=q0, region=region)
    times["motion"] = T() - t
    t = T()
    report = check_stream(stream, arm, strokes=r.strokes)
    times["check"] = T() - t
    out = {"picture": pic, "strokes_px": strokes_w, "strokes_mm": strokes_mm, "route": r,
           "stream": stream, "report": report, "placement": placement, "arm": arm,
           "wmap": wmap, "start": start}
    return times, out


def end_to_end(image, style, arm=None):
    """Plan and export in memory with the real planner.

    Returns
    -------
    seconds : float
        Planning and export together.
    plan : Plan
    export_seconds : float
        The export (:meth:`Plan.files`) alone.
    """
    from inkreach.plan import plan

    t = T()
    p = plan(image, arm=arm, style=style)
    t_export = T()
    p.files()
    done = T()
    return done - t, p, done - t_export
