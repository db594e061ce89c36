"""Motion: chord subdivision, timing, the joint stream and its safety check."""

from .check import StreamReport, check_stream
from .plan import TIP_SPEED, plan_motion
from .stream import JointStream
from .subdivide import subdivide
from .timing import trapezoid_time

__all__ = ["JointStream", "plan_motion", "check_stream", "StreamReport", "trapezoid_time",
           "subdivide", "TIP_SPEED"]
