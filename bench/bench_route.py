"""Speed and pen-up travel of the route stage.

Prints one row per stroke set: time of ``order_strokes``, its pen-up travel
against the nearest-neighbour baseline (``greedy_order``) and, where the
set is small enough, against LKH (through elkai) on the
two-nodes-per-stroke reduction used in tests/test_route_against_lkh.py,
with the time ratio ours / LKH. A ``route_quality`` summary follows (worst
and mean of each ratio over the sets that have them).

The stroke sets: random short segments (invented data), strokes traced
from skimage's camera photograph with OpenCV (Canny edges, border
following), and strokes from ``inkreach.trace``: the outline style on
skimage's camera and astronaut pictures, the centerline style on the
postcard demo picture.

Run: ``python bench/bench_route.py`` (about three minutes; LKH takes most
of it). ``--json FILE`` also writes the rows as JSON; ``--no-lkh`` skips
the reference.
"""

import argparse
import importlib.util
import json
import pathlib
import time

import numpy as np

from inkreach.route import greedy_order, order_strokes

LKH_MAX = 1000  # strokes; the full distance matrix grows as (2N)^2
ROOT = pathlib.Path(__file__).resolve().parents[1]


def _reference():
    path = ROOT / "tests" / "test_route_against_lkh.py"
    try:
        import elkai  # noqa: F401
    except ImportError:
        return None
    spec = importlib.util.spec_from_file_location("_lkh_reference", path)
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    return mod.lkh_pen_up


def random_segments(n, seed=0):
    """Invented data for the bench: random short segments in a square."""
    rng = np.random.default_rng(seed)
    size = 10.0 * np.sqrt(n)
    a = rng.random((n, 2)) * size
    ang = rng.random(n) * 2 * np.pi
    b = a + np.column_stack([np.cos(ang), np.sin(ang)]) * rng.uniform(1, 8, n)[:, None]
    return [np.array([p, q]) for p, q in zip(a, b)]


def traced_camera():
    """Strokes traced from skimage's camera photograph (Canny edges, OpenCV borders)."""
    import cv2
    from skimage import data

    edges = cv2.Canny(data.camera(), 100, 200)
    contours, _ = cv2.findContours(edges, cv2.RETR_LIST, cv2.CHAIN_APPROX_SIMPLE)
    return [c[:, 0, :].astype(float) for c in contours if len(c) >= 2]


def traced(picture, style):
    """Strokes of ``inkreach.trace`` in ``style``, joined where they meet."""
    from inkreach.route import merge_strokes
    from inkreach.trace import load_image, trace

    return merge_strokes(trace(load_image(picture), style))


def stroke_sets():
    from skimage import data

    return [("random 500", lambda: random_segments(500, 1)),
            ("random 1k", lambda: random_segments(1000, 2)),
            ("random 10k", lambda: random_segments(10_000, 3)),
            ("random 50k", lambda: random_segments(50_000, 4)),
            ("camera canny", traced_camera),
            ("camera outline", lambda: traced(data.camera(), "outline")),
            ("astronaut outline", lambda: traced(data.astronaut(), "outline")),
            ("postcard centerline",
             lambda: traced(str(ROOT / "demo_images" / "postcard-text.png"), "centerline"))]


def measure(name, strokes, lkh=None):
    """One row of figures for a stroke set."""
    t = time.perf_counter()
    g = greedy_order(strokes)
    tg = time.perf_counter() - t
    t = time.perf_counter()
    r = order_strokes(strokes)
    tr = time.perf_counter() - t
    row = {"set": name, "strokes": len(strokes), "greedy_s": tg, "ours_s": tr,
           "ours_mm": r.stats.pen_up_mm, "ours_over_greedy": r.stats.pen_up_mm / g.stats.pen_up_mm,
           "lkh_s": None, "ours_over_lkh": None, "time_over_lkh": None}
    if lkh is not None and len(strokes) <= LKH_MAX:
        t = time.perf_counter()
        ref = lkh(strokes)
        tl = time.perf_counter() - t
        row.update(lkh_s=tl, ours_over_lkh=r.stats.pen_up_mm / ref if ref > 0 else 1.0,
                   time_over_lkh=tr / tl)
    return row


def route_quality(rows):
    """Summary of bench rows: worst and mean ours/greedy, ours/LKH, time ratio.

    Parameters
    ----------
    rows : list of dict
        Rows from :func:`measure`.

    Returns
    -------
    dict
        ``{"ours_over_greedy": {"worst": .., "mean": ..}, "ours_over_lkh": ..,
        "time_over_lkh": ..}``; a figure no row has is None.
    """
    out = {}
    for key in ("ours_over_greedy", "ours_over_lkh", "time_over_lkh"):
        v = [r[key] for r in rows if r[key] is not None]
        out[key] = {"worst": max(v), "mean": float(np.mean(v))} if v else None
    return out


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--json", help="also write the rows and summary here")
    ap.add_argument("--no-lkh", action="store_true", help="skip the LKH reference")
    args = ap.parse_args(argv)
    lkh = None if args.no_lkh else _reference()
    head = (f"{'set':<21}{'strokes':>8}{'greedy s':>10}{'ours s':>9}{'ours/greedy':>13}"
            f"{'lkh s':>8}{'ours/lkh':>10}{'time/lkh':>10}")
    print(head)
    print("-" * len(head))
    rows = []
    for name, make in stroke_sets():
        row = measure(name, make(), lkh)
        rows.append(row)
        lk = (f"{row['lkh_s']:8.2f}{row['ours_over_lkh']:10.3f}{row['time_over_lkh']:10.3f}"
              if row["lkh_s"] is not None else f"{'-':>8}{'-':>10}{'-':>10}")
        print(f"{name:<21}{row['strokes']:>8}{row['greedy_s']:10.2f}{row['ours_s']:9.2f}"
              f"{row['ours_over_greedy']:13.3f}{lk}", flush=True)
    q = route_quality(rows)
    print("\nroute_quality (worst / mean over the sets):")
    for key, v in q.items():
        print(f"  {key:<17}" + ("-" if v is None else f"{v['worst']:.3f} / {v['mean']:.3f}"))
    if args.json:
        pathlib.Path(args.json).write_text(json.dumps({"rows": rows, "route_quality": q}, indent=1))


if __name__ == "__main__":
    main()
