"""The benchmark suite: ``python bench/run.py [--quick]`` writes bench/RESULTS.md.

Speed of every stage and end to end on pictures of about 0.25, 1 and 4
megapixels, as seconds and as a ratio to a fixed reference workload (OpenCV
Canny plus scikit-image skeletonize on the same picture) measured in the
same run; peak memory; how cost grows; pen-up travel against a
nearest-neighbour baseline and LKH; kinematics throughput; drawing time and
fidelity per style; and the targets, each marked met or not met.

A section or row whose stage cannot run says "not available: <reason>".
"""

import argparse
import datetime
import json
import os
import platform
import subprocess
import sys
import tempfile
import time
import traceback

import numpy as np

HERE = os.path.dirname(os.path.abspath(__file__))
sys.path.insert(0, HERE)
sys.path.insert(0, os.path.join(os.path.dirname(HERE), "src"))

from _stages import T, end_to_end, reference_workload, run_stages  # noqa: E402

STYLES = ("outline", "centerline", "hatch", "stipple", "contour", "wave")

FULL = dict(runs=3, sizes_mp=(0.25, 1.0, 4.0), memory_mp=(1.0, 12.0),
            growth_sides=(300, 600, 1200, 2400), growth_styles=("outline", "hatch", "stipple"),
            stipple_max_side=1200, lkh_sizes=(100, 250, 500), route_sizes=(100, 250, 500, 2000,
                                                                            8000),
            ik_points=1_000_000, ik_runs=3)
QUICK = dict(runs=1, sizes_mp=(0.25,), memory_mp=(1.0,), growth_sides=(200, 400),
             growth_styles=("outline", "hatch"), stipple_max_side=400, lkh_sizes=(100,),
             route_sizes=(100, 400), ik_points=200_000, ik_runs=1)


def _na(exc):
    msg = str(exc).strip().splitlines()[0] if str(exc).strip() else type(exc).__name__
    return f"not available: {type(exc).__name__}: {msg}"[:200]


def _fmt(v, nd=3):
    if v is None:
        return "—"
    if isinstance(v, str):
        return v
    if isinstance(v, (int, np.integer)):
        return f"{int(v):,}"
    if not np.isfinite(v):
        return "—"
    if abs(v) >= 100:
        return f"{v:,.0f}"
    return f"{v:.{nd}f}"


def _table(header, rows):
    out = ["| " + " | ".join(header) + " |", "|" + "|".join("---" for _ in header) + "|"]
    for r in rows:
        out.append("| " + " | ".join(_fmt(c) for c in r) + " |")
    return "\n".join(out)


def _exponent(x, y):
    """Slope of log y against log x by least squares (np.polyfit)."""
    x, y = np.asarray(x, float), np.asarray(y, float)
    ok = (x > 0) & (y > 0) & np.isfinite(x) & np.isfinite(y)
    if ok.sum() < 2 or np.ptp(np.log(x[ok])) == 0:
        return float("nan")
    return float(np.polyfit(np.log(x[ok]), np.log(y[ok]), 1)[0])


# --- pictures ---------------------------------------------------------------

def _size_for(mp, aspect):
    w = int(round(np.sqrt(mp * 1e6 * aspect)))
    return w, int(round(w / aspect))


def pictures(sizes_mp):
    """Generated still lifes and scikit-image's camera sample, at each size (uint8)."""
    import cv2
    from skimage import data

    from inkreach.demo import still_life

    cam = data.camera()
    out = {}
    for mp in sizes_mp:
        w, h = _size_for(mp, 4 / 3)
        out[f"still life {mp:g} MP ({w}x{h})"] = ("still", mp,
                                                  np.asarray(still_life(w, h)))
        s = _size_for(mp, 1.0)[0]
        img = cam if s == cam.shape[0] else cv2.resize(cam, (s, s),
                                                       interpolation=cv2.INTER_CUBIC)
        out[f"camera {mp:g} MP ({s}x{s})"] = ("photo", mp, img)
    return out


# --- sections ---------------------------------------------------------------

