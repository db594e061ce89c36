"""inkreach: pictures to checked joint-angle streams for two-motor pen arms."""

from .errors import InkreachError

__version__ = "0.1.0"

__all__ = ["InkreachError", "__version__"]
