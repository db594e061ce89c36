"""The whole job wired together: picture in, checked joint stream out."""

import os
from dataclasses import dataclass, field

import numpy as np

from .arms import Arm, default_arm, load_arm, parse_arm, workspace_map
from . import limits
from .errors import InkreachError

__all__ = ["Plan", "plan", "PLACE_OPTIONS", "MOTION_OPTIONS", "STAGES"]

#: The stages :func:`plan` reports to its ``progress`` callback, in order.
STAGES = ("arm", "load", "trace", "merge", "place", "route", "motion", "check", "fidelity")

#: Options of the placement stage, with their defaults.
PLACE_OPTIONS = {"paper": None, "margin": 5.0, "size": None, "prefer": "largest",
                 "rotations": None, "tilt": False}
#: Options of the motion stage, with their defaults.
# tip_speed: motion.plan.TIP_SPEED; corner_blend: rows may pass near a sharp
# vertex instead of on it, the chord staying within the tolerance
MOTION_OPTIONS = {"chord_tol": 0.05, "period": 0.02, "tip_speed": 80.0, "corner_blend": True}
#: Options of the planner itself.
PLAN_OPTIONS = {"max_side": 1200, "max_pixels": 40_000_000, "joint_order": True,
                "signals": "auto", "start": None, "fidelity": True, "budget": None}


@dataclass(frozen=True, eq=False)
class Plan:
    """A finished, checked drawing plan.

    Attributes
    ----------
    strokes : list of ndarray
        Polylines in arm mm, in drawing order and direction.
    stream : JointStream
        The checked joint-angle stream.
    stats : dict
        Figures: ``strokes``, ``pen_lifts``, ``pen_down_mm``, ``pen_up_mm``,
        ``estimated_s``, ``min_conditioning`` and more.
    placement : Placement
        Where the picture sits on the arm; ``placement.matrix`` is
        ``image_to_arm``.
    arm : Arm
    style : str
    options : dict
        Every option as used, for the record.
    signals : dict
        Motor signals by kind (``"servo"``, ``"stepper"``).
    report : StreamReport
        What the final safety check measured.
    reached_xy : ndarray, shape (N, 2)
        Pen positions the motors really reach, row by row, once the angles
        are rounded to whole steps or microseconds.
    """

    strokes: list
    stream: object
    stats: dict
    placement: object
    arm: Arm
    style: str
    options: dict
    signals: dict = field(default_factory=dict)
    report: object = None
    workspace: object = None
    image_size: tuple = None
    reached_xy: np.ndarray = None

    @property
    def image_to_arm(self):
        """2 x 3 affine taking an input pixel (column, row) to arm mm.

        For an SVG the input units are its user units after the viewBox
        (px at 96 per inch); for text alone, mm of the laid-out text.
        """
        return np.asarray(self.placement.matrix, dtype=float)

    def preview(self, size=900, view="ink"):
        """The preview picture (a Pillow image, so it shows in a notebook).

        ``view="ink"`` shows the drawing as the pen inks it; ``"order"``
        colours the strokes by drawing order, with the pen-up travel.
        """
        from .export import preview_png
        return preview_png(self.strokes, arm=self.arm, wmap=self.workspace,
                           stream=self.stream, stats=self.stats, size=size, view=view)

    def simulated(self):
        """What the arm will really draw, from the angles the motors reach."""
        from .export import simulated_png
        return simulated_png(self.reached_xy, self.stream.pen, self.arm.pen.width_mm)

    def files(self):
        """Every output file of this plan, name -> bytes or text
        (:func:`inkreach.export.plan_files`)."""
        from .export import plan_files
        return plan_files(self)

    def save(self, folder):
        """Replace ``folder`` by one holding this plan's files (as a whole; see
        :func:`inkreach.export.replace_folder`).

        Returns
        -------
        dict
            File name -> full path of what was written.
        """
        from .export import replace_folder
        files = self.files()
        replace_folder(folder, files)
        return {name: os.path.join(os.fspath(folder), name) for name in files}


def resolve_arm(arm):
    """An arm from None (the default), a built-in name, a path, TOML text or an Arm."""
    if arm is None:
        return default_arm()
    if isinstance(arm, Arm):
        return arm
    if isinstance(arm, (str, os.PathLike)):
        s = os.fspath(arm)
        if ("\n" in s or "=" in s) and not os.path.exists(s):
            return parse_arm(s, source="uploaded arm")
        return load_arm(s)
    raise InkreachError(f"arm must be a path, a built-in name or an arm, got {type(arm).__name__}")


