"""How closely a drawing, as the arm would make it, matches its picture.

Tone styles are scored by their tone seen from a distance (`tone`: CIE L*
after a blur of 1.5 mm on paper, SSIM, tonal range), line styles by their
line likeness (`lines`: the picture's edges or ink lines within a pen width
of a stroke, and the share of stroke length on them). `plan_fidelity` picks
the measure a style's rendering calls for.
"""

from .lines import (LINE_WORK_SIDE, LineLikeness, line_likeness, line_likeness_images,
                    picture_lines, plan_line_likeness)
from .tone import (BLUR_PEN_WIDTHS, TONE_BLUR_MM, TONE_TARGETS, WORK_SIDE, Fidelity,
                   ToneLikeness, cie_lightness, drawn_polylines, fidelity, fidelity_images,
                   plan_fidelity, render_coverage, tone_likeness, tone_likeness_images)

__all__ = ["Fidelity", "fidelity", "fidelity_images", "plan_fidelity", "render_coverage",
           "drawn_polylines", "WORK_SIDE", "BLUR_PEN_WIDTHS", "ToneLikeness", "tone_likeness",
           "tone_likeness_images", "cie_lightness", "TONE_BLUR_MM", "TONE_TARGETS",
           "LineLikeness", "line_likeness_images", "line_likeness", "picture_lines",
           "plan_line_likeness", "LINE_WORK_SIDE"]
