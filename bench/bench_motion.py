"""Motion time against time-optimal references: TOPP-RA (toppra) and joint trapezoids.

For each plan: the pen-down time of the planned stream against TOPP-RA
(Pham & Pham 2018, the ``toppra`` package) on the same joint path (a cubic
spline through the subdivided stroke's joint vertices, parameterised by
joint-space arc length) with the same per-joint speed and acceleration
limits and the same pen-tip speed limit, every stroke starting and ending at
rest; the pen-up time against the per-joint trapezoid bound (no path between
two postures is faster than its slowest joint's textbook rest-to-rest move);
and the whole plan against the lower bound made of the same pen dwells, the
TOPP-RA pen-down time and the pen-up bound.

toppra is a bench and test reference only, not a dependency of inkreach.
"""

import time

import numpy as np

T = time.perf_counter


def _chord_caps(path, gp, arm, tip_speed, period, chord_tol):
    """Pen speed cap at each gridpoint: the tip limit and the sampled-chord cap.

    Two rows one period apart on a pen path of curvature ``k`` span a chord
    whose sagitta is about ``(v period)^2 k / 8`` (plane geometry); keeping
    it within ``chord_tol`` caps the pen speed at ``sqrt(8 chord_tol / k) /
    period``. The curvature of the pen path (forward kinematics of the
    spline) is taken by central differences on eight points per grid
    interval, the least over the two intervals next to each gridpoint kept.
    """
    sub = 8
    fine = np.linspace(gp[0], gp[-1], sub * (len(gp) - 1) + 1)
    h = 1e-4 * max(float(gp[-1]), 1e-9)
    x0 = arm.fk(path(fine))
    xp = arm.fk(path(np.clip(fine + h, gp[0], gp[-1])))
    xm = arm.fk(path(np.clip(fine - h, gp[0], gp[-1])))
    hp = np.clip(fine + h, gp[0], gp[-1]) - fine
    hm = fine - np.clip(fine - h, gp[0], gp[-1])
    d1 = (xp - xm) / np.maximum(hp + hm, 1e-300)[:, None]
    d2 = 2 * ((xp - x0) / np.maximum(hp, 1e-300)[:, None]
              - (x0 - xm) / np.maximum(hm, 1e-300)[:, None]) / np.maximum(hp + hm, 1e-300)[:, None]
    # one-sided at the two ends: take the neighbour's curvature there
    cross = np.abs(d1[:, 0] * d2[:, 1] - d1[:, 1] * d2[:, 0])
    speed = np.hypot(d1[:, 0], d1[:, 1])
    with np.errstate(divide="ignore", invalid="ignore"):
        k = cross / speed ** 3
    k[0], k[-1] = k[1], k[-2]
    with np.errstate(divide="ignore"):
        v = np.minimum(tip_speed, np.sqrt(8 * chord_tol / k) / period)
    v = v.reshape(-1)
    # least over the two grid intervals next to each gridpoint
    per = np.concatenate([v[:-1].reshape(len(gp) - 1, sub).min(axis=1), [v[-1]]])
    left = np.concatenate([[per[0]], per[:-1]])
    return np.minimum(per, left)


