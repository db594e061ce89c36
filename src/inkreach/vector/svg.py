"""SVG 1.1 files in: the stroked geometry as polylines, curves flattened.

The file is parsed by svgelements after a structural guard on the raw
bytes; the guard refuses what could tie the machine up or reach outside
(document type declarations with an internal subset, entity declarations,
huge files, paths with too many commands, non-finite or huge numbers).
"""

import io
import os
import re
import xml.etree.ElementTree as ET
from dataclasses import dataclass

import numpy as np

from ..errors import InkreachError
from .fill import hatch_fill

__all__ = ["VectorDrawing", "load_svg", "looks_like_svg", "flatten_tolerance",
           "MAX_SVG_BYTES", "MAX_PATH_COMMANDS"]

#: Largest SVG file read, bytes (a bound we chose: far above any drawing an
#: arm can draw in a day, far below what would take long to parse).
MAX_SVG_BYTES = 10_000_000
#: Largest number of path commands (and of coordinate numbers / 6) in one file.
MAX_PATH_COMMANDS = 200_000
#: Largest number of points after flattening.
MAX_POINTS = 2_000_000
#: Largest coordinate magnitude accepted, user units.
MAX_COORD = 1e9

_GEOMETRY_ATTRS = ("d", "points", "x", "y", "cx", "cy", "r", "rx", "ry", "width", "height",
                   "x1", "y1", "x2", "y2", "transform", "viewBox")
#: Largest total length of path data (d and points attributes), characters.
MAX_PATH_CHARS = 3_000_000
_COMMANDS = "MmLlHhVvCcSsQqTtAaZz"
_BIG_EXPONENT = re.compile(r"[eE]\+?0*[1-9]\d")


def _bad_number(v):
    """NaN, infinity or an exponent of 10 or more (huge) in attribute text."""
    low = v.lower()
    return "nan" in low or "inf" in low or ("e" in low and _BIG_EXPONENT.search(v) is not None)


@dataclass(frozen=True, eq=False)
class VectorDrawing:
    """Line art that is already lines.

    Attributes
    ----------
    strokes : list of ndarray, shape (N_i, 2)
        Polylines in the drawing's own units, x to the right, y down.
    size : tuple of float
        (width, height) of the drawing's frame in the same units.
    units : str
        ``"px"`` (SVG user units after the viewBox, 96 per inch) or ``"mm"``.
    mm_per_unit : float
        Physical size of one unit, mm (25.4 / 96 for SVG px).
    warnings : tuple of str
        One line for each kind of thing in the input that is not drawn.
    """

    strokes: list
    size: tuple
    units: str
    mm_per_unit: float
    warnings: tuple = ()


def looks_like_svg(source):
    """True for a path ending in ``.svg`` or bytes/text that start like SVG or XML.

    Examples
    --------
    >>> looks_like_svg(b'<?xml version="1.0"?><svg/>'), looks_like_svg("x.svg")
    (True, True)
    >>> looks_like_svg("photo.png"), looks_like_svg(None)
    (False, False)
    """
    if isinstance(source, (bytes, bytearray, memoryview)):
        head = bytes(source[:512]).lstrip(b"\xef\xbb\xbf \t\r\n")
        return head.startswith((b"<svg", b"<?xml"))
    if isinstance(source, (str, os.PathLike)):
        s = os.fspath(source)
        if s.lstrip().startswith(("<svg", "<?xml")):
            return True
        if s.lower().endswith((".svg", ".svgz")):
            return True
        try:                          # a file without the extension: look at its start
            with open(s, "rb") as f:
                return looks_like_svg(f.read(512))
        except (OSError, ValueError):
            return False
    return False


def flatten_tolerance(chord_tol_mm, mm_per_unit):
    """Flattening tolerance in user units for a chord tolerance in arm mm.

    Examples
    --------
    >>> flatten_tolerance(0.05, 0.5)
    0.1
    """
    return float(chord_tol_mm) / float(mm_per_unit)


