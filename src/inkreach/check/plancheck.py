"""Read a saved plan folder and check every promise of its stream.

Written apart from the planner: its own forward kinematics and numerical
Jacobian (:mod:`._kinematics`), its own finite differences, its own stroke
distances; nothing from :mod:`inkreach.motion` or the arms' kinematics.
The only slack allowed is what the printed decimals of the files explain.
"""

import json
import math
import os
import tomllib
from dataclasses import dataclass, field

import numpy as np

from ..errors import InkreachError
from . import _kinematics as kin

__all__ = ["PlanCheck", "check_plan", "PROMISES"]

_HEADER = "t_s,theta1_deg,theta2_deg,pen,x_mm,y_mm"
# Float arithmetic of the kinematics themselves (sums of ~1e2 mm terms, a few
# hundred ulps), mm; far below any printed digit.
_FLOAT_MM = 1e-9
# Relative slack for products and quotients of float limits (a few ulps).
_REL = 1e-12

#: The promises, in the order they are checked.
PROMISES = ("arm", "period", "pen", "joint limits", "kinematics", "conditioning",
            "speed", "acceleration", "tip speed", "strokes")


@dataclass(frozen=True)
class PlanCheck:
    """The outcome of :func:`check_plan`.

    Attributes
    ----------
    ok : bool
        True when every promise holds.
    problem : str or None
        One line naming the first broken promise (row and values), or None.
    figures : dict
        What was measured, per promise (worst value, limit, slack).
    arm : object
        The arm the plan was checked against.
    broken : tuple of str
        Every broken promise (names from :data:`PROMISES`), in check order.
    """

    ok: bool
    problem: str = None
    figures: dict = field(default_factory=dict)
    arm: object = None
    broken: tuple = ()


def _half_unit(x):
    """Half a unit in the last printed decimal place of the numbers ``x``.

    The smallest ``d`` (0..12) with every value a whole multiple of 1e-d
    gives the slack ``0.5e-d`` that rounding to ``d`` decimals can hide.
    """
    x = np.asarray(x, dtype=float).ravel()
    x = x[np.isfinite(x)]
    for d in range(13):
        if np.all(np.abs(np.round(x, d) - x) <= 1e-12 * np.maximum(1.0, np.abs(x))):
            return 0.5 * 10.0 ** -d
    return 0.0


def _read(folder):
    folder = os.fspath(folder)
    if not os.path.isdir(folder):
        raise InkreachError(f"{folder} is not a folder; give the folder inkreach plan wrote")
    try:
        with open(os.path.join(folder, "plan.json"), encoding="utf-8") as f:
            meta = json.load(f)
        with open(os.path.join(folder, "joints.csv"), encoding="utf-8") as f:
            header = f.readline().strip()
            if header != _HEADER:
                raise ValueError(f"joints.csv starts with {header[:60]!r}, not {_HEADER!r}")
            body = f.read()
        rows = np.loadtxt(body.splitlines(), delimiter=",", ndmin=2)
        places = _printed_places(body)
    except (OSError, ValueError, UnicodeDecodeError) as e:
        msg = str(e).splitlines()[0] if str(e) else type(e).__name__
        raise InkreachError(f"{folder} is not a readable plan folder ({msg}); "
                            "plan it again with inkreach plan") from None
    if not isinstance(meta, dict) or not isinstance(meta.get("arm"), dict):
        raise InkreachError(f"{folder}/plan.json holds no arm table; plan it again with "
                            "inkreach plan")
    if rows.shape[1] != 6 or len(rows) == 0:
        raise InkreachError(f"{folder}/joints.csv has {rows.shape[1]} columns and "
                            f"{len(rows)} rows; plan it again with inkreach plan")
    try:
        strokes = [np.asarray(s, float).reshape(-1, 2) for s in meta.get("strokes", [])]
    except (TypeError, ValueError):
        raise InkreachError(f"{folder}/plan.json has strokes that are not lists of "
                            "(x, y) points; plan it again with inkreach plan") from None
    return meta, rows, strokes, places


def _printed_places(body, sample=200):
    """Decimal places printed in each column (the most over the first rows)."""
    places = np.zeros(6, int)
    for line in body.splitlines()[:sample]:
        for j, cell in enumerate(line.split(",")[:6]):
            cell = cell.strip().lower()
            if "e" in cell:          # exponent notation: no fixed last place
                places[j] = max(places[j], 15)
            elif "." in cell:
                places[j] = max(places[j], len(cell) - cell.index(".") - 1)
    return places


