"""Arm files: TOML in, a validated arm out, with one clear message per problem."""

import math
import os
from importlib import resources

import numpy as np

try:  # Python 3.11+
    import tomllib
except ModuleNotFoundError:  # pragma: no cover
    import tomli as tomllib

from ..errors import InkreachError
from ._base import Limits, PenSpec
from .fivebar import FiveBar
from .serial import SerialArm

__all__ = ["load_arm", "parse_arm", "default_arm", "example_arms", "arm_to_toml"]

_KINDS = ("five-bar", "serial")
_FIVEBAR_KEYS = {
    "left_motor": "point", "right_motor": "point",
    "left_upper": "length", "right_upper": "length",
    "left_lower": "length", "right_lower": "length",
}
_FIVEBAR_OPTIONAL = {"pen_extension": 0.0, "elbows": "out"}
_SERIAL_KEYS = {"shoulder": "point", "upper": "length", "lower": "length"}
_SERIAL_OPTIONAL = {"elbow": "ccw"}
_LIMIT_KEYS = ("theta1_deg", "theta2_deg", "max_speed_deg_s", "max_accel_deg_s2",
               "min_conditioning")
_TOP_KEYS = {"name", "kind", "geometry", "limits", "pen", "home", "servo", "stepper",
             "calibration", "description"}


def _fail(source, msg):
    raise InkreachError(f"arm file {source}: {msg}")


def _number(source, where, value, positive=False, allow_zero=False):
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        _fail(source, f"{where} must be a number, got {value!r}; write it as e.g. 90.0")
    v = float(value)
    if not math.isfinite(v):
        _fail(source, f"{where} must be finite, got {value!r}; give a length in mm")
    if positive and (v < 0 or (v == 0 and not allow_zero)):
        need = "zero or more" if allow_zero else "greater than zero"
        _fail(source, f"{where} must be {need}, got {v:g}; give a length in mm")
    return v


def _pair(source, where, value):
    if not isinstance(value, (list, tuple)) or len(value) != 2:
        _fail(source, f"{where} must be a pair of numbers like [0.0, 180.0], got {value!r}")
    return tuple(_number(source, where, v) for v in value)


def _check_keys(source, table, where, required, optional):
    if not isinstance(table, dict):
        _fail(source, f"[{where}] must be a table; see the example arm files")
    missing = [k for k in required if k not in table]
    if missing:
        _fail(source, f"[{where}] is missing {', '.join(missing)}; add "
              f"{'it' if len(missing) == 1 else 'them'} (see the example arm files)")
    unknown = sorted(set(table) - set(required) - set(optional))
    if unknown:
        _fail(source, f"[{where}] has unknown key {', '.join(unknown)}; "
              f"allowed: {', '.join(sorted(set(required) | set(optional)))}")


