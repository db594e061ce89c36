"""Pictures to pen strokes: loading, and the drawing styles."""

from .graph import trace_skeleton, trail_decomposition
from .load import Picture, load_image
from .simplify import polyline_lengths, simplify_polylines
from .srgb import linear_to_srgb, srgb_to_linear

__all__ = [
    "Picture", "load_image", "srgb_to_linear", "linear_to_srgb",
    "trace_skeleton", "trail_decomposition", "simplify_polylines",
    "polyline_lengths",
]