def _arm_dict(arm):
    from ..arms import arm_to_toml
    d = tomllib.loads(arm_to_toml(arm))
    d.pop("name", None)
    return d


def _first_difference(a, b, path=""):
    """Dotted key where two arm tables differ, with both values, or None."""
    if isinstance(a, dict) and isinstance(b, dict):
        for k in sorted(set(a) | set(b)):
            if k not in a or k not in b:
                return f"{path}{k}", a.get(k), b.get(k)
            d = _first_difference(a[k], b[k], f"{path}{k}.")
            if d:
                return d
        return None
    if isinstance(a, (list, tuple)) and isinstance(b, (list, tuple)):
        if len(a) != len(b):
            return path.rstrip("."), a, b
        for x, y in zip(a, b):
            if _first_difference(x, y, path):
                return path.rstrip("."), a, b
        return None
    if isinstance(a, (int, float)) and isinstance(b, (int, float)) \
            and not isinstance(a, bool) and not isinstance(b, bool):
        return None if math.isclose(a, b, rel_tol=_REL, abs_tol=0.0) else (path.rstrip("."), a, b)
    return None if a == b else (path.rstrip("."), a, b)


def _at(k, t):
    return f"row {k + 2} of joints.csv (t = {t[k]:.4f} s)"


def check_plan(folder, arm=None):
    """Check the plan saved in ``folder`` against ``arm`` (default: the arm in plan.json).

    Every promise of the stream is tested on the saved files, in the order
    of :data:`PROMISES`: the recorded arm equals the given one; the rows are
    at a fixed period from t = 0; the pen column is 0 or 1; both joints stay
    inside their limits; the linkage closes at every row and ``x_mm, y_mm``
    are its forward kinematics; the conditioning is at or above the floor;
    finite-difference joint speeds and accelerations and the pen-down tip
    speed are within the limits; and the n-th run of pen-down rows draws the
    n-th stroke from its start to its end (every row and every joint-space
    midpoint within ``chord_tol`` of it, every stroke vertex within
    ``chord_tol`` of the drawn path), the pen lifting exactly at its end.
    The only slack is what the printed decimals explain (half a unit in the
    last place of each column, carried through the kinematics).

    Parameters
    ----------
    folder : str or os.PathLike
        A folder written by ``inkreach plan``.
    arm : str, os.PathLike, Arm or None
        The arm that will run the plan (file, built-in name or arm object);
        None takes the arm recorded in plan.json.

    Returns
    -------
    PlanCheck

    Raises
    ------
    InkreachError
        When the folder cannot be read as a plan at all (missing or
        unreadable files, a bad arm table).

    References
    ----------
    .. [1] J. J. Craig, *Introduction to Robotics: Mechanics and Control*,
       3rd ed., Pearson, 2005, chapter 7 (joint speed and acceleration of
       sampled trajectories).
    .. [2] J. K. Salisbury and J. J. Craig, "Articulated hands: force
       control and kinematic issues", Int. J. Robotics Research 1(1), 1982.
    """
    from ..arms import parse_arm
    from ..plan import resolve_arm

    meta, rows, strokes, places = _read(folder)
    recorded = parse_arm(meta["arm"], source=f"{os.fspath(folder)}/plan.json")
    given = recorded if arm is None else resolve_arm(arm)
    A, R = _arm_dict(given), _arm_dict(recorded)
    lim = A["limits"]
    opts = meta.get("options") or {}
    stats = meta.get("stats") or {}

    t, qd, pen, xy = rows[:, 0], rows[:, 1:3], rows[:, 3], rows[:, 4:6]
    N = len(t)
    # Half a unit in the last printed place of each column.
    h_t = 0.5 * 10.0 ** -float(places[0])
    h_q = 0.5 * 10.0 ** -float(places[1:3].min())
    h_xy = 0.5 * 10.0 ** -float(places[4:6].min())
    h_s = _half_unit(np.concatenate(strokes)) if strokes else 0.0
    hq = math.radians(h_q)
    q = np.radians(qd)

    problems = {}
    fig = {"rows": N}

    def fail(name, text):
        problems.setdefault(name, f"{name}: {text}")

    # 1. The arm.
    d = _first_difference(R, A)
    fig["arm"] = "recorded arm = given arm" if d is None else f"differs at {d[0]}"
    if d is not None:
        fail("arm", f"plan.json records {d[0]} = {d[1]!r} but the given arm has {d[2]!r}; "
                    "plan again for this arm")

    # 2. Fixed sample period from t = 0.
    T = stats.get("period_s", opts.get("period"))
    if not isinstance(T, (int, float)) or not T > 0:
        T = float(t[1] - t[0]) if N > 1 else 0.0
        fig["period"] = f"{T:g} s (not recorded; taken from the first two rows)"
    else:
        T = float(T)
        fig["period"] = f"{T:g} s"
    dt = np.abs(t - np.arange(N) * T)
    tol_t = h_t + _REL * np.abs(t)
    if not T > 0:
        fail("period", f"the sample period is {T!r} s; it must be greater than zero")
        T = 1.0
    elif (bad := np.flatnonzero(~(dt <= tol_t))).size:
        k = int(bad[0])
        fail("period", f"{_at(k, t)}: t = {t[k]:.6f} s but row {k} of a fixed {T:g} s period "
                       f"is at {k * T:.6f} s (slack {h_t:g} s from the printed decimals)")
    fig["period"] += f", worst time error {dt.max():.2g} s (slack {h_t:g} s)"

    # 3. Pen values.
    if (bad := np.flatnonzero(~np.isin(pen, (0.0, 1.0)))).size:
        k = int(bad[0])
        fail("pen", f"{_at(k, t)}: pen = {pen[k]:g}; it must be 0 (lifted) or 1 (down)")
    down = pen == 1.0

    # 4. Joint limits, each joint on its own.
    names = ("theta1", "theta2")
    for j in range(2):
        lo, hi = lim[f"{names[j]}_deg"]
        below = qd[:, j] < lo - h_q
        above = qd[:, j] > hi + h_q
        fig[f"{names[j]} range"] = (f"[{qd[:, j].min():.6f}, {qd[:, j].max():.6f}] deg "
                                    f"(limits [{lo:g}, {hi:g}], slack {h_q:g} deg)")
        bad = np.flatnonzero(below | above | ~np.isfinite(qd[:, j]))
        if bad.size:
            k = int(bad[0])
            side = f"below the lower limit {lo:g}" if qd[k, j] < lo else \
                f"above the upper limit {hi:g}"
            fail("joint limits", f"{_at(k, t)}: {names[j]} = {qd[k, j]:.6f} deg is {side} deg "
                                 f"(slack {h_q:g} deg from the printed decimals)")

    # 5. The linkage closes and x, y is its forward kinematics.
    x = kin.fk(A, q)
    c, smax = kin.conditioning(A, q)
    # Rounding each angle by hq moves the pen by at most sigma_max * hq * sqrt(2);
    # x_mm, y_mm each by h_xy.
    fk_slack = smax * hq * math.sqrt(2) + _FLOAT_MM
    tol_xy = fk_slack + h_xy * math.sqrt(2)
    with np.errstate(invalid="ignore"):
        err = np.hypot(*(x - xy).T)
    closes = np.isfinite(x).all(axis=1)
    if (bad := np.flatnonzero(~closes)).size:
        k = int(bad[0])
        fail("kinematics", f"{_at(k, t)}: the linkage cannot close at ({qd[k, 0]:.6f}, "
                           f"{qd[k, 1]:.6f}) deg")
    elif (bad := np.flatnonzero(~(err <= tol_xy))).size:
        k = int(bad[0])
        fail("kinematics", f"{_at(k, t)}: x, y = ({xy[k, 0]:.4f}, {xy[k, 1]:.4f}) mm but the "
                           f"angles put the pen at ({x[k, 0]:.4f}, {x[k, 1]:.4f}) mm, "
                           f"{err[k]:.2g} mm off (slack {tol_xy[k]:.2g} mm)")
    fig["x, y against FK"] = (f"worst {np.nanmax(err) if closes.any() else float('nan'):.2g} mm"
                              f" (slack {np.nanmax(tol_xy) if closes.any() else 0:.2g} mm)")

    # 6. Conditioning. Rounding the angles by hq changes it by at most
    # |grad c| * hq * sqrt(2); the gradient is taken by differences of c.
    floor = float(lim["min_conditioning"])
    dc = np.zeros(N)
    step = 1e-5
    for j in range(2):          # two joints, not a loop over rows
        e = np.zeros(2)
        e[j] = step
        cp, _ = kin.conditioning(A, q + e)
        cm, _ = kin.conditioning(A, q - e)
        dc += np.abs(cp - cm) / (2 * step)
    c_slack = dc * hq * math.sqrt(2) + 1e-9   # 1e-9: SVD of ~1e2 entries, several ulps
    if (bad := np.flatnonzero(closes & ~(c >= floor - c_slack))).size:
        k = int(bad[0])
        fail("conditioning", f"{_at(k, t)}: conditioning {c[k]:.6f} is below the floor "
                             f"{floor:g} (slack {c_slack[k]:.2g})")
    fig["conditioning"] = f"lowest {np.nanmin(c):.6f} (floor {floor:g})"

    # 7, 8. Joint speed and acceleration by finite differences of the rows.
    vmax, amax = float(lim["max_speed_deg_s"]), float(lim["max_accel_deg_s2"])
    v = np.abs(np.diff(qd, axis=0)) / T if N > 1 else np.zeros((0, 2))
    a = np.abs(np.diff(qd, n=2, axis=0)) / T ** 2 if N > 2 else np.zeros((0, 2))
    v_slack = 2 * h_q / T + vmax * _REL       # two rounded angles per difference
    a_slack = 4 * h_q / T ** 2 + amax * _REL  # weights 1, -2, 1
    for name, arr, limit, slack, unit, off in (
            ("speed", v, vmax, v_slack, "deg/s", 1), ("acceleration", a, amax, a_slack,
                                                     "deg/s^2", 1)):
        if arr.size:
            fig[name] = (f"worst theta1 {arr[:, 0].max():.3f}, theta2 {arr[:, 1].max():.3f} "
                         f"{unit} (limit {limit:g}, slack {slack:.2g})")
        for j in range(2):
            bad = np.flatnonzero(~(arr[:, j] <= limit + slack)) if arr.size else []
            if len(bad):
                k = int(bad[0])
                fail(name, f"{_at(k + off, t)}: {names[j]} {name} {arr[k, j]:.4f} {unit} is "
                           f"above the limit {limit:g} {unit} (slack {slack:.2g})")

    # Pen-down runs: the n-th run draws the n-th stroke.
    starts = np.flatnonzero(down & ~np.concatenate([[False], down[:-1]]))
    ends = np.flatnonzero(down & ~np.concatenate([down[1:], [False]]))
    run = np.cumsum(np.isin(np.arange(N), starts)) - 1
    pair = np.flatnonzero(down[:-1] & down[1:])        # rows k, k+1 both down, same run

    # 9. Tip speed while drawing.
    tip = opts.get("tip_speed")
    chord = np.hypot(*(x[pair + 1] - x[pair]).T) / T if pair.size else np.zeros(0)
    if isinstance(tip, (int, float)) and not isinstance(tip, bool):
        tip = float(tip)
        tip_slack = (fk_slack[pair] + fk_slack[pair + 1]) / T + tip * _REL
        if (bad := np.flatnonzero(~(chord <= tip + tip_slack))).size:
            k = int(pair[bad[0]])
            fail("tip speed", f"{_at(k + 1, t)}: the pen moves at {chord[bad[0]]:.4f} mm/s "
                              f"while drawing, above tip_speed {tip:g} mm/s "
                              f"(slack {tip_slack[bad[0]]:.2g})")
        fig["tip speed"] = (f"worst {chord.max() if chord.size else 0:.3f} mm/s "
                            f"(limit {tip:g})")
    else:
        fig["tip speed"] = "not checked: plan.json records no tip_speed"

    # 10. Strokes: count and order, on the stroke, whole, exact ends.
    _check_strokes(strokes, opts, A, q, x, t, starts, ends, run, pair, fk_slack, h_s,
                   fig, fail)

    broken = tuple(p for p in PROMISES if p in problems)
    problem = problems[broken[0]] if broken else None
    return PlanCheck(ok=not broken, problem=problem, figures=fig, arm=given, broken=broken)