def machine_facts():
    import cv2
    import scipy
    import skimage

    return "\n".join([
        f"- Date: {datetime.datetime.now().strftime('%Y-%m-%d %H:%M')}",
        f"- Machine: {platform.machine()}, {os.cpu_count()} CPUs, {platform.system()} "
        f"{platform.release()}",
        f"- Python {platform.python_version()}, numpy {np.__version__}, "
        f"OpenCV {cv2.__version__}, scikit-image {skimage.__version__}, scipy {scipy.__version__}",
        f"- Load average at the start (1, 5, 15 min): "
        + (", ".join(f"{v:.2f}" for v in os.getloadavg()) if hasattr(os, "getloadavg")
           else "unknown")
        + " — other work on the machine slows absolute figures; ratios to the reference "
          "workload are measured side by side and suffer less.",
    ])


def section_speed(cfg, pics, results):
    """Seconds per stage (median of runs) and the ratio to the reference workload."""
    from inkreach.arms import default_arm, workspace_map
    from inkreach.trace import load_image, trace

    arm = default_arm()
    wmap = workspace_map(arm)
    lines = []
    header = ["picture", "stage", "median s", "× reference"]
    rows = []
    for name, (kind, mp, img) in pics.items():
        ref = float(np.median([reference_workload(img) for _ in range(cfg["runs"])]))
        results.setdefault("reference", {})[name] = ref
        rows.append([name, "**reference** (Canny + skeletonize)", ref, 1.0])
        style = "hatch" if kind == "still" else "outline"
        # trace per style
        pic = load_image(img)
        for st in STYLES:
            try:
                ts = []
                for _ in range(cfg["runs"]):
                    t = T()
                    trace(pic.luminance, st, pen_px=2.0)
                    ts.append(T() - t)
                m = float(np.median(ts))
                rows.append([name, f"trace {st}", m, m / ref])
            except Exception as exc:  # noqa: BLE001
                rows.append([name, f"trace {st}", _na(exc), "—"])
        # every other stage, on the style that suits the picture
        try:
            runs = [run_stages(img, style, arm=arm, wmap=wmap)[0] for _ in range(cfg["runs"])]
            for stage in runs[0]:
                if stage == "trace":
                    continue
                m = float(np.median([r[stage] for r in runs]))
                rows.append([name, f"{stage} ({style})", m, m / ref])
        except Exception as exc:  # noqa: BLE001
            rows.append([name, f"stages ({style})", _na(exc), "—"])
        try:
            ts, te = [], []
            for _ in range(cfg["runs"]):
                s, _, s_export = end_to_end(img, style)
                ts.append(s)
                te.append(s_export)
            m, m_export = float(np.median(ts)), float(np.median(te))
            rows.append([name, f"export ({style})", m_export, m_export / ref])
            rows.append([name, f"**end to end** ({style}, plan + export)", m, m / ref])
            results.setdefault("e2e", {})[name] = (kind, mp, m, ref)
        except Exception as exc:  # noqa: BLE001
            rows.append([name, f"**end to end** ({style})", _na(exc), "—"])
    lines.append("Trace rows are the style alone at pen width 2 px on the working grid "
                 "(long side ≤ 1200 px, the planner's default); the other stages run on the "
                 "style that suits the picture (hatch for the still life, outline for the "
                 "photo) with the default arm. End to end is `inkreach.plan.plan` plus "
                 "building every output file in memory (arm map included); the export row "
                 "is that last part alone. Ratios are to "
                 "the reference workload on the same picture in the same run.\n")
    lines.append(_table(header, rows))
    return "\n".join(lines)