def parse_arm(data, source="<arm>"):
    """Build an arm from the contents of an arm file.

    Parameters
    ----------
    data : dict or str
        The parsed TOML table, or TOML text.
    source : str
        Name used in error messages.

    Returns
    -------
    FiveBar or SerialArm

    Raises
    ------
    InkreachError
        One line naming the first problem found and how to fix it.

    Examples
    --------
    >>> arm = parse_arm('''
    ... name = "tiny"
    ... kind = "serial"
    ... [geometry]
    ... shoulder = [0.0, 0.0]
    ... upper = 100.0
    ... lower = 80.0
    ... elbow = "ccw"
    ... [limits]
    ... theta1_deg = [-10.0, 190.0]
    ... theta2_deg = [5.0, 175.0]
    ... max_speed_deg_s = 180.0
    ... max_accel_deg_s2 = 1500.0
    ... min_conditioning = 0.2
    ... ''')
    >>> arm.kind, arm.upper
    ('serial', 100.0)
    """
    if isinstance(data, (str, bytes)):
        text = data.decode("utf-8", "replace") if isinstance(data, bytes) else data
        try:
            data = tomllib.loads(text)
        except tomllib.TOMLDecodeError as exc:
            _fail(source, f"is not valid TOML ({exc}); fix the syntax")
        except RecursionError:
            _fail(source, "nests arrays or tables far too deeply; an arm file is a few flat "
                          "tables (see the example arm files)")
    if not isinstance(data, dict):
        _fail(source, "must be a TOML table")
    unknown = sorted(set(data) - _TOP_KEYS)
    if unknown:
        _fail(source, f"unknown key {', '.join(unknown)}; allowed: {', '.join(sorted(_TOP_KEYS))}")
    kind = data.get("kind")
    if kind is None:
        _fail(source, "is missing kind; add kind = \"five-bar\" or kind = \"serial\"")
    if kind not in _KINDS:
        _fail(source, f"kind {kind!r} is unknown; use \"five-bar\" or \"serial\"")
    name = data.get("name", os.path.splitext(os.path.basename(str(source)))[0] or "arm")
    if not isinstance(name, str):
        _fail(source, "name must be text in quotes")
    if len(name) > 100 or any(ord(c) < 32 or ord(c) == 127 for c in name):
        _fail(source, "name must be one line of at most 100 characters, without tabs or "
                      "control characters")
    if "geometry" not in data:
        _fail(source, "is missing the [geometry] table; add it (see the example arm files)")
    if "limits" not in data:
        _fail(source, "is missing the [limits] table; add it (see the example arm files)")

    geo = data["geometry"]
    if kind == "five-bar":
        _check_keys(source, geo, "geometry", _FIVEBAR_KEYS, _FIVEBAR_OPTIONAL)
        kw = {}
        for k, what in _FIVEBAR_KEYS.items():
            where = f"[geometry] {k}"
            kw[k] = _pair(source, where, geo[k]) if what == "point" else \
                _number(source, where, geo[k], positive=True)
        kw["pen_extension"] = _number(source, "[geometry] pen_extension",
                                      geo.get("pen_extension", 0.0), positive=True,
                                      allow_zero=True)
        kw["elbows"] = geo.get("elbows", "out")
        if kw["elbows"] not in ("out", "in"):
            _fail(source, f"[geometry] elbows must be \"out\" or \"in\", got {kw['elbows']!r}")
        cls = FiveBar
    else:
        _check_keys(source, geo, "geometry", _SERIAL_KEYS, _SERIAL_OPTIONAL)
        kw = {"shoulder": _pair(source, "[geometry] shoulder", geo["shoulder"]),
              "upper": _number(source, "[geometry] upper", geo["upper"], positive=True),
              "lower": _number(source, "[geometry] lower", geo["lower"], positive=True),
              "elbow": geo.get("elbow", "ccw")}
        if kw["elbow"] not in ("ccw", "cw"):
            _fail(source, f"[geometry] elbow must be \"ccw\" or \"cw\", got {kw['elbow']!r}")
        cls = SerialArm

    lim = data["limits"]
    _check_keys(source, lim, "limits", _LIMIT_KEYS, ())
    t1 = _pair(source, "[limits] theta1_deg", lim["theta1_deg"])
    t2 = _pair(source, "[limits] theta2_deg", lim["theta2_deg"])
    for key, (lo, hi) in (("theta1_deg", t1), ("theta2_deg", t2)):
        if not lo < hi:
            _fail(source, f"[limits] {key} is reversed or empty ({lo:g} to {hi:g}); "
                  "give [lowest, highest]")
        if hi - lo > 360.0:
            _fail(source, f"[limits] {key} spans more than 360 degrees; narrow it")
    speed = _number(source, "[limits] max_speed_deg_s", lim["max_speed_deg_s"])
    accel = _number(source, "[limits] max_accel_deg_s2", lim["max_accel_deg_s2"])
    if speed <= 0:
        _fail(source, f"[limits] max_speed_deg_s must be greater than zero, got {speed:g}")
    if accel <= 0:
        _fail(source, f"[limits] max_accel_deg_s2 must be greater than zero, got {accel:g}")
    floor = _number(source, "[limits] min_conditioning", lim["min_conditioning"])
    if not 0.0 < floor <= 1.0:
        _fail(source, f"[limits] min_conditioning must be in (0, 1], got {floor:g}; "
              "0.2 to 0.4 is usual")
    if kind == "serial":
        lo, hi = t2
        if kw["elbow"] == "ccw" and hi <= 0 or kw["elbow"] == "cw" and lo >= 0:
            _fail(source, f"[limits] theta2_deg {list(t2)} excludes every {kw['elbow']} "
                  "elbow posture; ccw needs angles in (0, 180), cw in (-180, 0)")
    limits = Limits(theta1=tuple(float(v) for v in np.deg2rad(t1)),
                    theta2=tuple(float(v) for v in np.deg2rad(t2)),
                    max_speed=float(np.deg2rad(speed)), max_accel=float(np.deg2rad(accel)),
                    min_conditioning=floor)

    pen_t = data.get("pen", {})
    _check_keys(source, pen_t, "pen", (), ("width_mm", "lift_s"))
    width = _number(source, "[pen] width_mm", pen_t.get("width_mm", 0.5), positive=True)
    lift = _number(source, "[pen] lift_s", pen_t.get("lift_s", 0.12), positive=True,
                   allow_zero=True)
    home = None
    if "home" in data:
        _check_keys(source, data["home"], "home", ("theta_deg",), ())
        home = _pair(source, "[home] theta_deg", data["home"]["theta_deg"])

    if "calibration" in data:
        cal = data["calibration"]
        _check_keys(source, cal, "calibration", (), ("offset_deg", "scale"))
        _pair(source, "[calibration] offset_deg", cal.get("offset_deg", [0.0, 0.0]))
        sc = _pair(source, "[calibration] scale", cal.get("scale", [1.0, 1.0]))
        if min(sc) <= 0:
            _fail(source, "[calibration] scale must be positive for both motors; "
                  "re-run the calibration fit")
    hardware = {k: data[k] for k in ("servo", "stepper", "calibration") if k in data}
    arm = cls(name=name, limits=limits, pen=PenSpec(width, lift), home_deg=home,
              hardware=hardware, **kw)
    if not _closes_somewhere(arm):
        _fail(source, "the linkage cannot close for any angles inside the limits; "
              "check the link lengths, motor positions and limits")
    if home is not None:
        q = np.deg2rad(np.asarray(home))
        if not arm.within_limits(q) or not np.all(np.isfinite(arm.fk(q))):
            _fail(source, "[home] theta_deg is outside the limits or does not assemble; "
                  "pick a rest posture inside the limits")
    return arm


