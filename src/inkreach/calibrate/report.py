"""What a calibration fit says, as an arm file and as plain text."""

from ..arms import arm_to_toml
from . import _model

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
    """The fitted arm with its numbers rounded far below measuring precision."""
    v = _model.to_vector(arm)
    v[:-4] = [round(float(x), mm) + 0.0 for x in v[:-4]]
    cal = arm.hardware["calibration"]
    out = _model.corrected_arm(arm, v)
    out.hardware["calibration"] = {
        "offset_deg": [round(float(x), deg) + 0.0 for x in cal["offset_deg"]],
        "scale": [round(float(x), scale) for x in cal["scale"]]}
    return out


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
