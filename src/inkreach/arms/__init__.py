"""Arm models: kinematics, arm files, workspace and conditioning maps."""

from ._base import Arm, Limits, PenSpec
from ._linalg import inverse_condition
from .armfile import arm_to_toml, default_arm, example_arms, load_arm, parse_arm
from .fivebar import FiveBar
from .serial import SerialArm
from .workspace import Rectangle, WorkspaceMap, largest_rectangle, workspace_map

__all__ = [
    "Arm", "Limits", "PenSpec", "FiveBar", "SerialArm", "inverse_condition",
    "load_arm", "parse_arm", "default_arm", "example_arms", "arm_to_toml",
    "WorkspaceMap", "Rectangle", "workspace_map", "largest_rectangle",
]
