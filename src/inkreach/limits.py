"""Ranges for every value that reaches the planner, and a budget on the work of one plan.

Two kinds of guard live here, both applied by :func:`inkreach.plan` before
the work they guard starts:

* **ranges** -- every planner option and every arm figure has a stated
  range (see :data:`OPTION_RANGES` and :data:`ARM_RANGES`, each with the
  reason for its bounds); a value outside it is refused with one line.
* **the work budget** -- a :class:`Budget` caps the rows of the joint stream,
  the pixel work of tracing and the dot rounds of stippling. The work a plan
  implies is estimated from lower bounds (the time no motor within its speed
  and acceleration limits can beat, the pixels a hatch lattice must visit)
  and a plan above the budget is refused with one line naming the value to
  change, long before it could take minutes or gigabytes.

The bounds are our own choices, sized so that every drawing a desk arm can
make fits with room to spare; the reason for each is given beside it.
"""

import math
import numbers
from dataclasses import dataclass, fields

import numpy as np

from .errors import InkreachError

__all__ = ["Budget", "BudgetError", "DEFAULT_BUDGET", "OPTION_RANGES", "ARM_RANGES",
           "check_plan_options", "check_arm", "check_style_options", "check_style_work",
           "check_rows", "check_dwell_rows", "check_pen_px",
           "estimate_seconds", "describe_number", "budget_from_text"]


class BudgetError(InkreachError):
    """A plan that would do more work than the budget allows.

    ``key`` names the budget figure (``"rows"``, ``"pixels"`` or
    ``"dot_rounds"``) so a front end can say how to raise it.
    """

    def __init__(self, message, key, needed):
        super().__init__(message)
        self.key, self.needed = key, int(needed)


@dataclass(frozen=True)
class Budget:
    """The most work one plan may take.

    Attributes
    ----------
    rows : int
        Rows of the joint stream (one per sample period). 300 000 rows are
        1 h 40 min of drawing at the default 20 ms period; the planner holds
        about 2 kB per row while it works (about 0.6 GB here) and times
        about 20 000 rows a second.
    pixels : int
        Pixel visits of tracing: the working picture's pixels, times the
        layers over the line spacing for hatching (12 million is about 8 s
        and under 1 GB; a 1200 px photo hatched with the defaults needs
        about 4 million).
    dot_rounds : int
        Dots times relaxation rounds for stippling (2 million is about 5 s;
        the defaults need at most 160 000).

    Examples
    --------
    >>> Budget().rows
    300000
    >>> Budget(rows=10).rows
    10
    """

    rows: int = 300_000
    pixels: int = 12_000_000
    dot_rounds: int = 2_000_000

    def __post_init__(self):
        for f in fields(self):
            v = getattr(self, f.name)
            if isinstance(v, bool) or not isinstance(v, numbers.Real) or not math.isfinite(v) \
                    or not 1 <= v <= 1e12:
                raise InkreachError(f"budget {f.name} must be a whole number from 1 to 1e12, "
                                    f"got {describe_number(v)}")
            object.__setattr__(self, f.name, int(v))


DEFAULT_BUDGET = Budget()


def budget_from_text(items):
    """A :class:`Budget` from ``NAME=VALUE`` texts (the command line's ``--budget``).

    Examples
    --------
    >>> budget_from_text(["rows=2000000"]).rows
    2000000
    """
    kw = {}
    names = [f.name for f in fields(Budget)]
    for item in items:
        name, sep, value = str(item).partition("=")
        name = name.strip().replace("-", "_")
        if not sep or name not in names:
            raise InkreachError(f"--budget {describe_text(item)} needs the form NAME=NUMBER "
                                f"with NAME one of {', '.join(names)}")
        try:
            kw[name] = float(value)
        except ValueError:
            raise InkreachError(f"--budget {name} must be a number, got "
                                f"{describe_text(value)}") from None
    return Budget(**kw)


