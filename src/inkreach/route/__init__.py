"""Route: stroke merging, visiting order and direction, travel figures."""

from .points import order_points

__all__ = ["order_points"]
