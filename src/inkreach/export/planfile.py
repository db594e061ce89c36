"""plan.json: the placed strokes, the picture-to-arm map, the figures and settings."""

import json
import math

import numpy as np

from ..errors import InkreachError
from ._text import join_rows, number_matrix, scaled
from .safety import SAFETY_TEXT

try:  # Python 3.11+
    import tomllib
except ModuleNotFoundError:  # pragma: no cover
    import tomli as tomllib

__all__ = ["plan_json", "PLAN_FORMAT"]

PLAN_FORMAT = "inkreach-plan/1"
_UNITS = {"length": "mm", "angle": "deg", "time": "s",
          "frame": "arm frame: x right, y away from the motors"}
_REQUIRED_STATS = ("strokes", "pen_lifts", "pen_down_mm", "pen_up_mm", "estimated_s",
                   "min_conditioning")
_FIRST = ("format", "units", "safety", "arm", "style", "options", "stats", "image_to_arm")


def _plain(v):
    """JSON-ready plain values: numpy to Python, non-finite floats to null, keys sorted."""
    if isinstance(v, dict):
        return {str(k): _plain(v[k]) for k in sorted(v, key=str)}
    if isinstance(v, (list, tuple)):
        return [_plain(x) for x in v]
    if isinstance(v, np.ndarray):
        return _plain(v.tolist())
    if isinstance(v, np.generic):
        return _plain(v.item())
    if isinstance(v, float):
        return v if math.isfinite(v) else None
    if v is None or isinstance(v, (bool, int, str)):
        return v
    raise InkreachError(f"plan.json cannot hold a {type(v).__name__}; pass plain numbers, "
                        "text, lists and tables")


def _dump(v, indent):
    """Indented JSON with tables one key a line and flat lists kept on one line."""
    pad = "  " * (indent + 1)
    if isinstance(v, dict) and v:
        items = [f"{pad}{json.dumps(k, ensure_ascii=False)}: {_dump(x, indent + 1)}"
                 for k, x in v.items()]
        return "{\n" + ",\n".join(items) + "\n" + "  " * indent + "}"
    if isinstance(v, list) and any(isinstance(x, (list, dict)) for x in v):
        items = [pad + _dump(x, indent + 1) for x in v]
        return "[\n" + ",\n".join(items) + "\n" + "  " * indent + "]"
    return json.dumps(v, ensure_ascii=False, allow_nan=False)


def _arm_table(arm):
    """The arm file contents as a table, from an arm, its TOML text or a table."""
    if arm is None or isinstance(arm, dict):
        return arm
    if isinstance(arm, (str, bytes)):
        text = arm.decode("utf-8") if isinstance(arm, bytes) else arm
        return tomllib.loads(text)
    from ..arms import arm_to_toml
    return tomllib.loads(arm_to_toml(arm))


def _strokes_text(strokes):
    """The strokes array, one stroke per line, coordinates rounded to 1e-4 mm.

    Numbers are written as ``json.dumps`` writes the rounded floats (their
    shortest text), built for all points at once.
    """
    arrays = [np.asarray(s, dtype=float).reshape(-1, 2) for s in strokes]
    if not arrays:
        return "[]"
    pts = np.concatenate(arrays)
    if not np.all(np.isfinite(pts)):
        raise InkreachError("a stroke holds a point that is not finite; re-place the drawing")
    k = scaled(pts, 4)
    if k is None or any(not len(a) for a in arrays):  # rare: let json write them
        lines = [json.dumps((np.round(a, 4) + 0.0).tolist(), separators=(", ", ": "))
                 for a in arrays]
        return "[\n    " + ",\n    ".join(lines) + "\n  ]"
    n = len(pts)
    ends = np.cumsum([len(a) for a in arrays])
    first = np.zeros(n, bool)
    first[0] = True
    first[ends[:-1]] = True
    last = np.zeros(n, bool)
    last[ends - 1] = True
    opening = np.where(first, b"[[", b"[")
    closing = np.where(last, b"]],\n    ", b"], ")
    closing[-1] = b"]]"
    body = join_rows([opening, number_matrix(k[:, 0], 4, strip=True), b", ",
                      number_matrix(k[:, 1], 4, strip=True), closing], n)
    return "[\n    " + body + "\n  ]"


def plan_json(strokes, image_to_arm, stats, extra=None):
    """The plan as JSON text, the same bytes for the same inputs.

    Fields, in this order: ``format``, ``units``, ``safety`` (the caution
    text), ``arm`` (the arm file contents as a table), ``style``,
    ``options``, ``stats``, ``image_to_arm``, any further fields of
    ``extra`` in name order, and last ``strokes`` (one polyline per line,
    in drawing order and direction, arm mm rounded to 1e-4 mm). Nested
    tables have their keys sorted; nothing time-dependent is written.

    Parameters
    ----------
    strokes : sequence of array_like, shape (M, 2)
        Placed strokes, arm mm, in drawing order.
    image_to_arm : array_like, shape (2, 3)
        Affine map from input pixel (column, row) to arm mm.
    stats : dict
        At least ``strokes``, ``pen_lifts``, ``pen_down_mm``, ``pen_up_mm``,
        ``estimated_s`` and ``min_conditioning``.
    extra : dict, optional
        More fields: ``arm`` may be an arm, its TOML text or a table;
        ``style`` and ``options`` as they were used; anything else plain.

    Returns
    -------
    str

    Raises
    ------
    InkreachError
        If a required figure is missing or a value cannot go into JSON.

    Examples
    --------
    >>> import json
    >>> stats = dict(strokes=1, pen_lifts=0, pen_down_mm=10.0, pen_up_mm=0.0,
    ...              estimated_s=1.5, min_conditioning=0.6)
    >>> text = plan_json([[[0, 100], [10, 100.123456]]], [[1, 0, 0], [0, -1, 0]], stats,
    ...                  {"style": "outline"})
    >>> json.loads(text)["strokes"]
    [[[0.0, 100.0], [10.0, 100.1235]]]
    """
    M = np.asarray(image_to_arm, dtype=float)
    if M.shape != (2, 3) or not np.all(np.isfinite(M)):
        raise InkreachError("image_to_arm must be a 2 x 3 matrix of finite numbers")
    stats = dict(stats)
    missing = [k for k in _REQUIRED_STATS if k not in stats]
    if missing:
        raise InkreachError(f"plan figures are missing {', '.join(missing)}; "
                            "compute them before writing plan.json")
    extra = dict(extra or {})
    reserved = {"format", "units", "safety", "stats", "image_to_arm", "strokes"} & set(extra)
    if reserved:
        raise InkreachError(f"extra fields {', '.join(sorted(reserved))} are set by plan_json; "
                            "rename them")
    fields = {"format": PLAN_FORMAT, "units": _UNITS, "safety": SAFETY_TEXT,
              "arm": _arm_table(extra.pop("arm", None)), "style": extra.pop("style", None),
              "options": extra.pop("options", {}), "stats": stats,
              "image_to_arm": M.tolist()}
    fields.update({k: extra[k] for k in sorted(extra)})
    parts = []
    for k, v in fields.items():
        parts.append(f"  {json.dumps(k)}: " + _dump(_plain(v), 1))
    parts.append('  "strokes": ' + _strokes_text(strokes))
    return "{\n" + ",\n".join(parts) + "\n}\n"