# ---------------------------------------------------------------------------
# wording

def describe_number(v):
    """A short echo of a value for a message: never hundreds of digits.

    Examples
    --------
    >>> describe_number(1e308), describe_number(0.05), describe_number(10**400)
    ('1e+308', '0.05', 'a number far too large')
    """
    if isinstance(v, bool) or not isinstance(v, numbers.Real):
        return describe_text(v)
    try:
        f = float(v)
    except OverflowError:
        return "a number far too large"
    if math.isnan(f):
        return "nan"
    return f"{f:.6g}"


def describe_text(v, limit=40):
    """``repr`` of a value, cut short."""
    s = repr(v)
    return s if len(s) <= limit else s[:limit - 3] + "..."


def _fmt_count(n):
    n = float(n)
    if n >= 1e12:
        return f"{n:.2g}"
    for size, word in ((1e9, "billion"), (1e6, "million")):
        if n >= size:
            return f"{n / size:.3g} {word}"
    return f"{int(round(n)):,}"


def _fmt_duration(s):
    s = float(s)
    if s < 120:
        return f"{s:.0f} s"
    if s < 2 * 3600:
        return f"{s / 60:.0f} min"
    if s < 2 * 86400:
        return f"{s / 3600:.1f} h"
    if s < 2 * 3.15e7:
        return f"{s / 86400:.0f} days"
    return "years"


# ---------------------------------------------------------------------------
# ranges of the planner's own options

@dataclass(frozen=True)
class _Range:
    lo: float
    hi: float
    unit: str
    reason: str
    integer: bool = False

    def text(self):
        return f"{self.lo:g} to {self.hi:g}{' ' + self.unit if self.unit else ''}"


#: Planner options with a numeric range: name -> range, unit and reason.
OPTION_RANGES = {
    "margin": _Range(0.0, 1000.0, "mm", "wider than a metre leaves no room on any desk arm"),
    "size": _Range(1.0, 5000.0, "mm", "a drawing under 1 mm is one blot; over 5 m fits no "
                                      "arm this tool plans for"),
    "chord_tol": _Range(0.001, 10.0, "mm", "finer than 1 um no motor can follow; coarser than "
                                           "10 mm straight lines visibly bend"),
    "period": _Range(0.001, 1.0, "s", "faster than 1 ms few controllers keep up; slower than "
                                      "1 s the stream cannot follow a stroke"),
    "tip_speed": _Range(0.01, 10_000.0, "mm/s", "slower than 0.01 mm/s a drawing takes days; "
                                                "faster than 10 m/s no pen draws"),
    "max_side": _Range(8, 8000, "px", "under 8 px there is nothing to trace; the pixel "
                                      "budget bounds the work above", integer=True),
    "max_pixels": _Range(64, 1_000_000_000, "pixels", "the largest picture read at all",
                         integer=True),
}
_PREFER = ("largest", "isotropic")
_SIGNALS = ("auto", "servo", "stepper", "both", "none")
_MAX_ROTATIONS = 36


def _number(name, v, rng):
    if isinstance(v, bool) or not isinstance(v, numbers.Real):
        if isinstance(v, str):
            try:
                v = float(v)
            except ValueError:
                raise InkreachError(f"option {name} must be a number ({rng.text()}), got "
                                    f"{describe_text(v)}") from None
        else:
            raise InkreachError(f"option {name} must be a number ({rng.text()}), got "
                                f"{describe_text(v)}")
    try:
        f = float(v)
    except OverflowError:
        f = math.inf
    if not math.isfinite(f) or not rng.lo <= f <= rng.hi:
        big = "far too large; " if math.isfinite(f) is False or f > rng.hi else ""
        raise InkreachError(f"option {name}={describe_number(v)} is {big or 'out of range; '}"
                            f"use {rng.text()} ({rng.reason})")
    if rng.integer:
        if f != int(f):
            raise InkreachError(f"option {name} must be a whole number ({rng.text()}), "
                                f"got {describe_number(v)}")
        return int(f)
    return f


