"""Writers: plan.json, joints.csv, signal CSVs, previews and the firmware header."""

from ._colour import conditioning_ramp, order_ramp
from ._scene import likeness_text
from .bundle import plan_files
from .stats import plan_stats
from .files import atomic_write, png_bytes, write_files
from .firmware import firmware_header
from .folder import MANIFEST, WriteInterrupted, replace_folder
from .picture import arm_map_png, preview_png
from .planfile import PLAN_FORMAT, plan_json
from .safety import SAFETY_TEXT
from .coverage import stroke_coverage
from .simulate import MARGIN_MM, auto_px_per_mm, encode_srgb8, pen_down_paths, simulated_png
from .svg import preview_svg
from .tables import JOINTS_HEADER, joints_csv, servo_csv, stepper_csv

__all__ = [
    "plan_files", "plan_stats",
    "SAFETY_TEXT", "atomic_write", "write_files", "png_bytes", "plan_json", "PLAN_FORMAT",
    "joints_csv", "servo_csv", "stepper_csv", "JOINTS_HEADER", "firmware_header",
    "simulated_png", "pen_down_paths", "auto_px_per_mm", "encode_srgb8", "MARGIN_MM",
    "stroke_coverage", "preview_svg", "preview_png", "arm_map_png",
    "order_ramp", "conditioning_ramp", "likeness_text",
    "replace_folder", "WriteInterrupted", "MANIFEST",
]
