"""Text in a single-stroke font: each letter drawn once, as the pen would write it.

The glyphs are A. V. Hershey's (1967, public domain), as carried by the
Hershey-Fonts package.
"""

import functools

import numpy as np

from ..errors import InkreachError

__all__ = ["FONTS", "text_strokes", "TextDrawing", "font_glyphs"]

#: Font used when none is named.
DEFAULT_FONT = "futural"
#: Line pitch as a multiple of the letter (cap) height; our choice, close to
#: the font's own cap-to-bottom span plus a little air.
LINE_PITCH = 1.6


def _font_names():
    from HersheyFonts import HersheyFonts
    return tuple(HersheyFonts().default_font_names)


class _Fonts:
    """The font names, read from the package when first asked for."""

    def __iter__(self):
        return iter(_font_names())

    def __contains__(self, name):
        return name in _font_names()

    def __repr__(self):
        return repr(_font_names())


#: Names of the fonts that can be asked for.
FONTS = _Fonts()


@functools.lru_cache(maxsize=8)
def font_glyphs(font=DEFAULT_FONT):
    """The glyphs of a font and its cap and base lines (font units, y down).

    Returns
    -------
    glyphs : dict
        Character -> (strokes, left, advance): strokes a list of (N, 2)
        arrays relative to the glyph's left side, advance its width.
    cap_line, base_line : float
    """
    from HersheyFonts import HersheyFonts

    f = HersheyFonts()
    if font not in f.default_font_names:
        raise InkreachError(f"font {font!r} is unknown; use one of "
                            f"{', '.join(f.default_font_names)}")
    f.load_default_font(font)
    glyphs = {}
    for ch, g in f.all_glyphs.items():
        left = float(g.left_offset)
        strokes = [np.asarray(s, dtype=float) - [left, 0.0] for s in g.strokes if len(s)]
        glyphs[ch] = (strokes, left, float(g.char_width))
    opts = f.render_options
    return glyphs, float(opts["cap_line"]), float(opts["base_line"])


class TextDrawing:
    """Text as polylines in mm (x right, y down; the first baseline at y = 0).

    Attributes
    ----------
    strokes : list of ndarray
    size : tuple of float
        (width, height) of the text block, mm.
    lines : list of str
    height : float
        Letter (cap) height, mm.
    """

    def __init__(self, strokes, size, lines, height, font):
        self.strokes, self.size, self.lines = strokes, size, lines
        self.height, self.font = height, font


def text_strokes(text, font=DEFAULT_FONT, height=10.0, align="left"):
    """Lay out text in a Hershey single-stroke font.

    Parameters
    ----------
    text : str
        One line, or several separated by newlines.
    font : str
        A name from :data:`FONTS` (default ``"futural"``, simplex sans).
    height : float
        Letter height, mm: the distance from the font's cap line to its
        base line.
    align : {"left", "center", "right"}
        How lines of different length line up.

    Returns
    -------
    TextDrawing

    Raises
    ------
    InkreachError
        For empty text, an unknown font, or characters the font lacks (named).

    References
    ----------
    .. [1] A. V. Hershey, "Calligraphy for computers", U. S. Naval Weapons
       Laboratory report NWL 2101, 1967.

    Examples
    --------
    >>> t = text_strokes("I", height=21.0)
    >>> t.strokes[0].tolist()                       # the stem: cap line to base line
    [[4.0, -21.0], [4.0, 0.0]]
    """
    if not isinstance(text, str) or not text.strip():
        raise InkreachError("the text is empty; give some letters to draw")
    if align not in ("left", "center", "centre", "right"):
        raise InkreachError(f"align={align!r} is unknown; use left, center or right")
    try:
        height = float(height)
    except (TypeError, ValueError):
        raise InkreachError(f"text height {height!r} is not a number of mm") from None
    if not (np.isfinite(height) and height > 0):
        raise InkreachError(f"text height {height!r} must be a positive number of mm")
    glyphs, cap, base = font_glyphs(font)
    lines = text.replace("\r\n", "\n").replace("\t", " ").split("\n")
    missing = sorted({c for c in "".join(lines) if c not in glyphs})
    if missing:
        names = ", ".join(repr(c) for c in missing)
        raise InkreachError(f"the font {font} has no letter for {names}; leave them out "
                            "or choose another font")
    k = height / (base - cap)
    laid, widths = [], []
    for i, line in enumerate(lines):
        x, out = 0.0, []
        for ch in line:
            strokes, _, adv = glyphs[ch]
            out += [np.column_stack([x + s[:, 0], s[:, 1] - base]) for s in strokes]
            x += adv
        laid.append(out)
        widths.append(x)
    block = max(widths)
    strokes = []
    for i, (out, w) in enumerate(zip(laid, widths)):
        dx = {"left": 0.0, "right": block - w}.get(align, (block - w) / 2)
        dy = i * LINE_PITCH * (base - cap)
        strokes += [(s + [dx, dy]) * k for s in out if len(s) >= 1]
    # a one-point stroke is a dot: pen down and up at one place
    strokes = [s if len(s) >= 2 else np.vstack([s, s]) for s in strokes]
    size = (block * k, ((len(lines) - 1) * LINE_PITCH + 1) * (base - cap) * k)
    return TextDrawing(strokes, size, lines, height, font)