def toppra_time(Q, arm, tip_speed, grid=None, chord_cap=None):
    """TOPP-RA duration of the joint path through ``Q`` (rest to rest), seconds.

    With ``chord_cap = (period, chord_tol)`` the pen speed is also held under
    the sampled-chord cap of :func:`_chord_caps` along the path.

    References
    ----------
    .. [1] H. Pham and Q.-C. Pham, "A new approach to time-optimal path
       parameterization based on reachability analysis", IEEE Trans.
       Robotics 34(3), 2018.
    """
    import toppra
    import toppra.algorithm as algo
    import toppra.constraint as con

    Q = np.asarray(Q, float)
    seg = np.hypot(*np.diff(Q, axis=0).T)
    keep = np.concatenate([[True], seg > 1e-12])
    Q = Q[keep]
    if len(Q) < 2:
        return 0.0
    s = np.concatenate([[0.0], np.cumsum(np.hypot(*np.diff(Q, axis=0).T))])
    path = toppra.SplineInterpolator(s, Q)
    lim = arm.limits
    vmax, amax = float(lim.max_speed), float(lim.max_accel)
    # At least 500 grid points: on 100 points the spline through a short,
    # kinked joint path can come out 50x too slow (stroke 15 of the camera
    # outline on the default arm: 87 s on 100 points, 1.52 s on 500 to 5000).
    n = grid or int(min(2000, max(500, 2 * len(Q))))
    gp = np.linspace(0.0, s[-1], n)

    caps = None if chord_cap is None else _chord_caps(path, gp, arm, tip_speed, *chord_cap)

    def vlim(ss):
        q = path(ss)
        qs = path(ss, 1)
        J = arm.jacobian(q[None])[0]
        g = max(float(np.hypot(*(J @ qs))), 1e-12)
        tip = tip_speed if caps is None else float(np.interp(ss, gp, caps))
        b = np.minimum(vmax, tip * np.abs(qs) / g + 1e-12)
        return np.column_stack([-b, b])

    cs = [con.JointVelocityConstraintVarying(vlim),
          con.JointAccelerationConstraint(
              np.array([[-amax, amax]] * 2),
              discretization_scheme=con.DiscretizationType.Interpolation)]
    inst = algo.TOPPRA(cs, path, gridpoints=gp, parametrizer="ParametrizeConstAccel")
    sdd, sd, _, _ = inst.compute_parameterization(0, 0, return_data=True)
    if sd is None:
        return float("nan")
    ds = np.diff(gp)
    v = np.maximum(np.asarray(sd, float), 0.0)   # path speed ds/dt at each gridpoint
    with np.errstate(divide="ignore"):
        return float(np.sum(2 * ds / np.maximum(v[:-1] + v[1:], 1e-12)))


def plan_figures(strokes, arm, q0, region, tip_speed):
    """Time one plan and its references; returns a dict of seconds and ratios."""
    from inkreach.motion import check_stream, plan_motion, subdivide, trapezoid_time
    from inkreach.motion.plan import TIP_SPEED

    tip = TIP_SPEED if tip_speed is None else tip_speed
    t = T()
    st = plan_motion(strokes, arm, start=q0, end=q0, region=region, tip_speed=tip)
    t_plan = T() - t
    check_stream(st, arm, strokes=strokes, tip_speed=tip)
    P = st.period
    n_dwell = max(1, int(np.ceil(arm.pen.lift_s / P - 1e-9)))
    down_rows = np.bincount(st.stroke[st.pen == 1], minlength=len(strokes))
    ours_down = float(np.sum(np.maximum(down_rows - n_dwell, 0)) * P)
    dwell = 2 * len(strokes) * n_dwell * P
    ours_up = st.duration - ours_down - dwell
    ref_down = ref_cap = 0.0
    t = T()
    for s in strokes:
        if len(s) > 1:
            _, Q = subdivide(s, arm, 0.6 * 0.05)
            ref_down += toppra_time(Q, arm, tip)
    t_ref = T() - t
    for s in strokes:
        if len(s) > 1:
            _, Q = subdivide(s, arm, 0.6 * 0.05)
            ref_cap += toppra_time(Q, arm, tip, chord_cap=(P, 0.05))
    ends = [q0] + [arm.ik(s[-1]) for s in strokes]
    begins = [arm.ik(s[0]) for s in strokes] + [q0]
    lim = arm.limits
    hops = np.array([np.max(trapezoid_time(np.abs(b - a), lim.max_speed, lim.max_accel))
                     for a, b in zip(ends, begins)])
    ref_up = float(hops.sum())
    # the same hops on the rows: the arrival must be a row, and under zero-order
    # hold the first period of a move is hidden in the preceding dwell, so a
    # hop of ceil(t / period) sampled periods costs one period less between
    # the command that ends the dwell and the arrival command
    ref_up_rows = float(np.sum(np.maximum(np.ceil(hops / P - 1e-9) - 1, 0)) * P)
    lift = 2 * len(strokes) * arm.pen.lift_s
    bound = ref_down + ref_up + lift
    return {"strokes": len(strokes), "down": ours_down, "ref_down": ref_down,
            "ref_cap": ref_cap,
            "up": ours_up, "ref_up": ref_up, "ref_up_rows": ref_up_rows,
            "dwell": dwell, "lift": lift,
            "total": st.duration, "bound": bound, "plan_s": t_plan, "ref_s": t_ref}


