from .stream import JointStream

__all__ = ["JointStream"]