def _read_bytes(source):
    if isinstance(source, (bytes, bytearray, memoryview)):
        data = bytes(source)
    else:
        s = os.fspath(source)
        if s.lstrip().startswith(("<svg", "<?xml")):
            data = s.encode("utf-8")
        else:
            try:
                n = os.path.getsize(s)
            except OSError:
                raise InkreachError(f"cannot read the SVG file {s}; check the path") from None
            if n > MAX_SVG_BYTES:
                raise InkreachError(f"the SVG file is {n / 1e6:.0f} MB, more than "
                                    f"{MAX_SVG_BYTES // 1_000_000} MB allowed; simplify it first")
            with open(s, "rb") as f:
                data = f.read(MAX_SVG_BYTES + 1)
    if len(data) > MAX_SVG_BYTES:
        raise InkreachError(f"the SVG is larger than {MAX_SVG_BYTES // 1_000_000} MB; "
                            "simplify it first")
    return data


def _guard(data):
    """Refuse hostile or oversized structure before any real parsing."""
    if data[:2] == b"\x1f\x8b":
        raise InkreachError("the file is a compressed SVG (.svgz); unpack it to a plain .svg "
                            "first")
    low = data[:MAX_SVG_BYTES].lower()
    if b"<!entity" in low:
        raise InkreachError("the SVG declares XML entities, which are refused (they can read "
                            "other files or expand without end); save it without a DOCTYPE")
    i = low.find(b"<!doctype")
    if i >= 0:
        j = low.find(b">", i)
        if j < 0 or b"[" in low[i:j]:
            raise InkreachError("the SVG has a DOCTYPE with its own declarations, which is "
                                "refused; save it without a DOCTYPE")
    try:
        root = ET.fromstring(data)
    except ET.ParseError as exc:
        raise InkreachError(f"the SVG is not well-formed XML ({exc}); save it again from "
                            "the drawing program") from None
    if _local(root.tag) != "svg":
        raise InkreachError("the file is XML but not SVG (its root is not <svg>)")
    n_cmd = n_chars = 0
    for el in root.iter():
        for name in ("d", "points"):
            v = el.get(name)
            if v is None:
                continue
            n_chars += len(v)
            if name == "d":
                n_cmd += sum(map(v.count, _COMMANDS))
        if n_cmd > MAX_PATH_COMMANDS or n_chars > MAX_PATH_CHARS:
            raise InkreachError(f"the SVG has more than {MAX_PATH_COMMANDS:,} path commands "
                                "or too much path data; simplify it first")
    for el in root.iter():
        for name in _GEOMETRY_ATTRS:
            v = el.get(name)
            if v is not None and _bad_number(v):
                raise InkreachError(f"the SVG has a non-finite or huge number in a {name} "
                                    f"attribute ({_short(v)}); fix the file")
    return root


def _short(v, n=30):
    v = " ".join(v.split())
    return v if len(v) <= n else v[:n] + "..."


def _local(tag):
    return tag.rsplit("}", 1)[-1] if isinstance(tag, str) else ""


def _style(el):
    out = {}
    for part in (el.get("style") or "").split(";"):
        if ":" in part:
            k, v = part.split(":", 1)
            out[k.strip().lower()] = v.strip().lower()
    for k in ("display", "visibility", "fill", "clip-path", "mask", "filter",
              "marker-start", "marker-mid", "marker-end"):
        if el.get(k) is not None:
            out.setdefault(k, el.get(k).strip().lower())
    return out


_SHAPES = {"path", "rect", "circle", "ellipse", "line", "polyline", "polygon"}
_NOT_DRAWN = {
    "text": "text elements are not drawn; convert the text to paths, or use the text or "
            "caption option",
    "image": "images inside the SVG are not drawn; plan them as a picture",
    "foreignObject": "foreignObject content is not drawn",
    "pattern": "pattern fills are not drawn",
    "mask": "masks are ignored; the masked shapes are drawn whole",
    "clipPath": "clip paths are ignored; the clipped shapes are drawn whole",
    "marker": "markers are not drawn",
    "filter": "filters are ignored",
    "switch": "switch elements are drawn with all their children",
}


_QUIET = {"svg", "g", "a", "use", "switch", "linearGradient", "radialGradient", "stop",
          "animate", "animateTransform", "animateMotion", "set", "view", "script", "style"}


