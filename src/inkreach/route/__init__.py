"""Route: stroke merging, visiting order and direction, travel figures."""

from .points import order_points
from .stats import TravelStats, travel_stats
from .strokes import Route, greedy_order, order_strokes

__all__ = ["order_points", "order_strokes", "greedy_order", "travel_stats", "TravelStats", "Route"]
