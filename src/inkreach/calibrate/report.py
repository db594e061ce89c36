"""What a calibration fit says, as an arm file and as plain text."""

import dataclasses

from ..arms import arm_to_toml

__all__ = ["corrected_arm_toml", "calibration_report"]


def corrected_arm_toml(fit):
    """The corrected arm as arm-file TOML text.

    The fitted geometry goes into ``[geometry]``; the motor angle
    correction into a ``[calibration]`` table with ``offset_deg = [a, b]``
    and ``scale = [a, b]`` (true angle = scale * commanded + offset). Two
    comment lines at the top record the fit.

    Parameters
    ----------
    fit : CalibrationFit

    Returns
    -------
    str
    """
    head = (f"# calibrated from {fit.n_points} measured dots: rms error "
            f"{fit.rms_before:.3f} mm before, {fit.rms_after:.3f} mm after\n"
            "# [calibration]: true motor angle = scale * commanded angle + offset_deg\n")
    return head + arm_to_toml(_rounded(fit.arm))


def _rounded(arm, mm=6, deg=6, scale=8):
    """The arm with its fitted numbers rounded far below measuring precision."""
    if arm.kind == "five-bar":
        kw = {k: round(float(getattr(arm, k)), mm) + 0.0 for k in
              ("left_upper", "right_upper", "left_lower", "right_lower", "pen_extension")}
        kw["left_motor"] = tuple(round(float(v), mm) + 0.0 for v in arm.left_motor)
        kw["right_motor"] = tuple(round(float(v), mm) + 0.0 for v in arm.right_motor)
    else:
        kw = {k: round(float(getattr(arm, k)), mm) + 0.0 for k in ("upper", "lower")}
        kw["shoulder"] = tuple(round(float(v), mm) + 0.0 for v in arm.shoulder)
    hw = dict(arm.hardware or {})
    if "calibration" in hw:
        cal = hw["calibration"]
        hw["calibration"] = {"offset_deg": [round(float(v), deg) + 0.0 for v in cal["offset_deg"]],
                             "scale": [round(float(v), scale) for v in cal["scale"]]}
    return dataclasses.replace(arm, hardware=hw, **kw)


def calibration_report(fit):
    """Plain-text figures of a calibration fit.

    Parameters
    ----------
    fit : CalibrationFit

    Returns
    -------
    str
        Dot errors before and after (rms and largest), each parameter with
        its standard error (or "fixed"), and the warnings.
    """
    lines = [f"calibration from {fit.n_points} dots ({fit.dof} degrees of freedom left)",
             f"  dot error before  rms {fit.rms_before:8.3f} mm   max {fit.max_before:8.3f} mm",
             f"  dot error after   rms {fit.rms_after:8.3f} mm   max {fit.max_after:8.3f} mm",
             f"  measurement noise {fit.sigma:8.3f} mm per coordinate",
             "  parameters (value ± standard error):"]
    width = max(len(k) for k in fit.params)
    for name, value in fit.params.items():
        unit = "deg" if name.endswith("_deg") else ("" if name.startswith("scale") else "mm")
        digits = 5 if name.startswith("scale") else 3
        if name in fit.stderr:
            se = f"± {fit.stderr[name]:.{digits}f}"
        else:
            se = "(fixed)"
        lines.append(f"    {name:<{width}}  {value:10.{digits}f} {se:<12} {unit}".rstrip())
    if fit.warnings:
        lines.append("  warnings:")
        lines += [f"    - {w}" for w in fit.warnings]
    else:
        lines.append("  warnings: none")
    return "\n".join(lines) + "\n"
