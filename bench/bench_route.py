"""Speed and pen-up travel of the route stage.

Prints one row per stroke set: time of ``order_strokes``, its pen-up travel
against the nearest-neighbour baseline (``greedy_order``) and, where the
set is small enough, against LKH (through elkai) on the
two-nodes-per-stroke reduction used in tests/test_route_against_lkh.py.

Run: ``python bench/bench_route.py`` (about two to three minutes).
"""

import importlib.util
import pathlib
import time

import numpy as np

from inkreach.route import greedy_order, order_strokes

LKH_MAX = 1000  # strokes; the full distance matrix grows as (2N)^2


def _reference():
    path = pathlib.Path(__file__).resolve().parents[1] / "tests" / "test_route_against_lkh.py"
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


def main():
    lkh = _reference()
    sets = [("random 500", random_segments(500, 1)),
            ("random 1k", random_segments(1000, 2)),
            ("random 10k", random_segments(10_000, 3)),
            ("random 50k", random_segments(50_000, 4)),
            ("camera traced", traced_camera())]
    head = (f"{'set':<14}{'strokes':>8}{'greedy s':>10}{'ours s':>9}{'ours/greedy':>13}"
            f"{'lkh s':>8}{'ours/lkh':>10}")
    print(head)
    print("-" * len(head))
    for name, strokes in sets:
        t = time.perf_counter()
        g = greedy_order(strokes)
        tg = time.perf_counter() - t
        t = time.perf_counter()
        r = order_strokes(strokes)
        tr = time.perf_counter() - t
        ratio_g = r.stats.pen_up_mm / g.stats.pen_up_mm
        lk = ""
        if lkh is not None and len(strokes) <= LKH_MAX:
            t = time.perf_counter()
            ref = lkh(strokes)
            tl = time.perf_counter() - t
            lk = f"{tl:8.2f}{r.stats.pen_up_mm / ref:10.3f}"
        else:
            lk = f"{'-':>8}{'-':>10}"
        print(f"{name:<14}{len(strokes):>8}{tg:10.2f}{tr:9.2f}{ratio_g:13.3f}{lk}", flush=True)


if __name__ == "__main__":
    main()