def _boolean(name, v):
    if isinstance(v, (bool, np.bool_)):
        return bool(v)
    if isinstance(v, str) and v.strip().lower() in ("true", "false"):
        return v.strip().lower() == "true"
    raise InkreachError(f"option {name} must be true or false, got {describe_text(v)}")


def _choice(name, v, choices):
    if not isinstance(v, str) or v not in choices:
        raise InkreachError(f"option {name}={describe_text(v)} is not valid; use one of "
                            f"{', '.join(choices)}")
    return v


def _numbers(name, v, n=None, what="numbers"):
    if isinstance(v, str) and len(v) < 200:
        try:  # "0 60 148 105" or "0, 60, 148, 105"
            v = [float(x) for x in v.replace(",", " ").split()]
        except ValueError:
            v = [v]
    if isinstance(v, (str, bytes)) or not hasattr(v, "__len__"):
        v = [v]
    if n is not None and len(v) != n:
        raise InkreachError(f"option {name} must be {n} {what}, got {len(v)}")
    out = []
    for x in v:
        if isinstance(x, bool) or not isinstance(x, numbers.Real):
            raise InkreachError(f"option {name} must hold {what}, got {describe_text(x)}")
        try:
            f = float(x)
        except OverflowError:
            f = math.inf
        if not math.isfinite(f):
            raise InkreachError(f"option {name} holds {describe_number(x)}; give finite "
                                f"{what}")
        out.append(f)
    return out


def check_plan_options(place, motion, own, user_set=None):
    """Check the placement, motion and planner options; return cleaned copies.

    Parameters
    ----------
    place, motion, own : dict
        Options of :data:`inkreach.plan.PLACE_OPTIONS`,
        :data:`inkreach.plan.MOTION_OPTIONS` and the planner's own, with
        their defaults filled in.
    user_set : collection of str, optional
        Names the caller gave; a margin given without a paper is refused
        (it would do nothing).

    Returns
    -------
    tuple of dict

    Raises
    ------
    InkreachError
        One line naming the option, its range and why.

    Examples
    --------
    >>> p, m, o = check_plan_options({"margin": 5, "size": None, "prefer": "largest",
    ...                               "paper": None, "rotations": 0.2},
    ...                              {"chord_tol": 0.05, "period": 0.02, "tip_speed": None},
    ...                              {"joint_order": True})
    >>> p["rotations"], m["period"]
    ([0.2], 0.02)
    >>> check_plan_options({}, {"period": 1e308}, {})
    Traceback (most recent call last):
    ...
    inkreach.errors.InkreachError: option period=1e+308 is far too large; use 0.001 to 1 s \
(faster than 1 ms few controllers keep up; slower than 1 s the stream cannot follow a stroke)
    """
    place, motion, own = dict(place), dict(motion), dict(own)
    for table in (place, motion, own):
        for k, v in table.items():
            if k in OPTION_RANGES and v is not None:
                table[k] = _number(k, v, OPTION_RANGES[k])
    if "margin" in place and place["margin"] is None:
        place["margin"] = 0.0
    if place.get("prefer") is not None:
        place["prefer"] = _choice("prefer", place["prefer"], _PREFER)
    if place.get("rotations") is not None:
        rot = _numbers("rotations", place["rotations"], what="angles in radians")
        if not 1 <= len(rot) <= _MAX_ROTATIONS or max(abs(r) for r in rot) > 2 * math.pi:
            raise InkreachError(f"option rotations must be 1 to {_MAX_ROTATIONS} angles in "
                                "radians between -6.28 and 6.28 (one turn either way), e.g. "
                                "rotations=0")
        place["rotations"] = rot
    if place.get("paper") is not None:
        x0, y0, w, h = _numbers("paper", place["paper"], 4,
                                what="numbers (x y width height in mm)")
        if max(abs(x0), abs(y0), w, h) > 100_000 or w <= 0 or h <= 0:
            raise InkreachError("option paper needs a width and height above zero and values "
                                "within 100 m of the motors, in mm: x y width height")
        place["paper"] = (x0, y0, w, h)
    if user_set is not None and "margin" in user_set and place.get("paper") is None \
            and place.get("margin"):
        raise InkreachError("option margin is kept inside a paper rectangle; give paper too "
                            "(x y width height in mm), or leave margin out")
    for k in ("joint_order", "fidelity"):
        if k in own:
            own[k] = _boolean(k, own[k])
    if own.get("signals") is not None:
        own["signals"] = _choice("signals", own["signals"], _SIGNALS)
    b = own.get("budget")
    if b is not None and not isinstance(b, Budget):
        if not isinstance(b, dict):
            raise InkreachError("option budget must be a Budget or a table of rows, pixels "
                                "and dot_rounds")
        own["budget"] = Budget(**b)
    if own.get("start") is not None:
        a, b = _numbers("start", own["start"], 2, what="angles in degrees")
        if max(abs(a), abs(b)) > 720:
            raise InkreachError("option start must be two joint angles in degrees within "
                                "-720 to 720")
        own["start"] = [a, b]
    return place, motion, own


