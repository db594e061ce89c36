"""What the previews share: the arm's posture and links, outlines, bounds, figures."""

import numpy as np
from scipy import ndimage
from skimage import measure

__all__ = []


def as_strokes(strokes):
    """Strokes as a list of finite (M, 2) float arrays (empty ones dropped)."""
    out = []
    for s in strokes or ():
        a = np.asarray(s, dtype=float).reshape(-1, 2)
        a = a[np.all(np.isfinite(a), axis=1)]
        if len(a):
            out.append(a)
    return out


def posture(arm, strokes=()):
    """Joint angles to draw the arm in: home, else at the first stroke's start, else mid-range."""
    q = arm.home()
    if q is None and len(strokes):
        q = np.asarray(arm.ik(strokes[0][0]), dtype=float)
    if q is None or not np.all(np.isfinite(q)) or not np.all(np.isfinite(arm.fk(q))):
        q = (arm.limits.lower + arm.limits.upper) / 2
    return np.asarray(q, dtype=float)


def linkage(arm, q):
    """Link segments and motor positions of the arm at angles ``q``.

    Returns
    -------
    links : list of ((2,), (2,)) pairs
    motors : list of (2,) arrays
    pen : (2,) array or None
    """
    j = {k: np.asarray(v, dtype=float)[0] for k, v in arm.joints(np.atleast_2d(q)).items()}
    chain = [k for k in j if k != "pen"]
    links = [(j[a], j[b]) for a, b in zip(chain[:-1], chain[1:])]
    pen = j.get("pen")
    if pen is not None:
        anchor = "pen_joint" if "pen_joint" in j else chain[-1]
        if np.hypot(*(pen - j[anchor])) > 1e-9:
            links.append((j[anchor], pen))
    motors = [j[k] for k in j if k.endswith("motor") or k == "shoulder"]
    ok = all(np.all(np.isfinite(np.concatenate(s))) for s in links)
    return (links if ok else []), motors, pen


def outlines(wmap, mask=None):
    """Boundary polylines (arm mm) of the usable region of a workspace map."""
    m = wmap.usable if mask is None else mask
    # a slight blur first, so the 0.5 level runs smoothly between cell
    # centres instead of tracing the grid's staircase
    padded = ndimage.gaussian_filter(np.pad(m.astype(float), 2), 0.8, truncate=2.5)[1:-1, 1:-1]
    out = []
    for c in measure.find_contours(padded, 0.5):
        rows, cols = c[:, 0] - 1, c[:, 1] - 1
        out.append(np.stack([wmap.x[0] + cols * wmap.step, wmap.y[0] + rows * wmap.step], 1))
    return out


def bounds(groups, margin=0.06, minimum=10.0):
    """(xmin, xmax, ymin, ymax) around every point of every array, with a margin."""
    pts = [np.asarray(g, float).reshape(-1, 2) for g in groups if len(g)]
    pts = [p[np.all(np.isfinite(p), axis=1)] for p in pts]
    pts = [p for p in pts if len(p)]
    if not pts:
        return (-minimum, minimum, -minimum, minimum)
    a = np.concatenate(pts)
    lo, hi = a.min(0), a.max(0)
    c, half = (lo + hi) / 2, np.maximum((hi - lo) / 2, minimum / 2)
    half = half + margin * half.max()
    return (c[0] - half[0], c[0] + half[0], c[1] - half[1], c[1] + half[1])


def overlap(a, b):
    """Area shared by two boxes (x0, y0, x1, y1).

    Examples
    --------
    >>> overlap((0, 0, 2, 2), (1, 1, 5, 5)), overlap((0, 0, 1, 1), (2, 2, 3, 3))
    (1, 0)
    """
    w = min(a[2], b[2]) - max(a[0], b[0])
    h = min(a[3], b[3]) - max(a[1], b[1])
    return max(w, 0) * max(h, 0)


def travel_moves(strokes, start=None):
    """Straight pen-up moves between strokes (and from ``start``), as (K, 2, 2)."""
    ends = [s[-1] for s in strokes[:-1]]
    starts = [s[0] for s in strokes[1:]]
    if start is not None and len(strokes):
        ends.insert(0, np.asarray(start, float))
        starts.insert(0, strokes[0][0])
    if not ends:
        return np.zeros((0, 2, 2))
    return np.stack([np.array(ends), np.array(starts)], 1)


