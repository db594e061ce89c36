"""Where the planner's strokes come from when the input is already lines.

:func:`inkreach.plan` asks :func:`input_kind` what it was given; for an SVG
or text the strokes come from here instead of from tracing a picture, and
a caption is laid out under a traced picture.
"""

import numpy as np

from ..errors import InkreachError
from .svg import load_svg, looks_like_svg
from .text import DEFAULT_FONT, text_strokes

__all__ = ["VECTOR_OPTIONS", "input_kind", "text_input", "add_caption", "place_svg",
           "used_options"]

#: Options of line-art input, with their defaults.
VECTOR_OPTIONS = {"text": None, "caption": None, "font": DEFAULT_FONT, "text_height": None,
                  "align": None, "actual_size": False, "fill_hatch": None}
#: Caption letter height as a fraction of the picture's longer side, and
#: the gap above it in letter heights (our choice: readable, not dominant).
CAPTION_HEIGHT = 0.07
CAPTION_GAP = 0.8


def input_kind(image, opts):
    """``"svg"``, ``"text"`` or ``"picture"``, checking the options fit the input."""
    text, caption = opts["text"], opts["caption"]
    if text is not None and caption is not None:
        raise InkreachError("give either text (text alone) or caption (text under a "
                            "picture), not both")
    if text is not None:
        if image is not None:
            raise InkreachError("text plans text alone; to put text under a picture use "
                                "caption instead")
        return "text"
    if image is None:
        raise InkreachError("nothing to draw: give a picture, an SVG file or text")
    if looks_like_svg(image):
        if caption is not None:
            raise InkreachError("caption goes under pictures; for an SVG add the text to "
                                "the file as paths")
        return "svg"
    if opts["actual_size"]:
        raise InkreachError("actual_size applies to SVG files, which carry a physical size")
    if opts["fill_hatch"] is not None:
        raise InkreachError("fill_hatch applies to SVG files; for a picture use the hatch "
                            "style")
    return "picture"


def used_options(kind, opts):
    """The line-art options worth recording for this input (none for a bare picture)."""
    if kind == "picture" and opts["caption"] is None:
        return {}
    return {k: v for k, v in opts.items() if v is not None and v is not False}


def text_input(opts, place_opts):
    """Strokes (mm, y down), frame size and the placement size for text alone."""
    h = opts["text_height"]
    if h is not None and place_opts["size"] is not None:
        raise InkreachError("give either text_height or size, not both")
    t = text_strokes(opts["text"], font=opts["font"] or DEFAULT_FONT,
                     height=10.0 if h is None else h, align=opts["align"] or "left")
    size = None
    if h is not None:
        # the placement's size is the longer side of the strokes' box
        size = float(np.ptp(np.concatenate(t.strokes), axis=0).max())
    return t.strokes, t.size, size


def add_caption(strokes, image_size, opts):
    """The picture's strokes plus the caption centred under it (image px).

    The letter height is :data:`CAPTION_HEIGHT` of the picture's longer
    side, smaller if the longest line would be wider than the picture.
    """
    W, H = (float(v) for v in image_size)
    if opts["text_height"] is not None:
        raise InkreachError("text_height applies to text alone; a caption is sized to "
                            "the picture")
    t = text_strokes(opts["caption"], font=opts["font"] or DEFAULT_FONT, height=1.0,
                     align=opts["align"] or "center")
    k = min(CAPTION_HEIGHT * max(W, H), W / max(t.size[0], 1e-9))
    gap = CAPTION_GAP * k
    x0 = (W - t.size[0] * k) / 2.0
    top = H + gap + k                     # first baseline (the cap line is 1 unit above)
    cap = [s * k + [x0, top] for s in t.strokes]
    return list(strokes) + cap, (W, H + gap + t.size[1] * k + 0.3 * k)


def place_svg(source, arm, wmap, place_opts, chord_tol, rounds=3):
    """Flatten an SVG finely enough for where it lands, and place it.

    The curves are flattened for the provisional scale, placed, and
    flattened again for the scale found whenever that is coarser than
    ``chord_tol`` mm, so every chord is within ``chord_tol`` of its curve
    once on the arm.

    Returns
    -------
    drawing : VectorDrawing
    merged : list of ndarray
        Polylines in SVG user units, touching ends joined.
    placement : Placement
    """
    from ..place import place_drawing, provisional_scale
    from ..route import merge_strokes

    opts = dict(place_opts)
    first = load_svg(source, tol=1.0)       # guard and frame only; coarse
    if opts.get("size") is not None and _actual(place_opts):
        raise InkreachError("give either size or actual_size, not both")
    ext = _extent(first.strokes)
    if _actual(place_opts):
        opts["size"] = float(ext.max()) * first.mm_per_unit
    s = provisional_scale(tuple(np.maximum(ext, 1e-9 * ext.max())), arm, wmap=wmap,
                          **{k: opts[k] for k in ("paper", "margin", "size")})
    opts.pop("actual_size", None)
    spacing_mm = opts.pop("fill_hatch", None)
    if spacing_mm is not None:
        try:
            spacing_mm = float(spacing_mm)
        except (TypeError, ValueError):
            raise InkreachError(f"fill_hatch {spacing_mm!r} must be a spacing in mm") from None
        if not (np.isfinite(spacing_mm) and spacing_mm > 0):
            raise InkreachError(f"fill_hatch {spacing_mm!r} must be a positive spacing in mm")
    for _ in range(rounds):
        tol = chord_tol / (s * 1.02)
        drawing = load_svg(source, tol=tol,
                           fill_spacing=None if spacing_mm is None else spacing_mm / s)
        if _actual(place_opts):
            opts["size"] = float(_extent(drawing.strokes).max()) * drawing.mm_per_unit
        merged = merge_strokes(drawing.strokes, tol=min(1e-6 * float(ext.max()), 0.01 * tol))
        placement = place_drawing(merged, arm, wmap=wmap, image_size=drawing.size, **opts)
        if tol * placement.scale <= chord_tol:
            return drawing, merged, placement
        s = placement.scale
    raise InkreachError("the SVG could not be flattened finely enough for its placement; "
                        "give a fixed size")


def _actual(place_opts):
    return bool(place_opts.get("actual_size"))


def _extent(strokes):
    pts = np.concatenate(strokes)
    return np.ptp(pts, axis=0).astype(float)
