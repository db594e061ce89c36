"""The wave style: one continuous line of flat-topped zig-zag rows whose turns crowd where darker."""

import functools

import cv2
import numpy as np

from . import _options
from ._common import as_luminance, finish

__all__ = ["wave", "zigzag_coverage"]

_LIGHTEST = 0.02     # tone below which a row runs straight (our choice: 2 % ink is
                     # below what a blurred look tells from bare paper)
_MIN_STEP = 0.45     # closest turns, pen widths: the ink is solid by then
_LONGEST = 16.0     # longest distance between turns, in row spacings (lighter
                     # tones are all drawn as this, nearly straight)
_SPACING = 9.0     # default distance between rows, pen widths: long legs draw fast
_FLAT = 1.0          # longest flat run at a turn, pen widths
_FLAT_SHARE = 0.5    # flat runs take at most this share of the turn spacing (measured on
                     # the bench photos: near 1 the legs stand upright and the darkest
                     # tones open slits when the pen draws a little thinner; near 0.35 the
                     # legs cross and need more turns)


def _zigzag_rows(step, band, pen, width, rows, phases):
    """Rows of even zig-zags ``band`` apart, built as the style builds its rows."""
    xs = np.arange(-2.0 * band, width + 2.0 * band, 1.0)
    steps = np.full(len(xs), float(step))
    return [_row_line(xs, steps, row * band, band, False, phases[row], _FLAT * pen)[0]
            for row in range(rows)]


@functools.lru_cache(maxsize=32)
def _coverage_table(band_pens):
    """Measured coverage of zig-zag rows against turn spacing, in pen widths.

    Rows ``band_pens`` pen widths apart, each zig-zag spanning its band
    (so the darkest tones close up) and running flat for a short way at
    each turn (see `_row_line`), with unrelated
    phases as rows of a picture have, are rendered at an 8 px pen
    (`render_strokes`, exact in area) and the coverage of the middle rows
    measured, up to turns two row spacings apart; beyond, legs no longer
    overlap and the ink is the pen's width times the line's length.
    Returns ``(steps, coverage)`` with coverage decreasing.
    """
    from .render import render_strokes

    pen, band = 8.0, 8.0 * band_pens
    steps = np.geomspace(_MIN_STEP, _LONGEST * band_pens, 40)
    # legs far apart do not overlap: ink = pen x (leg + flat) length (exact but for the turns)
    flat = np.minimum(_FLAT, _FLAT_SHARE * steps)
    cov = (np.hypot(steps - flat, band_pens) + flat) / (steps * band_pens)
    rng = np.random.default_rng(0)
    rows, width = 8, int(max(16.0 * band, 400.0))
    for i in np.flatnonzero(steps <= 2.0 * band_pens):
        lines = _zigzag_rows(steps[i] * pen, band, pen, width, rows, rng.uniform(size=rows))
        c = render_strokes(lines, (int(rows * band), width), pen, supersample=2)
        cov[i] = c[int(2 * band):int(6 * band), :].mean()
    cov = np.minimum.accumulate(cov)            # more spread never inks more
    return steps, cov


def zigzag_coverage(step, band, pen):
    """Ink coverage of rows of zig-zags drawn with a round pen.

    Rows are ``band`` apart; each zig-zag turns every ``step`` along its
    row, spans its band and runs flat for ``min(pen, step / 2)`` at each
    turn, so where turns crowd the ink closes up into black.  The coverage is measured once by rendering
    such rows (`render_strokes`, exact in area) and interpolated.

    Parameters
    ----------
    step : float or ndarray
        Distance along the row between turns (inf: a straight line).
    band : float
        Distance between rows.
    pen : float
        Pen width.

    Returns
    -------
    float or ndarray
        Coverage in [0, 1]; a straight line covers ``pen / band``.

    References
    ----------
    .. [1] A. Murray, "Monochrome reproduction in photoengraving", J.
       Franklin Inst. 221, 1936 (coverage ``a`` reflects ``1 - a``).

    Examples
    --------
    >>> round(float(zigzag_coverage(np.inf, 5.0, 1.0)), 2)   # straight rows
    0.2
    >>> float(zigzag_coverage(0.6, 5.0, 1.0)) > 0.97          # crowded turns: black
    True
    """
    steps, cov = _coverage_table(round(float(band) / float(pen), 2))
    x = np.asarray(step, dtype=float) / float(pen)
    c = np.interp(np.log(np.clip(x, steps[0], steps[-1])), np.log(steps), cov)
    return c


