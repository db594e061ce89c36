"""Route: stroke merging, visiting order and direction, travel figures."""

from .joint import pen_up_time, reorder_joint_space
from .merge import merge_strokes
from .points import order_points
from .route import GAIN_SHARE, gain_bounds, joint_order_budget, route_strokes, start_posture
from .stats import TravelStats, travel_stats
from .strokes import Route, greedy_order, order_strokes

__all__ = [
    "route_strokes", "start_posture", "joint_order_budget", "GAIN_SHARE", "gain_bounds",
    "merge_strokes", "order_points", "order_strokes", "greedy_order",
    "travel_stats", "TravelStats", "Route", "pen_up_time", "reorder_joint_space",
]
