"""The hatch style: tone by parallel and crossed lines whose ink matches it."""

import math

import cv2
import numpy as np

from . import _options
from ._common import as_luminance, finish

__all__ = ["hatch", "layer_fraction"]

# Directions of successive layers relative to the first, in degrees: the
# second crosses the first at right angles, later ones fill in between.
_LAYER_OFFSETS = (0.0, 90.0, 45.0, 135.0, 22.5, 112.5, 67.5, 157.5)
_MAX_FRACTION = 0.7   # at most this much of the paper inked by one layer before
                      # another crossing layer is added (our choice, by
                      # bench/bench_tone.py: fewer layers overlap less, so the
                      # same tone takes less line and drawing time)
_MIN_TONE = 0.02      # lighter than this is left as bare paper
_REACH = 8            # runs join runs up to this many lattice lines on (lighter
                      # tones draw every 2nd, 4th, 8th line of the lattice)
_HOP = 20.0           # longest pen-down hop between hatch strokes, lattice spacings


def layer_fraction(coverage, layers):
    """Ink fraction each of ``layers`` crossed layers needs for ``coverage``.

    Independent crossed line sets, each inking a fraction ``f`` of the
    paper, together ink ``1 - (1 - f)**k``; this solves for ``f``.

    Parameters
    ----------
    coverage : float or ndarray
        Wanted ink coverage in [0, 1], that is ``1 - Y`` for black ink on
        white paper (Murray-Davies).
    layers : int or ndarray

    Returns
    -------
    float or ndarray

    References
    ----------
    .. [1] A. Murray, "Monochrome reproduction in photoengraving", J.
       Franklin Inst. 221, 1936 (the Murray-Davies relation R = 1 - a for
       black ink of coverage a on white paper).

    Examples
    --------
    >>> round(float(layer_fraction(0.75, 2)), 6)
    0.5
    """
    return 1.0 - (1.0 - np.asarray(coverage, dtype=float)) ** (1.0 / np.asarray(layers))


def _clean(lab, pen):
    """Level map without regions much narrower than a few hatch spacings.

    A median filter over five pen widths (about three and a half of the densest
    spacings, ``pen / 0.7``)
    removes specks and slivers of odd levels, whose hatching would come out
    as crumbs (an area-and-width filter of the kind morphological opening
    gives, but without leaving holes).
    """
    k = max(5, int(round(5.0 * pen)) | 1)
    return cv2.medianBlur(np.ascontiguousarray(lab), k)


def _smoothed(tone, sigma):
    """Bilateral filter of the tone: Gaussian ``sigma`` in space, 0.1 in tone.

    References
    ----------
    .. [1] C. Tomasi and R. Manduchi, "Bilateral filtering for gray and
       color images", ICCV 1998.
    """
    t = np.ascontiguousarray(tone, dtype=np.float32)
    d = 2 * int(math.ceil(2.0 * sigma)) + 1
    return cv2.bilateralFilter(t, d, 0.1, float(sigma), borderType=cv2.BORDER_REPLICATE
                               ).astype(np.float64)


def _layer_fractions(tone, layers, pen):
    """Ink fraction of each crossed layer at every pixel.

    Every pixel gets the fewest layers whose equal fractions stay at most
    ``_MAX_FRACTION`` (more for tones darker than ``layers`` such layers
    give); the layer-count map is cleaned of specks, and inside each count
    the fraction follows the tone continuously (`layer_fraction`).
    """
    k = np.ones(tone.shape, dtype=np.uint8)
    for j in range(2, layers + 1):
        k[layer_fraction(tone, j - 1) > _MAX_FRACTION] = j
    k = _clean(k, pen)
    f = np.clip(layer_fraction(np.clip(tone, 0.0, 1.0), k), 0.0, 1.0)
    return [np.where(k > j, f, 0.0) for j in range(layers)]


def _line_ranks(n, bits=5):
    """Threshold of each lattice line: its index bit-reversed (van der Corput).

    A line is drawn where the wanted density exceeds its rank, so lighter
    tones keep a subset of the lines of darker ones (one shared lattice):
    density 1/2 keeps every other line, 1/4 every fourth, and densities in
    between keep lines at most two lattice gaps apart from their evenest
    spacing (the low discrepancy of the van der Corput sequence [1]_).

    References
    ----------
    .. [1] J. G. van der Corput, "Verteilungsfunktionen", Proc. Ned. Akad.
       v. Wetensch. 38, 1935.
    """
    i = np.arange(n) % (1 << bits)
    r = np.zeros(n, dtype=np.int64)
    for b in range(bits):
        r |= ((i >> b) & 1) << (bits - 1 - b)
    return (r + 0.5) / (1 << bits)