def _seg_dist(p, a, b):
    """Distance of points p (..., 2) to segments a-b (..., 2), broadcast."""
    ab = b - a
    L2 = np.einsum("...i,...i->...", ab, ab)
    with np.errstate(invalid="ignore", divide="ignore"):
        u = np.clip(np.einsum("...i,...i->...", p - a, ab) / L2, 0.0, 1.0)
    u = np.where(L2 > 0, u, 0.0)
    c = a + u[..., None] * ab
    return np.hypot(p[..., 0] - c[..., 0], p[..., 1] - c[..., 1])


def _polyline_dist(p, poly, chunk=1 << 20):
    """Exact distance of points p (M, 2) to a polyline (K, 2), in bounded chunks."""
    poly = np.asarray(poly, float)
    if len(poly) == 1:
        return np.hypot(*(p - poly[0]).T)
    a, b = poly[:-1], poly[1:]
    out = np.empty(len(p))
    step = max(1, chunk // len(a))
    for i in range(0, len(p), step):          # chunks of points bound the memory
        out[i:i + step] = _seg_dist(p[i:i + step, None, :], a[None], b[None]).min(axis=1)
    return out


def _check_strokes(strokes, opts, A, q, x, t, starts, ends, run, pair, fk_slack, h_s,
                   fig, fail):
    n = len(strokes)
    fig["strokes"] = f"{len(starts)} pen-down runs for {n} strokes"
    if len(starts) != n:
        k = int(starts[n]) if len(starts) > n else int(ends[-1]) if len(ends) else 0
        fail("strokes", f"{_at(k, t)}: the stream has {len(starts)} pen-down runs but "
                        f"plan.json has {n} strokes; each stroke must be drawn once, in order")
        return
    if n == 0:
        return
    tol = opts.get("chord_tol", 0.05)
    tol = float(tol) if isinstance(tol, (int, float)) else 0.05
    s_slack = h_s * math.sqrt(2)
    first = np.array([s[0] for s in strokes])
    last = np.array([s[-1] for s in strokes])
    e0 = np.hypot(*(x[starts] - first).T)
    e1 = np.hypot(*(x[ends] - last).T)
    ok0 = e0 <= fk_slack[starts] + s_slack
    ok1 = e1 <= fk_slack[ends] + s_slack
    xm = kin.fk(A, 0.5 * (q[pair] + q[pair + 1]))
    worst_off = worst_miss = 0.0
    for i, s in enumerate(strokes):          # one pass per stroke, vectorised inside
        k0, k1 = starts[i], ends[i]
        if not ok0[i]:
            fail("strokes", f"{_at(k0, t)}: the pen touches down {e0[i]:.4f} mm from the "
                            f"start of stroke {i} (slack {fk_slack[k0] + s_slack:.2g} mm)")
        rows = np.arange(k0, k1 + 1)
        sel = (pair >= k0) & (pair < k1)
        d_row = _polyline_dist(x[rows], s)
        d_mid = _polyline_dist(xm[sel], s) if sel.any() else np.zeros(0)
        lim_row = tol + fk_slack[rows] + s_slack
        if (bad := np.flatnonzero(~(d_row <= lim_row))).size:
            k = int(rows[bad[0]])
            fail("strokes", f"{_at(k, t)}: the pen is {d_row[bad[0]]:.4f} mm off stroke {i}, "
                            f"more than chord_tol {tol:g} mm (slack {lim_row[bad[0]] - tol:.2g})")
        if (bad := np.flatnonzero(~(d_mid <= tol + s_slack + 2 * fk_slack[pair[sel]]))).size:
            k = int(pair[sel][bad[0]])
            fail("strokes", f"{_at(k, t)}: the pen between this row and the next is "
                            f"{d_mid[bad[0]]:.4f} mm off stroke {i}, more than chord_tol "
                            f"{tol:g} mm")
        # The whole stroke is drawn: every vertex lies near the drawn path
        # (rows and joint-space midpoints in drawing order).
        path = np.empty((len(rows) + sel.sum(), 2))
        path[0::2] = x[rows]
        path[1::2] = xm[sel]
        d_v = _polyline_dist(np.asarray(s, float), path)
        lim_v = tol + s_slack + 2 * fk_slack[rows].max()
        if (bad := np.flatnonzero(~(d_v <= lim_v))).size:
            j = int(bad[0])
            fail("strokes", f"{_at(k0, t)}: point {j} of stroke {i} at ({s[j, 0]:.4f}, "
                            f"{s[j, 1]:.4f}) mm is {d_v[j]:.4f} mm from the drawn path, more "
                            f"than chord_tol {tol:g} mm; the stroke is not drawn whole")
        if not ok1[i]:
            fail("strokes", f"{_at(k1, t)}: the pen lifts {e1[i]:.4f} mm from the end of "
                            f"stroke {i} (slack {fk_slack[k1] + s_slack:.2g} mm)")
        worst_off = max(worst_off, float(d_row.max()), float(d_mid.max()) if d_mid.size else 0)
        worst_miss = max(worst_miss, float(d_v.max()))
    fig["strokes"] += (f"; worst distance from its stroke {worst_off:.4f} mm, worst stroke "
                       f"point from the drawn path {worst_miss:.4f} mm (chord_tol {tol:g}); "
                       f"worst start {e0.max():.2g} mm, end {e1.max():.2g} mm")