# ---------------------------------------------------------------------------
# the arm

#: Arm figures with a range: attribute -> (range, arm-file key).
ARM_RANGES = {
    "length": _Range(0.1, 10_000.0, "mm", "links under 0.1 mm or over 10 m are not a "
                                          "drawing arm (and defeat the workspace map)"),
    "position": _Range(-10_000.0, 10_000.0, "mm", "motors more than 10 m from the origin"),
    "max_speed_deg_s": _Range(0.01, 100_000.0, "deg/s", "slower than 0.01 deg/s a drawing "
                                                        "takes weeks"),
    "max_accel_deg_s2": _Range(0.01, 10_000_000.0, "deg/s^2", "below 0.01 deg/s^2 a single "
                                                              "move takes hours"),
    "lift_s": _Range(0.0, 10.0, "s", "a pen lift longer than 10 s is a pause, not a lift"),
    "width_mm": _Range(0.01, 20.0, "mm", "finer than 10 um or wider than 20 mm is not a pen"),
}


def _arm_value(where, v, rng):
    f = float(v)
    if not math.isfinite(f) or not rng.lo <= f <= rng.hi:
        size = "far too large" if (not math.isfinite(f) or f > rng.hi) else "too small"
        raise InkreachError(f"arm file: {where} = {describe_number(v)} is {size}; use "
                            f"{rng.text()} ({rng.reason})")


def check_arm(arm):
    """Refuse an arm whose figures lie outside :data:`ARM_RANGES`.

    Examples
    --------
    >>> from inkreach.arms import default_arm
    >>> check_arm(default_arm())
    """
    lim = arm.limits
    _arm_value("[limits] max_speed_deg_s", math.degrees(lim.max_speed),
               ARM_RANGES["max_speed_deg_s"])
    _arm_value("[limits] max_accel_deg_s2", math.degrees(lim.max_accel),
               ARM_RANGES["max_accel_deg_s2"])
    _arm_value("[pen] lift_s", arm.pen.lift_s, ARM_RANGES["lift_s"])
    _arm_value("[pen] width_mm", arm.pen.width_mm, ARM_RANGES["width_mm"])
    if arm.kind == "five-bar":
        lengths = ("left_upper", "right_upper", "left_lower", "right_lower")
        points = ("left_motor", "right_motor")
        if arm.pen_extension:
            _arm_value("[geometry] pen_extension", arm.pen_extension, ARM_RANGES["length"])
    else:
        lengths, points = ("upper", "lower"), ("shoulder",)
    for k in lengths:
        _arm_value(f"[geometry] {k}", getattr(arm, k), ARM_RANGES["length"])
    for k in points:
        for c in np.ravel(getattr(arm, k)):
            _arm_value(f"[geometry] {k}", c, ARM_RANGES["position"])


