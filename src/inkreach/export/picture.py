"""preview.png and the arm report's conditioning map, drawn with Pillow."""

import numpy as np
from PIL import Image, ImageDraw, ImageFont

from ..errors import InkreachError
from ._colour import conditioning_ramp, order_ramp
from ._scene import (as_strokes, bounds, figure_lines, linkage, nice_length, outlines,
                     posture, travel_moves)
from .simulate import pen_down_paths

__all__ = ["preview_png", "arm_map_png"]

_SS = 2  # draw at twice the size, then downsample: smooth thin lines
_INK = (48, 52, 58)


class _Canvas:
    """A supersampled Pillow canvas with an arm-mm to pixel map (+y up)."""

    def __init__(self, box, size, pad=24):
        x0, x1, y0, y1 = box
        w, h = x1 - x0, y1 - y0
        if not (np.isfinite(w) and np.isfinite(h)) or w <= 0 or h <= 0:
            raise InkreachError("nothing to draw: the preview's bounds are empty")
        size = int(size)
        if not 64 <= size <= 8000:
            raise InkreachError(f"preview size {size} px is out of range; use 64 to 8000")
        self.scale = (size - 2 * pad) / max(w, h)  # px per mm at the final size
        self.W = int(round(w * self.scale)) + 2 * pad
        self.H = int(round(h * self.scale)) + 2 * pad
        self.x0, self.y1, self.pad = x0, y1, pad
        self.img = Image.new("RGB", (self.W * _SS, self.H * _SS), (255, 255, 255))
        self.draw = ImageDraw.Draw(self.img)

    def px(self, p, ss=_SS):
        """Pixel coordinates (float) of points in mm, shape (..., 2)."""
        p = np.asarray(p, dtype=float)
        out = np.empty_like(p)
        out[..., 0] = (self.pad + (p[..., 0] - self.x0) * self.scale) * ss
        out[..., 1] = (self.pad + (self.y1 - p[..., 1]) * self.scale) * ss
        return out

    def mm_grid(self):
        """Arm-mm coordinates of every supersampled pixel centre, two (H, W) arrays."""
        u = (np.arange(self.W * _SS) + 0.5) / _SS
        v = (np.arange(self.H * _SS) + 0.5) / _SS
        x = self.x0 + (u - self.pad) / self.scale
        y = self.y1 - (v - self.pad) / self.scale
        return np.meshgrid(x, y)

    def line(self, pts, fill, width):
        p = self.px(pts)
        if len(p) == 1:
            r = max(width / 2, 1.0)
            (cx, cy), = p
            self.draw.ellipse([cx - r, cy - r, cx + r, cy + r], fill=fill)
            return
        self.draw.line([tuple(v) for v in p.tolist()], fill=fill, width=max(1, int(width)),
                       joint="curve")

    def dot(self, p, r, fill, outline=None):
        (cx, cy), = self.px(np.asarray(p, float)[None])
        self.draw.ellipse([cx - r, cy - r, cx + r, cy + r], fill=fill, outline=outline,
                          width=_SS)

    def shade(self, wmap, colour_of):
        """Paint each pixel from the workspace map cell under it (nearest cell)."""
        X, Y = self.mm_grid()
        j = np.rint((X - wmap.x[0]) / wmap.step).astype(np.int64)
        i = np.rint((Y - wmap.y[0]) / wmap.step).astype(np.int64)
        inside = (i >= 0) & (i < len(wmap.y)) & (j >= 0) & (j < len(wmap.x))
        ii, jj = np.clip(i, 0, len(wmap.y) - 1), np.clip(j, 0, len(wmap.x) - 1)
        rgb = colour_of(ii, jj, inside)
        self.img = Image.fromarray(rgb.astype(np.uint8))
        self.draw = ImageDraw.Draw(self.img)

    def finish(self):
        """Downsample to the final size (LANCZOS) and return a drawing context on it."""
        img = self.img.resize((self.W, self.H), Image.LANCZOS)
        return img, ImageDraw.Draw(img)


