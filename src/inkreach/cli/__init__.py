"""Command line: a thin layer over :func:`inkreach.plan` and the arm tools."""

import argparse
import json
import os
import sys

from ..errors import InkreachError

__all__ = ["main"]

_STYLES = ("outline", "centerline", "hatch", "stipple", "contour", "wave")

_PLAN_EXAMPLE = """\
examples:
  inkreach plan photo.jpg                       outline style, default arm, files in ./inkreach-out
  inkreach plan logo.png --style centerline --out logo-plan
  inkreach plan face.jpg --style hatch --arm my_arm.toml --paper '0 60 148 105'
  inkreach plan cat.jpg --style stipple --set dots=6000 --set mode=line --format json
  inkreach plan logo.svg                        an SVG file's lines, as drawn
  inkreach plan --text "Happy birthday" --text-height 12
  inkreach plan photo.jpg --caption "Greetings from the print shop"
"""


def _number_list(n):
    def parse(text):
        try:
            vals = [float(v) for v in text.replace(",", " ").split()]
        except ValueError:
            raise argparse.ArgumentTypeError(f"expected {n} numbers, got {text!r}") from None
        if len(vals) != n:
            raise argparse.ArgumentTypeError(f"expected {n} numbers, got {text!r}")
        return vals
    return parse


def _value(text):
    """Parse a --set value: number, true/false, list, or text."""
    t = text.strip()
    if t.lower() == "true":
        return True
    if t.lower() == "false":
        return False
    try:
        return int(t)
    except ValueError:
        pass
    try:
        return float(t)
    except ValueError:
        pass
    if "," in t:
        return [_value(x) for x in t.split(",") if x.strip()]
    return t


class _Parser(argparse.ArgumentParser):
    """An argument parser whose errors are one line and exit status 2."""

    def error(self, message):
        self.exit(2, f"inkreach: error: {message}; see '{self.prog} --help'\n")


def _add_plan_options(p):
    p.add_argument("--arm", metavar="ARM", default=None,
                   help="arm file (TOML) or a built-in arm: default, wide, serial "
                        "(default: the built-in desk five-bar)")
    p.add_argument("--style", "-s", default="outline", choices=_STYLES,
                   help="how the picture becomes pen lines: outline (edges of a photo), "
                        "centerline (middle of drawn lines, for logos and text), hatch "
                        "(tone by parallel lines), stipple (tone by dots or one long line), "
                        "contour (lines of equal tone), wave (tone by one zig-zag line); "
                        "default outline")
    p.add_argument("--out", "-o", default="inkreach-out", metavar="DIR",
                   help="folder for the output files (default ./inkreach-out)")
    p.add_argument("--set", action="append", default=[], metavar="NAME=VALUE",
                   help="a style option, e.g. --set detail=0.7 or --set spacing=2; "
                        "'inkreach styles' lists them all")
    p.add_argument("--paper", type=_number_list(4), metavar="'X Y W H'",
                   help="paper rectangle in arm mm (lower-left corner, width, height) the "
                        "drawing must stay inside")
    p.add_argument("--margin", type=float, default=None, metavar="MM",
                   help="margin inside the paper rectangle, mm (needs --paper; default 5; "
                        "0 to 1000: wider leaves no room on any desk arm)")
    p.add_argument("--size", type=float, default=None, metavar="MM",
                   help="fixed length of the drawing's longer side, mm (default: as large "
                        "as the arm allows; 1 to 5000)")
    p.add_argument("--prefer", choices=("largest", "isotropic"), default=None,
                   help="where to put the drawing: as large as possible, or around the "
                        "arm's best-conditioned point (default largest)")
    p.add_argument("--upright", action="store_true",
                   help="never rotate the drawing (the default; kept for older scripts)")
    p.add_argument("--tilt", action="store_true",
                   help="also try tilting the drawing by up to 30 degrees or a quarter turn "
                        "and keep a tilt that draws larger; the figures then say how to "
                        "lay the paper")
    p.add_argument("--chord-tol", type=float, default=None, metavar="MM",
                   help="how far a drawn line may stray from straight, mm (default 0.05; "
                        "0.001 to 10: finer no motor follows, coarser lines visibly bend)")
    p.add_argument("--period", type=float, default=None, metavar="S",
                   help="sample period of the joint stream, seconds (default 0.02; 0.001 to "
                        "1: faster few controllers keep up, slower cannot follow a stroke; a "
                        "whole number of servo frames when the arm has a [servo] table)")
    p.add_argument("--tip-speed", type=float, default=None, metavar="MM_S",
                   help="largest pen speed while drawing, mm/s (default 80; "
                        "0.01 to 10000)")
    p.add_argument("--signals", choices=("auto", "servo", "stepper", "both", "none"),
                   default=None,
                   help="motor signals to export, or none (default auto: from the arm file)")
    p.add_argument("--budget", action="append", default=[], metavar="NAME=N",
                   help="most work one plan may take: rows=N stream rows (default 300000), "
                        "pixels=N pixel visits of tracing (default 12000000), dot_rounds=N "
                        "stipple dots x iterations (default 2000000); a plan above it is "
                        "refused before it starts")
    p.add_argument("--format", choices=("table", "json"), default="table",
                   help="how to print the figures (default table)")
    p.add_argument("--quiet", "-q", action="store_true", help="print nothing but errors")


