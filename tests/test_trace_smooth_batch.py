"""The batched smoothing gives the numbers of the one-stroke-at-a-time code.

`smooth_polylines` handles all strokes with a few array operations; the
straightforward implementation it replaced (smoothing one stroke at a time)
is kept below as the reference, and both must agree to 1e-6 px on strokes
traced from scikit-image's sample pictures and on invented shapes.
"""

import numpy as np
import pytest
from hypothesis import given, settings, strategies as st
from scipy.ndimage import gaussian_filter1d
from skimage import data

import inkreach.trace._common as _common
import inkreach.trace.graph as _graph
from inkreach.trace import centerline, find_corners, outline, smooth_polylines

# ---- reference: the former per-stroke implementation -----------------------
_STEP = 1.0          # resampling step along the curve, in pixels


def _resample(p, step):
    """Points every ``step`` of arc length along ``p`` (ends kept)."""
    seg = np.hypot(*np.diff(p, axis=0).T)
    s = np.concatenate([[0.0], np.cumsum(seg)])
    total = s[-1]
    if total <= 0:
        return p[:1].copy()
    n = max(2, int(np.ceil(total / step)) + 1)
    t = np.linspace(0.0, total, n)
    return np.stack([np.interp(t, s, p[:, 0]), np.interp(t, s, p[:, 1])], axis=1)


def _turning(p, k, closed):
    """Turning angle at every point between the chords k points back and ahead."""
    n = len(p)
    i = np.arange(n)
    if closed:
        m = n - 1                       # last point repeats the first
        back, ahead = p[(i - k) % m], p[(i + k) % m]
    else:
        back, ahead = p[np.maximum(i - k, 0)], p[np.minimum(i + k, n - 1)]
    u, v = p - back, ahead - p
    cross = u[:, 0] * v[:, 1] - u[:, 1] * v[:, 0]
    dot = (u * v).sum(axis=1)
    ang = np.abs(np.arctan2(cross, dot))
    if not closed:
        ang[:k] = ang[n - k:] = 0.0     # no full chord on one side
    return ang


def _ref_find_corners(p, scale=2.0, angle=np.radians(40.0), closed=False):
    """The implementation before batching, kept as the reference."""
    n = len(p)
    k = max(2, int(np.ceil(3 * scale)))
    if n < 2 * k + 1:
        return np.zeros(0, dtype=np.intp)
    a1 = _turning(p, k, closed)
    a2 = _turning(p, 2 * k, closed) if n >= 4 * k + 1 else a1
    cand = (a1 > angle) & (a2 < 1.5 * a1 + 0.1)
    if closed:
        cand[-1] = False
    # Keep only the local maxima of the turn (non-maximum suppression).
    body = a1[:-1] if closed else a1
    pad = np.pad(body, 2 * k, mode="wrap" if closed else "constant")
    win = np.lib.stride_tricks.sliding_window_view(pad, 4 * k + 1).max(axis=1)
    peak = a1 >= (np.append(win, win[0]) if closed else win)
    idx = np.flatnonzero(cand & peak)
    if len(idx) > 1:                      # ties on a plateau: keep the first
        idx = idx[np.concatenate([[True], np.diff(idx) > 2 * k])]
    return idx


def _twice(x, sigma, mode):
    """Gaussian smoothing 'twiced': G(2x - G(x)); no shrinkage to second order."""
    g = gaussian_filter1d(x, sigma, axis=0, mode=mode)
    return gaussian_filter1d(2.0 * x - g, sigma, axis=0, mode=mode)