def section_memory(cfg, results):
    import cv2

    from inkreach.demo import still_life

    rows = []
    base = np.asarray(still_life(1155, 866))
    with tempfile.TemporaryDirectory() as tmp:
        for mp in cfg["memory_mp"]:
            w, h = _size_for(mp, 4 / 3)
            path = os.path.join(tmp, f"still-{mp:g}.png")
            img = base if (w, h) == base.shape[::-1] else cv2.resize(
                base, (w, h), interpolation=cv2.INTER_CUBIC)
            cv2.imwrite(path, img)
            del img
            for style in ("hatch", "outline"):
                try:
                    out = subprocess.run([sys.executable, os.path.join(HERE, "_memory.py"),
                                          path, style], capture_output=True, text=True,
                                         timeout=300, env=_child_env())
                    if out.returncode:
                        raise RuntimeError(out.stderr.strip().splitlines()[-1])
                    d = json.loads(out.stdout.strip().splitlines()[-1])
                    rows.append([f"{mp:g} MP ({w}x{h})", style, d["baseline_mb"], d["peak_mb"],
                                 d["peak_mb"] - d["baseline_mb"], d["seconds"]])
                    results.setdefault("memory", {})[(mp, style)] = d["peak_mb"]
                except Exception as exc:  # noqa: BLE001
                    rows.append([f"{mp:g} MP", style, _na(exc), "—", "—", "—"])
    return ("Each row is its own process: a PNG still life read from disk, planned and "
            "exported in memory. Baseline = resident set after importing every stage; "
            "peak = the process's resident high-water mark at the end (MB; `VmHWM`, since "
            "`ru_maxrss` of a new child still counts the parent's memory before the exec).\n\n"
            + _table(["picture", "style", "baseline MB", "peak MB", "peak − baseline MB",
                      "seconds"], rows))


def _child_env():
    env = dict(os.environ)
    src = os.path.join(os.path.dirname(HERE), "src")
    env["PYTHONPATH"] = src + os.pathsep + env.get("PYTHONPATH", "")
    return env


def section_growth(cfg, results):
    from inkreach.arms import default_arm, workspace_map
    from inkreach.demo import still_life

    arm = default_arm()
    wmap = workspace_map(arm)
    w, h = _size_for(4.0, 4 / 3)
    img = np.asarray(still_life(w, h))
    rows, pts = [], {"trace": {}, "route": [], "motion": []}
    for st in cfg["growth_styles"]:
        for side in cfg["growth_sides"]:
            if st == "stipple" and side > cfg["stipple_max_side"]:
                continue
            try:
                times, out = run_stages(img, st, arm=arm, wmap=wmap, max_side=side)
                px = int(np.prod(out["picture"].shape))
                n = len(out["route"].strokes)
                rows_n = len(out["stream"])
                mot = times["motion"] + times["check"]
                rows.append([st, f"{side}", px, times["trace"], n, times["route"], rows_n, mot])
                pts["trace"].setdefault(st, []).append((px, times["trace"]))
                pts["route"].append((n, times["route"]))
                pts["motion"].append((rows_n, mot, n))
            except Exception as exc:  # noqa: BLE001
                rows.append([st, f"{side}", _na(exc), "—", "—", "—", "—", "—"])
    fits = []
    for st, v in pts["trace"].items():
        x, y = zip(*v)
        fits.append([f"trace {st}", "working pixels", _exponent(x, y)])
    if pts["route"]:
        x, y = zip(*pts["route"])
        fits.append(["route (order + joint-space reorder)", "strokes", _exponent(x, y)])
    if pts["motion"]:
        r, y, n = zip(*pts["motion"])
        fits.append(["motion + check", "stream rows", _exponent(r, y)])
        fits.append(["motion + check", "strokes", _exponent(n, y)])
    return ("One 4-MP still life loaded at several working sizes (`max_side`); each stage "
            "timed once. Exponent k of time ∝ size^k by least squares on log-log "
            "(`np.polyfit`); 1 is linear.\n\n"
            + _table(["style", "max side", "working px", "trace s", "strokes", "route s",
                      "stream rows", "motion + check s"], rows)
            + "\n\n" + _table(["stage", "against", "exponent k"], fits))


