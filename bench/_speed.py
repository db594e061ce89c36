"""Speed sections: the pictures, seconds per stage, peak memory and how cost grows."""

import json
import os
import subprocess
import sys
import tempfile

import numpy as np

from _report import exponent, na, table
from _stages import T, end_to_end, reference_workload, run_stages

HERE = os.path.dirname(os.path.abspath(__file__))
STYLES = ("outline", "centerline", "hatch", "stipple", "contour", "wave")

__all__ = ["STYLES", "pictures", "size_for", "section_speed", "section_memory", "section_growth"]


def size_for(mp, aspect):
    w = int(round(np.sqrt(mp * 1e6 * aspect)))
    return w, int(round(w / aspect))


def pictures(sizes_mp):
    """Generated still lifes and scikit-image's camera sample, at each size (uint8)."""
    import cv2
    from skimage import data

    from inkreach.cli.demo import still_life

    cam = data.camera()
    out = {}
    for mp in sizes_mp:
        w, h = size_for(mp, 4 / 3)
        out[f"still life {mp:g} MP ({w}x{h})"] = ("still", mp,
                                                  np.asarray(still_life(w, h)))
        s = size_for(mp, 1.0)[0]
        img = cam if s == cam.shape[0] else cv2.resize(cam, (s, s),
                                                       interpolation=cv2.INTER_CUBIC)
        out[f"camera {mp:g} MP ({s}x{s})"] = ("photo", mp, img)
    return out


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
                rows.append([name, f"trace {st}", na(exc), "—"])
        # every other stage, on the style that suits the picture
        try:
            runs = [run_stages(img, style, arm=arm, wmap=wmap)[0] for _ in range(cfg["runs"])]
            for stage in runs[0]:
                if stage == "trace":
                    continue
                m = float(np.median([r[stage] for r in runs]))
                rows.append([name, f"{stage} ({style})", m, m / ref])
        except Exception as exc:  # noqa: BLE001
            rows.append([name, f"stages ({style})", na(exc), "—"])
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
            rows.append([name, f"**end to end** ({style})", na(exc), "—"])
    lines.append("Trace rows are the style alone at pen width 2 px on the working grid "
                 "(long side ≤ 1200 px, the planner's default); the other stages run on the "
                 "style that suits the picture (hatch for the still life, outline for the "
                 "photo) with the default arm. End to end is `inkreach.plan.plan` plus "
                 "building every output file in memory (arm map included); the export row "
                 "is that last part alone. Ratios are to "
                 "the reference workload on the same picture in the same run.\n")
    lines.append(table(header, rows))
    return "\n".join(lines)


def section_memory(cfg, results):
    import cv2

    from inkreach.cli.demo import still_life

    rows = []
    base = np.asarray(still_life(1155, 866))
    with tempfile.TemporaryDirectory() as tmp:
        for mp in cfg["memory_mp"]:
            w, h = size_for(mp, 4 / 3)
            path = os.path.join(tmp, f"still-{mp:g}.png")
            img = base if (w, h) == base.shape[::-1] else cv2.resize(
                base, (w, h), interpolation=cv2.INTER_CUBIC)
            cv2.imwrite(path, img)
            del img
            for style in ("hatch", "outline"):
                try:
                    out = subprocess.run([sys.executable, os.path.join(HERE, "_memory.py"),
                                          path, style], capture_output=True, text=True,
                                         timeout=300, env=child_env())
                    if out.returncode:
                        raise RuntimeError(out.stderr.strip().splitlines()[-1])
                    d = json.loads(out.stdout.strip().splitlines()[-1])
                    rows.append([f"{mp:g} MP ({w}x{h})", style, d["baseline_mb"], d["peak_mb"],
                                 d["peak_mb"] - d["baseline_mb"], d["seconds"]])
                    results.setdefault("memory", {})[(mp, style)] = d["peak_mb"]
                except Exception as exc:  # noqa: BLE001
                    rows.append([f"{mp:g} MP", style, na(exc), "—", "—", "—"])
    return ("Each row is its own process: a PNG still life read from disk, planned and "
            "exported in memory. Baseline = resident set after importing every stage; "
            "peak = the process's resident high-water mark at the end (MB; `VmHWM`, since "
            "`ru_maxrss` of a new child still counts the parent's memory before the exec).\n\n"
            + table(["picture", "style", "baseline MB", "peak MB", "peak − baseline MB",
                      "seconds"], rows))


def child_env():
    env = dict(os.environ)
    src = os.path.join(os.path.dirname(HERE), "src")
    env["PYTHONPATH"] = src + os.pathsep + env.get("PYTHONPATH", "")
    return env


def section_growth(cfg, results):
    from inkreach.arms import default_arm, workspace_map
    from inkreach.cli.demo import still_life

    arm = default_arm()
    wmap = workspace_map(arm)
    w, h = size_for(4.0, 4 / 3)
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
                rows.append([st, f"{side}", na(exc), "—", "—", "—", "—", "—"])
    fits = []
    for st, v in pts["trace"].items():
        x, y = zip(*v)
        fits.append([f"trace {st}", "working pixels", exponent(x, y)])
    if pts["route"]:
        x, y = zip(*pts["route"])
        fits.append(["route (order + joint-space reorder)", "strokes", exponent(x, y)])
    if pts["motion"]:
        r, y, n = zip(*pts["motion"])
        fits.append(["motion + check", "stream rows", exponent(r, y)])
        fits.append(["motion + check", "strokes", exponent(n, y)])
    return ("One 4-MP still life loaded at several working sizes (`max_side`); each stage "
            "timed once. Exponent k of time ∝ size^k by least squares on log-log "
            "(`np.polyfit`); 1 is linear.\n\n"
            + table(["style", "max side", "working px", "trace s", "strokes", "route s",
                      "stream rows", "motion + check s"], rows)
            + "\n\n" + table(["stage", "against", "exponent k"], fits))
