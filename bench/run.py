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
import os
import sys
import traceback

HERE = os.path.dirname(os.path.abspath(__file__))
sys.path.insert(0, HERE)
sys.path.insert(0, os.path.join(os.path.dirname(HERE), "src"))

# the sections, one module per seam (_speed, _quality), the targets table
# (_targets) and the Markdown writing (_report)
from _import_time import section_import  # noqa: E402
from _quality import section_drawing, section_kinematics, section_route  # noqa: E402
from _report import machine_facts, na  # noqa: E402
from _speed import pictures, section_growth, section_memory, section_speed  # noqa: E402
from _stages import T  # noqa: E402
from _targets import section_targets  # noqa: E402

FULL = dict(runs=3, sizes_mp=(0.25, 1.0, 4.0), memory_mp=(1.0, 12.0),
            growth_sides=(300, 600, 1200, 2400), growth_styles=("outline", "hatch", "stipple"),
            stipple_max_side=1200, lkh_sizes=(100, 250, 500), route_sizes=(100, 250, 500, 2000,
                                                                            8000),
            ik_points=1_000_000, ik_runs=3)
QUICK = dict(runs=1, sizes_mp=(0.25,), memory_mp=(1.0,), growth_sides=(200, 400),
             growth_styles=("outline", "hatch"), stipple_max_side=400, lkh_sizes=(100,),
             route_sizes=(100, 400), ik_points=200_000, ik_runs=1)


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
            text = na(exc)
            traceback.print_exc()
        body.append(f"## {title}\n\n{text}\n")
        print(f"{title}: {T() - t:.1f} s", file=sys.stderr, flush=True)

    try:
        pics = pictures(cfg["sizes_mp"])
    except Exception as exc:  # noqa: BLE001
        pics = {}
        body.append(f"## Pictures\n\n{na(exc)}\n")
    run("Package import time", section_import, cfg, results)
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
    try:
        with open(args.out, encoding="utf-8") as f:
            previous = f.read()
    except OSError:
        previous = ""
    targets = f"## Targets\n\n{section_targets(results, previous)}\n"
    total = T() - t0
    text = "\n".join(parts) + "\n" + targets + "\n" + "\n".join(body) + \
        f"\nWhole run: {total:.0f} s.\n"
    with open(args.out, "w", encoding="utf-8") as f:
        f.write(text)
    print(f"wrote {args.out} in {total:.0f} s", file=sys.stderr)


if __name__ == "__main__":
    main()
