"""preview.svg: the placed drawing on the arm's usable region, in millimetres."""

from xml.sax.saxutils import escape

import numpy as np

from ._colour import hex_colour, order_ramp, usable_colour
from ._scene import (as_strokes, bounds, figure_lines, figure_title, linkage, outlines,
                     posture, travel_moves)
from .safety import SAFETY_TEXT

__all__ = ["preview_svg"]


def _pts(a):
    """SVG points text ``x,y x,y ...`` of an (M, 2) array, 3 decimals, one % operation."""
    a = np.round(np.asarray(a, float), 3) + 0.0
    return ("%.3f,%.3f " * len(a) % tuple(a.ravel().tolist())).rstrip()


def _fmt(v):
    return f"{float(v):.3f}"


def preview_svg(strokes, *, arm=None, wmap=None, travel=True, start=None,
                placement_hull=None, stats=None):
    """A preview picture in millimetres: strokes by order, pen-up moves, usable region.

    The SVG's width and height are in mm and its user unit is 1 mm in the
    arm frame, with +y up (the geometry sits in a group flipped by
    ``scale(1, -1)``). Strokes are coloured from dark indigo (first) to
    brick red (last); pen-up moves are faint dashed lines; the boundary of
    the usable region, the motors and the arm (in its home posture) are
    drawn when ``wmap`` and ``arm`` are given.

    Parameters
    ----------
    strokes : sequence of array_like (M, 2)
        Placed strokes, arm mm, in drawing order.
    arm : FiveBar or SerialArm, optional
    wmap : WorkspaceMap, optional
    travel : bool
        Draw the pen-up moves between strokes.
    start : array_like (2,), optional
        Pen position before the first stroke (its move is drawn too).
    placement_hull : array_like (K, 2), optional
        Outline of the placed drawing, drawn thin and dashed.
    stats : dict, optional
        Figures to print in a band below the drawing.

    Returns
    -------
    str
        SVG 1.1 text.

    References
    ----------
    .. [1] W3C, "Scalable Vector Graphics (SVG) 1.1 (Second Edition)", 2011.

    Examples
    --------
    >>> import numpy as np
    >>> import xml.etree.ElementTree as ET
    >>> svg = preview_svg([np.array([[0.0, 100.0], [20.0, 110.0]])])
    >>> ET.fromstring(svg).get("width")
    '21.200mm'
    """
    strokes = as_strokes(strokes)
    pen_w = float(arm.pen.width_mm) if arm is not None else 0.5
    groups = list(strokes)
    lines = outlines(wmap) if wmap is not None else []
    groups += lines
    links, motors, _ = linkage(arm, posture(arm, strokes)) if arm is not None else ([], [], None)
    groups += [np.array(seg) for seg in links] + [m[None] for m in motors]
    if placement_hull is not None:
        groups.append(np.asarray(placement_hull, float))
    if start is not None:
        groups.append(np.asarray(start, float)[None])
    x0, x1, y0, y1 = bounds(groups)
    W, H = x1 - x0, y1 - y0
    size = max(W, H)
    n = len(strokes)
    fig_lines = figure_lines(stats)
    band = _panel_height(fig_lines, size, n > 1)
    scene_h, H = H, H + band
    out = [
        '<?xml version="1.0" encoding="UTF-8"?>',
        f'<svg xmlns="http://www.w3.org/2000/svg" version="1.1" width="{_fmt(W)}mm" '
        f'height="{_fmt(H)}mm" viewBox="{_fmt(x0)} {_fmt(-y1)} {_fmt(W)} {_fmt(H)}">',
        "<title>inkreach preview</title>",
        f"<desc>{escape(SAFETY_TEXT)}</desc>",
        f'<rect x="{_fmt(x0)}" y="{_fmt(-y1)}" width="{_fmt(W)}" height="{_fmt(H)}" '
        'fill="#ffffff"/>',
        '<g transform="scale(1,-1)" fill="none" stroke-linecap="round" stroke-linejoin="round">',
    ]
    if lines:
        d = " ".join(f"M{_pts(c)}Z".replace(" ", " L", 1) for c in lines if len(c) > 2)
        if d:
            out.append(f'<path class="usable-area" d="{d}" '
                       f'fill="{hex_colour(usable_colour())}" fill-rule="evenodd" stroke="none"/>')
    for c in lines:
        out.append(f'<polyline class="usable" points="{_pts(c)}" stroke="#5c9272" '
                   f'stroke-width="{_fmt(size / 500)}"/>')
    if placement_hull is not None and len(placement_hull):
        h = np.asarray(placement_hull, float)
        out.append(f'<polygon class="placement" points="{_pts(h)}" stroke="#9aa0a6" '
                   f'stroke-width="{_fmt(size / 600)}" stroke-dasharray="2 2"/>')
    if links:
        segs = " ".join(f"M{_fmt(a[0])},{_fmt(a[1])} L{_fmt(b[0])},{_fmt(b[1])}"
                        for a, b in links)
        out.append(f'<path class="arm" d="{segs}" stroke="#b0b4ba" '
                   f'stroke-width="{_fmt(size / 150)}" opacity="0.8"/>')
    if travel:
        moves = travel_moves(strokes, start)
        if len(moves):
            a = np.round(moves, 3) + 0.0
            d = ("M%.3f,%.3f L%.3f,%.3f " * len(a) % tuple(a.ravel().tolist())).rstrip()
            out.append(f'<path class="travel" d="{d}" stroke="#8a8f96" '
                       f'stroke-width="{_fmt(max(pen_w / 2, size / 1500))}" '
                       f'stroke-dasharray="{_fmt(size / 200)} {_fmt(size / 200)}" '
                       'opacity="0.6"/>')
    colours = order_ramp(np.arange(n) / max(n - 1, 1))
    out.append(f'<g class="strokes" stroke-width="{_fmt(pen_w)}">')
    for s, c in zip(strokes, colours):
        if len(s) == 1:
            out.append(f'<circle cx="{_fmt(s[0, 0])}" cy="{_fmt(s[0, 1])}" '
                       f'r="{_fmt(pen_w / 2)}" fill="{hex_colour(c)}" stroke="none"/>')
        else:
            out.append(f'<polyline points="{_pts(s)}" stroke="{hex_colour(c)}"/>')
    out.append("</g>")
    for m in motors:
        out.append(f'<circle class="motor" cx="{_fmt(m[0])}" cy="{_fmt(m[1])}" '
                   f'r="{_fmt(size / 80)}" fill="#3c4048" stroke="none"/>')
    if start is not None:
        s0 = np.asarray(start, float)
        out.append(f'<circle class="start" cx="{_fmt(s0[0])}" cy="{_fmt(s0[1])}" '
                   f'r="{_fmt(size / 150)}" fill="none" stroke="#3c4048" '
                   f'stroke-width="{_fmt(size / 600)}"/>')
    out.append("</g>")
    # nothing covers the drawing: the figures go in a band below it
    out += _panel(figure_title(stats), fig_lines, (x0, -y1 + scene_h), size, order_bar=n > 1)
    out.append("</svg>")
    return "\n".join(out) + "\n"


