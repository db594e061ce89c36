"""preview.png and the arm report's conditioning map.

Shapes are drawn with OpenCV's anti-aliased polylines straight onto a
``uint8`` canvas of the final size (one call per colour), the region shading
is coloured at the workspace map's own resolution and resized once, and only
the text goes through Pillow.
"""

import cv2
import numpy as np
from PIL import Image, ImageDraw, ImageFont

from ..errors import InkreachError
from ._colour import USABLE_TINT, conditioning_ramp, order_ramp, usable_colour
from ._scene import (as_strokes, bounds, figure_rows, figure_title, linkage, nice_length,
                     outlines, overlap, posture, travel_moves)
from .coverage import stroke_coverage

__all__ = ["preview_png", "arm_map_png"]

_SHIFT = 4  # sub-pixel bits for cv2 drawing
_INK = (40, 44, 52)
_MUTED = (110, 116, 126)
_PAPER = (255, 255, 255)
_BELOW_FLOOR = (241, 240, 236)  # reachable, but under the conditioning floor
_EDGE = (92, 146, 114)  # usable region's boundary
_TRAVEL = (120, 128, 140)
_LINK = (118, 124, 134)
_TINT = USABLE_TINT  # how much of the conditioning colour shows in the usable region
_ORDER_LEVELS = 64  # colour buckets for the drawing order: one cv2 call each


class _Canvas:
    """An RGB ``uint8`` canvas of the final size with an arm-mm to pixel map (+y up)."""

    def __init__(self, box, size, pad=24):
        x0, x1, y0, y1 = box
        w, h = x1 - x0, y1 - y0
        if not (np.isfinite(w) and np.isfinite(h)) or w <= 0 or h <= 0:
            raise InkreachError("nothing to draw: the preview's bounds are empty")
        size = int(size)
        if not 64 <= size <= 8000:
            raise InkreachError(f"preview size {size} px is out of range; use 64 to 8000")
        self.scale = (size - 2 * pad) / max(w, h)  # px per mm
        self.W = int(round(w * self.scale)) + 2 * pad
        self.H = int(round(h * self.scale)) + 2 * pad
        self.x0, self.y1, self.pad = x0, y1, pad
        self.rgb = np.full((self.H, self.W, 3), 255, np.uint8)

    def px(self, p):
        """Pixel coordinates (float) of points in mm, shape (..., 2)."""
        p = np.asarray(p, dtype=float)
        out = np.empty_like(p)
        out[..., 0] = self.pad + (p[..., 0] - self.x0) * self.scale
        out[..., 1] = self.pad + (self.y1 - p[..., 1]) * self.scale
        return out

    def _fixed(self, p):
        return np.rint(self.px(p) * (1 << _SHIFT)).astype(np.int32)

    def lines(self, polys, colour, width, img=None):
        """Draw polylines (arm mm) in one call; one-point ones become dots."""
        arrays = [np.asarray(a, float).reshape(-1, 2) for a in polys]
        if not all(np.all(np.isfinite(a)) for a in arrays):
            arrays = [a[np.all(np.isfinite(a), axis=1)] for a in arrays]
        arrays = [a if len(a) != 1 else np.repeat(a, 2, axis=0)  # a dot: zero-length line
                  for a in arrays if len(a)]
        if not arrays:
            return
        lengths = np.cumsum([len(a) for a in arrays])[:-1]
        fixed = self._fixed(np.concatenate(arrays)).reshape(-1, 1, 2)
        cv2.polylines(self.rgb if img is None else img, np.split(fixed, lengths), False,
                      tuple(map(int, colour)), thickness=max(1, int(round(width))),
                      lineType=cv2.LINE_AA, shift=_SHIFT)

    def disc(self, p, r, fill, outline=None, img=None):
        """A filled circle of radius ``r`` px at ``p`` (mm), optionally outlined."""
        img = self.rgb if img is None else img
        c = tuple(int(v) for v in self._fixed(np.asarray(p, float)))
        rr = int(round(r * (1 << _SHIFT)))
        cv2.circle(img, c, rr, tuple(map(int, fill)), -1, cv2.LINE_AA, _SHIFT)
        if outline is not None:
            cv2.circle(img, c, rr, tuple(map(int, outline)), 1, cv2.LINE_AA, _SHIFT)

    def blend(self, layer, alpha):
        """Mix a layer drawn on a copy of the canvas back in at opacity ``alpha``."""
        cv2.addWeighted(layer, alpha, self.rgb, 1.0 - alpha, 0.0, dst=self.rgb)

    def shade(self, wmap, cells):
        """Paint the workspace map's cell colours, (ny, nx, 3) uint8, resized to the canvas."""
        s = wmap.step * self.scale
        M = np.array([[s, 0.0, self.pad + (wmap.x[0] - self.x0) * self.scale],
                      [0.0, -s, self.pad + (self.y1 - wmap.y[0]) * self.scale]])
        self.rgb = cv2.warpAffine(np.ascontiguousarray(cells), M, (self.W, self.H),
                                  flags=cv2.INTER_LINEAR, borderMode=cv2.BORDER_CONSTANT,
                                  borderValue=_PAPER)

    def image(self):
        img = Image.fromarray(self.rgb)
        return img, ImageDraw.Draw(img)


