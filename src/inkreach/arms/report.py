"""The workspace report behind ``inkreach arm``."""

import io
import json

import numpy as np

from ..errors import InkreachError
from .workspace import largest_rectangle, workspace_map

__all__ = ["arm_report"]


def _rect_dict(r):
    if r is None:
        return None
    return {"x0_mm": round(r.x0, 3), "y0_mm": round(r.y0, 3), "width_mm": round(r.width, 3),
            "height_mm": round(r.height, 3), "worst_conditioning": round(r.worst_conditioning, 4)}


def arm_report(arm, cells=400):
    """Figures and pictures that say where an arm can draw.

    Parameters
    ----------
    arm : Arm
    cells : int
        Map resolution along the longer side of the reach box.

    Returns
    -------
    figures : dict
        ``reach_area_mm2``, ``usable_area_mm2``, ``rect_4_3`` and ``rect_1_1``
        (each x0, y0, width, height in mm and its worst conditioning),
        ``best_conditioning`` and ``best_point_mm``.
    files : dict
        ``arm_map.png`` (the conditioning map with the usable region and the
        rectangles) and ``arm.json`` (the figures), name -> bytes.

    References
    ----------
    .. [1] X.-J. Liu, J. Wang and G. Pritschow, "Kinematics, singularity and
       workspace of planar 5R symmetrical parallel mechanisms", Mechanism and
       Machine Theory 41(2), 2006.
    """
    from ..export import arm_map_png

    wmap = workspace_map(arm, cells=cells)
    if not wmap.usable.any():
        raise InkreachError(f"arm {arm.name}: no point is usable (reachable, inside the limits "
                            "and above the conditioning floor); widen the limits or lower "
                            "min_conditioning")
    r43 = largest_rectangle(wmap, 4 / 3)
    r11 = largest_rectangle(wmap, 1.0)
    best = wmap.best_point()
    cond = np.where(wmap.usable, wmap.conditioning, np.nan)
    figures = {
        "arm": arm.name,
        "kind": arm.kind,
        "reach_area_mm2": round(wmap.reach_area, 1),
        "usable_area_mm2": round(wmap.usable_area, 1),
        "min_conditioning_floor": arm.limits.min_conditioning,
        "rect_4_3": _rect_dict(r43),
        "rect_1_1": _rect_dict(r11),
        "best_conditioning": round(float(np.nanmax(cond)), 4),
        "best_point_mm": [round(float(v), 2) for v in best],
        "map_step_mm": round(wmap.step, 4),
    }
    img = arm_map_png(arm, wmap, rectangles=[("4:3", r43), ("1:1", r11)])
    buf = io.BytesIO()
    img.save(buf, format="PNG")
    files = {"arm_map.png": buf.getvalue(),
             "arm.json": json.dumps(figures, indent=2) + "\n"}
    return figures, files