def _step_for(coverage, band, pen):
    """Turn spacing giving each wanted ``coverage``, at most ``_LONGEST`` bands."""
    steps, cov = _coverage_table(round(float(band) / float(pen), 2))
    c = np.asarray(coverage, dtype=float)
    out = pen * np.exp(np.interp(-c, -cov, np.log(steps)))   # clamps to the densest
    return out


def _row_tone(tone, centres, band, sigma):
    """Mean tone of each row's band, smoothed along the row by ``sigma``."""
    h, w = tone.shape
    t = np.ascontiguousarray(tone, dtype=np.float32)
    if sigma > 0:
        t = cv2.GaussianBlur(t, (0, 0), sigmaX=float(sigma), sigmaY=1e-6,
                             borderType=cv2.BORDER_REPLICATE)
    csum = np.vstack([np.zeros((1, w)), np.cumsum(t, axis=0, dtype=np.float64)])
    lo = np.clip(np.round(centres - band / 2.0).astype(int), 0, h)
    hi = np.clip(np.round(centres + band / 2.0).astype(int), 0, h)
    hi = np.maximum(hi, np.minimum(lo + 1, h))
    lo = np.minimum(lo, hi - 1)
    return (csum[hi] - csum[lo]) / (hi - lo)[:, None]


def _row_line(xs, step, yc, height, reverse, phase0, flat=0.0):
    """Turn points of one row: phase advances by 1/step per unit of x.

    Each turn inside the row is drawn as a flat run along the band's edge,
    ``flat`` long at most and at most ``_FLAT_SHARE`` of the distance to
    the neighbouring turns, centred on the turn.
    """
    if reverse:
        xs, step = xs[::-1], step[::-1]
    rate = 1.0 / step                                 # 0 where the row runs straight
    dx = np.abs(np.diff(xs))
    phase = phase0 + np.concatenate([[0.0], np.cumsum(0.5 * (rate[1:] + rate[:-1]) * dx)])
    k = np.arange(np.floor(phase[0]) + 1, np.ceil(phase[-1]))
    keep = np.r_[True, np.diff(phase) > 0]
    tx = np.interp(k, phase[keep], xs[keep])
    ends_phase = np.array([phase[0], phase[-1]])
    pts_x = np.concatenate([[xs[0]], tx, [xs[-1]]])
    ph = np.concatenate([[ends_phase[0]], k, [ends_phase[1]]])
    tri = 1.0 - 2.0 * np.abs(np.mod(ph, 2.0) - 1.0)   # -1 .. 1, turns at whole phases
    if flat > 0 and len(pts_x) > 2:
        d = -1.0 if reverse else 1.0
        gap = np.abs(np.diff(pts_x))
        f = np.minimum(flat, _FLAT_SHARE * np.minimum(gap[:-1], gap[1:]))
        inner = np.stack([pts_x[1:-1] - d * 0.5 * f, pts_x[1:-1] + d * 0.5 * f], axis=1)
        pts_x = np.concatenate([pts_x[:1], inner.ravel(), pts_x[-1:]])
        tri = np.concatenate([tri[:1], np.repeat(tri[1:-1], 2), tri[-1:]])
    return np.stack([pts_x, yc + 0.5 * height * tri], axis=1), phase[-1]


