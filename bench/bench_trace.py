"""Time every drawing style on a one-megapixel photo.

Run: python bench/bench_trace.py
Uses scikit-image's shipped astronaut picture, enlarged to about 1 MP.
"""

import time

import cv2
import numpy as np
from skimage import data

from inkreach.trace import STYLES, load_image, trace

RUNS = {
    "outline": {},
    "centerline": {},
    "hatch": {},
    "contour": {},
    "stipple": {},
    "stipple 10k": {"dots": 10_000},
}


def main():
    img = cv2.resize(data.astronaut(), (1024, 1024), interpolation=cv2.INTER_CUBIC)
    t = time.perf_counter()
    lum = load_image(img).luminance
    print(f"{'load':<14}{time.perf_counter() - t:8.3f} s   {lum.shape[1]}x{lum.shape[0]}")
    for label, opts in RUNS.items():
        style = label.split()[0]
        assert style in STYLES
        t = time.perf_counter()
        strokes = trace(lum, style, **opts)
        dt = time.perf_counter() - t
        pts = sum(len(s) for s in strokes)
        print(f"{label:<14}{dt:8.3f} s   {len(strokes):6d} strokes {pts:8d} points")


if __name__ == "__main__":
    np.seterr(all="ignore")
    main()