# ---------------------------------------------------------------------------
# work estimates

def check_style_work(style, options, pixels, pen_px, budget=DEFAULT_BUDGET, user=()):
    """Refuse tracing work above the budget, before it starts.

    Parameters
    ----------
    style : str
    options : dict
        The style options as given.
    pixels : int
        Pixels of the working picture (after downscaling to ``max_side``).
    pen_px : float
        Pen width in working pixels.
    budget : Budget
    user : collection of str
        Names the user set (a message names only those, or says what else to
        change).

    Raises
    ------
    BudgetError

    Examples
    --------
    >>> check_style_work("hatch", {"spacing": 0.05}, 1200 * 1200, 2.0)
    Traceback (most recent call last):
    ...
    inkreach.limits.BudgetError: hatch spacing=0.05 would need about 86.4 million pixel \
visits, more than the budget of 12 million; use spacing=0.36 or more
    """
    if pixels > budget.pixels:
        raise BudgetError(f"the working picture of {_fmt_count(pixels)} pixels is more than "
                          f"the budget of {_fmt_count(budget.pixels)}; use a smaller "
                          f"max_side", "pixels", pixels)
    if style == "hatch":
        from .trace._options import OPTIONS
        layers = int(options.get("layers") or OPTIONS["hatch"]["layers"][0])
        spacing = options.get("spacing")
        gap = float(spacing) if spacing is not None else float(pen_px)
        gap = max(gap, 1e-12)
        work = pixels * layers / min(gap, 1.0)
        if work > budget.pixels:
            need = pixels * layers / budget.pixels
            if spacing is not None:
                fix = f"use spacing={_round_up(need)} or more"
                head = f"hatch spacing={describe_number(spacing)}"
            else:
                fix = "use a wider [pen] width_mm or a smaller max_side"
                head = "hatching this thin a pen"
            if "layers" in user and layers > 1:
                fix += " or fewer layers"
            raise BudgetError(f"{head} would need about {_fmt_count(work)} pixel visits, more "
                              f"than the budget of {_fmt_count(budget.pixels)}; {fix}",
                              "pixels", work)
    if style == "stipple":
        _check_dots(options, budget)


def _round_up(x):
    """A short number not below ``x`` (one or two significant figures)."""
    if x <= 0:
        return "0"
    e = math.floor(math.log10(x))
    m = math.ceil(x / 10 ** e * 10) / 10
    v = m * 10 ** e
    return f"{v:.2g}" if v < 1e4 else f"{int(math.ceil(v))}"


def _move_time(dq, vmax, amax):
    """Shortest rest-to-rest time to cover joint distances ``dq`` (per joint).

    A joint that starts and ends at rest with ``|accel| <= a`` covers at most
    ``a T^2 / 4`` in time T, and at most ``v T`` at speed ``v``: so
    ``T >= max(d / v, 2 sqrt(d / a))`` (bang-bang bound, K. M. Lynch and
    F. C. Park, *Modern Robotics*, 2017, sec. 9.2).
    """
    dq = np.abs(np.nan_to_num(np.asarray(dq, float)))
    t = np.maximum(dq / vmax, 2.0 * np.sqrt(dq / amax))
    return t.max(axis=-1) if t.ndim else t