def build_parser():
    """The argument parser of the ``inkreach`` command."""
    top = _Parser(prog="inkreach",
                  description="Turn a picture into a checked joint-angle stream for a "
                              "two-motor pen-drawing arm.",
                  epilog="Safety: keep hands clear of a moving arm, rehearse with the pen "
                         "lifted, keep a power switch within reach.")
    top.add_argument("--version", action="version", version=_version())
    top.add_argument("--debug", action="store_true", help=argparse.SUPPRESS)
    sub = top.add_subparsers(dest="command", metavar="COMMAND", parser_class=_Parser)

    p = sub.add_parser("plan", help="plan a drawing from a picture",
                       description="Trace a picture in a style, order the strokes, place the "
                                   "drawing where the arm is well conditioned, time it within "
                                   "the motor limits, check every sample, and write the files.",
                       epilog=_PLAN_EXAMPLE, formatter_class=argparse.RawDescriptionHelpFormatter)
    p.add_argument("image", nargs="?", default=None,
                   help="the picture: PNG, JPEG, WebP, TIFF, BMP or GIF, or an SVG file "
                        "(optional with --text)")
    _add_plan_options(p)
    from ..vector.cli import add_text_options
    add_text_options(p)

    d = sub.add_parser("demo", help="plan the shipped demo picture on the default arm",
                       description="Run the whole job on a shipped demo picture with the "
                                   "default arm.",
                       epilog="example:\n  inkreach demo --out demo-out --style hatch",
                       formatter_class=argparse.RawDescriptionHelpFormatter)
    d.add_argument("--picture", default="emblem",
                   help="which demo picture: emblem, still-life or postcard-text, or postcard "
                        "(the still life with a caption) (default emblem)")
    _add_plan_options(d)
    d.set_defaults(out="inkreach-demo", style=None)

    a = sub.add_parser("arm", help="report where an arm can draw",
                       description="Workspace report: reachable and usable area, the largest "
                                   "drawing rectangles, the worst conditioning inside them, and "
                                   "a conditioning map picture.",
                       epilog="examples:\n  inkreach arm\n  inkreach arm my_arm.toml --out report",
                       formatter_class=argparse.RawDescriptionHelpFormatter)
    a.add_argument("arm", nargs="?", default=None,
                   help="arm file or built-in arm name (default: the built-in desk five-bar)")
    a.add_argument("--out", "-o", default="inkreach-arm", metavar="DIR",
                   help="folder for arm_map.png and arm.json (default ./inkreach-arm)")
    a.add_argument("--format", choices=("table", "json"), default="table")

    s = sub.add_parser("serve", help="start the local web page",
                       description="Start the local web page: drop in a picture, pick a "
                                   "style, look at the preview and figures, download the files.",
                       epilog="example:\n  inkreach serve --port 8765   then open "
                              "http://127.0.0.1:8765/",
                       formatter_class=argparse.RawDescriptionHelpFormatter)
    s.add_argument("--port", type=int, default=8765, help="port (default 8765)")
    s.add_argument("--host", default="127.0.0.1",
                   help="address to bind (default 127.0.0.1, this computer only); any other "
                        "needs --allow-network")
    s.add_argument("--allow-network", action="store_true",
                   help="allow a --host other computers can reach; the page then asks for "
                        "the access token printed at start")

    c = sub.add_parser("calibrate", help="fit the real arm from measured dots",
                       description="Step 1 'sheet': write a calibration sheet and stream that "
                                   "put numbered dots at known angles, and a CSV to fill in. "
                                   "Step 2 'fit': read the measured dots and write a corrected "
                                   "arm file.",
                       epilog="examples:\n  inkreach calibrate sheet --arm my_arm.toml --out cal\n"
                              "  inkreach calibrate fit cal/measurements.csv --arm my_arm.toml "
                              "--out cal",
                       formatter_class=argparse.RawDescriptionHelpFormatter)
    c.add_argument("step", choices=("sheet", "fit"), help="sheet or fit")
    c.add_argument("measurements", nargs="?", help="for fit: the filled-in measurements CSV")
    c.add_argument("--arm", default=None, help="arm file or built-in arm name")
    c.add_argument("--dots", type=int, default=None,
                   help="number of dots on the sheet (default 24 for a five-bar, 12 for a "
                        "serial arm)")
    c.add_argument("--out", "-o", default="inkreach-calibration", metavar="DIR")

    st = sub.add_parser("styles", help="list the drawing styles and their options")
    st.add_argument("--format", choices=("table", "json"), default="table",
                    help="plain text or JSON (default table)")
    from ..board.cli import add_board_commands
    _COMMANDS.update(add_board_commands(sub))
    from ..board.run_cli import add_run_command
    add_run_command(sub, _COMMANDS)
    from ..check.command import add_parser as _add_check
    _add_check(sub)
    return top