def _fitted_end(p, m):
    """The first point projected onto a line fitted to points ``m/2 .. 2m``.

    Thinning bends the last pixels of a line's free end into a small hook;
    the fit skips them.
    """
    seg = p[min(m // 2, len(p) - 2):min(2 * m, len(p))]
    c = seg.mean(axis=0)
    d = np.linalg.svd(seg - c, full_matrices=False)[2][0]
    return c + np.dot(p[0] - c, d) * d


def _smooth_open(p, sigma, pin_start=True, pin_end=True):
    """Smooth an open piece; pinned ends stay put, free ones follow a fit."""
    n = len(p)
    if n < 3:
        return p.copy()
    r = min(n - 1, int(np.ceil(4 * sigma)))
    m = max(3, int(np.ceil(3 * sigma)))
    a = p[0] if pin_start else _fitted_end(p, m)
    b = p[-1] if pin_end else _fitted_end(p[::-1], m)
    # Point reflection through each end keeps straight lines straight and
    # the ends where they are.
    head = 2 * a - p[r:0:-1]
    tail = 2 * b - p[-2:-r - 2:-1]
    q = _twice(np.concatenate([head, p, tail]), sigma, "nearest")[r:r + n]
    if pin_start:
        q[0] = p[0]
    if pin_end:
        q[-1] = p[-1]
    return q


def _arm_line(q, a, b):
    """Point, direction and RMS residual of the straight fit to samples a..b."""
    seg = q[a:b + 1]
    c = seg.mean(axis=0)
    _, sv, vt = np.linalg.svd(seg - c, full_matrices=False)
    return c, vt[0], sv[-1] / np.sqrt(len(seg))


def _sharpen(q, corners, z):
    """Corner points moved to where the straight arms on either side meet.

    Thinning rounds a corner and leaves a small hook where a pruned branch
    left the junction; for a corner with ``4 z`` samples of arm on both
    sides the samples within ``2 z`` of it are replaced by the intersection
    of lines fitted to the arms, if both arms are straight (RMS residual
    under 0.35 px) and the meeting point lies within ``2 z`` of the corner
    (3 px for bent arms).
    Returns the new points, one per corner, or None where left alone.
    """
    n = len(q)
    brk = np.concatenate([[0], corners, [n - 1]])
    out = []
    for i, c in enumerate(corners):
        lo, hi = brk[i], brk[i + 2]
        if c - lo < 4 * z or hi - c < 4 * z:
            out.append(None)
            continue
        p1, d1, e1 = _arm_line(q, c - 4 * z, c - 2 * z)
        p2, d2, e2 = _arm_line(q, c + 2 * z, c + 4 * z)
        A = np.stack([d1, -d2], axis=1)
        if abs(np.linalg.det(A)) < 0.2 or max(e1, e2) > 0.35:   # parallel or bent
            out.append(None)
            continue
        t = np.linalg.solve(A, p2 - p1)
        x = p1 + t[0] * d1
        # bent arms (halves more than 5 degrees apart, or a fit residual over 0.2 px)
        # let the corner move at most 3 px
        bent = max(e1, e2) > 0.2
        for a0 in (c - 4 * z, c + 2 * z):
            _, da, _ = _arm_line(q, a0, a0 + z)
            _, db, _ = _arm_line(q, a0 + z, a0 + 2 * z)
            bent |= np.arccos(min(1.0, abs(float(da @ db)))) > np.radians(5.0)
        reach = min(2 * z, 3.0) if bent else 2 * z
        out.append(x if np.hypot(*(x - q[c])) <= reach else None)
    return out


def _smooth_one(p, sigma, angle, pins):
    closed = len(p) > 3 and np.allclose(p[0], p[-1])
    q = _resample(p, _STEP)
    if len(q) < 4:
        return p.copy()
    corners = _ref_find_corners(q, sigma, angle, closed)
    if not closed:                       # no corners in the hook of a free end
        z = max(2, int(round(2 * sigma)))
        corners = corners[((corners >= 3 * z) | pins[0]) & ((corners <= len(q) - 1 - 3 * z) | pins[1])]
    if closed and len(corners) == 0:
        body = _twice(q[:-1], sigma, "wrap")
        return np.concatenate([body, body[:1]])
    if closed:
        c0 = corners[0]
        q = np.concatenate([q[c0:-1], q[:c0 + 1]])
        inner = corners[1:] - c0
        # The first corner is now both ends; look at it once, round the loop.
        z = max(2, int(round(2 * sigma)))
        shifted = np.concatenate([q[len(q) // 2:-1], q[:len(q) // 2 + 1]])
        first = _sharpen(shifted, np.array([len(q) - 1 - len(q) // 2]), z)[0]
        if len(inner) and (inner[0] < 4 * z or inner[-1] > len(q) - 1 - 4 * z):
            first = None                     # its arms are too short
        tips = [first] + _sharpen(q, inner, z) + [first]
        corners = np.concatenate([[0], inner, [len(q) - 1]])
    else:
        z = max(2, int(round(2 * sigma)))
        tips = [None] + _sharpen(q, corners, z) + [None]
        corners = np.concatenate([[0], corners, [len(q) - 1]])
    parts = []
    for i in range(len(corners) - 1):
        a, b = corners[i], corners[i + 1]
        ta, tb = tips[i], tips[i + 1]
        s0 = a + 2 * z if ta is not None else a
        s1 = b - 2 * z if tb is not None else b
        piece = q[s0:s1 + 1]
        if ta is not None:
            piece = np.concatenate([ta[None], piece])
        if tb is not None:
            piece = np.concatenate([piece, tb[None]])
        if ta is not None or tb is not None:
            piece = _resample(piece, _STEP)
        first, last = i == 0, i == len(corners) - 2
        parts.append(_smooth_open(piece, sigma, pins[0] or closed or not first,
                                  pins[1] or closed or not last))
    return np.concatenate([parts[0]] + [s[1:] for s in parts[1:]])


def _ref_smooth_polylines(polylines, sigma=1.5, corner_angle=np.radians(40.0), pinned=True):
    """The implementation before batching, kept as the reference."""
    out = []
    if isinstance(pinned, (bool, np.bool_)):
        pinned = [(bool(pinned), bool(pinned))] * len(polylines)
    for p, pins in zip(polylines, pinned):
        p = np.asarray(p, dtype=float).reshape(-1, 2)
        if sigma <= 0 or len(p) < 3:
            out.append(p.copy())
        else:
            out.append(_smooth_one(p, float(sigma), float(corner_angle), pins))
    return out


# ---- comparisons ------------------------------------------------------------

def _assert_same(lines, sigma=2.0, angle=np.radians(40.0), pinned=True):
    got = smooth_polylines(lines, sigma, angle, pinned)
    want = _ref_smooth_polylines(lines, sigma, angle, pinned)
    assert len(got) == len(want)
    for g, w in zip(got, want):
        assert g.shape == w.shape
        if len(w):
            assert np.abs(g - w).max() <= 1e-6


def _captured(monkeypatch, run):
    """The strokes (and pins) a tracing style hands to the smoothing."""
    seen = []

    def spy(polylines, sigma=1.5, corner_angle=np.radians(40.0), pinned=True):
        seen.append(([np.array(p, dtype=float) for p in polylines], sigma, corner_angle,
                     pinned if isinstance(pinned, bool) else [tuple(p) for p in pinned]))
        return smooth_polylines(polylines, sigma, corner_angle, pinned)

    monkeypatch.setattr(_graph, "smooth_polylines", spy)
    monkeypatch.setattr(_common, "smooth_polylines", spy)
    run()
    assert seen
    return seen


@pytest.mark.parametrize("name", ["camera", "astronaut"])   # scikit-image sample pictures
@pytest.mark.parametrize("style", [outline, centerline])
def test_batched_smoothing_matches_one_stroke_at_a_time_on_sample_pictures(
        monkeypatch, name, style):
    img = getattr(data, name)()
    lum = (img if img.ndim == 2 else img.mean(axis=2)).astype(np.float32) / 255.0
    for lines, sigma, angle, pinned in _captured(monkeypatch, lambda: style(lum)):
        assert len(lines) > 50
        _assert_same(lines, sigma, angle, pinned)


def _polygon(corners, closed):
    pts = np.asarray(corners, dtype=float)
    if closed:
        pts = np.vstack([pts, pts[:1]])
    dense = np.concatenate([np.linspace(a, b, int(np.hypot(*(b - a))) + 2)[:-1]
                            for a, b in zip(pts[:-1], pts[1:])] + [pts[-1:]])
    return np.round(dense)                       # a pixel staircase


def test_batched_smoothing_matches_on_corners_loops_and_short_strokes():
    ang = np.pi / 2 + np.arange(10) * np.pi / 5
    rad = np.where(np.arange(10) % 2 == 0, 80.0, 32.0)
    star = np.stack([100 + rad * np.cos(ang), 100 - rad * np.sin(ang)], axis=1)
    square = [(0, 0), (40, 0), (40, 40), (0, 40)]
    t = np.linspace(0, 2 * np.pi, 300)
    ring = np.round(np.stack([30 * np.cos(t), 30 * np.sin(t)], 1))
    lines = [_polygon(star, True), _polygon(star, False), _polygon(square, True),
             _polygon(square, False), ring, ring[:150], np.zeros((5, 2)),
             np.array([[0.0, 0], [1, 0], [2, 0]]), np.array([[0.0, 0], [1, 1]]),
             np.array([[0.0, 0], [0.5, 0], [1, 0], [0.0, 0]]), np.zeros((0, 2))]
    for pins in (True, False):
        for sigma in (0.0, 0.8, 1.5, 2.0, 3.0):
            _assert_same(lines, sigma, pinned=pins)
    _assert_same(lines, 2.0, pinned=[(i % 2 == 0, i % 3 == 0) for i in range(len(lines))])


@settings(max_examples=40, deadline=None)
@given(st.integers(0, 2**32 - 1), st.sampled_from([0.7, 1.5, 2.0, 2.6]))
def test_batched_smoothing_matches_on_random_walks(seed, sigma):
    rng = np.random.default_rng(seed)
    lines, pins = [], []
    for _ in range(rng.integers(1, 12)):
        n = int(rng.integers(3, 120))
        step = rng.choice([0.3, 1.0, 2.5])
        p = np.cumsum(rng.normal(size=(n, 2)) * step, axis=0)
        if rng.random() < 0.4:
            p = np.round(p)                      # staircases, repeated points
        if rng.random() < 0.3:
            p = np.vstack([p, p[:1]])            # closed
        lines.append(p)
        pins.append((bool(rng.random() < 0.5), bool(rng.random() < 0.5)))
    _assert_same(lines, sigma, pinned=pins)


@pytest.mark.parametrize("closed", [False, True])
def test_find_corners_matches_the_one_stroke_code(closed):
    sq = _polygon([(0, 0), (30, 0), (30, 20), (0, 20)], closed)
    q = _resample(sq, 1.0)
    for scale in (1.0, 2.0):
        np.testing.assert_array_equal(find_corners(q, scale, closed=closed),
                                      _ref_find_corners(q, scale, closed=closed))
