"""Ink coverage of round-pen polylines drawn with OpenCV's filled polygons and discs,
not the project's renderer (which draws thick polylines).

A round pen of width w leaves the union of a disc of diameter w at every vertex and a
w-wide rectangle along every segment (the Minkowski sum of the path and the pen's disc).
Both are filled with OpenCV at `scale` sub-pixels per pixel with 8 fractional bits of
vertex position, then the sub-pixels are averaged.  OpenCV fills the sub-pixels its
edges touch, so shapes are drawn half a sub-pixel in; at 24 sub-pixels a pixel what is
left is under 1 % of a pen of 1.5 px or more (see the self-check in the tests).
"""

import cv2
import numpy as np

_SHIFT = 8


def cv_coverage(strokes, shape, pen_px, scale=24):
    h, w = int(shape[0]), int(shape[1])
    im = np.zeros((h * scale, w * scale), np.uint8)
    r = 0.5 * pen_px * scale - 0.5
    one = float(1 << _SHIFT)
    for s in strokes:
        # sub-pixel centres at whole numbers, as OpenCV places them
        p = (np.asarray(s, float).reshape(-1, 2) + 0.5) * scale - 0.5
        d = np.diff(p, axis=0)
        n = np.hypot(*d.T)
        ok = n > 0
        a, b, d, n = p[:-1][ok], p[1:][ok], d[ok], n[ok]
        o = np.stack([-d[:, 1], d[:, 0]], axis=1) / n[:, None] * r
        quads = np.stack([a + o, b + o, b - o, a - o], axis=1)
        for q in np.round(quads * one).astype(np.int32):
            cv2.fillConvexPoly(im, q, 255, cv2.LINE_8, _SHIFT)
        for x, y in np.round(p * one).astype(np.int64):
            cv2.circle(im, (int(x), int(y)), int(round(r * one)), 255, -1, cv2.LINE_8, _SHIFT)
    return im.reshape(h, scale, w, scale).mean(axis=(1, 3)) / 255.0