def _stroke_sets(cfg):
    """Real stroke sets in arm mm from traced pictures, with a start point."""
    from inkreach.arms import default_arm, workspace_map
    from inkreach.demo import emblem, still_life

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

    from inkreach.route import greedy_order, order_strokes

    rows = []
    sets = _stroke_sets(cfg)
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
            r = order_strokes(strokes, start=start)
            t_ours = T() - t
            t = T()
            g = greedy_order(strokes, start=start)
            t_greedy = T() - t
            ours = r.stats.pen_up_mm + r.stats.approach_mm
            greedy = g.stats.pen_up_mm + g.stats.approach_mm
        except Exception as exc:  # noqa: BLE001
            rows.append([label, n, _na(exc)] + ["—"] * 7)
            continue
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
                lkh = _na(exc)
        rows.append([label, n, greedy, ours, lkh, gap, t_greedy, t_ours, t_lkh,
                     (t_ours / t_lkh) if isinstance(t_lkh, float) else "—"])
    results["route"] = (gaps, tratio)
    growth = [(r[1], r[7]) for r in rows if str(r[0]).startswith("still life stipple")
              and isinstance(r[7], float)]
    k = _exponent(*zip(*growth)) if len(growth) >= 2 else float("nan")
    return ("Pen-up travel (mm, approach from the start included) of `order_strokes` "
            "against `greedy_order` (nearest neighbour) and LKH through elkai (one run, "
            "stroke ends as paired nodes, open path from the start; loops entered at their "
            "first point). Subsets are random strokes of the traced set. LKH only up to "
            f"{max(cfg['lkh_sizes'])} strokes to keep time bounded.\n\n"
            + _table(["stroke set", "strokes", "greedy mm", "ours mm", "LKH mm",
                      "ours vs LKH %", "greedy s", "ours s", "LKH s", "ours / LKH time"],
                     rows)
            + f"\n\n`order_strokes` time against stroke count over the stipple subsets: "
              f"exponent k = {_fmt(k)} (log-log least squares).")


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
            rows.append([name, _na(exc), "—", "—", "—"])
    return ("Inverse kinematics plus conditioning of uniformly random points in the reach "
            "box (unreachable ones give NaN and still count), median of runs; the five-bar "
            "through `ik_conditioning` (one pass). Reference: two `np.arctan2` and two "
            "`np.hypot` over the same points, timed in the same run.\n\n"
            + _table(["arm", "points", "median s", "points / s", "time / reference"], rows))


def section_drawing(cfg, results):
    from inkreach.demo import still_life
    from inkreach.fidelity import plan_fidelity

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
                fid, t_fid = {"ssim": _na(exc), "tone_error": "—"}, "—"
            rows.append([st, s["strokes"], s["pen_lifts"], s["pen_down_mm"], s["pen_up_mm"],
                         s["estimated_s"], s["pen_down_s"], s["pen_up_s"], s["lift_dwell_s"],
                         fid.get("ssim", "—"), fid.get("tone_error", "—"), t_fid])
        except Exception as exc:  # noqa: BLE001
            rows.append([st, _na(exc)] + ["—"] * 10)
    return ("The demo still life (960x720) on the default arm, one plan per style. Times "
            "from `plan.stats` (pen-down, pen-up travel and the lift dwell add up to the estimate). Fidelity: the drawing "
            "rendered from the stream's angles (FK) against the picture in linear "
            "reflectance, both blurred at 3.5 pen widths (SSIM of Wang et al. 2004 and "
            "mean absolute tone error; `inkreach.fidelity`).\n\n"
            + _table(["style", "strokes", "pen lifts", "pen-down mm", "pen-up mm",
                      "estimated s", "pen-down s", "pen-up s", "lift dwell s", "SSIM",
                      "tone error", "fidelity s"], rows))