def _version():
    from .. import __version__
    return f"inkreach {__version__}"


def _preload(command):
    """Load the heavy libraries a command needs while Ctrl-C still stops quietly.

    numpy turns an interrupt during its own import into an ImportError, so
    they are loaded under the start-up handler, not later in the command.
    """
    import numpy  # noqa: F401
    if command in ("plan", "demo", "check", "run"):
        from .. import plan  # noqa: F401


def main(argv=None):
    """Run the command line; returns the exit status."""
    from .._startup import normal_interrupts
    try:
        parser = build_parser()
        args = parser.parse_args(argv)
        _preload(args.command)
    except KeyboardInterrupt:  # stopped while starting: nothing to say
        return 130
    normal_interrupts()
    if args.command is None:
        parser.print_help()
        return 0
    debug = args.debug or os.environ.get("INKREACH_DEBUG")
    try:
        return _COMMANDS[args.command](args)
    except InkreachError as exc:
        from ..limits import BudgetError
        hint = ""
        if isinstance(exc, BudgetError):
            hint = f" (or raise the budget: --budget {exc.key}={_round_budget(exc.needed)})"
        print(f"inkreach: error: {exc}{hint}", file=sys.stderr)
        return 2
    except KeyboardInterrupt as exc:
        print(f"inkreach: stopped; {_stopped_what(args, exc)}", file=sys.stderr)
        return 130
    except (OSError, MemoryError) as exc:
        from .messages import environment_message
        print(f"inkreach: error: {environment_message(exc, args)}", file=sys.stderr)
        return 2
    except Exception as exc:  # a bug, not bad input: say so in one line
        if debug:
            raise
        print(f"inkreach: internal error: {type(exc).__name__}: {exc}; nothing was written. "
              "Run again with INKREACH_DEBUG=1 for details and please report it.",
              file=sys.stderr)
        return 3


#: Options that have their own flag: option name -> flag.
_FLAGGED = {"paper": "--paper", "margin": "--margin", "size": "--size", "prefer": "--prefer",
            "chord_tol": "--chord-tol", "period": "--period", "tip_speed": "--tip-speed",
            "signals": "--signals", "rotations": "--upright", "tilt": "--tilt",
            "budget": "--budget"}


