"""Calibration: dots at known angles, measured, fitted to the arm's true geometry.

A home-built arm never matches its drawing exactly. The arm draws numbered
dots at chosen joint angles on a printed sheet; the user measures them; a
least-squares fit recovers the link lengths, motor positions, pen extension
and each motor's angle offset and scale, with standard errors; the corrected
arm file then draws straighter lines over a larger area.
"""

from .fit import CalibrationFit, fit_arm
from .measurements import measurement_template, read_measurements
from .photo import measure_sheet_photo
from .report import calibration_report, corrected_arm_toml
from .sheet import calibration_sheet, sheet_corners, sheet_svg
from .targets import calibration_targets

__all__ = [
    "calibration_targets", "calibration_sheet", "sheet_svg", "sheet_corners",
    "measurement_template", "read_measurements", "fit_arm", "CalibrationFit",
    "corrected_arm_toml", "calibration_report", "measure_sheet_photo",
]
