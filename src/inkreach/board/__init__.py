"""Driving a real arm: the board's C core, its firmware folder and a simulated board.

See ``PROTOCOL.md`` in this folder for the line protocol between host and board.
"""

from .firmware_config import BoardConfig, board_config, config_header
from .firmware_signals import (angle_units, executed_angles, executed_deviation_mm,
                               servo_ticks, stepper_positions)
from .firmware_writer import firmware_files, write_firmware
from .identity import arm_hash, board_name
from .sim import build_simulator

__all__ = ["BoardConfig", "board_config", "config_header", "angle_units", "executed_angles",
           "executed_deviation_mm", "servo_ticks", "stepper_positions", "firmware_files",
           "write_firmware", "arm_hash", "board_name", "build_simulator"]

# The host side: the codec, the streamer and `inkreach run`.
from . import protocol  # noqa: E402
from .resume import Cursor, resume_stream  # noqa: E402
from .run_cli import run_plan  # noqa: E402
from .stream import Link, stream_samples  # noqa: E402

__all__ += ["protocol", "Cursor", "resume_stream", "run_plan", "Link", "stream_samples"]
