"""Motor signals: joint angles to servo pulse widths or stepper step counts."""

from .checks import checked_signals
from .correction import angle_correction, commanded_stream, from_commanded, to_commanded
from .make import SIGNAL_KINDS, make_signals
from .quantised import quantised_angles
from .reached import reached_positions
from .servo import ServoCalibration, ServoSignals, servo_calibration_from_arm, servo_pulses
from .stepper import (PenError, StepperConfig, StepperSignals, check_step_rate,
                      reached_angles, stepper_config_from_arm, stepper_steps,
                      worst_pen_error_mm)

__all__ = [
    "checked_signals", "reached_positions",
    "ServoCalibration", "ServoSignals", "servo_pulses", "servo_calibration_from_arm",
    "StepperConfig", "StepperSignals", "PenError", "stepper_steps", "stepper_config_from_arm",
    "check_step_rate", "reached_angles", "worst_pen_error_mm", "quantised_angles",
    "make_signals", "SIGNAL_KINDS", "angle_correction", "to_commanded", "from_commanded",
    "commanded_stream",
]