def _closes_somewhere(arm, n=121):
    """True when some posture inside the limits assembles with a finite pen."""
    t1 = np.linspace(*arm.limits.theta1, n)
    t2 = np.linspace(*arm.limits.theta2, n)
    q = np.stack(np.meshgrid(t1, t2), -1).reshape(-1, 2)
    return bool(np.any(np.isfinite(arm.fk(q)[:, 0])))


def load_arm(path):
    """Read and validate an arm file.

    Parameters
    ----------
    path : str or os.PathLike
        A TOML arm file (see the examples that ship in ``inkreach/arms/data``),
        or the name of a built-in arm (``"default"``, ``"wide"``, ``"serial"``).

    Returns
    -------
    FiveBar or SerialArm

    Raises
    ------
    InkreachError
        If the file is missing, unreadable or invalid.
    """
    p = os.fspath(path)
    if p in example_arms():
        return _builtin(p)
    if not os.path.exists(p):
        raise InkreachError(f"arm file {p} does not exist; check the path, or use one of "
                            f"the built-in arms: {', '.join(example_arms())}")
    if os.path.isdir(p):
        raise InkreachError(f"arm file {p} is a folder; give the path of a .toml file")
    try:
        with open(p, "rb") as fh:
            raw = fh.read(1_000_001)
    except OSError as exc:
        raise InkreachError(f"arm file {p} cannot be read ({exc.strerror}); "
                            "check its permissions") from None
    if len(raw) > 1_000_000:
        raise InkreachError(f"arm file {p} is larger than 1 MB; an arm file is a few lines of TOML")
    try:
        text = raw.decode("utf-8")
    except UnicodeDecodeError:
        raise InkreachError(f"arm file {p} is not UTF-8 text; save it as a plain TOML file") from None
    return parse_arm(text, source=p)


