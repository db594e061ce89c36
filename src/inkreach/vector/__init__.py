"""Line art that is already lines: SVG files and single-stroke text."""

from .svg import VectorDrawing, load_svg, looks_like_svg
from .text import FONTS, text_strokes

__all__ = ["VectorDrawing", "load_svg", "looks_like_svg", "text_strokes", "FONTS"]
