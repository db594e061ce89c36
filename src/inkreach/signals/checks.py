"""Checking motor signals like the stream: overflow, frozen motors, rounding error."""

import math
import warnings

import numpy as np

from ..errors import InkreachError
from .make import make_signals
from .quantised import quantised_angles
from .stepper import stepper_config_from_arm

__all__ = ["checked_signals", "MAX_STEPS_PER_DEG", "REFUSE_ROUNDING_MM"]

#: Most stepper steps per joint degree: a 32-bit step counter then still
#: covers +-21 000 degrees (our own bound; real drives stay under 20 000).
MAX_STEPS_PER_DEG = 1e5
#: Rounding error at the pen above which the signals are refused: the arm
#: would draw somewhere else than planned (our own bound: 2 mm is four
#: widths of a common 0.5 mm pen).
REFUSE_ROUNDING_MM = 2.0


def _check_stepper_config(arm):
    cfg = stepper_config_from_arm(arm)
    with np.errstate(over="ignore", invalid="ignore"):
        spd = np.asarray(cfg.steps_per_deg, float)
    bad = ~np.isfinite(spd) | (spd > MAX_STEPS_PER_DEG)
    if np.any(bad):
        m = int(np.argmax(bad)) + 1
        shown = "far too many" if not np.isfinite(spd[m - 1]) else f"{spd[m - 1]:.3g}"
        raise InkreachError(f"[stepper] of motor {m} gives {shown} steps per joint degree "
                            f"(steps_per_rev x microsteps x gear_ratio / 360), more than "
                            f"{MAX_STEPS_PER_DEG:g}; check gear_ratio and microsteps")
    return cfg


def _rounding_mm(stream, arm, sig):
    q = quantised_angles(stream, arm, sig)
    return float(np.nanmax(np.hypot(*(arm.fk(q) - stream.xy).T))) if len(q) else 0.0


def checked_signals(stream, arm, kind="auto", chord_tol=0.05):
    """Motor signals for a stream, checked before they are written.

    Refused: a stepper table whose steps per degree overflow or exceed
    :data:`MAX_STEPS_PER_DEG`, a motor whose signal never changes although
    its joint moves by more than one step, a rounding error at the pen above
    :data:`REFUSE_ROUNDING_MM`. Warned: a rounding error above ``chord_tol``
    and above half the pen width (below that it cannot show in the line;
    our own rule).

    Parameters
    ----------
    stream : JointStream
    arm : FiveBar or SerialArm
    kind : str
        As for :func:`make_signals`.
    chord_tol : float
        The drawing tolerance, mm.

    Returns
    -------
    signals : dict
        As :func:`make_signals` returns.
    notes : dict
        ``{"warnings": [...]}`` when there is something to warn about, else
        empty.

    References
    ----------
    .. [1] B. Widrow and I. Kollar, *Quantization Noise*, Cambridge University
       Press, 2008 (a uniform quantiser errs by at most half a step).
    """
    if kind in ("auto", "stepper", "both"):
        hw = getattr(arm, "hardware", None) or {}
        if kind != "auto" or "stepper" in hw or "servo" not in hw:
            _check_stepper_config(arm)
    with warnings.catch_warnings():
        warnings.simplefilter("error", RuntimeWarning)
        try:
            signals = make_signals(stream, arm, kind=kind)
        except RuntimeWarning as exc:
            raise InkreachError(f"the motor signals overflow ({exc}); check the [servo] and "
                                "[stepper] tables of the arm file") from None
    notes = []
    q = np.asarray(stream.q, float)
    span = np.ptp(q, axis=0) if len(q) else np.zeros(2)
    if "stepper" in signals:
        sig = signals["stepper"]
        step = np.asarray(sig.config.step_rad, float)
        for m in (0, 1):
            if span[m] > step[m] and not np.any(sig.delta[:, m]):
                raise InkreachError(f"stepper motor {m + 1} would never step although its "
                                    f"joint turns {math.degrees(span[m]):.1f} degrees; check "
                                    "the [stepper] table of the arm file")
    if "servo" in signals:
        p = np.asarray(signals["servo"].pulse_us, float)
        if not np.all(np.isfinite(p)):
            raise InkreachError("some servo pulse widths are not finite; check the [servo] "
                                "table of the arm file")
    for name, sig in signals.items():
        err = _rounding_mm(stream, arm, sig)
        if err > REFUSE_ROUNDING_MM:
            fix = ("more steps_per_rev or microsteps in [stepper]" if name == "stepper"
                   else "servos with a finer pulse resolution, or a wider pulse range in "
                        "[servo]")
            raise InkreachError(f"rounding the {name} signals moves the pen by up to "
                                f"{err:.3g} mm (more than {REFUSE_ROUNDING_MM:g} mm); use "
                                f"{fix}")
        if err > max(chord_tol, 0.5 * arm.pen.width_mm):
            notes.append(f"rounding the {name} signals moves the pen by up to {err:.3g} mm, "
                         f"more than chord_tol={chord_tol:g} mm; "
                         + ("use more microsteps in [stepper]" if name == "stepper"
                            else "expect lines a little less straight than planned"))
    return signals, ({"warnings": notes} if notes else {})