def _font(px):
    return ImageFont.load_default(size=max(8, int(px)))


def _text_w(draw, s, font):
    b = draw.textbbox((0, 0), s, font=font)
    return b[2] - b[0]


def _sup_parts(s):
    """``"414 cm²"`` -> [("414 cm", False), ("2", True)]: the default font has no ²."""
    parts = []
    for i, piece in enumerate(str(s).split("\u00b2")):
        if i:
            parts.append(("2", True))
        if piece:
            parts.append((piece, False))
    return parts


def _sup_w(draw, s, font):
    small = _font(font.size * 0.65)
    return sum(_text_w(draw, t, small if up else font) for t, up in _sup_parts(s))


def _sup_text(draw, xy, s, font, fill):
    """Text with every ² drawn as a small raised 2."""
    x, y = xy
    small = _font(font.size * 0.65)
    for t, up in _sup_parts(s):
        f = small if up else font
        draw.text((x, y - (font.size * 0.15 if up else 0)), t, fill=fill, font=f)
        x += _text_w(draw, t, f)


def _soft_box(img, box, radius, fill=(255, 255, 255), opacity=0.9, outline=(214, 218, 223)):
    """A rounded, slightly see-through box on ``img`` (in place)."""
    x0, y0, x1, y1 = (int(round(v)) for v in box)
    x0, y0 = max(x0, 0), max(y0, 0)
    x1, y1 = min(x1, img.width - 1), min(y1, img.height - 1)
    if x1 <= x0 or y1 <= y0:
        return
    region = img.crop((x0, y0, x1 + 1, y1 + 1))
    mask = Image.new("L", region.size, 0)
    ImageDraw.Draw(mask).rounded_rectangle([0, 0, region.width - 1, region.height - 1],
                                           radius=radius, fill=int(255 * opacity))
    region.paste(Image.new("RGB", region.size, fill), (0, 0), mask)
    ImageDraw.Draw(region).rounded_rectangle([0, 0, region.width - 1, region.height - 1],
                                             radius=radius, outline=outline)
    img.paste(region, (x0, y0))