def _font(px):
    return ImageFont.load_default(size=max(8, int(px)))


def _panel(img, draw, lines, corner="top-left", px=14):
    """Text lines on a soft white panel in a corner of the final image."""
    if not lines:
        return
    font = _font(px)
    pad = int(px * 0.6)
    boxes = [draw.textbbox((0, 0), s, font=font) for s in lines]
    w = max(b[2] - b[0] for b in boxes) + 2 * pad
    lh = int(px * 1.35)
    h = lh * len(lines) + 2 * pad
    x = 8 if "left" in corner else img.width - w - 8
    y = 8 if "top" in corner else img.height - h - 8
    overlay = Image.new("RGBA", img.size, (0, 0, 0, 0))
    ImageDraw.Draw(overlay).rounded_rectangle([x, y, x + w, y + h], radius=pad,
                                              fill=(255, 255, 255, 215),
                                              outline=(210, 214, 218, 255))
    img.paste(Image.alpha_composite(img.convert("RGBA"), overlay).convert("RGB"))
    for k, s in enumerate(lines):
        draw.text((x + pad, y + pad + k * lh), s, fill=_INK, font=font)


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
    font = _font(px)
    b = draw.textbbox((0, 0), label, font=font)
    draw.text(((x0 + x1) / 2 - (b[2] - b[0]) / 2, y - 8 - (b[3] - b[1]) - 2), label,
              fill=_INK, font=font)


def _draw_arm(cv, arm, q):
    links, motors, pen = linkage(arm, q)
    for a, b in links:
        cv.line(np.array([a, b]), (150, 156, 164), 3 * _SS)
    for a, b in links:
        for p in (a, b):
            cv.dot(p, 2.2 * _SS, (255, 255, 255), outline=(120, 126, 134))
    for m in motors:
        cv.dot(m, 5 * _SS, _INK)
    if pen is not None and np.all(np.isfinite(pen)):
        cv.dot(pen, 3 * _SS, (255, 255, 255), outline=_INK)


def _scene_box(arm, wmap, strokes, q, extra=()):
    links, motors, _ = linkage(arm, q)
    groups = list(strokes) + list(outlines(wmap)) + [np.array(s) for s in links]
    groups += [m[None] for m in motors] + list(extra)
    return bounds(groups, margin=0.04)