def estimate_seconds(strokes, arm, start_q, period, tip_speed=None, ordered=True):
    """A lower bound on the drawing time, split into its parts.

    Parameters
    ----------
    strokes : list of ndarray
        Polylines in arm mm.
    arm : FiveBar or SerialArm
    start_q : array_like, shape (2,)
        Rest posture (radians).
    period : float
    tip_speed : float, optional
    ordered : bool
        When True the strokes are in drawing order and the pen-up moves
        between them are counted too.

    Returns
    -------
    dict
        ``"dwell"``, ``"joints"``, ``"tip"`` and ``"pen_up"`` seconds, and
        ``"total"``.
    """
    n = len(strokes)
    vmax, amax = float(arm.limits.max_speed), float(arm.limits.max_accel)
    n_dwell = max(1, int(math.ceil(arm.pen.lift_s / period - 1e-9)))
    dwell = 2.0 * n * n_dwell * period
    if n == 0:
        return {"dwell": 0.0, "joints": 0.0, "tip": 0.0, "pen_up": 0.0, "total": 0.0}
    pts = np.concatenate([np.asarray(s, float).reshape(-1, 2) for s in strokes])
    lens = np.array([len(np.asarray(s).reshape(-1, 2)) for s in strokes])
    q = np.asarray(arm.ik(pts), float)
    steps = np.abs(np.diff(q, axis=0))
    xy = np.hypot(*np.diff(pts, axis=0).T)
    # steps that jump from one stroke to the next are not drawn
    last = np.cumsum(lens)[:-1] - 1
    keep = np.ones(len(steps), bool)
    keep[last] = False
    steps[~keep] = 0.0
    xy[~keep] = 0.0
    starts = np.concatenate([[0], np.cumsum(lens)[:-1]])
    seg_start = np.minimum(starts, max(len(steps) - 1, 0))
    if len(steps):
        tv = np.add.reduceat(np.nan_to_num(steps), seg_start, axis=0)
        mm = np.add.reduceat(xy, seg_start)
        single = lens < 2
        tv[single] = 0.0
        mm[single] = 0.0
    else:
        tv, mm = np.zeros((n, 2)), np.zeros(n)
    joints = float(np.sum(_move_time(tv, vmax, amax)))
    tip = float(mm.sum() / tip_speed) if tip_speed else 0.0
    pen_up = 0.0
    if ordered:
        ends = q[np.cumsum(lens) - 1]
        begins = q[starts]
        sq = np.asarray(start_q, float).reshape(1, 2)
        hops = np.concatenate([begins[:1] - sq, begins[1:] - ends[:-1], sq - ends[-1:]])
        pen_up = float(np.sum(_move_time(hops, vmax, amax)))
    total = dwell + max(joints, tip) + pen_up
    return {"dwell": dwell, "joints": joints, "tip": tip, "pen_up": pen_up, "total": total}


def check_rows(strokes, arm, start_q, period, tip_speed=None, budget=DEFAULT_BUDGET,
               ordered=True, user=()):
    """Refuse a stream that would hold more rows than the budget, before timing it.

    The estimate is a lower bound (:func:`estimate_seconds`), so a plan
    within the budget is never refused.

    Raises
    ------
    BudgetError
        Naming the value whose share of the time is largest.
    """
    est = estimate_seconds(strokes, arm, start_q, period, tip_speed, ordered=ordered)
    rows = est["total"] / period
    if rows <= budget.rows:
        return est
    share = {"[pen] lift_s in the arm file": est["dwell"],
             "motion": max(est["joints"], est["tip"]) + est["pen_up"]}
    lead = max(share, key=share.get)
    if lead == "motion":
        if tip_speed and est["tip"] >= est["joints"] and "tip_speed" in user:
            fix = "use a higher tip_speed"
        else:
            fix = ("raise [limits] max_speed_deg_s or max_accel_deg_s2 in the arm file "
                   "(if the motors allow it)")
    else:
        fix = "use a shorter [pen] lift_s in the arm file, or a style with fewer strokes"
    if "period" in user:
        fix += ", or a longer period"
    raise BudgetError(f"this drawing would take at least {_fmt_duration(est['total'])} "
                      f"({_fmt_count(rows)} rows at period={period:g} s), more than the "
                      f"budget of {_fmt_count(budget.rows)} rows; {fix}", "rows", rows)


def _clean_style_options(style, options):
    from .trace import style_options
    from .trace._options import check

    style_options(style)  # refuses an unknown style
    return check(style, options)