def section_targets(results):
    rows = []

    def mark(ok):
        return "met" if ok else "not met"

    e2e = [(name, m, ref) for name, (kind, mp, m, ref) in results.get("e2e", {}).items()
           if kind == "photo" and mp == 1.0]
    if e2e:
        name, m, ref = e2e[0]
        rows.append(["1-MP photo end to end ≤ 3× reference", f"{m / ref:.2f}× ({m:.2f} s vs "
                     f"{ref:.3f} s, {name})", mark(m / ref <= 3.0)])
    else:
        rows.append(["1-MP photo end to end ≤ 3× reference", "not available: not measured "
                     "(needs the full run)", "—"])
    gaps, tr = results.get("route", ([], []))
    if gaps:
        g, r = max(gaps), max(tr)
        rows.append(["pen-up travel within 5% of LKH at < 1/10 of its time",
                     f"worst {g:+.1f}% at worst {r:.3f}× LKH's time over {len(gaps)} sets "
                     "of ≥ 100 strokes",
                     mark(g <= 5.0 and r < 0.1)])
    else:
        rows.append(["pen-up travel within 5% of LKH at < 1/10 of its time",
                     "not available: no LKH comparison", "—"])
    mem = results.get("memory", {})
    m12 = [v for (mp, _), v in mem.items() if mp == 12.0]
    if m12:
        rows.append(["peak memory < 400 MB for 12 MP", f"{max(m12):.0f} MB (worst style)",
                     mark(max(m12) < 400)])
    else:
        rows.append(["peak memory < 400 MB for 12 MP", "not available: not measured "
                     "(needs the full run)", "—"])
    ik = results.get("ik", {})
    if ik:
        rows.append(["≥ 5M IK + conditioning evaluations per second on the five-bar",
                     ", ".join(f"{k}: {v / 1e6:.2f} M/s" for k, v in ik.items()),
                     mark(ik.get("default", 0.0) >= 5e6)])
    mo = results.get("motion")
    if mo:
        rows.append(["pen-down ≤ 1.05× TOPP-RA, pen-up ≤ 1.05× optimal, whole ≤ 1.08× bound",
                     f"worst {mo['down']:.3f}× / {mo['up']:.3f}× / {mo['total']:.3f}×",
                     mark(mo["down"] <= 1.05 and mo["up"] <= 1.05 and mo["total"] <= 1.08)])
    return ("Goals, not assertions. Quote ratios measured in one run.\n\n"
            + _table(["target", "measured", "status"], rows))


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--quick", action="store_true", help="a fast smoke run")
    ap.add_argument("--out", default=os.path.join(HERE, "RESULTS.md"))
    args = ap.parse_args(argv)
    cfg = QUICK if args.quick else FULL
    t0 = T()
    results = {}
    parts = ["# inkreach benchmark results", "",
             f"Written by `python bench/run.py{' --quick' if args.quick else ''}`"
             f" (median of {cfg['runs']} run{'s' if cfg['runs'] > 1 else ''}).", "",
             machine_facts(), ""]
    body = []

    def run(title, fn, *a):
        t = T()
        try:
            text = fn(*a)
        except Exception as exc:  # noqa: BLE001
            text = _na(exc)
            traceback.print_exc()
        body.append(f"## {title}\n\n{text}\n")
        print(f"{title}: {T() - t:.1f} s", file=sys.stderr, flush=True)

    try:
        pics = pictures(cfg["sizes_mp"])
    except Exception as exc:  # noqa: BLE001
        pics = {}
        body.append(f"## Pictures\n\n{_na(exc)}\n")
    run("Speed per stage", section_speed, cfg, pics, results)
    run("Peak memory end to end", section_memory, cfg, results)
    run("How cost grows", section_growth, cfg, results)
    run("Route: pen-up travel against baselines", section_route, cfg, results)
    run("Kinematics throughput", section_kinematics, cfg, results)
    run("Drawing time and fidelity per style", section_drawing, cfg, results)
    import bench_tone
    run(bench_tone.TITLE, bench_tone.section, cfg)
    from bench_motion import section_motion
    run("Motion time against TOPP-RA and the lower bound", section_motion, cfg, results)
    targets = f"## Targets\n\n{section_targets(results)}\n"
    total = T() - t0
    text = "\n".join(parts) + "\n" + targets + "\n" + "\n".join(body) + \
        f"\nWhole run: {total:.0f} s.\n"
    with open(args.out, "w", encoding="utf-8") as f:
        f.write(text)
    print(f"wrote {args.out} in {total:.0f} s", file=sys.stderr)


if __name__ == "__main__":
    main()