_BUILTIN = {"default": "default.toml", "wide": "wide_fivebar.toml", "serial": "serial.toml"}


def example_arms():
    """Names of the built-in arms, the first being the default."""
    return tuple(_BUILTIN)


def _builtin(name):
    ref = resources.files("inkreach.arms").joinpath("data", _BUILTIN[name])
    return parse_arm(ref.read_text(encoding="utf-8"), source=f"built-in {name}")


def builtin_arm_text(name):
    """TOML text of a built-in arm."""
    return resources.files("inkreach.arms").joinpath("data", _BUILTIN[name]).read_text("utf-8")


def default_arm():
    """The built-in default arm: an invented desk-top five-bar."""
    return _builtin("default")


def _toml_table(name, table, fmt):
    """Lines of a TOML table, its scalars first, then its sub-tables."""
    lines = ["", f"[{name}]"]
    subs = []
    for k, v in sorted(table.items()):  # canonical: the same arm gives the same text
        if isinstance(v, dict):
            subs.append((k, v))
        else:
            lines.append(f"{k} = {fmt(v)}")
    for k, v in subs:
        lines += _toml_table(f"{name}.{k}", v, fmt)
    return lines


def arm_to_toml(arm):
    """Write an arm back as arm-file TOML text (degrees in the file).

    Examples
    --------
    >>> arm = default_arm()
    >>> parse_arm(arm_to_toml(arm)).left_upper == arm.left_upper
    True
    """
    def fmt(v):
        if isinstance(v, str):
            # a TOML basic string: backslash, quote and control characters escaped
            return '"' + "".join(c if c not in '"\\' and 31 < ord(c) != 127
                                 else f"\\u{ord(c):04x}" for c in v) + '"'
        if isinstance(v, (tuple, list, np.ndarray)):
            return "[" + ", ".join(fmt(x) for x in v) + "]"
        if isinstance(v, bool):
            return "true" if v else "false"
        if isinstance(v, (int, np.integer)):
            return str(int(v))
        return repr(float(v))

    lim = arm.limits
    lines = [f"name = {fmt(arm.name)}", f"kind = {fmt(arm.kind)}", "", "[geometry]"]
    if arm.kind == "five-bar":
        for k in ("left_motor", "right_motor", "left_upper", "right_upper",
                  "left_lower", "right_lower", "pen_extension", "elbows"):
            lines.append(f"{k} = {fmt(getattr(arm, k))}")
    else:
        for k in ("shoulder", "upper", "lower", "elbow"):
            lines.append(f"{k} = {fmt(getattr(arm, k))}")
    lines += ["", "[limits]",
              f"theta1_deg = {fmt(np.rad2deg(lim.theta1).round(9))}",
              f"theta2_deg = {fmt(np.rad2deg(lim.theta2).round(9))}",
              f"max_speed_deg_s = {fmt(round(np.rad2deg(lim.max_speed), 9))}",
              f"max_accel_deg_s2 = {fmt(round(np.rad2deg(lim.max_accel), 9))}",
              f"min_conditioning = {fmt(lim.min_conditioning)}",
              "", "[pen]", f"width_mm = {fmt(arm.pen.width_mm)}", f"lift_s = {fmt(arm.pen.lift_s)}"]
    if arm.home_deg is not None:
        lines += ["", "[home]", f"theta_deg = {fmt(arm.home_deg)}"]
    for section, table in sorted((arm.hardware or {}).items()):
        lines += _toml_table(section, table, fmt)
    return "\n".join(lines) + "\n"