def preview_png(strokes, *, arm, wmap, stream=None, stats=None, size=900):
    """The preview picture: usable region, the placed drawing by order, the arm, figures.

    Parameters
    ----------
    strokes : sequence of array_like (M, 2)
        Placed strokes, arm mm, in drawing order.
    arm : FiveBar or SerialArm
    wmap : WorkspaceMap
    stream : JointStream, optional
        When given, the pen-up moves are drawn from its pen-up rows (the
        path the pen really takes); otherwise as straight lines.
    stats : dict, optional
        Figures for the top-left corner.
    size : int
        Longer side, pixels.

    Returns
    -------
    PIL.Image.Image
        RGB.

    Examples
    --------
    >>> import numpy as np
    >>> from inkreach.arms import default_arm, workspace_map
    >>> arm = default_arm()
    >>> img = preview_png([np.array([[0.0, 150.0], [20.0, 160.0]])], arm=arm,
    ...                   wmap=workspace_map(arm, cells=60), size=300)
    >>> img.mode, max(img.size)
    ('RGB', 300)
    """
    strokes = as_strokes(strokes)
    q = posture(arm, strokes)
    cv = _Canvas(_scene_box(arm, wmap, strokes, q), size)
    cond = np.nan_to_num(wmap.conditioning, nan=0.0)
    ramp = conditioning_ramp(np.clip(cond, 0, 1)).astype(float)

    def colour(ii, jj, inside):
        white = np.full(ii.shape + (3,), 255.0)
        usable = inside & wmap.usable[ii, jj]
        near = inside & wmap.in_limits[ii, jj] & ~usable
        out = white.copy()
        out[near] = 246.0
        a = 0.28
        out[usable] = (1 - a) * 255.0 + a * ramp[ii[usable], jj[usable]]
        return out

    cv.shade(wmap, colour)
    for c in outlines(wmap):
        cv.line(c, (120, 170, 135), 2 * _SS // 2 + 1)
    if stream is not None:
        moves = pen_down_paths(np.asarray(stream.xy, float), np.asarray(stream.pen) == 0)
    else:
        moves = list(travel_moves(strokes))
    for m in moves:
        m = np.asarray(m, float)
        m = m[np.all(np.isfinite(m), 1)]
        if len(m) > 1:
            cv.line(m, (196, 200, 206), _SS)
    n = len(strokes)
    colours = order_ramp(np.arange(n) / max(n - 1, 1))
    w = max(2, int(round(arm.pen.width_mm * cv.scale * _SS)))
    for s, c in zip(strokes, colours):
        cv.line(s, tuple(int(v) for v in c), w)
    _draw_arm(cv, arm, q)
    img, draw = cv.finish()
    px = max(11, img.width // 60)
    _panel(img, draw, figure_lines(stats), "top-left", px)
    _scale_bar(img, draw, cv.scale, px)
    return img


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
    cond = np.nan_to_num(wmap.conditioning, nan=0.0)
    ramp = conditioning_ramp(np.clip(cond, 0, 1)).astype(float)

    def colour(ii, jj, inside):
        out = np.full(ii.shape + (3,), 255.0)
        reach = inside & wmap.in_limits[ii, jj]
        usable = inside & wmap.usable[ii, jj]
        c = ramp[ii, jj]
        out[reach] = 0.45 * 255.0 + 0.55 * c[reach]  # below the floor: washed out
        out[usable] = c[usable]
        return out

    cv.shade(wmap, colour)
    for c in lim_outline:
        cv.line(c, (180, 184, 190), _SS)
    for c in outlines(wmap):
        cv.line(c, _INK, 2 * _SS)
    for _, r in rects:
        corners = r.corners()
        cv.line(np.vstack([corners, corners[:1]]), (200, 60, 50), 2 * _SS)
    _draw_arm(cv, arm, q)
    img, draw = cv.finish()
    px = max(11, img.width // 55)
    font = _font(px)
    for label, r in rects:
        text = f"{label}: " if label else ""
        text += f"{r.width:.0f} x {r.height:.0f} mm"
        x, y = cv.px(np.array([r.x0, r.y0 + r.height]), ss=1)
        draw.text((x + 4, y + 3), text, fill=(160, 40, 35), font=font)
    lines = [f"{arm.name} ({arm.kind})",
             f"usable area {wmap.usable_area / 100:.0f} cm2",
             f"conditioning floor {arm.limits.min_conditioning:.2f}"]
    _panel(img, draw, lines, "top-left", px)
    _colour_bar(img, draw, arm.limits.min_conditioning, px)
    _scale_bar(img, draw, cv.scale, px)
    return img


def _colour_bar(img, draw, floor, px):
    """A horizontal conditioning colour bar, bottom left, with the floor marked."""
    w, h = max(120, img.width // 4), max(8, px - 2)
    x0, y0 = 16, img.height - 16 - h - px - 4
    ramp = conditioning_ramp(np.linspace(0, 1, w))
    bar = Image.fromarray(np.repeat(ramp[None], h, axis=0))
    img.paste(bar, (x0, y0))
    draw.rectangle([x0, y0, x0 + w - 1, y0 + h - 1], outline=(150, 154, 160))
    xf = x0 + floor * (w - 1)
    draw.line([(xf, y0 - 3), (xf, y0 + h + 2)], fill=_INK, width=2)
    font = _font(px - 1)
    draw.text((x0, y0 + h + 3), "0", fill=_INK, font=font)
    draw.text((x0 + w - px // 2, y0 + h + 3), "1", fill=_INK, font=font)
    draw.text((x0, y0 - px - 4), "conditioning", fill=_INK, font=font)
