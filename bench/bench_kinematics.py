"""Inverse kinematics plus conditioning throughput: python bench/bench_kinematics.py"""

import time

import numpy as np

from inkreach.arms import default_arm, load_arm


def throughput(arm, n=1_000_000, repeats=5, seed=0):
    """Median seconds and points per second for IK + conditioning of n points."""
    x0, y0, x1, y1 = arm.reach_box()
    pts = np.random.default_rng(seed).uniform([x0, max(y0, 0.0)], [x1, y1], (n, 2))
    times = []
    for _ in range(repeats):
        t = time.perf_counter()
        q = arm.ik(pts)
        arm.conditioning(q)
        times.append(time.perf_counter() - t)
    med = float(np.median(times))
    return med, n / med


if __name__ == "__main__":
    print("| arm | points | median s | points/s |")
    print("|---|---:|---:|---:|")
    for name in ("default", "wide", "serial"):
        arm = load_arm(name)
        med, rate = throughput(arm)
        print(f"| {arm.name} | 1,000,000 | {med:.3f} | {rate:,.0f} |")