def check_style_options(style, options, budget=DEFAULT_BUDGET, user=()):
    """Check style options against their ranges and the dot-round budget, before loading.

    Raises
    ------
    InkreachError, BudgetError
    """
    opts = _clean_style_options(style, options)
    if style == "stipple":
        _check_dots(opts, budget)
    return opts


def _check_dots(opts, budget):
    dots = opts.get("dots")
    iters = opts.get("iterations", 20)
    n = int(dots) if dots is not None else 8000
    rounds = n * max(int(iters), 1)
    if rounds > budget.dot_rounds:
        if dots is not None and "iterations" in opts:
            fix = "use fewer dots or fewer iterations"
        elif dots is not None:
            fix = f"use dots={budget.dot_rounds // max(int(iters), 1)} or fewer"
        else:
            fix = f"use iterations={budget.dot_rounds // n} or fewer"
        raise BudgetError(f"stipple with {n} dots and {int(iters)} iterations would need "
                          f"about {_fmt_count(rounds)} dot rounds, more than the budget "
                          f"of {_fmt_count(budget.dot_rounds)}; {fix}", "dot_rounds", rounds)


def check_dwell_rows(style, options, arm, period, budget=DEFAULT_BUDGET, user=()):
    """Refuse, before tracing, a plan whose pen lifts alone exceed the row budget.

    Every stroke is lowered and lifted for ``[pen] lift_s`` each (at least
    one row each); stippling in ``dots`` mode makes one stroke per dot.
    """
    n_dwell = max(1, int(math.ceil(arm.pen.lift_s / period - 1e-9)))
    n = 1
    if style == "stipple" and options.get("mode", "dots") == "dots" \
            and options.get("dots") is not None:
        n = int(options["dots"])
    rows = 2 * n * n_dwell
    if rows > budget.rows:
        what = f"{n} dots" if n > 1 else "one stroke"
        fix = "use fewer dots, mode=line or " if n > 1 else "use "
        fix += "a shorter [pen] lift_s in the arm file"
        if "period" in user:
            fix += " or a longer period"
        raise BudgetError(f"lifting and lowering the pen for {what} would take "
                          f"{_fmt_count(rows)} rows at period={period:g} s, more than the "
                          f"budget of {_fmt_count(budget.rows)} rows; {fix}", "rows", rows)


def check_pen_px(pen_px, arm, image_size, working_shape=None, limit=100.0):
    """Refuse a picture on which the pen would be wider than ``limit`` working pixels.

    Said in the user's terms: the picture, its size on the arm and the pen.
    """
    if working_shape is not None and min(working_shape[:2]) < 2:
        w, h = image_size
        raise InkreachError(f"the {w}x{h} picture is too thin to trace at max_side="
                            f"{max(working_shape[:2])}; use a picture with more room in both "
                            "directions or a larger max_side")
    if not (math.isfinite(pen_px) and 0 < pen_px <= limit):
        w, h = image_size
        raise InkreachError(f"the {w}x{h} picture is too small or too thin to draw with a "
                            f"{arm.pen.width_mm:g} mm pen at the size it can have on this "
                            "arm; use a picture with more room in both directions, a larger "
                            "size or a finer [pen] width_mm")


_RETRY = ("; plan the motion again inside the usable region", "; plan the motion again",
          "; plan again")


def in_user_terms(message, period, chord_tol):
    """Replace advice a user cannot act on ("plan the motion again") by what to change.

    Examples
    --------
    >>> in_user_terms("row 9 is too fast; plan the motion again", 0.02, 0.05)
    'row 9 is too fast; use a shorter period (now 0.02 s) or a larger chord_tol (now 0.05 mm)'
    """
    for tail in _RETRY:
        if message.endswith(tail):
            return (message[:-len(tail)] + f"; use a shorter period (now {period:g} s) or a "
                    f"larger chord_tol (now {chord_tol:g} mm)")
    return message
