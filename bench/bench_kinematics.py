"""Inverse kinematics plus conditioning throughput: python bench/bench_kinematics.py

Each figure is also given as a ratio to a reference numpy workload timed in
the same process on the same points (two ``np.arctan2`` and two
``np.hypot`` over all of them: the transcendental core of any planar IK), so
that runs on busy or different machines can be compared.
"""

import time

import numpy as np

from inkreach.arms import load_arm


def _points(arm, n, seed):
    x0, y0, x1, y1 = arm.reach_box()
    return np.random.default_rng(seed).uniform([x0, max(y0, 0.0)], [x1, y1], (n, 2))


def _median_time(fn, repeats, clock=time.perf_counter):
    times = []
    for _ in range(repeats):
        t = clock()
        fn()
        times.append(clock() - t)
    return float(np.median(times))


def reference_time(pts, repeats=5, clock=time.perf_counter):
    """Median seconds of the reference workload on ``pts``."""
    x, y = np.ascontiguousarray(pts[:, 0]), np.ascontiguousarray(pts[:, 1])

    def ref():
        np.arctan2(y, x)
        np.arctan2(x, y)
        np.hypot(x, y)
        np.hypot(y, x)
    return _median_time(ref, repeats, clock)


def throughput(arm, n=1_000_000, repeats=5, seed=0, fused=True, clock=time.perf_counter):
    """Median seconds and points per second for IK + conditioning of n points.

    ``fused`` uses ``ik_conditioning`` where the arm has it (one pass),
    otherwise ``ik`` then ``conditioning``. ``clock=time.process_time``
    counts this process's CPU time only (steadier on a shared machine).
    """
    pts = _points(arm, n, seed)
    if fused and hasattr(arm, "ik_conditioning"):
        def work():
            arm.ik_conditioning(pts)
    else:
        def work():
            arm.conditioning(arm.ik(pts))
    med = _median_time(work, repeats, clock)
    return med, n / med


def rows(n=1_000_000, repeats=5):
    """Table rows: arm, calls, points, median s, points/s, CPU points/s, ratio."""
    out = []
    for name in ("default", "wide", "serial"):
        arm = load_arm(name)
        pts = _points(arm, n, 0)
        ref = reference_time(pts, repeats)
        paths = [("ik_conditioning", True), ("ik, then conditioning", False)] \
            if hasattr(arm, "ik_conditioning") else [("ik, then conditioning", False)]
        for label, fused in paths:
            med, rate = throughput(arm, n, repeats, fused=fused)
            _, cpu_rate = throughput(arm, n, repeats, fused=fused, clock=time.process_time)
            out.append((arm.name, label, n, med, rate, cpu_rate, med / ref))
    return out


if __name__ == "__main__":
    print("| arm | calls | points | median s | points/s | CPU points/s | time / reference |")
    print("|---|---|---:|---:|---:|---:|---:|")
    for arm, label, n, med, rate, cpu, ratio in rows():
        print(f"| {arm} | {label} | {n:,} | {med:.3f} | {rate:,.0f} | {cpu:,.0f} | {ratio:.2f} |")