def cases():
    """(label, arm, picture, style) of the benchmark plans."""
    from skimage import data

    from inkreach.arms import load_arm
    from inkreach.cli.demo import emblem, still_life

    life = np.asarray(still_life(960, 720))
    camera = data.camera()
    pics = {"still life": life, "camera": camera, "emblem": np.asarray(emblem(800))}
    out = []
    for arm_name in ("default", "serial"):
        arm = load_arm(arm_name)
        for pic, style in (("still life", "outline"), ("camera", "outline"),
                           ("emblem", "centerline"), ("still life", "hatch")):
            out.append((f"{arm_name}: {pic} {style}", arm, pics[pic], style))
    return out


def section_motion(cfg=None, results=None):
    """Markdown section: per plan ratios, and where the remaining time goes."""
    from _stages import run_stages

    from inkreach.arms import workspace_map

    rows = []
    worst = {"down": 0.0, "up": 0.0, "total": 0.0}
    maps = {}
    for label, arm, img, style in cases():
        if arm.name not in maps:
            maps[arm.name] = workspace_map(arm)
        _, out = run_stages(img, style, arm=arm, wmap=maps[arm.name])
        r = out["route"]
        from inkreach.route import start_posture
        q0 = start_posture(arm, out["placement"])
        hull = out["placement"].hull
        f = plan_figures(r.strokes, arm, q0, hull if len(hull) >= 3 else None, None)
        rd = f["down"] / f["ref_down"] if f["ref_down"] > 0 else float("nan")
        rc = f["down"] / f["ref_cap"] if f["ref_cap"] > 0 else float("nan")
        worst["down_cap"] = max(worst.get("down_cap", 0.0), rc)
        ru = f["up"] / f["ref_up"] if f["ref_up"] > 0 else float("nan")
        rt = f["total"] / f["bound"]
        worst["down"] = max(worst["down"], rd)
        worst["up"] = max(worst["up"], f["up"] / max(f["ref_up_rows"], 1e-9))
        worst["total"] = max(worst["total"], rt)
        extra = f["total"] - f["bound"]
        parts = (f["down"] - f["ref_down"], f["up"] - f["ref_up"], f["dwell"] - f["lift"])
        share = " / ".join(f"{p:+.1f} s" for p in parts)
        rows.append([label, f["strokes"], f"{f['total']:.1f}", f"{f['bound']:.1f}",
                     f"{rd:.3f}", f"{rc:.3f}", f"{ru:.3f}", f"{f['up'] / max(f['ref_up_rows'], 1e-9):.3f}",
                     f"{rt:.3f}", share,
                     f"{f['plan_s']:.2f}", f"{f['ref_s']:.1f}"])
    if results is not None:
        results["motion"] = worst
    head = ["plan", "strokes", "stream s", "lower bound s", "pen-down / TOPP-RA",
            "pen-down / TOPP-RA with the chord cap",
            "pen-up / trapezoid bound", "pen-up / bound in whole periods", "whole / bound",
            "over the bound: pen-down / pen-up / dwells", "motion s", "toppra s"]
    lines = ["| " + " | ".join(head) + " |", "|" + "---|" * len(head)]
    lines += ["| " + " | ".join(str(c) for c in r) + " |" for r in rows]
    return ("Planned streams (20 ms period, tip speed 80 mm/s, chord tolerance 0.05 mm) "
            "against TOPP-RA (toppra 0.6.10, Pham & Pham 2018) on a cubic spline through the "
            "same subdivided joint path, same per-joint limits and tip limit, every stroke from "
            "rest to rest; pen-up against the slowest joint's trapezoid per hop; the bound "
            "adds the arm's lift time twice per stroke. A second TOPP-RA figure also holds "
            "the pen under the sampled-chord cap sqrt(8 chord_tol / curvature) / period along "
            "the spline's pen path (two rows one period apart may not cut a curve by more "
            "than the tolerance), which the planned rows must respect and plain TOPP-RA does "
            "not know; the plain ratio stays the target's. Targets: pen-down <= 1.05, "
            "pen-up <= 1.05, whole <= 1.08. Worst (pen-up against the bound in whole "
            f"periods): pen-down {worst['down']:.3f} (with the chord cap "
            f"{worst.get('down_cap', float('nan')):.3f}), pen-up {worst['up']:.3f}, whole "
            f"{worst['total']:.3f}.\n\n"
            + "\n".join(lines))


if __name__ == "__main__":
    import os
    import sys
    sys.path.insert(0, os.path.dirname(__file__))
    print(section_motion())