def _split_options(options):
    place = {k: options.pop(k, d) for k, d in PLACE_OPTIONS.items()}
    motion = {k: options.pop(k, d) for k, d in MOTION_OPTIONS.items()}
    own = {k: options.pop(k, d) for k, d in PLAN_OPTIONS.items()}
    return place, motion, own, options


def plan(image=None, arm=None, style="outline", *, progress=None, **options):
    """Turn a picture into a checked drawing plan for an arm.

    Parameters
    ----------
    image : str, os.PathLike, bytes, PIL.Image.Image, ndarray or None
        The picture, or an SVG 1.1 file (a path ending in ``.svg``, or its
        bytes or text); None when ``text`` is given.
    arm : None, str, os.PathLike or Arm
        The arm: None for the built-in default, a built-in name
        (``"default"``, ``"wide"``, ``"serial"``), an arm-file path or TOML
        text, or an arm object.
    style : str
        ``"outline"``, ``"centerline"``, ``"hatch"``, ``"stipple"``,
        ``"contour"`` or ``"wave"``.
    progress : callable, optional
        Called as ``progress(stage, done, total)`` as each stage of
        :data:`STAGES` starts (``done`` stages finished out of ``total``),
        and as ``progress("done", total, total)`` at the end.
    **options
        Style options (see :func:`inkreach.trace.style_options`), placement
        options (``paper=(x0, y0, w, h)``, ``margin``, ``size``, ``prefer``,
        ``rotations``, ``tilt``: also try tilted placements), motion options (``chord_tol`` mm, ``period`` s,
        ``tip_speed`` mm/s) and ``max_side`` (working resolution, px),
        ``joint_order`` (reorder by joint-space time), ``signals``
        (``"auto"``, ``"servo"``, ``"stepper"`` or ``"both"``), ``start``
        (rest posture in degrees) and ``fidelity`` (score the drawing).
        Line art: ``text`` (text alone, lines split by newlines), ``caption``
        (text under the picture, placed together with it), ``font`` (a
        Hershey font name, default ``"futural"``), ``text_height`` (letter
        height in mm for ``text``; default as large as fits), ``align``
        (``"left"``, ``"center"``, ``"right"``) and ``actual_size`` (draw an
        SVG at the physical size its file gives), ``fill_hatch`` (hatch an
        SVG's filled shapes, line spacing in mm). ``stats["warnings"]``
        lists what an SVG holds that is not drawn.

    Returns
    -------
    Plan

    Raises
    ------
    InkreachError
        For a bad picture, arm or option, a picture with nothing to draw, or a
        drawing that cannot be made safe on this arm.
    """
    from .export import plan_stats
    from .motion import check_stream, plan_motion
    from .place import drawing_region, pen_width_px, place_drawing
    from .route import merge_strokes, route_strokes, start_posture
    from .signals import checked_signals, reached_positions
    from .trace import load_image, merge_tolerance, trace_picture

    def step(stage):
        if progress is not None:
            progress(stage, STAGES.index(stage), len(STAGES))

    options = dict(options)
    if "pen_px" in options:
        raise InkreachError("option pen_px is set from the arm's pen width; change [pen] "
                            "width_mm in the arm file instead")
    from .vector.source import VECTOR_OPTIONS
    vec_opts = {k: options.pop(k, d) for k, d in VECTOR_OPTIONS.items()}
    user_set = frozenset(options)
    place_opts, motion_opts, own, style_opts = _split_options(options)
    # every value is checked against its stated range, and the work it
    # implies against the budget, before that work starts (limits.py)
    place_opts, motion_opts, own = limits.check_plan_options(place_opts, motion_opts, own,
                                                             user_set)
    if not isinstance(place_opts["tilt"], (bool, np.bool_)):
        raise InkreachError("option tilt must be true or false")
    if not isinstance(motion_opts["corner_blend"], (bool, np.bool_)):
        raise InkreachError("option corner_blend must be true or false")
    budget = own["budget"] if own["budget"] is not None else limits.DEFAULT_BUDGET
    max_side = own["max_side"]
    limits.check_style_options(style, style_opts, budget, user_set)

    step("arm")
    arm = resolve_arm(arm)
    limits.check_arm(arm)
    limits.check_dwell_rows(style, style_opts, arm, motion_opts["period"], budget, user_set)
    wmap = workspace_map(arm)
    if wmap.usable.sum() < 16:
        raise InkreachError("the arm's usable region is too small for any drawing; "
                            "widen the joint limits or lower min_conditioning")
    step("load")
    from .vector import source as vsrc
    kind = vsrc.input_kind(image, vec_opts)
    warnings = []
    if kind != "picture":
        if style_opts:
            warnings.append(f"style options {', '.join(sorted(style_opts))} apply to "
                            "pictures only and were not used")
        style_opts, style = {}, kind
    if kind == "svg":
        step("place")
        drawing, merged, placement = vsrc.place_svg(
            image, arm, wmap, {**place_opts, "actual_size": vec_opts["actual_size"],
                               "fill_hatch": vec_opts["fill_hatch"]},
            motion_opts["chord_tol"])
        warnings += list(drawing.warnings)
        W, H = drawing.size
    elif kind == "text":
        strokes_t, (W, H), fixed = vsrc.text_input(vec_opts, place_opts)
        merged = merge_strokes(strokes_t, tol=1e-6)
        step("place")
        placement = place_drawing(merged, arm, wmap=wmap, image_size=(W, H),
                                  **{**place_opts, "size": place_opts["size"] or fixed})
    else:
        pic = load_image(image, max_side=max_side, max_pixels=own["max_pixels"])
        W, H = pic.original_size
        pen_px = pen_width_px(pic, arm, wmap=wmap, **{k: place_opts[k] for k in
                                                      ("paper", "margin", "size")})
        limits.check_pen_px(pen_px, arm, (W, H), np.shape(pic.luminance))
        limits.check_style_work(style, style_opts, int(np.prod(np.shape(pic.luminance)[:2])),
                                pen_px, budget, user_set)
        step("trace")
        strokes_o = trace_picture(pic, style, pen_px=pen_px, **style_opts)
        step("merge")
        merged = merge_strokes(strokes_o, tol=merge_tolerance(pic))
        if vec_opts["caption"] is not None:
            merged, (W, H) = vsrc.add_caption(merged, (W, H), vec_opts)
        step("place")
        placement = place_drawing(merged, arm, wmap=wmap, image_size=(W, H), **place_opts)
    strokes_mm = placement.apply_all(merged)
    start_q = start_posture(arm, placement, own["start"])
    limits.check_rows(strokes_mm, arm, start_q, motion_opts["period"], motion_opts["tip_speed"],
                      budget, ordered=False, user=user_set)
    step("route")
    route = route_strokes(strokes_mm, arm, start_q, joint_order=own["joint_order"],
                          tip_speed=motion_opts["tip_speed"])
    limits.check_rows(route.strokes, arm, start_q, motion_opts["period"],
                      motion_opts["tip_speed"], budget, user=user_set)
    step("motion")
    stream = plan_motion(route.strokes, arm, start=start_q, end=start_q,
                         region=drawing_region(placement), **motion_opts)
    step("check")
    try:
        report = check_stream(stream, arm, strokes=route.strokes,
                              chord_tol=motion_opts["chord_tol"], tip_speed=stream.tip_speed)
    except InkreachError as exc:
        raise InkreachError(limits.in_user_terms(str(exc), motion_opts["period"],
                                                 motion_opts["chord_tol"])) from None
    signals, signal_notes = checked_signals(stream, arm, own["signals"], motion_opts["chord_tol"])
    reached = reached_positions(stream, arm, signals)
    stats = plan_stats(route.strokes, stream, report, placement, arm, style,
                       start_xy=arm.fk(start_q), warnings=warnings,
                       reached_xy=reached if signals else None, notes=signal_notes)
    used = {**style_opts, **place_opts, **motion_opts, "tip_speed": float(stream.tip_speed),
            "execution": stream.execution, "max_side": max_side,
            **vsrc.used_options(kind, vec_opts),
            "fidelity": bool(own["fidelity"]),
            "joint_order": bool(own["joint_order"]), "signals": own["signals"]}
    p = Plan(strokes=route.strokes, stream=stream, stats=stats, placement=placement, arm=arm,
             style=style, options=used, signals=signals, report=report, workspace=wmap,
             image_size=(int(W), int(H)) if kind == "picture" else (float(W), float(H)),
             reached_xy=reached)
    if own["fidelity"] and kind == "picture" and vec_opts["caption"] is None:
        step("fidelity")
        from .likeness import plan_fidelity
        stats["fidelity"] = plan_fidelity(p, pic)     # the loaded picture, not read again
    if progress is not None:
        progress("done", len(STAGES), len(STAGES))
    return p