def _panel_height(lines, size, order_bar):
    """Height (mm) of the figures band for these lines; 0 when there are none."""
    if not lines:
        return 0.0
    fs = size / 45
    pad, lh = fs * 0.8, fs * 1.4
    return pad + fs * 0.3 + lh * len(lines) + (fs * 2.6 if order_bar else 0) + pad + fs * 1.2


def _panel(title, lines, corner, size, order_bar=False):
    """SVG elements of the figures band, its top-left corner at ``corner`` (page mm)."""
    if not lines:
        return []
    fs = size / 45
    pad, lh = fs * 0.8, fs * 1.4
    width = max(len(s) for s in [title] + lines) * fs * 0.5 + 2 * pad
    height = _panel_height(lines, size, order_bar) - fs * 1.2
    x, y = corner[0] + fs * 0.6, corner[1] + fs * 0.6
    out = [f'<g class="figures" font-family="sans-serif" font-size="{_fmt(fs)}">',
           f'<rect x="{_fmt(x)}" y="{_fmt(y)}" width="{_fmt(width)}" height="{_fmt(height)}" '
           f'rx="{_fmt(pad)}" fill="#ffffff" fill-opacity="0.9" stroke="#d6dadf" '
           f'stroke-width="{_fmt(size / 1500)}"/>',
           f'<text x="{_fmt(x + pad)}" y="{_fmt(y + pad + fs)}" fill="#282c34" '
           f'font-weight="bold">{escape(title)}</text>']
    for i, line in enumerate(lines):
        out.append(f'<text x="{_fmt(x + pad)}" y="{_fmt(y + pad + fs + lh * (i + 1))}" '
                   f'fill="#3a3f47">{escape(line)}</text>')
    if order_bar:
        stops = "".join(f'<stop offset="{t:g}" stop-color="{hex_colour(c)}"/>'
                        for t, c in zip(np.linspace(0, 1, 5), order_ramp(np.linspace(0, 1, 5))))
        by = y + pad + fs + lh * len(lines) + fs * 0.7
        out += [f'<linearGradient id="order">{stops}</linearGradient>',
                f'<rect class="order" x="{_fmt(x + pad)}" y="{_fmt(by)}" '
                f'width="{_fmt(width - 2 * pad)}" height="{_fmt(fs * 0.45)}" fill="url(#order)"/>',
                f'<text x="{_fmt(x + pad)}" y="{_fmt(by + fs * 1.4)}" fill="#6e747e" '
                f'font-size="{_fmt(fs * 0.8)}">first stroke</text>',
                f'<text x="{_fmt(x + width - pad)}" y="{_fmt(by + fs * 1.4)}" fill="#6e747e" '
                f'font-size="{_fmt(fs * 0.8)}" text-anchor="end">last</text>']
    return out + ["</g>"]
