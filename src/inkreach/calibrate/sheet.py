"""The calibration sheet: a printed millimetre frame, and the stream that dots it."""

import math
from xml.sax.saxutils import escape

import numpy as np

from ..errors import InkreachError

__all__ = ["calibration_sheet", "sheet_svg", "sheet_corners"]

_MARGIN = 15.0      # mm of sheet around the dots and motors
_MARKER = 6.0       # side of the square corner markers, mm
_RING = 4.0         # radius of the ring printed around each expected dot, mm


def sheet_corners(arm, targets):
    """Arm-frame centres of the four corner markers, (4, 2) mm.

    Counter-clockwise from the lower left (the corner nearest the left
    motor side and the motors). A photo of the sheet can be mapped back to
    the arm frame from these four points.
    """
    return _corners(_extent(arm, arm.fk(np.asarray(targets, float).reshape(-1, 2))))


def sheet_svg(arm, targets):
    """SVG text of the calibration sheet, in millimetres.

    The sheet shows a millimetre grid (heavier every 5 and 10 mm) with
    ticks labelled every 10 mm along its edges, the arm frame's x and y
    axes through the origin, the motor axis positions, four square corner
    markers, and for each dot its number beside a thin ring around where
    the nominal model expects it. Elements carry classes (``tick-x``,
    ``tick-y``, ``motor``, ``corner``, ``dot-ring``, ``dot-label``) so
    programs can find them. Arm-frame y points up the page (away
    from the motors), so the sheet is read with the motors at the bottom.
    Print it at 100 % scale: the labelled ticks must measure 10 mm apart.

    Parameters
    ----------
    arm : FiveBar or SerialArm
    targets : array_like, shape (n, 2)
        Commanded joint angles of the dots, radians (from
        :func:`calibration_targets`).

    Returns
    -------
    str
        A standalone SVG document, ``width`` and ``height`` in mm, one user
        unit per mm.

    Examples
    --------
    >>> from inkreach.arms import default_arm
    >>> from inkreach.calibrate import calibration_targets
    >>> arm = default_arm()
    >>> svg = sheet_svg(arm, calibration_targets(arm, n=6))
    >>> svg.startswith("<svg") and 'width="' in svg and "mm" in svg
    True
    """
    q = np.asarray(targets, dtype=float).reshape(-1, 2)
    dots = arm.fk(q)
    if not np.all(np.isfinite(dots)):
        raise InkreachError("some calibration angles do not assemble on this arm; "
                            "make the targets with calibration_targets for the same arm")
    extent = _extent(arm, dots)
    x0, y0, x1, y1 = extent
    W, H = x1 - x0, y1 - y0

    def X(x):
        return x - x0

    def Y(y):
        return y1 - y

    out = [f'<svg xmlns="http://www.w3.org/2000/svg" width="{W:g}mm" height="{H:g}mm" '
           f'viewBox="0 0 {W:g} {H:g}" font-family="sans-serif">',
           f"<title>calibration sheet: {escape(arm.name)}</title>",
           f'<rect x="0" y="0" width="{W:g}" height="{H:g}" fill="white"/>']
    # millimetre grid, three weights
    for every, colour, width in ((1, "#e4e4e4", 0.05), (5, "#c8c8c8", 0.08), (10, "#9a9a9a", 0.12)):
        xs = np.arange(math.ceil(x0 / every) * every, x1 + 1e-9, every)
        ys = np.arange(math.ceil(y0 / every) * every, y1 + 1e-9, every)
        d = " ".join(f"M{X(x):g} 0V{H:g}" for x in xs) + " " + \
            " ".join(f"M0 {Y(y):g}H{W:g}" for y in ys)
        out.append(f'<path d="{d}" stroke="{colour}" stroke-width="{width}" fill="none"/>')
    # labelled ticks every 10 mm along the bottom and left edges
    xs = np.arange(math.ceil(x0 / 10) * 10, x1 + 1e-9, 10)
    ys = np.arange(math.ceil(y0 / 10) * 10, y1 + 1e-9, 10)
    ticks = " ".join(f"M{X(x):g} {H:g}v-3" for x in xs) + " " + \
        " ".join(f"M0 {Y(y):g}h3" for y in ys)
    out.append(f'<path d="{ticks}" stroke="black" stroke-width="0.2" fill="none"/>')
    out.append('<g font-size="2.2" fill="#333">')
    skip = _MARKER + 3.0
    for x in xs:
        if skip < X(x) < W - skip:
            out.append(f'<text class="tick-x" x="{X(x):g}" y="{H - 4:g}" text-anchor="middle">{x:g}</text>')
    for y in ys:
        if skip < Y(y) < H - skip:
            out.append(f'<text class="tick-y" x="4" y="{Y(y) + 0.8:g}">{y:g}</text>')
    out.append("</g>")
    # the arm frame's axes through the origin, where the sheet shows them
    axes = []
    if y0 <= 0 <= y1:
        axes.append(f"M0 {Y(0):g}H{W:g}")
        out.append(f'<text x="{W - 12:g}" y="{Y(0) - 1.5:g}" font-size="3">x mm</text>')
    if x0 <= 0 <= x1:
        axes.append(f"M{X(0):g} 0V{H:g}")
        out.append(f'<text x="{X(0) + 1.5:g}" y="12" font-size="3">y mm</text>')
    if axes:
        out.append(f'<path d="{" ".join(axes)}" stroke="#1f4fbf" stroke-width="0.3"/>')
    # motors
    for label, (mx, my) in _motors(arm):
        cx, cy = X(mx), Y(my)
        out.append(f'<g class="motor" stroke="#b02020" stroke-width="0.25" fill="none">'
                   f'<circle cx="{cx:g}" cy="{cy:g}" r="3"/>'
                   f'<path d="M{cx - 5:g} {cy:g}h10M{cx:g} {cy - 5:g}v10"/></g>')
        out.append(f'<text x="{cx + 4:g}" y="{cy - 4:g}" font-size="2.5" fill="#b02020">'
                   f"{escape(label)} ({mx:g}, {my:g})</text>")
    # corner markers
    for cx, cy in _corners(extent):
        s = _MARKER
        out.append(f'<rect class="corner" x="{X(cx) - s / 2:g}" y="{Y(cy) - s / 2:g}" width="{s:g}" '
                   f'height="{s:g}" fill="black"/>')
    # where each dot is expected, numbered in drawing order
    out.append('<g font-size="3" fill="#222">')
    for i, (dx, dy) in enumerate(dots, start=1):
        cx, cy = X(dx), Y(dy)
        out.append(f'<circle class="dot-ring" cx="{cx:.3f}" cy="{cy:.3f}" r="{_RING:g}" fill="none" '
                   f'stroke="#999" stroke-width="0.15"/>')
        out.append(f'<text class="dot-label" x="{cx + _RING + 0.8:.3f}" '
                   f'y="{cy - _RING + 0.5:.3f}">{i}</text>')
    out.append("</g>")
    out.append(f'<text x="{skip + 2:g}" y="{skip:g}" font-size="3">{escape(arm.name)}: '
               f"{len(dots)} calibration dots. Print at 100 %; labelled ticks are 10 mm apart. "
               "Measure each dot's centre in mm on this grid.</text>")
    out.append("</svg>")
    return "\n".join(out) + "\n"