def nice_length(span):
    """A round length (1, 2 or 5 times a power of ten) near a fifth of ``span``."""
    target = max(span / 5.0, 1e-9)
    p = 10.0 ** np.floor(np.log10(target))
    for m in (5.0, 2.0, 1.0):
        if m * p <= target:
            return m * p
    return p


def _length(mm):
    mm = float(mm)
    return f"{mm / 1000:.2f} m" if abs(mm) >= 1000 else f"{mm:.0f} mm"


def _duration(t):
    t = float(t)
    if t >= 3600:
        return f"{int(t // 3600)} h {int(t % 3600 // 60):02d} min"
    if t >= 60:
        return f"{int(t // 60)} min {int(round(t % 60)) % 60:02d} s"
    return f"{t:.1f} s"


def figure_rows(stats):
    """The plan's figures for a corner of a preview, as (label, value) text pairs.

    Strokes, pen lifts, pen-down length, pen-up travel, drawing time,
    drawing size, worst conditioning, the likeness when
    ``stats["fidelity"]`` holds it (see :func:`likeness_text`) and how to
    lay the paper for a tilted drawing; figures missing from ``stats`` are
    left out.

    Examples
    --------
    >>> figure_rows({"strokes": 3, "pen_down_mm": 1520.0, "estimated_s": 75.0})
    [('strokes', '3'), ('pen-down length', '1.52 m'), ('drawing time', '1 min 15 s')]
    """
    if not stats:
        return []
    s = dict(stats)

    def num(k):
        try:
            v = float(s[k])
        except (KeyError, TypeError, ValueError):
            return None
        return v if np.isfinite(v) else None

    rows = []
    for key, label in (("strokes", "strokes"), ("pen_lifts", "pen lifts")):
        if num(key) is not None:
            rows.append((label, f"{int(num(key))}"))
    for key, label in (("pen_down_mm", "pen-down length"), ("pen_up_mm", "pen-up travel")):
        if num(key) is not None:
            rows.append((label, _length(num(key))))
    if num("estimated_s") is not None:
        rows.append(("drawing time", _duration(num("estimated_s"))))
    size = s.get("drawing_mm")
    if size is not None and len(size) == 2 and np.all(np.isfinite(np.asarray(size, float))):
        rows.append(("drawing size", f"{float(size[0]):.0f} x {float(size[1]):.0f} mm"))
    if num("min_conditioning") is not None:
        rows.append(("worst conditioning", f"{num('min_conditioning'):.2f}"))
    text = likeness_text(s.get("fidelity"))
    if text:
        rows.append(("likeness", text))
    if s.get("paper_note"):
        rows.append(("paper", str(s["paper_note"])))
    return rows


# How each likeness figure reads: key -> (words, as a percentage?)
_LIKENESS_PARTS = {
    "ssim": ("SSIM", False),
    "tone_error": ("tone error", False),
    "lines_drawn": ("lines drawn", True),
    "strokes_on_lines": ("strokes on lines", True),
}


def likeness_text(fidelity):
    """One short text of the likeness figures, the same on every surface.

    Tone styles: SSIM and tone error; line styles: the share of the
    picture's lines drawn and of the strokes on them, in per cent. Other
    numeric figures are written with their key's words.

    Examples
    --------
    >>> likeness_text({"ssim": 0.8312, "tone_error": 0.0512})
    'SSIM 0.83 · tone error 0.05'
    >>> likeness_text({"measure": "lines", "lines_drawn": 0.912, "strokes_on_lines": 0.87})
    'lines drawn 91% · strokes on lines 87%'
    >>> likeness_text(None)
    ''
    """
    if not isinstance(fidelity, dict):
        return ""
    parts = []
    for key, v in fidelity.items():
        if isinstance(v, bool) or not isinstance(v, (int, float, np.floating, np.integer)):
            continue
        v = float(v)
        if not np.isfinite(v):
            continue
        words, pct = _LIKENESS_PARTS.get(key, (key.replace("_", " "), False))
        parts.append(f"{words} {v * 100:.0f}%" if pct else f"{words} {v:.2f}")
    return " \u00b7 ".join(parts)


def figure_lines(stats):
    """Short lines ``"label value"`` of the plan's figures (see :func:`figure_rows`)."""
    return [f"{label} {value}" for label, value in figure_rows(stats)]


def figure_title(stats):
    """A heading for the figures: the style and the arm, when ``stats`` names them."""
    s = dict(stats or {})
    parts = [str(s[k]) for k in ("style", "arm") if s.get(k)]
    return " \u00b7 ".join(parts) if parts else "plan"
