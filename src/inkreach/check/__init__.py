"""The independent check of a saved plan folder against an arm.

``check_plan(folder, arm=None)`` reads ``plan.json`` and ``joints.csv`` from
a plan folder and tests every promise of the stream; ``inkreach check`` and
``inkreach run`` both call it before anything moves.
"""

from .plancheck import PROMISES, PlanCheck, check_plan

__all__ = ["PROMISES", "PlanCheck", "check_plan"]
