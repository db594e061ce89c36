"""The export stage's entry point: every output file of a plan, in memory."""

from .files import png_bytes
from .firmware import firmware_header
from .picture import preview_png
from .planfile import plan_json
from .safety import SAFETY_TEXT
from .simulate import simulated_png
from .svg import preview_svg
from .tables import joints_csv, servo_csv, stepper_csv

__all__ = ["plan_files"]


def plan_files(plan):
    """Every output file of a finished plan, name -> bytes or text.

    Parameters
    ----------
    plan : Plan
        As :func:`inkreach.plan.plan` returns.

    Returns
    -------
    dict
        ``plan.json``, ``joints.csv``, ``preview.svg``, ``preview.png``,
        ``order.png``, ``simulated.png``, ``SAFETY.txt``, ``plan.h`` and
        ``servo.csv`` / ``stepper.csv`` for the signals the plan has.
    """
    from ..arms import arm_to_toml

    p = plan

    def preview(view):
        return png_bytes(preview_png(p.strokes, arm=p.arm, wmap=p.workspace, stream=p.stream,
                                     stats=p.stats, size=900, view=view))

    extra = {"arm": arm_to_toml(p.arm), "style": p.style,
             "options": p.options, "image_size": p.image_size}
    out = {
        "plan.json": plan_json(p.strokes, p.image_to_arm, p.stats, extra),
        "joints.csv": joints_csv(p.stream),
        "preview.svg": preview_svg(p.strokes, arm=p.arm, wmap=p.workspace,
                                   placement_hull=p.placement.hull, stats=p.stats),
        "preview.png": preview("ink"),
        "order.png": preview("order"),
        "simulated.png": png_bytes(simulated_png(p.reached_xy, p.stream.pen,
                                                 p.arm.pen.width_mm)),
        "SAFETY.txt": SAFETY_TEXT + "\n",
    }
    if "servo" in p.signals:
        out["servo.csv"] = servo_csv(p.stream, p.signals["servo"])
    if "stepper" in p.signals:
        out["stepper.csv"] = stepper_csv(p.stream, p.signals["stepper"])
    out["plan.h"] = firmware_header(p.stream, servo_signals=p.signals.get("servo"),
                                    stepper_signals=p.signals.get("stepper"))
    return out
