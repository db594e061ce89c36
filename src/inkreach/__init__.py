"""inkreach: pictures to checked joint-angle streams for two-motor pen arms.

>>> import inkreach
>>> arm = inkreach.load_arm("default")
>>> arm.kind
'five-bar'
"""

from .arms import (FiveBar, Limits, PenSpec, SerialArm, default_arm, example_arms,
                   largest_rectangle, load_arm, parse_arm, workspace_map)
from .errors import InkreachError
from .fidelity import Fidelity, ToneLikeness, fidelity, plan_fidelity, tone_likeness
from .motion import JointStream, check_stream
from .plan import Plan, plan
from .trace import STYLE_RENDERS, STYLES, load_image, style_options

__version__ = "0.1.0"

__all__ = [
    "plan", "Plan", "load_arm", "parse_arm", "default_arm", "example_arms", "FiveBar",
    "SerialArm", "Limits", "PenSpec", "workspace_map", "largest_rectangle", "JointStream",
    "check_stream", "load_image", "STYLES", "style_options", "fidelity", "Fidelity",
    "plan_fidelity", "tone_likeness", "ToneLikeness", "STYLE_RENDERS", "InkreachError",
    "__version__",
]