def _is_svg(tag):
    return isinstance(tag, str) and (not tag.startswith("{")
                                     or tag.startswith("{http://www.w3.org/2000/svg}"))


def _warnings(root):
    """One line per kind of thing in the file that is not drawn as it looks."""
    found = {}
    hidden = [0]
    filled = [0]

    def walk(el, visible):
        tag = _local(el.tag)
        st = _style(el)
        if st.get("display") == "none":
            hidden[0] += sum(1 for e in el.iter() if _local(e.tag) in _SHAPES)
            return
        vis = st.get("visibility")
        if vis in ("hidden", "collapse"):
            visible = False
        elif vis == "visible":
            visible = True
        if tag in ("defs", "symbol", "metadata", "title", "desc", "style"):
            # drawn only where a <use> refers to them; clip paths, masks,
            # patterns and markers are still worth a word
            for e in el.iter():
                t = _local(e.tag)
                if t in ("clipPath", "mask", "pattern", "marker", "filter"):
                    found.setdefault(t, _NOT_DRAWN[t])
            return
        if tag in ("tspan", "textPath"):
            tag = "text"
        if tag in _NOT_DRAWN:
            found.setdefault(tag, _NOT_DRAWN[tag])
            if tag in ("text", "image", "foreignObject", "clipPath", "mask", "pattern",
                       "marker"):
                return
        if st.get("clip-path", "none") != "none":
            found.setdefault("clipPath", _NOT_DRAWN["clipPath"])
        if st.get("mask", "none") != "none":
            found.setdefault("mask", _NOT_DRAWN["mask"])
        if st.get("filter", "none") != "none":
            found.setdefault("filter", _NOT_DRAWN["filter"])
        if any(st.get(k, "none") != "none" for k in ("marker-start", "marker-mid",
                                                      "marker-end")):
            found.setdefault("marker", _NOT_DRAWN["marker"])
        if tag in _SHAPES:
            if not visible:
                hidden[0] += 1
            elif tag not in ("line", "polyline") and st.get("fill", "black") != "none":
                filled[0] += 1
        elif _is_svg(el.tag) and tag not in _QUIET:
            found.setdefault("other:" + tag, f"<{tag}> elements are not drawn")
        for child in el:
            walk(child, visible)

    walk(root, True)
    out = []
    if hidden[0]:
        out.append(f"{hidden[0]} hidden shape(s) (display:none or visibility:hidden) are "
                   "not drawn")
    if filled[0]:
        out.append(f"{filled[0]} filled shape(s) are drawn as outlines only")
    out += list(found.values())
    return tuple(out)


def _linear_norm(m):
    """Largest stretch (spectral norm) of an svgelements Matrix's linear part."""
    a = np.array([[m.a, m.c], [m.b, m.d]], dtype=float)
    return float(np.linalg.norm(a, 2)) if np.isfinite(a).all() else np.inf


def _apply(m, pts):
    x, y = pts[:, 0], pts[:, 1]
    return np.column_stack([m.a * x + m.c * y + m.e, m.b * x + m.d * y + m.f])


def _count(bound, tol):
    """Pieces so that ``bound * h**2 / 8 <= tol`` with h = 1 / pieces.

    The chord of a curve p(t) over a parameter step h strays from it by at
    most h**2 / 8 * max|p''| (the linear-interpolation error bound, e.g.
    Burden & Faires, "Numerical Analysis", theorem 3.3).
    """
    if not (bound > 0):
        return 1
    n = int(np.ceil(np.sqrt(bound / (8.0 * tol))))
    if n > MAX_POINTS:
        raise InkreachError("the SVG is too detailed to flatten at this chord tolerance; "
                            "simplify it or raise chord_tol")
    return max(n, 1)


