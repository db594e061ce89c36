"""inkreach: pictures to checked joint-angle streams for two-motor pen arms.

>>> import inkreach
>>> arm = inkreach.load_arm("default")
>>> arm.kind
'five-bar'
"""

import sys as _sys

if _sys.argv[:1] == ["-m"] or (_sys.argv[:1]
                               and _sys.argv[0].endswith(("/inkreach", "\\inkreach"))):
    # started as a command: Ctrl-C while the libraries load stops quietly
    # (status 130); the command line takes Ctrl-C over once it runs
    from ._startup import quiet_interrupts as _quiet
    _quiet()

from .arms import (FiveBar, Limits, PenSpec, SerialArm, default_arm, example_arms,
                   largest_rectangle, load_arm, parse_arm, workspace_map)
from .errors import InkreachError
from .fidelity import Fidelity, fidelity, plan_fidelity
from .motion import JointStream, check_stream
from .plan import Plan, plan
from .trace import STYLES, load_image, style_options

__version__ = "0.1.0"

__all__ = [
    "plan", "Plan", "load_arm", "parse_arm", "default_arm", "example_arms", "FiveBar",
    "SerialArm", "Limits", "PenSpec", "workspace_map", "largest_rectangle", "JointStream",
    "check_stream", "load_image", "STYLES", "style_options", "fidelity", "Fidelity",
    "plan_fidelity", "InkreachError", "__version__",
]
