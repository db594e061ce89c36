"""The options every style takes: defaults, plain help and valid ranges."""

import numbers

from ..errors import InkreachError


class _Number:
    def __init__(self, lo=None, hi=None, lo_open=False, integer=False, none_ok=False,
                 words=()):
        self.lo, self.hi, self.lo_open = lo, hi, lo_open
        self.integer, self.none_ok, self.words = integer, none_ok, tuple(words)

    def describe(self):
        kind = "a whole number" if self.integer else "a number"
        parts = []
        if self.lo is not None:
            parts.append(f"{'above' if self.lo_open else 'at least'} {self.lo:g}")
        if self.hi is not None:
            parts.append(f"at most {self.hi:g}")
        text = kind + (" " + " and ".join(parts) if parts else "")
        extra = [f"'{w}'" for w in self.words] + (["None"] if self.none_ok else [])
        return text + (", or " + " or ".join(extra) if extra else "")

    def __call__(self, style, name, value):
        if value is None and self.none_ok:
            return None
        if isinstance(value, str) and value in self.words:
            return value
        ok = isinstance(value, numbers.Real) and not isinstance(value, bool)
        if isinstance(value, str):
            try:
                value, ok = float(value), True
            except ValueError:
                ok = False
        if ok:
            v = float(value)
            ok = v == v and abs(v) != float("inf")
            if ok and self.integer:
                ok = v == int(v)
            if ok and self.lo is not None:
                ok = v > self.lo if self.lo_open else v >= self.lo
            if ok and self.hi is not None:
                ok = v <= self.hi
        if not ok:
            from ..limits import describe_number
            raise InkreachError(
                f"{style} option {name}={describe_number(value)} is out of range; use "
                f"{self.describe()}")
        return int(v) if self.integer else v


class _Choice:
    def __init__(self, *choices):
        self.choices = choices

    def __call__(self, style, name, value):
        if value not in self.choices:
            from ..limits import describe_text
            raise InkreachError(
                f"{style} option {name}={describe_text(value)} is not valid; use one of "
                + ", ".join(self.choices))
        return value


_PEN = (2.0, "pen width in working pixels", _Number(0.0, 100.0, lo_open=True))
_MIN_LEN = (None, "drop strokes shorter than this many pixels (None: about 1% of the picture)",
            _Number(0.0, none_ok=True))
_MIN_LEN_OUTLINE = (None, "drop strokes shorter than this many pixels (None: 2.5% of the "
                          "picture's long side, at least 8 pen widths)", _Number(0.0, none_ok=True))
_SIMPLIFY = "straighten wiggles smaller than this many pixels (0: keep every pixel)"
_SMOOTH = (2.0, "smooth each stroke along its length over this many pixels, keeping corners "
                "(0: follow the pixels)", _Number(0.0, 20.0))

OPTIONS = {
    "outline": {
        "pen_px": _PEN,
        "detail": (0.5, "0 keeps only the strongest edges, 1 keeps faint ones too",
                   _Number(0.0, 1.0)),
        "low": (None, "lower edge threshold on a 0-255 scale (None: chosen from the picture)",
                _Number(0.0, none_ok=True)),
        "high": (None, "upper edge threshold on a 0-255 scale (None: chosen from the picture)",
                 _Number(0.0, none_ok=True)),
        "blur": (None, "smoothing before finding edges, in pixels (None: from picture size "
                         "and its noise)",
                 _Number(0.0, 50.0, none_ok=True)),
        "min_length": _MIN_LEN_OUTLINE,
        "smooth": _SMOOTH,
        "simplify": (1.0, _SIMPLIFY, _Number(0.0, 50.0)),
    },
    "centerline": {
        "pen_px": _PEN,
        "threshold": ("auto", "how dark counts as ink: 'auto', 'otsu', 'adaptive', or a "
                              "level between 0 and 1", _Number(0.0, 1.0, words=("auto", "otsu", "adaptive"))),
        "min_length": _MIN_LEN,
        "prune": (None, "cut side branches shorter than this many pixels (None: from line width)",
                  _Number(0.0, none_ok=True)),
        "smooth": _SMOOTH,
        "simplify": (0.6, _SIMPLIFY, _Number(0.0, 50.0)),
    },
    "hatch": {
        "pen_px": _PEN,
        "spacing": (None, "fixed gap between hatch lines in pixels (None: set per tone so the "
                          "ink matches the picture; at least 0.5: closer lines cannot be told apart)",
                    _Number(0.5, 1000.0, none_ok=True)),
        "angle": (45.0, "direction of the first hatch layer in degrees", _Number(-360.0, 360.0)),
        "layers": (3, "most crossing layers for the darkest tones", _Number(1, 8, integer=True)),
        "levels": (32, "how many tone steps are told apart (32 matches the line lattice's "
                       "own steps)", _Number(2, 64, integer=True)),
        "smooth": (None, "blur of the tones before hatching, in pixels (None: 1.5 pen widths)",
                   _Number(0.0, 50.0, none_ok=True)),
        "min_length": (None, "drop hatch pieces shorter than this many pixels (None: 4 pen widths)",
                       _Number(0.0, none_ok=True)),
    },
    "stipple": {
        "pen_px": _PEN,
        "dots": (None, "number of dots (None: filled dots about 5 pen widths across, at most "
                        "6000; for touches, darkest parts get a dot every 2.5 pen widths)",
                 _Number(1, 1_000_000, integer=True, none_ok=True)),
        "iterations": (20, "relaxation rounds; more gives evener dots", _Number(0, 500, integer=True)),
        "mode": ("dots", "'dots' fills each dot back and forth, as large as its share of "
                         "the tone, and fills dark areas with dense lines that follow the "
                         "tone (crossed near black); 'touch' only touches the paper at each "
                         "dot; 'line' joins the dot centres in one path",
                 _Choice("dots", "touch", "line")),
        "seed": (0, "random seed for the first dot positions", _Number(0, 2**32 - 1, integer=True)),
        "contrast": (1.0, "dot density follows darkness to this power: 1 spreads dots in "
                          "proportion to darkness, lower gives light parts more, smaller dots",
                     _Number(0.1, 10.0)),
    },
    "wave": {
        "pen_px": _PEN,
        "spacing": (None, "distance between rows in pixels (None: 9 pen widths)",
                    _Number(0.0, 1000.0, lo_open=True, none_ok=True)),
        "smooth": (None, "blur of the tone along the rows, in pixels (None: one pen width)",
                   _Number(0.0, 50.0, none_ok=True)),
        "gamma": (1.0, "tone curve: 1 follows the picture, above 1 darker mid-tones, below 1 "
                       "lighter", _Number(0.2, 5.0)),
    },
    "contour": {
        "pen_px": _PEN,
        "levels": (6, "number of tone levels to draw lines at", _Number(1, 64, integer=True)),
        "smooth": (None, "blur before tracing tone lines, in pixels (None: from picture size "
                         "and its noise)", _Number(0.0, 50.0, none_ok=True)),
        "min_length": _MIN_LEN,
        "simplify": (0.5, _SIMPLIFY, _Number(0.0, 50.0)),
    },
}


def check(style, values):
    """Validate ``values`` (option -> value) for ``style``; return cleaned ones."""
    table = OPTIONS[style]
    unknown = sorted(set(values) - set(table))
    if unknown:
        raise InkreachError(
            f"{style} has no option {', '.join(unknown)}; its options are "
            + ", ".join(table))
    return {k: table[k][2](style, k, v) for k, v in values.items()}