def _figures_panel(img, draw, title, rows, px, order_bar=False, avoid=None):
    """Heading, label/value rows and (optionally) the drawing-order ramp, in a top corner.

    The panel goes top left unless it would cover more of the ``avoid`` box
    (the drawing, in pixels) there than top right.
    """
    if not rows and not order_bar:
        return
    font, small = _font(px), _font(px - 2)
    pad, lh, gap = int(px * 0.7), int(px * 1.4), int(px * 1.2)
    lw = max([_text_w(draw, k, small) for k, _ in rows] + [0])
    vw = max([_sup_w(draw, v, font) for _, v in rows] + [0])
    w = max(lw + gap + vw, _text_w(draw, title, font), 8 * px) + 2 * pad
    h = pad + lh + int(px * 0.35) + lh * len(rows) + (int(px * 2.6) if order_bar else 0) + pad
    x, y = 10, 10
    if avoid is not None:
        right = img.width - 10 - w
        if overlap((right, y, right + w, y + h), avoid) < overlap((x, y, x + w, y + h), avoid):
            x = right
    _soft_box(img, (x, y, x + w, y + h), radius=pad)
    draw.text((x + pad, y + pad), title, fill=_INK, font=font)
    yy = y + pad + lh + int(px * 0.35)
    draw.line([(x + pad, yy - int(px * 0.3)), (x + w - pad, yy - int(px * 0.3))],
              fill=(226, 229, 233), width=1)
    for k, v in rows:
        draw.text((x + pad, yy + 2), k, fill=_MUTED, font=small)
        _sup_text(draw, (x + w - pad - _sup_w(draw, v, font), yy), v, font, _INK)
        yy += lh
    if order_bar:
        bw, bh = w - 2 * pad, max(5, px // 2)
        yy += int(px * 0.4)
        ramp = order_ramp(np.linspace(0.0, 1.0, bw))
        img.paste(Image.fromarray(np.ascontiguousarray(np.repeat(ramp[None], bh, axis=0))),
                  (x + pad, yy))
        draw.text((x + pad, yy + bh + 3), "first stroke", fill=_MUTED, font=small)
        last = "last"
        draw.text((x + w - pad - _text_w(draw, last, small), yy + bh + 3), last, fill=_MUTED,
                  font=small)


def _scale_bar(img, draw, scale, px=12):
    """A scale bar of a round length in mm, bottom right."""
    span_mm = img.width / scale
    L = nice_length(span_mm)
    n = L * scale
    x1, y = img.width - 16, img.height - 16
    x0 = x1 - n
    draw.line([(x0, y), (x1, y)], fill=_INK, width=2)
    for x in (x0, x1):
        draw.line([(x, y - 5), (x, y + 1)], fill=_INK, width=2)
    label = f"{L:g} mm"
    font = _font(px - 1)
    b = draw.textbbox((0, 0), label, font=font)
    draw.text(((x0 + x1) / 2 - (b[2] - b[0]) / 2, y - 8 - (b[3] - b[1]) - 2), label,
              fill=_INK, font=font)


def _draw_arm(cv, arm, q, opacity=0.6):
    """The linkage in posture ``q``, drawn see-through so the drawing shows under it."""
    links, motors, pen = linkage(arm, q)
    layer = cv.rgb.copy()
    cv.lines([np.array([a, b]) for a, b in links], _LINK, 3, img=layer)
    for a, b in links:
        for p in (a, b):
            cv.disc(p, 3.2, (255, 255, 255), outline=_LINK, img=layer)
    cv.blend(layer, opacity)
    for m in motors:
        cv.disc(m, 6.5, _INK)
        cv.disc(m, 2.0, (255, 255, 255))
    if pen is not None and np.all(np.isfinite(pen)):
        cv.disc(pen, 4.0, (255, 255, 255), outline=_INK)


def _scene_box(arm, wmap, strokes, q, extra=()):
    links, motors, _ = linkage(arm, q)
    groups = list(strokes) + list(outlines(wmap)) + [np.array(s) for s in links]
    groups += [m[None] for m in motors] + list(extra)
    return bounds(groups, margin=0.04)


def _travel_paths(stream):
    """The pen-up runs of a stream, each joined to the pen-down rows either side."""
    xy = np.asarray(stream.xy, float)
    up = np.asarray(stream.pen) == 0
    edges = np.diff(np.concatenate([[0], up.astype(np.int8), [0]]))
    starts, ends = np.flatnonzero(edges == 1), np.flatnonzero(edges == -1)
    return [xy[max(a - 1, 0):b + 1] for a, b in zip(starts, ends)]


def _region_cells(wmap, usable_tint, below_floor):
    """Cell colours of the map: tinted by conditioning where usable, grey where only reachable."""
    cond = np.clip(np.nan_to_num(wmap.conditioning, nan=0.0), 0.0, 1.0)
    out = np.empty(wmap.usable.shape + (3,), np.uint8)
    out[...] = _PAPER
    out[wmap.in_limits] = below_floor
    tint = conditioning_ramp(cond[wmap.usable]).astype(float)
    out[wmap.usable] = np.rint((1 - usable_tint) * 255.0 + usable_tint * tint).astype(np.uint8)
    return out


def _ink(cv, strokes, width_mm, rows_per_px=4):
    """Lay black ink over the canvas as the pen leaves it: coverage mixed in linear light."""
    from ..trace.srgb import linear_to_srgb, srgb_to_linear

    pts = [cv.px(s) for s in strokes]
    cov = stroke_coverage(pts, (cv.H, cv.W), width_mm * cv.scale, rows_per_px=rows_per_px)
    idx = np.nonzero(cov > 0)
    if len(idx[0]) == 0:
        return
    lin = srgb_to_linear(cv.rgb[idx].astype(np.float32) / 255.0)
    lin *= (1.0 - cov[idx])[:, None]
    cv.rgb[idx] = np.rint(np.clip(linear_to_srgb(lin), 0, 1) * 255.0).astype(np.uint8)


def _wrap(draw, text, font, width):
    """Greedy word wrap of ``text`` to lines no wider than ``width`` px."""
    lines, cur = [], ""
    for word in str(text).split():
        t = f"{cur} {word}".strip()
        if cur and _text_w(draw, t, font) > width:
            lines.append(cur)
            cur = word
        else:
            cur = t
    return lines + ([cur] if cur else [])


def _band(width, title, rows, key, px, scale, order_bar=False):
    """The legend band under the drawing: heading, figures in columns, key, scale bar."""
    probe = ImageDraw.Draw(Image.new("RGB", (1, 1)))
    font, small = _font(px), _font(px - 2)
    pad, lh = int(px * 1.1), int(px * 1.5)
    long_rows = [(k, v) for k, v in rows if k == "paper"]
    rows = [(k, v) for k, v in rows if k != "paper"]
    ncol = 2 if width >= 40 * px else 1
    col_w = (width - 2 * pad - (ncol - 1) * pad) // ncol
    per_col = -(-len(rows) // ncol) if rows else 0
    notes = [line for k, v in long_rows
             for line in _wrap(probe, f"{k}: {v}", small, width - 2 * pad)]
    h = pad + lh + per_col * lh + len(notes) * lh + (lh if order_bar else 0) + \
        len(key) * lh + lh + pad
    band = Image.new("RGB", (width, h), _PAPER)
    draw = ImageDraw.Draw(band)
    draw.line([(pad, 0), (width - pad, 0)], fill=(214, 218, 223), width=1)
    y = pad
    draw.text((pad, y), title, fill=_INK, font=font)
    y += lh
    for i, (k, v) in enumerate(rows):
        c, r = divmod(i, per_col)
        x = pad + c * (col_w + pad)
        yy = y + r * lh
        draw.text((x, yy + 2), k, fill=_MUTED, font=small)
        draw.text((x + col_w - _text_w(draw, v, font), yy), v, fill=_INK, font=font)
    y += per_col * lh
    for line in notes:
        draw.text((pad, y + 2), line, fill=_INK, font=small)
        y += lh
    if order_bar:
        bw, bh = min(width - 2 * pad, 30 * px), max(5, px // 2)
        first, last = "first stroke", "last"
        x0 = pad + _text_w(draw, first, small) + px // 2
        bw = max(8, bw - (x0 - pad) - _text_w(draw, last, small) - px // 2)
        ramp = order_ramp(np.linspace(0.0, 1.0, bw))
        band.paste(Image.fromarray(np.ascontiguousarray(np.repeat(ramp[None], bh, axis=0))),
                   (x0, y + (lh - bh) // 2))
        draw.text((pad, y + 2), first, fill=_MUTED, font=small)
        draw.text((x0 + bw + px // 2, y + 2), last, fill=_MUTED, font=small)
        y += lh
    sw = int(px * 1.1)
    for kind, colour, text in key:
        cy = y + lh // 2
        if kind == "swatch":
            draw.rounded_rectangle([pad, cy - sw // 2 + 1, pad + sw, cy + sw // 2 - 1], radius=2,
                                   fill=colour, outline=(196, 200, 206))
        else:
            draw.line([(pad, cy), (pad + sw, cy)], fill=colour, width=2)
        draw.text((pad + sw + 6, cy - px // 2), text, fill=_MUTED, font=small)
        y += lh
    # a scale bar of a round length in mm
    L = nice_length(width / scale)
    x1, yb = width - pad, y + lh // 2
    x0 = x1 - L * scale
    draw.line([(x0, yb), (x1, yb)], fill=_INK, width=2)
    for x in (x0, x1):
        draw.line([(x, yb - 5), (x, yb + 1)], fill=_INK, width=2)
    label = f"{L:g} mm"
    draw.text((x0 - _text_w(draw, label, small) - px // 2, yb - px // 2 - 1), label,
              fill=_INK, font=small)
    return band


def preview_png(strokes, *, arm, wmap, stream=None, stats=None, size=900, view="ink"):
    """The preview picture: the drawing in the arm's usable region, and its figures.

    The arm's usable region is shaded by conditioning (bluer is better) and
    outlined; the reachable area under the conditioning floor is light grey;
    the arm is drawn see-through in one posture (its home, else at the first
    stroke), under the drawing. ``view="ink"`` lays the strokes on as black
    ink at the pen's width, mixed in linear light by the share of each pixel
    they cover (as :func:`simulated_png`, at the preview's resolution);
    ``view="order"`` colours them by drawing order, from deep indigo (first)
    to brick red (last), over faint grey pen-up travel. Nothing covers the
    drawing: the heading, figures, key and scale bar sit in a band below.

    Parameters
    ----------
    strokes : sequence of array_like (M, 2)
        Placed strokes, arm mm, in drawing order.
    arm : FiveBar or SerialArm
    wmap : WorkspaceMap
    stream : JointStream, optional
        When given, the pen-up travel is drawn from its pen-up rows (the
        path the pen really takes); otherwise as straight lines.
    stats : dict, optional
        Figures for the band (see ``Plan.stats`` and :func:`figure_rows`).
    size : int
        Longer side of the drawing's area, pixels (the band adds height).
    view : {"ink", "order"}

    Returns
    -------
    PIL.Image.Image
        RGB.

    References
    ----------
    .. [1] OpenCV documentation, "Drawing Functions": ``cv2.polylines`` with
       ``LINE_AA`` and sub-pixel ``shift``.
    .. [2] IEC 61966-2-1:1999 (sRGB), for mixing ink and paper in linear light.

    Examples
    --------
    >>> import numpy as np
    >>> from inkreach.arms import default_arm, workspace_map
    >>> arm = default_arm()
    >>> img = preview_png([np.array([[0.0, 150.0], [20.0, 160.0]])], arm=arm,
    ...                   wmap=workspace_map(arm, cells=60), size=300)
    >>> img.mode, img.width
    ('RGB', 300)
    """
    if view not in ("ink", "order"):
        raise InkreachError(f"preview view {view!r} is unknown; use 'ink' or 'order'")
    strokes = as_strokes(strokes)
    q = posture(arm, strokes)
    cv = _Canvas(_scene_box(arm, wmap, strokes, q), size)
    cv.shade(wmap, _region_cells(wmap, _TINT, _BELOW_FLOOR))
    cv.lines(outlines(wmap), _EDGE, 1)
    _draw_arm(cv, arm, q)
    n = len(strokes)
    if view == "order":
        moves = _travel_paths(stream) if stream is not None else list(travel_moves(strokes))
        if len(moves):
            layer = cv.rgb.copy()
            cv.lines(moves, _TRAVEL, 1, img=layer)
            cv.blend(layer, 0.45)
        if n:
            level = np.minimum((np.arange(n) / max(n - 1, 1) * _ORDER_LEVELS).astype(int),
                               _ORDER_LEVELS - 1)
            colours = order_ramp(np.arange(_ORDER_LEVELS) / (_ORDER_LEVELS - 1))
            width = arm.pen.width_mm * cv.scale
            cut = np.flatnonzero(np.diff(level)) + 1
            for lo, hi in zip(np.r_[0, cut], np.r_[cut, n]):
                cv.lines(strokes[lo:hi], colours[level[lo]], width)
    elif n:
        _ink(cv, strokes, arm.pen.width_mm)
    scene, _ = cv.image()
    px = max(11, min(scene.width, scene.height) // 50)
    tint = tuple(int(v) for v in usable_colour(0.85))
    key = [("swatch", tint, "usable region, bluer = better conditioned"),
           ("swatch", _BELOW_FLOOR, "reachable, under the conditioning floor")]
    if view == "order":
        key.append(("line", (180, 186, 194), "pen-up travel"))
    else:
        key.append(("line", (0, 0, 0), "ink at the pen's width, as drawn"))
    band = _band(scene.width, figure_title(stats), figure_rows(stats), key, px, cv.scale,
                 order_bar=view == "order" and n > 1)
    out = Image.new("RGB", (scene.width, scene.height + band.height), _PAPER)
    out.paste(scene, (0, 0))
    out.paste(band, (0, scene.height))
    return out


def arm_map_png(arm, wmap, rectangles=(), size=800):
    """The arm report's picture: conditioning map, usable boundary, rectangles, the arm.

    Parameters
    ----------
    arm : FiveBar or SerialArm
    wmap : WorkspaceMap
    rectangles : sequence
        Rectangles to draw, each a ``Rectangle`` or a ``(label, Rectangle)``
        pair (the label is written at its top-left corner).
    size : int
        Longer side, pixels.

    Returns
    -------
    PIL.Image.Image
        RGB.

    Examples
    --------
    >>> from inkreach.arms import default_arm, workspace_map, largest_rectangle
    >>> arm = default_arm()
    >>> m = workspace_map(arm, cells=60)
    >>> arm_map_png(arm, m, [("A5", largest_rectangle(m, 1.41))], size=300).mode
    'RGB'
    """
    q = posture(arm)
    rects = []
    for r in rectangles or ():
        label, rect = (r if isinstance(r, tuple) else (None, r))
        if rect is not None:
            rects.append((label, rect))
    lim_outline = outlines(wmap, wmap.in_limits)
    box = _scene_box(arm, wmap, [], q, extra=lim_outline + [r.corners() for _, r in rects])
    cv = _Canvas(box, size)
    cond = np.clip(np.nan_to_num(wmap.conditioning, nan=0.0), 0, 1)
    ramp = conditioning_ramp(cond).astype(float)
    cells = np.full(wmap.usable.shape + (3,), 255.0)
    cells[wmap.in_limits] = 0.45 * 255.0 + 0.55 * ramp[wmap.in_limits]  # below the floor
    cells[wmap.usable] = ramp[wmap.usable]
    cv.shade(wmap, np.rint(cells).astype(np.uint8))
    cv.lines(lim_outline, (180, 184, 190), 1)
    cv.lines(outlines(wmap), _INK, 2)
    for _, r in rects:
        corners = r.corners()
        cv.lines([np.vstack([corners, corners[:1]])], (200, 60, 50), 2)
    _draw_arm(cv, arm, q, opacity=0.85)
    img, draw = cv.image()
    px = max(11, img.width // 55)
    font = _font(px)
    for label, r in rects:
        text = f"{label}: " if label else ""
        text += f"{r.width:.0f} x {r.height:.0f} mm"
        x, y = cv.px(np.array([r.x0, r.y0 + r.height]))
        draw.text((x + 4, y + 3), text, fill=(160, 40, 35), font=font)
    rows = [("usable area", f"{wmap.usable_area / 100:.0f} cm²"),
            ("conditioning floor", f"{arm.limits.min_conditioning:.2f}")]
    _figures_panel(img, draw, f"{arm.name} ({arm.kind})", rows, px)
    _colour_bar(img, draw, arm.limits.min_conditioning, px)
    _scale_bar(img, draw, cv.scale, px)
    return img


def _colour_bar(img, draw, floor, px):
    """A horizontal conditioning colour bar, bottom left, with the floor marked."""
    w, h = max(120, img.width // 4), max(8, px - 2)
    x0, y0 = 16, img.height - 16 - h - px - 4
    ramp = conditioning_ramp(np.linspace(0, 1, w))
    bar = Image.fromarray(np.ascontiguousarray(np.repeat(ramp[None], h, axis=0)))
    img.paste(bar, (x0, y0))
    draw.rectangle([x0, y0, x0 + w - 1, y0 + h - 1], outline=(150, 154, 160))
    xf = x0 + floor * (w - 1)
    draw.line([(xf, y0 - 3), (xf, y0 + h + 2)], fill=_INK, width=2)
    font = _font(px - 1)
    draw.text((x0, y0 + h + 3), "0", fill=_INK, font=font)
    draw.text((x0 + w - px // 2, y0 + h + 3), "1", fill=_INK, font=font)
    draw.text((x0, y0 - px - 4), "conditioning", fill=_INK, font=font)