def _round_budget(n):
    """A round budget figure a little above ``n``."""
    n = max(int(n), 1)
    step = 10 ** max(len(str(n)) - 2, 0)
    return (n // step + 1) * step


def _stopped_what(args, exc):
    """What an interrupt left behind, truthfully."""
    out = getattr(args, "out", None)
    committed = getattr(exc, "committed", None)
    if committed is True or getattr(args, "_written", False):
        return f"the new files had already been written to {out}"
    if committed is False:
        return (f"{out} was left as it was" if os.path.isdir(out)
                else "no files were written")
    return "no files were written"


def _plan_kwargs(args):
    from ..limits import budget_from_text, describe_text

    opts = {}
    for item in args.set:
        if "=" not in item:
            raise InkreachError(f"--set {describe_text(item)} needs the form NAME=VALUE, "
                                "e.g. --set detail=0.7")
        k, v = item.split("=", 1)
        k = k.strip().replace("-", "_")
        if k in opts:
            raise InkreachError(f"--set {k} is given twice; give it once")
        if k == "budget":
            raise InkreachError("set the budget with --budget NAME=N, e.g. --budget rows=1000000")
        opts[k] = _value(v)
    flags = {"paper": args.paper, "margin": args.margin, "size": args.size,
             "prefer": args.prefer, "chord_tol": args.chord_tol, "period": args.period,
             "tip_speed": args.tip_speed, "signals": args.signals,
             "rotations": [0.0] if args.upright else None,
             "tilt": True if args.tilt and not args.upright else None}
    for k, v in flags.items():
        if v is None:
            continue
        if k in opts:
            raise InkreachError(f"{k} is given both as {_FLAGGED[k]} and as --set {k}; "
                                "give it once")
        opts[k] = v
    if args.budget:
        opts["budget"] = budget_from_text(args.budget)
    return opts


def _check_out_dir(path):
    path = os.fspath(path)
    if os.path.exists(path) and not os.path.isdir(path):
        raise InkreachError(f"output folder {path} is a file; give a folder path with --out")
    parent = os.path.dirname(os.path.abspath(path))
    probe = path if os.path.isdir(path) else parent
    while not os.path.exists(probe):
        probe = os.path.dirname(probe)
    if not os.access(probe, os.W_OK):
        raise InkreachError(f"output folder {path} is not writable; choose another with --out")


def _cmd_plan(args, image=None, style=None, extra=None):
    from ..plan import plan

    _check_out_dir(args.out)
    from ..vector.cli import print_warnings, text_kwargs
    from ..export.folder import check_replaceable
    check_replaceable(args.out)  # refused now, not after the planning
    image = args.image if image is None else image
    style = args.style if style is None else style
    extra = text_kwargs(args) if hasattr(args, "text") else dict(extra or {})
    with _Progress(enabled=not args.quiet and args.format == "table") as prog:
        result = plan(image, arm=args.arm, style=style, progress=prog, **_plan_kwargs(args),
                      **extra)
    written = result.save(args.out)
    print_warnings(result.stats, sys.stderr)
    args._written = True
    if args.format == "json":
        print(json.dumps({"stats": result.stats, "files": written}, indent=2))
    elif not args.quiet:
        print(_figures_table(result, written))
    return 0


def _cmd_demo(args):
    from .demo import POSTCARD, demo_picture
    if args.picture == "postcard":
        path, style = demo_picture(POSTCARD["picture"])
        return _cmd_plan(args, image=path, style=args.style or POSTCARD["style"],
                         extra={"caption": POSTCARD["caption"]})
    path, style = demo_picture(args.picture)
    return _cmd_plan(args, image=path, style=args.style or style)


def _cmd_arm(args):
    from ..plan import resolve_arm
    from ..arms.report import arm_report

    _check_out_dir(args.out)
    arm = resolve_arm(args.arm)
    rep, files = arm_report(arm)
    from ..export import write_files
    write_files(args.out, files)
    written = {n: os.path.join(args.out, n) for n in files}
    if args.format == "json":
        print(json.dumps({**rep, "files": written}, indent=2))
    else:
        lines = [f"arm: {arm.name} ({arm.kind})",
                 f"  reachable area        {rep['reach_area_mm2']:10.0f} mm²",
                 f"  usable area           {rep['usable_area_mm2']:10.0f} mm²  "
                 f"(conditioning ≥ {arm.limits.min_conditioning:g}, inside the joint limits)"]
        for key, label in (("rect_4_3", "4:3"), ("rect_1_1", "1:1")):
            r = rep[key]
            if r is None:
                lines.append(f"  best {label} rectangle   none fits")
                continue
            lines.append(f"  best {label} rectangle   {r['width_mm']:.1f} × {r['height_mm']:.1f} mm "
                         f"at ({r['x0_mm']:.1f}, {r['y0_mm']:.1f}), worst conditioning "
                         f"{r['worst_conditioning']:.3f}")
        lines.append(f"  best conditioning     {rep['best_conditioning']:.3f} at "
                     f"({rep['best_point_mm'][0]:.1f}, {rep['best_point_mm'][1]:.1f}) mm")
        lines.append("files: " + ", ".join(written.values()))
        print("\n".join(lines))
    return 0


def _cmd_serve(args):
    from ..web import serve
    serve(host=args.host, port=args.port, allow_network=args.allow_network)
    return 0


def _cmd_calibrate(args):
    from ..calibrate.cli import run_calibrate
    return run_calibrate(args)


def _cmd_styles(args):
    from ..trace import style_catalogue
    table = style_catalogue()
    if getattr(args, "format", "table") == "json":
        print(json.dumps({"styles": table}, indent=2))
        return 0
    for style in table:
        print(f"{style['name']}  (draws {style['renders']})")
        for o in style["options"]:
            label = o["label"] + (f" ({o['unit']})" if o["unit"] else "")
            print(f"  {o['name']:<12} {label:<34} default {o['default']!r:<8} {o['help']}")
    return 0


def _cmd_check(args):
    from ..check.command import run
    return run(args)


_COMMANDS = {"plan": _cmd_plan, "demo": _cmd_demo, "arm": _cmd_arm, "serve": _cmd_serve,
             "calibrate": _cmd_calibrate, "styles": _cmd_styles, "check": _cmd_check}


def _fmt_time(s):
    s = float(s)
    if s < 90:
        return f"{s:.1f} s"
    m, sec = divmod(int(round(s)), 60)
    h, m = divmod(m, 60)
    return f"{h} h {m:02d} min" if h else f"{m} min {sec:02d} s"


def _figures_table(result, written):
    st = result.stats
    rows = [
        ("style", st["style"]),
        ("arm", st["arm"]),
        ("strokes", f"{st['strokes']}"),
        ("pen lifts", f"{st['pen_lifts']}"),
        ("pen-down length", f"{st['pen_down_mm'] / 1000:.2f} m"),
        ("pen-up travel", f"{st['pen_up_mm'] / 1000:.2f} m"),
        ("drawing time", f"{_fmt_time(st['estimated_s'])} (drawing {_fmt_time(st['pen_down_s'])},"
                         f" pen-up travel {_fmt_time(st['pen_up_s'])}, lifting and lowering "
                         f"{_fmt_time(st['lift_dwell_s'])})"),
        ("drawing size", f"{st['drawing_mm'][0]:.1f} × {st['drawing_mm'][1]:.1f} mm at "
                         f"({st['drawing_origin_mm'][0]:.1f}, {st['drawing_origin_mm'][1]:.1f}) mm"
                         + (f", tilted {st['rotation_deg']:.0f}°" if st.get("paper_note")
                            else ", upright")),
        ("worst conditioning", f"{st['min_conditioning']:.3f} (floor "
                               f"{result.arm.limits.min_conditioning:g})"),
    ]
    if "signal_rounding_mm" in st:
        rows.append(("signal rounding", f"at most {st['signal_rounding_mm']:.3f} mm at the pen "
                                        f"({', '.join(result.signals)})"))
    if st.get("paper_note"):
        rows.append(("paper", st["paper_note"]))
    if "fidelity" in st:
        from ..export import likeness_text
        rows.append(("likeness", likeness_text(st["fidelity"])))
    rows.append(("stream", f"{st['rows']} rows every {st['period_s'] * 1000:g} ms, all checked"))
    width = max(len(k) for k, _ in rows)
    out = [f"  {k:<{width}}  {v}" for k, v in rows]
    out.append("  files:")
    out += [f"    {p}" for p in written.values()]
    out.append("  Before running: keep hands clear, rehearse with the pen lifted, and keep a "
               "power switch within reach (see SAFETY.txt).")
    return "\n".join(out)


class _Progress:
    """Stage-by-stage progress on a terminal (tqdm), silent otherwise."""

    def __init__(self, enabled=True):
        self.enabled = enabled and sys.stderr.isatty()
        self.bar = None

    def __enter__(self):
        if self.enabled:
            from tqdm import tqdm

            from ..plan import STAGES
            self.bar = tqdm(total=len(STAGES), desc="planning", unit="stage", file=sys.stderr,
                            leave=False, bar_format="{desc:<18} {bar} {n_fmt}/{total_fmt}")
        return self

    def __call__(self, stage, done, total):
        if self.bar is not None:
            self.bar.set_description(stage)
            self.bar.update(done - self.bar.n)

    def __exit__(self, *exc):
        if self.bar is not None:
            self.bar.close()
        return False
