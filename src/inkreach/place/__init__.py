"""Placement: scale, rotate and position a drawing in the arm's well-conditioned region."""

from .place import DEFAULT_ROTATIONS, TILT_ROTATIONS, paper_note, place_drawing, provisional_scale
from .placement import Placement
from .pen import drawing_region, pen_width_px

__all__ = ["place_drawing", "provisional_scale", "Placement", "DEFAULT_ROTATIONS", "TILT_ROTATIONS",
           "paper_note", "pen_width_px", "drawing_region"]
