"""Tone styles on photos: how the drawing reads from a distance, and how long it takes.

``python bench/bench_tone.py`` plans every tone style on several of scikit-image's shipped
photos on the built-in default arm and prints a Markdown table; ``--write`` also puts it
into bench/RESULTS.md (replacing its section).  bench/run.py calls `section`.

Figures per plan, from `inkreach.tone_likeness` (the drawing rendered from the stream's
angles at the pen's width, exact area coverage in linear light, photo and drawing both
blurred by a Gaussian of 1.5 mm on paper, compared in CIE 1976 L*): tonal range ratio
(p95 - p5 of the drawing over that of the photo), mean L* difference, SSIM (Wang et al.
2004, scikit-image); pen lifts and estimated drawing time from ``plan.stats``.
"""

import os
import sys
import time

import numpy as np

HERE = os.path.dirname(os.path.abspath(__file__))
sys.path.insert(0, os.path.join(os.path.dirname(HERE), "src"))

TITLE = "Tone styles on photos"
PHOTOS = ("camera", "astronaut", "coffee", "chelsea")
TIME_LIMIT_S = 15 * 60


def _photo(name):
    from skimage import data
    return np.asarray(getattr(data, name)())


def section(cfg=None):
    """The Markdown body of the section (photos fewer with ``cfg['runs'] == 1``)."""
    import inkreach
    from inkreach.likeness import TONE_TARGETS

    quick = bool(cfg) and cfg.get("runs", 3) == 1
    photos = PHOTOS[:2] if quick else PHOTOS
    styles = [s for s, r in inkreach.STYLE_RENDERS.items() if r == "tone"]
    rows, met, tone_met = [], {s: 0 for s in styles}, {s: 0 for s in styles}
    for name in photos:
        img = _photo(name)
        for st in styles:
            t0 = time.perf_counter()
            try:
                p = inkreach.plan(img, style=st, fidelity=False)
                f = inkreach.tone_likeness(p, img)
            except Exception as exc:  # noqa: BLE001
                rows.append(f"| {name} | {st} | not available: {type(exc).__name__}: "
                            f"{str(exc).splitlines()[0][:120]} | | | | | | | |")
                continue
            s = p.stats
            tone_ok, time_ok = f.meets(), s["estimated_s"] < TIME_LIMIT_S
            met[st] += tone_ok and time_ok
            tone_met[st] += tone_ok
            rows.append(f"| {name} | {st} | {f.range_ratio:.3f} | {f.delta_lightness:+.2f} | "
                        f"{f.ssim:.3f} | {s['pen_lifts']:,} | {s['estimated_s'] / 60:.1f} | "
                        f"{time.perf_counter() - t0:.1f} | {'met' if tone_ok else 'not met'} | "
                        f"{'met' if time_ok else 'not met'} |")
    head = ("Every tone style (`STYLE_RENDERS[style] == \"tone\"`) with its default options on "
            "scikit-image's shipped photos (astronaut, coffee and chelsea as grey), planned on "
            "the built-in default arm. The drawing is rendered from the stream's angles at the "
            "pen's width (exact area coverage, linear light), photo and drawing are blurred by "
            "a Gaussian of 1.5 mm on paper and compared in CIE L*. Targets: range ratio ≥ "
            f"{TONE_TARGETS['range_ratio']}, |ΔL*| ≤ {TONE_TARGETS['delta_lightness']:g}, SSIM "
            f"≥ {TONE_TARGETS['ssim']}, estimated time < 15 min. Stipple's default draws dots "
            "placed by weighted Voronoi stippling where the tone (smoothed over a dot) is "
            "lighter than 0.45 and fills darker areas with dense lines that follow the tone "
            "(crossed near black): the arm draws long lines about four times faster per "
            "unit of ink than small dots, whose short legs each start and end at rest.\n\n"
            "| photo | style | range ratio | ΔL* | SSIM | pen lifts | estimated min | plan s "
            "| tone targets | time target |\n|---|---|---|---|---|---|---|---|---|---|\n")
    summary = ("\n\nTone targets met on " + ", ".join(
        f"{st}: {tone_met[st]} of {len(photos)}" for st in styles) + " photos; tone and time on "
        + ", ".join(f"{st}: {met[st]} of {len(photos)}" for st in styles) + ".")
    return head + "\n".join(rows) + summary


def _write(text, path=os.path.join(HERE, "RESULTS.md")):
    """Put ``## TITLE`` + text into RESULTS.md, replacing an older copy of it."""
    old = open(path, encoding="utf-8").read() if os.path.exists(path) else ""
    block = f"## {TITLE}\n\n{text}\n"
    start = old.find(f"## {TITLE}\n")
    if start >= 0:
        end = old.find("\n## ", start + 1)
        tail = old[end + 1:] if end >= 0 else ""
        if end < 0 and "\nWhole run:" in old[start:]:
            tail = old[start + old[start:].find("\nWhole run:") + 1:]
        new = old[:start] + block + ("\n" + tail if tail else "")
    else:
        at = old.find("\nWhole run:")
        new = (old[:at + 1] + block + old[at:]) if at >= 0 else old + "\n" + block
    with open(path, "w", encoding="utf-8") as f:
        f.write(new)


if __name__ == "__main__":
    out = section()
    print(out)
    if "--write" in sys.argv[1:]:
        _write(out)