def _rotation(shape, angle_deg):
    """Frame in which hatch lines at ``angle_deg`` run along rows.

    Returns ``(side, M)``: the side of a square frame holding the whole
    picture and the 2 x 3 matrix taking frame (u, v) to image (x, y).
    """
    h, w = shape
    a = math.radians(angle_deg)
    d = np.array([math.cos(a), -math.sin(a)])   # counter-clockwise as seen
    n = np.array([-d[1], d[0]])
    side = int(math.ceil(math.hypot(h, w))) + 2
    c = np.array([(w - 1) / 2.0, (h - 1) / 2.0])
    cr = (side - 1) / 2.0
    M = np.array([[d[0], n[0], c[0] - cr * (d[0] + n[0])],
                  [d[1], n[1], c[1] - cr * (d[1] + n[1])]])
    return side, M


def _runs(mask_rows):
    """Runs of True in each row: (row, first, last) arrays, row-major order."""
    p = np.pad(mask_rows, ((0, 0), (1, 1))).astype(np.int8)
    d = np.diff(p, axis=1)
    rs, cs = np.nonzero(d == 1)
    _, ce = np.nonzero(d == -1)
    return rs, cs, ce - 1


def _close_runs(rs, u0, u1, gap):
    """Merge runs of one row separated by at most ``gap`` samples."""
    if len(rs) == 0:
        return rs, u0, u1
    new = np.ones(len(rs), dtype=bool)
    new[1:] = (rs[1:] != rs[:-1]) | (u0[1:] - u1[:-1] - 1 > gap)
    first = np.flatnonzero(new)
    last = np.r_[first[1:], len(rs)] - 1
    return rs[first], u0[first], u1[last]


def _inside_many(mask, p, q):
    """Whether each straight segment p[i] -> q[i] (image x, y) stays inside ``mask``."""
    if len(p) == 0:
        return np.zeros(0, dtype=bool)
    n = int(math.ceil(np.hypot(*(q - p).T).max())) + 2
    t = np.linspace(0.0, 1.0, n)[None, :]
    x = np.rint(p[:, :1] + t * (q[:, :1] - p[:, :1])).astype(np.intp)
    y = np.rint(p[:, 1:] + t * (q[:, 1:] - p[:, 1:])).astype(np.intp)
    np.clip(x, 0, mask.shape[1] - 1, out=x)
    np.clip(y, 0, mask.shape[0] - 1, out=y)
    return mask[y, x].all(axis=1)


def _successors(rs, ends, offs, to_image, region, reach, slack, big):
    """For every run, a run on one of the next ``reach`` lattice lines whose
    same-side end is within ``slack`` px per line stepped of its own (nearest
    line first), or -1
    when there is none or the joining segment leaves ``region``."""
    key = rs * big + ends
    best = np.full(len(rs), -1, dtype=np.intp)
    for step in range(1, reach + 1):
        todo = best < 0
        j = np.searchsorted(key, (rs + step) * big + ends)
        dist = np.full(len(rs), np.inf)
        pick = np.full(len(rs), -1, dtype=np.intp)
        for cand in (j - 1, j):
            ok = (cand >= 0) & (cand < len(rs))
            c = np.where(ok, cand, 0)
            ok &= rs[c] == rs + step
            d = np.where(ok, np.abs(ends[c] - ends), np.inf)
            better = d < dist
            pick[better], dist[better] = c[better], d[better]
        hit = todo & (dist <= slack * step)
        best[hit] = pick[hit]
    cand = np.flatnonzero(best >= 0)
    p = to_image(ends[cand], offs[rs[cand]])
    q = to_image(ends[best[cand]], offs[rs[best[cand]]])
    inside = _inside_many(region, p, q)
    out = np.full(len(rs), -1, dtype=np.intp)
    out[cand[inside]] = best[cand[inside]]
    return out


def _chains(rs, a, b, offs, nxt_b, nxt_a):
    """Walk runs into boustrophedon chains; returns (u, v) point arrays."""
    taken = np.zeros(len(rs), dtype=bool)
    chains = []
    for start in range(len(rs)):
        if taken[start]:
            continue
        # Run first towards the end that has a join, if only one has.
        right = nxt_b[start] >= 0 or (nxt_a[start] < 0 and rs[start] % 2 == 0)
        pts, k = [], start
        while k >= 0 and not taken[k]:
            taken[k] = True
            v = offs[rs[k]]
            pts += [(a[k], v), (b[k], v)] if right else [(b[k], v), (a[k], v)]
            k = nxt_b[k] if right else nxt_a[k]
            right = not right
        chains.append(np.asarray(pts, dtype=float))
    return chains


