"""The planner's stages one by one, timed, for the benchmark.

`run_stages` follows the same steps as :func:`inkreach.plan.plan` (load,
trace, merge, place, route, motion, check, signals, export) so each can be
timed on its own; `end_to_end` times the real planner and falls back to
these stages when the planner cannot run yet.
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


def run_stages(image, style, arm=None, wmap=None, max_side=1200, export=True):
    """Run every stage once; returns (seconds by stage, outputs)."""
    from inkreach import route as route_mod
    from inkreach.arms import default_arm, workspace_map
    from inkreach.motion import check_stream, plan_motion
    from inkreach.place import place_drawing, provisional_scale
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
    merge = getattr(route_mod, "merge_strokes", None)
    if merge is not None:
        t = T()
        strokes_o = merge(strokes_o, tol=0.5 / max(min(pic.scale_xy), 1e-9))
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
    r = route_mod.order_strokes(strokes_mm, start=start)
    reorder = getattr(route_mod, "reorder_joint_space", None)
    if reorder is not None:
        r = reorder(r, arm, start_q=q0)
    times["route"] = T() - t
    t = T()
    stream = plan_motion(r.strokes, arm, start=q0, end=q0, region=placement.hull)
    times["motion"] = T() - t
    t = T()
    report = check_stream(stream, arm, strokes=r.strokes)
    times["check"] = T() - t
    out = {"picture": pic, "strokes_px": strokes_w, "strokes_mm": strokes_mm, "route": r,
           "stream": stream, "report": report, "placement": placement, "arm": arm,
           "wmap": wmap, "start": start}
    if export:
        t = T()
        p = _as_plan(out, style, (W, H))
        files = p.files()
        times["export"] = T() - t
        out["plan"] = p
        out["files"] = files
    return times, out


def _as_plan(out, style, size):
    """A Plan value from the stage outputs (what the planner would return)."""
    import importlib
    plan_mod = importlib.import_module("inkreach.plan")
    from inkreach.route import travel_stats
    from inkreach.signals import make_signals

    stream, arm, r = out["stream"], out["arm"], out["route"]
    signals = make_signals(stream, arm, kind="auto")
    travel = travel_stats(r.strokes, start=out["start"])
    stats = plan_mod._stats(travel, stream, out["report"], out["placement"], arm, style,
                            r.strokes)
    return plan_mod.Plan(strokes=r.strokes, stream=stream, stats=stats,
                         placement=out["placement"], arm=arm, style=style, options={},
                         signals=signals, report=out["report"], workspace=out["wmap"],
                         image_size=tuple(int(v) for v in size))


def end_to_end(image, style, arm=None):
    """Plan and export in memory with the real planner; returns (seconds, plan, note).

    When the planner cannot run (a stage not there yet), the stages are run
    one after the other instead and ``note`` says why.
    """
    from inkreach.plan import plan

    t = T()
    try:
        p = plan(image, arm=arm, style=style)
    except ImportError as exc:
        _, out = run_stages(image, style, arm=arm)
        return T() - t, out["plan"], f"planner not available ({exc}); stages run in turn"
    p.files()
    return T() - t, p, ""


def median_time(fn, runs):
    """Median seconds of ``runs`` calls of ``fn`` (which returns seconds or None)."""
    ts = []
    for _ in range(runs):
        t = T()
        v = fn()
        ts.append(v if isinstance(v, float) else T() - t)
    return float(np.median(ts))
