"""Pictures to pen strokes: loading, and the drawing styles.

Strokes are lists of float arrays of shape (N, 2) in working-image pixels,
x = column, y = row, pixel centres at whole numbers.
"""

from .catalogue import HIDDEN_OPTIONS, option_label, style_catalogue, style_renders
from .centerline import centerline
from .contour import contour
from .graph import trace_skeleton, trail_decomposition
from .hatch import hatch
from .load import Picture, load_image
from .outline import outline, outline_edges
from .render import render_strokes
from .simplify import polyline_lengths, simplify_polylines
from .smooth import find_corners, smooth_polylines
from .srgb import linear_to_srgb, srgb_to_linear
from .stipple import stipple
from .wave import wave, zigzag_coverage
from .styles import STYLE_RENDERS, STYLES, style_options, trace
from .picture import merge_tolerance, trace_picture

__all__ = [
    "trace_picture", "merge_tolerance", "load_image", "Picture", "srgb_to_linear", "linear_to_srgb",
    "trace", "STYLES", "STYLE_RENDERS", "style_options",
    "style_renders", "style_catalogue", "option_label", "HIDDEN_OPTIONS",
    "outline", "outline_edges", "centerline", "hatch", "stipple", "contour", "wave",
    "zigzag_coverage",
    "trace_skeleton", "trail_decomposition", "render_strokes",
    "simplify_polylines", "polyline_lengths", "smooth_polylines", "find_corners",
]