def wave(lum, *, pen_px=2.0, spacing=None, smooth=None, gamma=1.0):
    """Draw tone with one continuous line of zig-zag rows.

    The line runs along rows ``spacing`` apart, back and forth, stepping to
    the next row at the picture's edge, so the whole picture is one pen-down
    stroke.  In each row it zig-zags across the row's band, turning more
    often where the picture is darker, and runs flat along the band's edge
    for a short way at each turn: the turn spacing is set so that the
    ink of the zig-zags (`zigzag_coverage`) covers the band's mean ``1 - Y``
    (Murray-Davies).

    Parameters
    ----------
    lum : ndarray, shape (H, W)
        Linear luminance in [0, 1].
    pen_px : float, optional
        Pen width in working pixels.
    spacing : float, optional
        Distance between rows in pixels; default 9 pen widths.  A row that
        runs straight inks ``pen_px / spacing`` of the paper, the lightest
        tone the style draws.
    smooth : float, optional
        Gaussian blur of the tone along the rows, pixels; default one pen
        width.
    gamma : float, optional
        Tone curve: the ink follows ``1 - Y**gamma``; 1 is faithful, above 1
        darkens the mid-tones, below 1 lightens them.

    Returns
    -------
    list of ndarray
        One (N, 2) stroke in working pixels, x = column, y = row.

    Raises
    ------
    InkreachError
        When nothing is dark enough to draw.

    Notes
    -----
    Each zig-zag spans its band, so where the turns crowd the ink of
    neighbouring rows closes up into black.  The arm stops at each sharp
    turn, so the drawing time is about the line's length over the drawing
    speed plus a fixed cost per turn; the flat runs (at most one pen width
    and half the turn spacing) fill the white wedges a plain zig-zag leaves
    at its turns, so dark tones need fewer turns and less line (a
    sixth to a fifth less drawing time on the bench photos).  Flats as long as the
    whole turn spacing (a square wave) would stand the legs upright a pen
    apart, where a slightly thinner pen opens slits in the darkest tones.
    Straight legs and sharp turns (rather than a smooth wave) keep the pen
    moving fast between turns: a rounded turn tight enough for dark tones
    is passed nearly as slowly as a stop.

    References
    ----------
    .. [1] A. Murray, "Monochrome reproduction in photoengraving", J.
       Franklin Inst. 221, 1936.
    .. [2] Y. Pnueli and A. M. Bruckstein, "DigiDurer - a digital engraving
       system", The Visual Computer 10(5), 1994 (tone by line density).

    Examples
    --------
    >>> import numpy as np
    >>> lum = np.ones((60, 80), np.float32); lum[:, 40:] = 0.2
    >>> strokes = wave(lum, pen_px=2.0)
    >>> len(strokes)
    1
    >>> line = strokes[0]
    >>> int((line[:, 0] > 41).sum()) > 4 * int((line[:, 0] < 39).sum())   # crowded on the dark half
    True
    """
    o = _options.check("wave", dict(pen_px=pen_px, spacing=spacing, smooth=smooth,
                                    gamma=gamma))
    lum = as_luminance(lum)
    pen = o["pen_px"]
    h, w = lum.shape
    band = _SPACING * pen if o["spacing"] is None else max(o["spacing"], pen * 1.01)
    tone = 1.0 - lum.astype(np.float64) ** o["gamma"]
    if float(tone.max()) < _LIGHTEST:
        return finish([], "wave")
    rows = max(1, int(round(h / band)))
    band = max(h / rows, pen * 1.01)          # rows fill the picture's height evenly
    height = band
    centres = (np.arange(rows) + 0.5) * (h / rows) - 0.5
    sigma = pen if o["smooth"] is None else o["smooth"]
    prof = _row_tone(tone, centres, band, sigma)
    prof[prof < _LIGHTEST] = 0.0
    xs = np.arange(w, dtype=float)
    pieces, phase = [], 0.0
    for i, yc in enumerate(centres):
        step = _step_for(prof[i], band, pen)
        pts, phase = _row_line(xs, step, yc, height, i % 2 == 1, phase, _FLAT * pen)
        pieces.append(pts)
    return finish([np.concatenate(pieces)], "wave", shape=(h, w))
