"""``inkreach check PLAN_DIR [--arm ARM]``: the saved-plan check on the command line."""

import argparse

__all__ = []


def add_parser(sub):
    """Register ``check`` on the command line's subparsers."""
    c = sub.add_parser("check", help="check a saved plan folder against an arm",
                       description="Check every promise of a saved plan (plan.json and "
                                   "joints.csv) against an arm, independently of the planner: "
                                   "joint limits, conditioning floor, joint speed, acceleration "
                                   "and tip speed, fixed period, x/y against the forward "
                                   "kinematics, the pen on its strokes, every stroke drawn "
                                   "whole and in order, and the recorded arm. Exit 0 when all "
                                   "hold, 1 naming the first broken one.",
                       epilog="examples:\n  inkreach check inkreach-out\n"
                              "  inkreach check inkreach-out --arm my_arm.toml",
                       formatter_class=argparse.RawDescriptionHelpFormatter)
    c.add_argument("plan_dir", metavar="PLAN_DIR", help="a folder written by inkreach plan")
    c.add_argument("--arm", default=None, metavar="ARM",
                   help="arm file or built-in name that will run the plan (default: the arm "
                        "recorded in plan.json)")
    return c


def run(args, out=print):
    """Run the check; returns the exit status (0 all hold, 1 a promise broken)."""
    from .plancheck import check_plan

    result = check_plan(args.plan_dir, arm=args.arm)
    if not result.ok:
        out(f"inkreach check: {result.problem}")
        return 1
    width = max(len(k) for k in result.figures)
    lines = [f"  {k:<{width}}  {v}" for k, v in result.figures.items()]
    out("every promise holds:\n" + "\n".join(lines))
    return 0