def calibration_sheet(arm, targets, **motion_options):
    """The calibration sheet and the joint stream that puts its dots on it.

    Parameters
    ----------
    arm : FiveBar or SerialArm
    targets : array_like, shape (n, 2)
        Commanded joint angles, radians, in drawing order.
    **motion_options
        Passed to :func:`inkreach.motion.plan_motion`.

    Returns
    -------
    svg : str
        The sheet (see :func:`sheet_svg`).
    stream : JointStream
        Pen-up travel to each dot, pen down for the dot, lift, in order;
        from the rest posture back to it when the arm has one. The dots are
        given to the planner as one-point strokes at ``arm.fk(targets)``, so
        its inverse kinematics returns exactly the commanded angles.
    """
    q = np.asarray(targets, dtype=float).reshape(-1, 2)
    svg = sheet_svg(arm, q)
    from ..motion import plan_motion  # lazy: the motion stage is optional here

    strokes = [p[None, :] for p in arm.fk(q)]
    home = arm.home()
    opts = {"start": home, "end": home} if home is not None else {}
    opts.update(motion_options)
    return svg, plan_motion(strokes, arm, **opts)


def _motors(arm):
    if arm.kind == "five-bar":
        return [("left motor", tuple(arm.left_motor)), ("right motor", tuple(arm.right_motor))]
    return [("shoulder", tuple(arm.shoulder))]


def _corners(extent):
    """Centres of the corner markers of a sheet with ``extent`` (see ``sheet_corners``)."""
    x0, y0, x1, y1 = extent
    h = _MARKER / 2 + 2.0
    return np.array([[x0 + h, y0 + h], [x1 - h, y0 + h], [x1 - h, y1 - h], [x0 + h, y1 - h]])


def _extent(arm, dots):
    """(x0, y0, x1, y1) of the sheet: dots, motors and origin, plus a margin, to 10 mm."""
    pts = [dots, np.array([[0.0, 0.0]])]
    pts += [np.array([m]) for _, m in _motors(arm)]
    P = np.concatenate(pts)
    P = P[np.all(np.isfinite(P), axis=1)]
    lo = np.floor((P.min(0) - _MARGIN) / 10) * 10
    hi = np.ceil((P.max(0) + _MARGIN) / 10) * 10
    return float(lo[0]), float(lo[1]), float(hi[0]), float(hi[1])