def _segment_points(seg, tol, se):
    """Points after the start of one local segment, flattened within ``tol``."""
    end = np.array([[seg.end.x, seg.end.y]], dtype=float)
    if isinstance(seg, se.CubicBezier):
        p = np.array([[seg.start.x, seg.start.y], [seg.control1.x, seg.control1.y],
                      [seg.control2.x, seg.control2.y], [seg.end.x, seg.end.y]], float)
        # B''(t) = 6[(1-t)(P0 - 2P1 + P2) + t(P1 - 2P2 + P3)]
        m = 6.0 * max(np.hypot(*(p[0] - 2 * p[1] + p[2])), np.hypot(*(p[1] - 2 * p[2] + p[3])))
        t = np.linspace(0, 1, _count(m, tol) + 1)[1:, None]
        u = 1 - t
        return u ** 3 * p[0] + 3 * u * u * t * p[1] + 3 * u * t * t * p[2] + t ** 3 * p[3]
    if isinstance(seg, se.QuadraticBezier):
        p = np.array([[seg.start.x, seg.start.y], [seg.control.x, seg.control.y],
                      [seg.end.x, seg.end.y]], float)
        m = 2.0 * np.hypot(*(p[0] - 2 * p[1] + p[2]))       # B'' = 2(P0 - 2P1 + P2)
        t = np.linspace(0, 1, _count(m, tol) + 1)[1:, None]
        u = 1 - t
        return u * u * p[0] + 2 * u * t * p[1] + t * t * p[2]
    if isinstance(seg, se.Arc):
        # in local (untransformed) coordinates the arc is an ellipse with
        # semi-axes rx, ry; in the angle parameter |p''| <= max(rx, ry), so
        # over the whole sweep the bound is max(rx, ry) * sweep**2
        r = max(abs(float(seg.rx)), abs(float(seg.ry)))
        sweep = abs(float(seg.sweep))
        if not (r > 0 and sweep > 0):
            return end
        n = _count(r * sweep * sweep, tol)
        pts = np.asarray(seg.npoint(np.linspace(0, 1, n + 1)[1:]), dtype=float)
        pts[-1] = end[0]
        return pts
    return end


def _shape_polylines(shape, tol_user, se):
    """Polylines of one shape in user units (after its whole transform)."""
    path = se.Path(shape)
    m = path.transform
    stretch = _linear_norm(m)
    if not np.isfinite(stretch) or stretch > MAX_COORD:
        raise InkreachError("the SVG has a non-finite or huge transform; fix the file")
    if stretch == 0:
        return []
    tol = tol_user / stretch          # chord errors grow by at most the stretch
    lines, cur, start = [], [], None
    for seg in path:
        if isinstance(seg, se.Move):
            if len(cur) > 1:
                lines.append(np.concatenate(cur))
            start = np.array([[seg.end.x, seg.end.y]], dtype=float)
            cur = [start]
            continue
        if seg.start is None or seg.end is None:
            continue
        if not cur:
            start = np.array([[seg.start.x, seg.start.y]], dtype=float)
            cur = [start]
        if isinstance(seg, se.Close):
            if start is not None and np.any(cur[-1][-1] != start[0]):
                cur.append(start.copy())
            elif start is not None and len(cur) > 1:
                cur[-1] = cur[-1].copy()
                cur[-1][-1] = start[0]
            if len(cur) > 1:
                lines.append(np.concatenate(cur))
            cur = [start.copy()] if start is not None else []
            continue
        cur.append(_segment_points(seg, tol, se))
    if len(cur) > 1:
        lines.append(np.concatenate(cur))
    out = []
    for ln in lines:
        p = _apply(m, ln)
        if not np.isfinite(p).all() or np.abs(p).max() > MAX_COORD:
            raise InkreachError("the SVG has non-finite or huge coordinates; fix the file")
        # drop repeats and float-noise steps (a closing point a few ulps off)
        eps = 1e-9 * max(1.0, float(np.abs(p).max()))
        keep = np.ones(len(p), bool)
        keep[1:] = np.hypot(*np.diff(p, axis=0).T) > eps
        closed = bool(np.hypot(*(p[-1] - p[0])) <= eps)
        p = p[keep]
        if closed and len(p) > 2:
            p[-1] = p[0]
        if len(p) >= 2:
            out.append(p)
    return out


