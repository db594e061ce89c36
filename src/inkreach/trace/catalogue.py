"""What each style draws and how its options read to a person: labels and units."""

from . import _options
from .styles import STYLE_RENDERS, STYLES, _check_style

__all__ = ["style_renders", "style_catalogue", "option_label", "HIDDEN_OPTIONS"]

#: Options a user never sets (the planner derives them from the arm).
HIDDEN_OPTIONS = frozenset({"pen_px"})


# (label, unit) by option name; a style's own entry wins over the shared one.
# "px" is a pixel of the picture as traced.
_LABELS = {
    "detail": ("Detail", ""),
    "low": ("Lower edge threshold", "of 255"),
    "high": ("Upper edge threshold", "of 255"),
    "blur": ("Blur before tracing", "px"),
    "min_length": ("Shortest stroke kept", "px"),
    "smooth": ("Smoothing along strokes", "px"),
    "simplify": ("Straighten wiggles under", "px"),
    "threshold": ("Ink threshold", "0-1"),
    "prune": ("Shortest side branch kept", "px"),
    "spacing": ("Gap between lines", "px"),
    "angle": ("Direction of the first layer", "°"),
    "layers": ("Most crossing layers", ""),
    "levels": ("Tone steps", ""),
    "dots": ("Number of dots", ""),
    "iterations": ("Relaxation rounds", ""),
    "mode": ("Dots or one line", ""),
    "seed": ("Random seed", ""),
    "contrast": ("Contrast", ""),
    # placement and motion options of the planner
    "size": ("Longer side of the drawing", "mm"),
    "margin": ("Margin", "mm"),
    "prefer": ("Placement", ""),
    "tilt": ("Allow a tilted drawing", ""),
    "tip_speed": ("Pen speed while drawing", "mm/s"),
    "chord_tol": ("Straight-line tolerance", "mm"),
    "period": ("Sample period", "s"),
}
_STYLE_LABELS = {
    ("hatch", "smooth"): ("Blur of the tones", "px"),
    ("hatch", "min_length"): ("Shortest piece kept", "px"),
    ("contour", "levels"): ("Tone levels", ""),
}


def style_renders(style):
    """``"tone"`` or ``"lines"``: what a style's strokes stand for.

    Examples
    --------
    >>> style_renders("hatch"), style_renders("outline")
    ('tone', 'lines')
    """
    _check_style(style)
    return STYLE_RENDERS[style]


def option_label(name, style=None):
    """``(label, unit)`` of an option for people; the identifier stays for ``--set``.

    Examples
    --------
    >>> option_label("spacing", "hatch")
    ('Gap between lines', 'px')
    >>> option_label("some_new_option")
    ('Some new option', '')
    """
    got = _STYLE_LABELS.get((style, name)) or _LABELS.get(name)
    if got is None:
        return name.replace("_", " ").capitalize(), ""
    return got


def style_catalogue():
    """Every style with what it renders and its options, as plain data.

    Returns
    -------
    list of dict
        ``{"name", "renders", "options": [{"name", "label", "unit",
        "default", "help"}, ...]}`` in the order of ``STYLES``; options the
        planner sets itself (``pen_px``) are left out.

    Examples
    --------
    >>> cat = {s["name"]: s for s in style_catalogue()}
    >>> cat["hatch"]["renders"], cat["hatch"]["options"][0]["name"]
    ('tone', 'spacing')
    """
    out = []
    for name in STYLES:
        opts = []
        for key, (default, help_, _check) in _options.OPTIONS[name].items():
            if key in HIDDEN_OPTIONS:
                continue
            label, unit = option_label(key, name)
            opts.append({"name": key, "label": label, "unit": unit, "default": default,
                         "help": help_})
        out.append({"name": name, "renders": style_renders(name), "options": opts})
    return out
