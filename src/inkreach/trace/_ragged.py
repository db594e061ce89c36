"""Many polylines at once: flat point arrays cut into pieces by start and length.

A ragged set of ``K`` polylines is one flat ``(N, 2)`` array with the
``start`` and ``count`` of each piece.  The helpers here resample and filter
all pieces with a handful of numpy calls, giving exactly the numbers the
one-piece-at-a-time code (``np.interp``, ``scipy.ndimage.gaussian_filter1d``)
gives for each piece alone.
"""

import numpy as np
from scipy.ndimage import gaussian_filter1d


def ranges(starts, counts):
    """``concatenate([arange(s, s + c) for s, c in zip(starts, counts)])``."""
    counts = np.asarray(counts, dtype=np.intp)
    total = int(counts.sum())
    if total == 0:
        return np.zeros(0, dtype=np.intp)
    offs = np.cumsum(counts) - counts
    owner = np.repeat(np.arange(len(counts)), counts)
    return np.asarray(starts, dtype=np.intp)[owner] + (np.arange(total) - offs[owner])


def local_index(counts):
    """Owner piece and index inside it of every flat element."""
    counts = np.asarray(counts, dtype=np.intp)
    owner = np.repeat(np.arange(len(counts)), counts)
    offs = np.cumsum(counts) - counts
    return owner, np.arange(int(counts.sum())) - offs[owner]


def resample(P, start, count, step=1.0):
    """Points every ``step`` of arc length along each piece, ends kept.

    Pieces that do not tile ``P`` end to end are gathered first.

    Returns the flat points and the start and count of each resampled
    piece; a piece of no length becomes its first point.  The numbers are
    those of ``np.interp`` on each piece's own cumulative chord length.
    """
    start = np.asarray(start, dtype=np.intp)
    count = np.asarray(count, dtype=np.intp)
    tiled = np.cumsum(count) - count
    if len(P) != count.sum() or not np.array_equal(start, tiled):
        P, start = P[ranges(start, count)], tiled
    d = np.diff(P, axis=0)
    seg = np.hypot(d[:, 0], d[:, 1])
    # Each piece's own running sum (a running sum over all pieces would
    # round differently); one short call per piece.
    S = np.zeros(len(P))
    acc = np.add.accumulate
    for a, m in zip(start.tolist(), count.tolist()):
        if m > 1:
            acc(seg[a:a + m - 1], out=S[a + 1:a + m])
    last = start + count - 1
    total = S[last]
    good = total > 0
    n_out = np.where(good, np.maximum(2, np.ceil(total / step).astype(np.intp) + 1), 1)
    owner, i = local_index(n_out)
    tot = total[owner]
    div = np.maximum(n_out - 1, 1)
    stp = (total / div)[owner]
    # np.linspace(0, total, n): i * (total / (n - 1)), the last one exactly total
    t = np.where(stp == 0, i / div[owner] * tot, i * stp)
    t[i == n_out[owner] - 1] = tot[i == n_out[owner] - 1]
    # Interval j of each t: S[j] <= t < S[j + 1] inside its own piece.  A
    # search over all pieces shifted apart finds it to within rounding; a
    # few exact steps settle it.
    gap = np.cumsum(total + 2.0) - (total + 2.0)
    j = np.searchsorted(S + np.repeat(gap, count), t + gap[owner], side="right") - 1
    lo, hi = start[owner], last[owner]
    j = np.clip(j, lo, hi)
    while True:
        down = (S[j] > t) & (j > lo)
        up = (j < hi) & (S[np.minimum(j + 1, len(S) - 1)] <= t)
        if not (down.any() or up.any()):
            break
        j = j - down + up
    end = j == hi
    j1 = np.minimum(j + 1, hi)
    ds = S[j1] - S[j]
    with np.errstate(divide="ignore", invalid="ignore"):
        slope = (P[j1] - P[j]) / ds[:, None]
        out = slope * (t - S[j])[:, None] + P[j]
    exact = end | (S[j] == t)
    out[exact] = P[j[exact]]
    # pieces of no length: their first point
    out[~good[owner]] = P[start[owner[~good[owner]]]]
    new_start = np.cumsum(n_out) - n_out
    return out, new_start, n_out


def twice(X, start, count, sigma, wrap):
    """Gaussian "twicing" ``G(2x - G(x))`` of every piece on its own.

    ``wrap`` (per piece) extends a piece periodically, otherwise by its end
    values, as ``gaussian_filter1d`` modes "wrap" and "nearest" do.  Every
    piece is written between margins as wide as the kernel, so one filter
    call serves all of them.
    """
    start = np.asarray(start, dtype=np.intp)
    count = np.asarray(count, dtype=np.intp)
    R = int(4.0 * float(sigma) + 0.5)        # gaussian_filter1d's radius (truncate=4)
    width = count + 2 * R
    owner, j = local_index(width)
    j -= R
    n = count[owner]
    inner = np.clip(j, 0, n - 1)
    ring = wrap[owner]
    if ring.any():
        inner[ring] = np.mod(j[ring], n[ring])
    src = start[owner] + inner
    body = (j >= 0) & (j < n)            # in order: the flat positions of X
    F = X[src]
    g = gaussian_filter1d(F, sigma, axis=0, mode="nearest")
    h = 2.0 * F[body] - g[body]
    g2 = gaussian_filter1d(h[src], sigma, axis=0, mode="nearest")
    return g2[body]