def load_svg(source, tol=None, *, chord_tol_mm=0.05, mm_per_unit=None, fill_spacing=None,
             fill_angle=45.0):
    """Read an SVG 1.1 file's stroked geometry as polylines.

    Paths (every command), rect (with rounded corners), circle, ellipse,
    line, polyline and polygon are read, through nested groups, ``use``,
    transform lists, the viewBox and physical units. Curves (Béziers and
    elliptical arcs) are flattened so that no chord strays more than
    ``tol`` user units from the curve; every vertex lies on the curve.
    Subpaths are closed where the file closes them.

    Parameters
    ----------
    source : str, os.PathLike, bytes
        A file path, or the SVG itself as bytes or text.
    tol : float, optional
        Flattening tolerance, user units (px at 96 per inch, after the
        viewBox). Default: ``chord_tol_mm`` at the file's own physical size,
        or at ``mm_per_unit`` when given.
    chord_tol_mm : float
    mm_per_unit : float, optional
    fill_spacing : float, optional
        Hatch filled shapes with parallel lines this far apart (user
        units), by their fill rule; None (the default) draws outlines only.
    fill_angle : float
        Direction of the hatch lines, degrees.

    Returns
    -------
    VectorDrawing

    Raises
    ------
    InkreachError
        One line for a file that is refused: too large, a DOCTYPE with
        declarations or an entity (XXE, entity expansion), too many path
        commands, non-finite or huge numbers, not SVG, nothing to draw.

    References
    ----------
    .. [1] W3C, "Scalable Vector Graphics (SVG) 1.1 (Second Edition)", 2011:
       paths (ch. 8), basic shapes (ch. 9), coordinate systems and
       transforms (ch. 7), units (7.10), arcs (appendix F.6).

    Examples
    --------
    >>> d = load_svg(b'<svg xmlns="http://www.w3.org/2000/svg" width="96" height="96">'
    ...              b'<line x1="0" y1="0" x2="10" y2="0" stroke="black"/></svg>')
    >>> d.strokes[0].tolist(), d.units
    ([[0.0, 0.0], [10.0, 0.0]], 'px')
    """
    import svgelements as se

    data = _read_bytes(source)
    root = _guard(data)
    warnings = _warnings(root)
    if fill_spacing is not None:
        warnings = tuple(w for w in warnings if "drawn as outlines" not in w)
    try:
        doc = se.SVG.parse(io.BytesIO(data), reify=False, ppi=96.0)
    except Exception as exc:
        raise InkreachError(f"the SVG could not be read ({type(exc).__name__}); save it "
                            "again from the drawing program") from None
    unit_mm = 25.4 / 96.0
    if tol is None:
        tol = flatten_tolerance(chord_tol_mm, mm_per_unit or unit_mm)
    if not (np.isfinite(tol) and tol > 0):
        raise InkreachError(f"the flattening tolerance {tol!r} is not a positive number")
    strokes = []
    n_points = 0
    for el in doc.elements():
        if not isinstance(el, se.Shape):
            continue
        if str(el.values.get("visibility", "visible")).lower() in ("hidden", "collapse"):
            continue
        lines = _shape_polylines(el, tol, se)
        if fill_spacing is not None and el.fill is not None and el.fill.value is not None \
                and not isinstance(el, se.SimpleLine):
            rule = str(el.values.get("fill-rule", "nonzero")).strip().lower()
            lines = lines + hatch_fill(lines, fill_spacing, np.deg2rad(fill_angle), rule)
        for p in lines:
            n_points += len(p)
            if n_points > MAX_POINTS:
                raise InkreachError("the SVG is too detailed to flatten at this chord "
                                    "tolerance; simplify it or raise chord_tol")
            strokes.append(p)
    if not strokes:
        raise InkreachError("the SVG has no visible lines or shapes to draw")
    w, h = doc.width, doc.height
    try:
        size = (float(w), float(h))
    except (TypeError, ValueError):
        size = None
    if size is None or not all(np.isfinite(size)) or min(size) <= 0:
        ext = np.ptp(np.concatenate(strokes), axis=0)
        size = (float(max(ext[0], 1e-9)), float(max(ext[1], 1e-9)))
    return VectorDrawing(strokes=strokes, size=size, units="px", mm_per_unit=unit_mm,
                         warnings=warnings)
