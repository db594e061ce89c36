"""Quality sections: pen-up travel against baselines, IK throughput, drawing time, fidelity."""

import numpy as np

from _report import exponent, fmt, na, table
from _speed import STYLES
from _stages import T, end_to_end, run_stages

__all__ = ["stroke_sets", "section_route", "section_kinematics", "section_drawing"]


def stroke_sets(cfg):
    """Real stroke sets in arm mm from traced pictures, with a start point."""
    from inkreach.arms import default_arm, workspace_map
    from inkreach.cli.demo import emblem, still_life

    arm = default_arm()
    wmap = workspace_map(arm)
    sets = []
    for label, img, st in (("emblem centerline", np.asarray(emblem(800)), "centerline"),
                           ("still life hatch", np.asarray(still_life(960, 720)), "hatch"),
                           ("still life stipple", np.asarray(still_life(960, 720)), "stipple")):
        _, out = run_stages(img, st, arm=arm, wmap=wmap)
        sets.append((label, out["strokes_mm"], out["start"]))
    return sets


def section_route(cfg, results):
    from _route_ref import lkh_order, path_travel

    from inkreach.arms import default_arm
    from inkreach.motion import TIP_SPEED
    from inkreach.route import GAIN_SHARE, gain_bounds, greedy_order, order_strokes, pen_up_time

    arm = default_arm()
    rows = []
    sets = stroke_sets(cfg)
    rng = np.random.default_rng(0)
    cases = []
    for label, strokes, start in sets:
        n = len(strokes)
        for k in cfg["route_sizes"]:
            if k <= n:
                idx = np.sort(rng.choice(n, k, replace=False)) if k < n else np.arange(n)
                cases.append((f"{label} ({k} of {n})", [strokes[i] for i in idx], start))
        if n not in cfg["route_sizes"] and n <= max(cfg["route_sizes"]):
            cases.append((f"{label} (all {n})", strokes, start))
    gaps, tratio = [], []   # only sets of 100 strokes or more count for the target
    for label, strokes, start in cases:
        n = len(strokes)
        try:
            t = T()
            g = greedy_order(strokes, start=start)
            t_greedy = T() - t
            # as route_strokes runs it: kicks bounded by GAIN_SHARE of the estimated
            # drawing time (its time includes the nearest-neighbour order)
            q0 = arm.ik(np.asarray(start, float))
            t = T()
            bound_mm, _ = gain_bounds(greedy_order(strokes, start=start), arm, q0)
            r = order_strokes(strokes, start=start, min_gain=bound_mm)
            t_ours = T() - t
            ours = r.stats.pen_up_mm + r.stats.approach_mm
            greedy = g.stats.pen_up_mm + g.stats.approach_mm
        except Exception as exc:  # noqa: BLE001
            rows.append([label, n, na(exc)] + ["—"] * 8)
            continue
        try:
            # Share of the drawing time the order saves over nearest neighbour:
            # pen-up seconds (trapezoid moves at the joint limits, lifts) of
            # both, over nearest neighbour's drawing time (its pen-up time
            # plus the pen-down length at the planner's tip speed).
            q0 = arm.ik(np.asarray(start, float))
            up_g = pen_up_time(g.strokes, arm, q0)
            up_r = pen_up_time(r.strokes, arm, q0)
            saved = 100.0 * (up_g - up_r) / (up_g + g.stats.pen_down_mm / TIP_SPEED)
        except Exception as exc:  # noqa: BLE001
            saved = na(exc)
        lkh = t_lkh = gap = "—"
        if n <= max(cfg["lkh_sizes"]):
            try:
                s = np.array([np.asarray(p, float)[0] for p in strokes])
                e = np.array([np.asarray(p, float)[-1] for p in strokes])
                order, rev, t_lkh = lkh_order(strokes, start)
                lkh = path_travel(s, e, order, rev, np.asarray(start, float))
                gap = 100.0 * (ours / lkh - 1.0)
                if n >= 100:
                    gaps.append(gap)
                    tratio.append(t_ours / t_lkh)
            except Exception as exc:  # noqa: BLE001
                lkh = na(exc)
        rows.append([label, n, greedy, ours, lkh, gap, saved, t_greedy, t_ours, t_lkh,
                     (t_ours / t_lkh) if isinstance(t_lkh, float) else "—"])
    results["route"] = (gaps, tratio)
    growth = [(r[1], r[8]) for r in rows if str(r[0]).startswith("still life stipple")
              and isinstance(r[8], float)]
    k = exponent(*zip(*growth)) if len(growth) >= 2 else float("nan")
    return ("Pen-up travel (mm, approach from the start included) of `order_strokes` "
            "(kicks bounded as `route_strokes` bounds them: they stop after three rounds "
            f"each saving under {100 * GAIN_SHARE:g} % of the estimated drawing time, "
            "`gain_bounds`) "
            "against `greedy_order` (nearest neighbour) and LKH through elkai (one run, "
            "stroke ends as paired nodes, open path from the start; loops entered at their "
            "first point). Subsets are random strokes of the traced set. LKH only up to "
            f"{max(cfg['lkh_sizes'])} strokes to keep time bounded. \"drawing saved %\" is "
            "the share of the drawing time `order_strokes` saves over nearest neighbour on "
            "the default arm: the pen-up seconds saved (`pen_up_time`, trapezoid moves at "
            "the joint limits plus lifts) over nearest neighbour's pen-up seconds plus the "
            f"pen-down length at the planner's tip speed ({TIP_SPEED:g} mm/s).\n\n"
            + table(["stroke set", "strokes", "greedy mm", "ours mm", "LKH mm",
                      "ours vs LKH %", "drawing saved %", "greedy s", "ours s", "LKH s", "ours / LKH time"],
                     rows)
            + f"\n\n`order_strokes` time against stroke count over the stipple subsets: "
              f"exponent k = {fmt(k)} (log-log least squares).")