def _join_ends(strokes, max_gap, region):
    """Join strokes end to end where a straight hop of at most ``max_gap``
    between their ends stays inside ``region``; nearest ends first.

    Every end joins at most once and no stroke joins itself (a union-find
    over strokes), so the joined strokes are paths.
    """
    from scipy.spatial import cKDTree

    n = len(strokes)
    if n < 2:
        return strokes
    ends = np.array([[s[0], s[-1]] for s in strokes]).reshape(-1, 2)   # 2i: start, 2i+1: end
    pairs = cKDTree(ends).query_pairs(max_gap, output_type="ndarray")
    pairs = pairs[pairs[:, 0] // 2 != pairs[:, 1] // 2]
    if len(pairs) == 0:
        return strokes
    d = np.hypot(*(ends[pairs[:, 0]] - ends[pairs[:, 1]]).T)
    pairs = pairs[np.argsort(d, kind="stable")]
    ok = _inside_many(region, ends[pairs[:, 0]], ends[pairs[:, 1]])
    pairs = pairs[ok]
    parent = np.arange(n)

    def root(i):
        while parent[i] != i:
            parent[i] = parent[parent[i]]
            i = parent[i]
        return i

    mate = np.full(2 * n, -1, dtype=np.intp)
    for e, f in pairs:
        if mate[e] >= 0 or mate[f] >= 0:
            continue
        ra, rb = root(e // 2), root(f // 2)
        if ra == rb:
            continue
        parent[ra] = rb
        mate[e], mate[f] = f, e
    out, seen = [], np.zeros(n, dtype=bool)
    for i in range(n):
        if seen[i] or (mate[2 * i] >= 0 and mate[2 * i + 1] >= 0):
            continue                      # start walks from a path's free end
        start_end = 2 * i if mate[2 * i] < 0 else 2 * i + 1
        parts, e = [], start_end
        while e >= 0 and not seen[e // 2]:
            k = e // 2
            seen[k] = True
            s = strokes[k] if e % 2 == 0 else strokes[k][::-1]
            parts.append(s)
            e = mate[e ^ 1]               # leave by the stroke's other end
        out.append(np.concatenate(parts))
    return out


def _hatch_layer(density, angle, spacing, pen, min_run, gap, quant):
    """One layer: lattice lines every ``spacing`` px at ``angle`` degrees,
    each drawn where ``density`` (0..1 of the lattice) exceeds its rank."""
    side, M = _rotation(density.shape, angle)
    nlines = int(side / spacing)
    offs = spacing * (np.arange(nlines) + 0.5)
    offs = offs[offs <= side - 1]
    u = np.arange(side, dtype=np.float32)
    mx = (M[0, 0] * u[None, :] + M[0, 1] * offs[:, None] + M[0, 2]).astype(np.float32)
    my = (M[1, 0] * u[None, :] + M[1, 1] * offs[:, None] + M[1, 2]).astype(np.float32)
    rho = cv2.remap(density, mx, my, cv2.INTER_LINEAR, borderMode=cv2.BORDER_CONSTANT,
                    borderValue=0.0)
    if quant:
        rho = np.round(rho * quant) / quant
    rank = _line_ranks(len(offs))
    rs, u0, u1 = _runs(rho > rank[:, None])
    rs, u0, u1 = _close_runs(rs, u0, u1, gap)
    keep = (u1 - u0 + 1) >= max(min_run, pen)
    rs, u0, u1 = rs[keep], u0[keep], u1[keep]
    if len(rs) == 0:
        return []
    # Round pen ends reach pen/2 past a line's end points: pull them in.
    a = u0 - 0.5 + 0.5 * pen
    b = u1 + 0.5 - 0.5 * pen
    mid = 0.5 * (a + b)
    a, b = np.minimum(a, mid), np.maximum(b, mid)

    def to_image(uu, vv):
        return np.stack([uu, vv], axis=1) @ M[:, :2].T + M[:, 2]

    region = density > 0
    big = 4.0 * side + 4.0
    reach = _REACH
    slack = 2.5 * spacing + pen
    nxt_b = _successors(rs, b, offs, to_image, region, reach, slack, big)
    nxt_a = _successors(rs, a, offs, to_image, region, reach, slack, big)
    chains = [c @ M[:, :2].T + M[:, 2] for c in _chains(rs, a, b, offs, nxt_b, nxt_a)]
    return _join_ends(chains, _HOP * spacing, region)


def _layers_to_strokes(fields, pen, o, min_run, quant):
    strokes = []
    for j, (density, s) in enumerate(fields):
        if not density.any():
            continue
        ang = o["angle"] + _LAYER_OFFSETS[j]
        strokes += _hatch_layer(density.astype(np.float32), ang, s, pen, min_run, pen, quant)
    return strokes


def _tone_hatch(tone, pen, o, min_run):
    """Strokes whose line density is set per pixel from the tone."""
    fractions = _layer_fractions(tone, o["layers"], pen)
    # Each layer's lattice is as dense as its darkest part needs (at most
    # _MAX_FRACTION of the paper, except the last layer for near-black).
    caps = [max(_MAX_FRACTION, float(f.max())) for f in fractions]
    fields = [(f / c, pen / min(c, 1.0)) for f, c in zip(fractions, caps) if c > 0]
    return _layers_to_strokes(fields, pen, o, min_run, o["levels"])


def _fixed_hatch(tone, pen, o, min_run):
    """Strokes on fixed-spacing lattices, one more layer per tone step."""
    L, s = o["layers"], o["spacing"]
    f = min(pen / s, 1.0)
    cov = 1.0 - (1.0 - f) ** np.arange(L + 1)
    level = np.abs(tone[..., None] - cov).argmin(axis=-1).astype(np.uint8)
    level = _clean(level, pen)
    level[tone < _MIN_TONE] = 0
    fields = [((level >= j + 1).astype(np.float64), s) for j in range(L)]
    return _layers_to_strokes(fields, pen, o, min_run, 0)


_FILL_PITCH = 0.6     # lattice of the line fill, pen widths: overlapping, so a
                      # single missing line leaves a gap of only 0.2 pen widths,
                      # even with a pen a few per cent narrower than planned
_FILL_PEN = 0.98     # cover tables for a pen this share of the planned width
_FILL_FIRST = 0.75    # the first layer inks at most this; a second, crossing
                      # layer the rest, so no streak of missing lines shows in
                      # near-black parts (both our choice, by bench/bench_tone.py)


def _fill_share(cover, s, pen, bits=5):
    """Share of lattice lines to draw for ``cover`` (see `_line_fill`).

    The cover of each share ``j / 2**bits`` is measured exactly along the
    lattice's normal: the lines whose rank (`_line_ranks`) is below the
    share, each ``pen`` wide, every ``s``, over one period of ``2**bits``
    lines, sampled 64 times per lattice gap; the wanted cover is then
    looked up in that table.
    """
    n = 1 << bits
    x = (np.arange(64 * n) + 0.5) * (s / 64.0)                  # one period
    share = np.arange(n + 1) / n
    k = np.arange(n)
    d = np.abs(x[:, None] - k[None, :] * s)
    d = np.minimum(d, n * s - d)                               # periodic distance
    near = d <= 0.5 * pen                                      # (samples, lines)
    drawn = _line_ranks(n, bits)[None, :] < share[:, None]     # (shares, lines)
    table = (drawn.astype(np.float64) @ near.T.astype(np.float64) > 0).mean(axis=1)
    table = np.maximum.accumulate(table) + np.arange(n + 1) * 1e-9
    return np.interp(np.clip(cover, 0.0, 1.0), table, share)


def _line_fill(tone, pen, angle=45.0, levels=32):
    """Dense parallel lines whose share follows the tone, crossed by a
    second layer only where the first would need more than `_FILL_FIRST`
    (the fill the stipple style uses for its darkest areas).

    Lines of width ``w`` on a lattice of spacing ``s = 0.6 w``, a share of
    them drawn, spread evenly by their ranks (`_line_ranks`); the share
    for a cover comes from the exact cover of each share (`_fill_share`).
    Two crossed layers covering ``c1`` and ``c2`` together cover
    ``1 - (1 - c1)(1 - c2)`` (independent line sets).
    """
    t = _smoothed(np.asarray(tone, dtype=np.float64), 1.5 * pen)
    t = np.clip(t, 0.0, 1.0)
    t[t < _MIN_TONE] = 0.0
    s = _FILL_PITCH * float(pen)
    c1 = np.minimum(t, _FILL_FIRST)
    c2 = np.clip((t - c1) / (1.0 - c1), 0.0, 1.0)
    w = _FILL_PEN * float(pen)
    fields = [(_fill_share(c1, s, w), s)]
    if np.any(c2 > 0):
        fields.append((_fill_share(c2, s, w) * (c2 > 0), s))
    return finish(_layers_to_strokes(fields, pen, {"angle": angle}, 4.0 * pen, levels),
                  "hatch", 0.0, 0.0)


def hatch(lum, *, pen_px=2.0, spacing=None, angle=45.0, layers=3, levels=32, smooth=None,
          min_length=None):
    """Draw tone with parallel hatching, crossed for darker tones.

    Parameters
    ----------
    lum : ndarray, shape (H, W)
        Linear luminance in [0, 1].
    pen_px : float, optional
        Pen width in working pixels.
    spacing : float, optional
        Fixed gap between hatch lines in pixels; each added layer is then
        drawn where the tone is closest to what that many layers give.  By
        default the gap is set for each tone level so the ink coverage of
        that level equals its mean ``1 - Y``.
    angle : float, optional
        Direction of the first layer in degrees, counter-clockwise as seen.
    layers : int, optional
        Most crossed layers.
    levels : int, optional
        Steps of line density each layer tells apart (ignored with a fixed
        ``spacing``).
    smooth : float, optional
        Spatial sigma of the edge-preserving (bilateral) smoothing of the
        tone before hatching; default 1.5 pen widths (about the densest
        spacing, 1.4 pens).
    min_length : float, optional
        Pieces of line shorter than this are not drawn; default four pen
        widths.

    Returns
    -------
    list of ndarray, shape (N, 2)
        Strokes in working pixels, x = column, y = row.  Neighbouring lines
        of one field are joined end to end into long zig-zag strokes.

    Raises
    ------
    InkreachError
        When nothing is dark enough to draw.

    Notes
    -----
    Black ink covering a fraction ``a`` of white paper reflects
    ``Y = 1 - a`` (Murray-Davies [1]_).  Lines of width ``w`` every ``s``
    pixels cover ``w / s``; ``k`` crossed layers cover
    ``1 - (1 - w / s)**k``.  Each pixel gets the fewest layers with
    ``w / s <= 0.7`` and the line density that solves that relation.

    Tone comes from line density, not from line position [2]_: every layer
    is one field of lines on one lattice (spacing ``w / 0.7``, about ``1.4 w``) and each
    lattice line is drawn where the wanted density exceeds the line's rank
    (its bit-reversed index, `_line_ranks`).  A lighter tone keeps a subset
    of the lines of a darker one, so lines run on across tone changes
    instead of ending in a seam, and ends of lines are spread over the
    whole gradient.  Pieces of one line with a gap of at most one pen width
    are drawn as one; neighbouring lines (up to eight lattice lines on) are
    joined end to end into zig-zags where the turn stays inside the layer's
    region, and the zig-zags of a layer are then joined, nearest ends first,
    by straight pen-down hops of at most 20 lattice spacings that stay
    inside the same region: three to five times fewer pen lifts on a photo
    for a few per cent more ink.

    References
    ----------
    .. [1] A. Murray, "Monochrome reproduction in photoengraving", J.
       Franklin Inst. 221, 1936.
    .. [2] Y. Pnueli and A. M. Bruckstein, "DigiDurer - a digital engraving
       system", The Visual Computer 10(5), 1994 (tone by line density).

    Examples
    --------
    >>> import numpy as np
    >>> lum = np.full((80, 80), 0.5, np.float32)   # 50 % grey in linear light
    >>> strokes = hatch(lum)
    >>> len(strokes) < 10                          # a few long zig-zags
    True
    """
    o = _options.check("hatch", dict(pen_px=pen_px, spacing=spacing, angle=angle,
                                     layers=layers, levels=levels, smooth=smooth,
                                     min_length=min_length))
    lum = as_luminance(lum)
    pen = o["pen_px"]
    tone = 1.0 - lum.astype(np.float64)
    # Smooth the tone over most of one of the densest spacings, so line
    # ends follow shapes and not film grain; edge-preserving (bilateral), so
    # dark shapes keep their outlines.
    sigma = 1.5 * pen if o["smooth"] is None else o["smooth"]
    if sigma > 0:
        tone = _smoothed(tone, sigma)
    min_run = 4.0 * pen if o["min_length"] is None else o["min_length"]
    if o["spacing"] is None:
        tone[tone < _MIN_TONE] = 0.0
        strokes = _tone_hatch(tone, pen, o, min_run)
    else:
        strokes = _fixed_hatch(tone, pen, o, min_run)
    return finish(strokes, "hatch", 0.0, 0.0)
