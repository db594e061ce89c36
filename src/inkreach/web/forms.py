"""Turning the text fields of a web form into planner arguments."""

import math
import re

from ..errors import InkreachError

__all__ = ["parse_value", "parse_options", "RESERVED"]

#: Form fields that are not planner options.
RESERVED = frozenset({"image", "style", "arm"})
#: Options the web page must not set: the planner sets them itself, or they
#: name things on the server's disk.
_REFUSED = {
    "pen_px": "pen_px follows from the arm's pen width; change [pen] width_mm in the arm file",
    "progress": "progress is not an option",
    "start": "start cannot be set from the web page; put a home pose in the arm file",
    "budget": "the work budget is fixed on the web page; use the command line's --budget "
              "for larger plans",
    "max_pixels": "the largest picture is fixed on the web page; shrink the picture first",
}
#: Options whose value is a word, passed on as typed ("none" is a word here).
_WORDS = frozenset({"signals", "prefer", "mode", "threshold"})
#: Bounds that keep one request from tying the machine up for long.
_BOUNDS = {
    "max_side": (8, 2400),
    "period": (0.005, None),
    "chord_tol": (0.005, None),
    "dots": (None, 200_000),
    "iterations": (None, 500),
}
_NAME = re.compile(r"^[a-z][a-z0-9_]{0,39}$")
_NUMBER = re.compile(r"^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$")


def parse_value(text):
    """One form value: a number, a list of numbers, True/False, None or text.

    Parameters
    ----------
    text : str

    Returns
    -------
    int, float, list, bool, None or str

    Examples
    --------
    >>> parse_value("12"), parse_value("0.5"), parse_value("none"), parse_value("otsu")
    (12, 0.5, None, 'otsu')
    >>> parse_value("0, 0, 120, 80"), parse_value("true"), parse_value("yes")
    ([0, 0, 120, 80], True, 'yes')
    """
    s = text.strip()
    low = s.lower()
    if low in ("none", "auto-none"):
        return None
    if low == "true":
        return True
    if low == "false":
        return False
    if low.lstrip("+-") in ("nan", "inf", "infinity"):
        return float(low)
    if _NUMBER.match(s):
        v = float(s)
        return int(v) if re.match(r"^[+-]?\d+$", s) else v
    if "," in s:
        parts = [p.strip() for p in s.split(",")]
        if all(_NUMBER.match(p) for p in parts):
            return [parse_value(p) for p in parts]
    return s


def parse_options(fields):
    """Planner keyword options from form fields (name -> text).

    Empty fields are left out (the planner's default applies). Names are
    passed on as given, so the planner reports unknown ones itself.

    Parameters
    ----------
    fields : iterable of (str, str)

    Returns
    -------
    dict

    Raises
    ------
    InkreachError
        For a malformed name, a refused option or a value out of the web
        page's bounds.

    Examples
    --------
    >>> parse_options([("detail", "0.7"), ("blur", ""), ("mode", "line")])
    {'detail': 0.7, 'mode': 'line'}
    """
    out = {}
    for name, text in fields:
        if name in RESERVED:
            continue
        if not _NAME.match(name):
            raise InkreachError(f"option name {name[:40]!r} is not valid; use lower-case "
                                "letters, digits and underscores")
        if name in _REFUSED:
            raise InkreachError(_REFUSED[name])
        if name in out:
            raise InkreachError(f"option {name} is given twice; give it once")
        if len(text) > 200:
            raise InkreachError(f"option {name} is too long; give a number or a short word")
        if not text.strip():
            continue
        v = text.strip() if name in _WORDS else parse_value(text)
        if isinstance(v, float) and not math.isfinite(v):
            raise InkreachError(f"option {name} must be a finite number")
        lo, hi = _BOUNDS.get(name, (None, None))
        if isinstance(v, (int, float)) and not isinstance(v, bool):
            if lo is not None and v < lo:
                raise InkreachError(f"option {name}={text.strip()[:24]} is too small here; "
                                    f"use at least {lo:g}")
            if hi is not None and v > hi:
                raise InkreachError(f"option {name}={text.strip()[:24]} is far too large "
                                    f"here; use at most {hi:g}")
        out[name] = v
    return out
