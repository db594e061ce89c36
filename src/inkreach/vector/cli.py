"""Command-line options for line art: SVG input, text and captions."""

__all__ = ["add_text_options", "text_kwargs", "print_warnings"]


def add_text_options(p):
    """Add --text, --caption, --font, --text-height, --align and --actual-size."""
    from .text import DEFAULT_FONT
    p.add_argument("--text", default=None, metavar="TEXT",
                   help="draw this text alone in a single-stroke font (no picture needed); "
                        "\\n starts a new line")
    p.add_argument("--caption", default=None, metavar="TEXT",
                   help="draw this text under the picture; both are placed together")
    p.add_argument("--font", default=DEFAULT_FONT, metavar="NAME",
                   help=f"Hershey font for --text and --caption (default {DEFAULT_FONT}; "
                        "others: futuram, rowmans, rowmand, scripts, timesr, gothiceng, ...)")
    p.add_argument("--text-height", type=float, default=None, metavar="MM",
                   help="letter height for --text, mm (default: as large as fits)")
    p.add_argument("--align", choices=("left", "center", "right"), default=None,
                   help="how lines of text line up (default left for --text, center for "
                        "--caption)")
    p.add_argument("--actual-size", action="store_true",
                   help="draw an SVG at the physical size its file gives (mm, in, px at "
                        "96 per inch)")
    p.add_argument("--fill-hatch", type=float, default=None, metavar="MM",
                   help="hatch an SVG's filled shapes with lines about this far apart, mm "
                        "(default: outlines only)")


def _lines(text):
    return None if text is None else text.replace("\\n", "\n")


def text_kwargs(args):
    """Planner keywords from the parsed options (only those given)."""
    out = {"font": args.font, "text_height": args.text_height, "align": args.align}
    if args.text is not None:
        out["text"] = _lines(args.text)
    if args.caption is not None:
        out["caption"] = _lines(args.caption)
    if args.actual_size:
        out["actual_size"] = True
    if args.fill_hatch is not None:
        out["fill_hatch"] = args.fill_hatch
    return out


def print_warnings(stats, file):
    """One line on ``file`` for each thing of the input that was not drawn."""
    for w in stats.get("warnings", ()):
        print(f"inkreach: warning: {w}", file=file)
