"""Ink coverage of round-pen polylines drawn with Pillow, not the project's renderer.

A round pen of width w leaves the union of a disc of diameter w at every vertex and a
w-wide rectangle along every segment (the Minkowski sum of the path and the pen's disc).
Pillow draws both filled, at `scale` sub-pixels per pixel; the sub-pixels are then averaged.
"""

import numpy as np
from PIL import Image, ImageDraw


def pil_coverage(strokes, shape, pen_px, scale=8):
    h, w = int(shape[0]), int(shape[1])
    im = Image.new("L", (w * scale, h * scale), 0)
    d = ImageDraw.Draw(im)
    r = 0.5 * pen_px * scale
    for s in strokes:
        # sub-pixel centres at whole numbers, as Pillow places them
        p = (np.asarray(s, float).reshape(-1, 2) + 0.5) * scale - 0.5
        for (x0, y0), (x1, y1) in zip(p[:-1], p[1:]):
            dx, dy = x1 - x0, y1 - y0
            n = np.hypot(dx, dy)
            if n == 0:
                continue
            ox, oy = -dy / n * r, dx / n * r
            d.polygon([(x0 + ox, y0 + oy), (x1 + ox, y1 + oy), (x1 - ox, y1 - oy),
                       (x0 - ox, y0 - oy)], fill=255)
        for x, y in p:
            d.ellipse([x - r + 0.5, y - r + 0.5, x + r - 0.5, y + r - 0.5], fill=255)
    a = np.asarray(im, dtype=np.float64) / 255.0
    return a.reshape(h, scale, w, scale).mean(axis=(1, 3))