def section_kinematics(cfg, results):
    from inkreach.arms import load_arm

    from bench_kinematics import _points, reference_time, throughput

    rows = []
    for name in ("default", "serial"):
        try:
            arm = load_arm(name)
            n = cfg["ik_points"]
            med, rate = throughput(arm, n=n, repeats=cfg["ik_runs"])
            ref = reference_time(_points(arm, n, 0), cfg["ik_runs"])
            rows.append([f"{arm.name} ({arm.kind})", n, med, rate, med / ref])
            results.setdefault("ik", {})[name] = rate
        except Exception as exc:  # noqa: BLE001
            rows.append([name, na(exc), "—", "—", "—"])
    return ("Inverse kinematics plus conditioning of uniformly random points in the reach "
            "box (unreachable ones give NaN and still count), median of runs; the five-bar "
            "through `ik_conditioning` (one pass). Reference: two `np.arctan2` and two "
            "`np.hypot` over the same points, timed in the same run.\n\n"
            + table(["arm", "points", "median s", "points / s", "time / reference"], rows))


def section_drawing(cfg, results):
    from inkreach.cli.demo import still_life
    from inkreach.likeness import plan_fidelity

    img = np.asarray(still_life(960, 720))
    rows = []
    for st in STYLES:
        try:
            _, p, _ = end_to_end(img, st)
            s = p.stats
            try:
                fid = s["fidelity"]           # the planner scored it already
                t = T()
                plan_fidelity(p, img)
                t_fid = T() - t
            except Exception as exc:  # noqa: BLE001
                fid, t_fid = {"ssim": na(exc), "tone_error": "—"}, "—"
            rows.append([st, s["strokes"], s["pen_lifts"], s["pen_down_mm"], s["pen_up_mm"],
                         s["estimated_s"], s["pen_down_s"], s["pen_up_s"], s["lift_dwell_s"],
                         fid.get("ssim", "—"), fid.get("tone_error", "—"), t_fid])
        except Exception as exc:  # noqa: BLE001
            rows.append([st, na(exc)] + ["—"] * 10)
    return ("The demo still life (960x720) on the default arm, one plan per style. Times "
            "from `plan.stats` (pen-down, pen-up travel and the lift dwell add up to the estimate). Fidelity: the drawing "
            "rendered from the stream's angles (FK) against the picture in linear "
            "reflectance, both blurred at 3.5 pen widths (SSIM of Wang et al. 2004 and "
            "mean absolute tone error; `inkreach.likeness`).\n\n"
            + table(["style", "strokes", "pen lifts", "pen-down mm", "pen-up mm",
                      "estimated s", "pen-down s", "pen-up s", "lift dwell s", "SSIM",
                      "tone error", "fidelity s"], rows))
