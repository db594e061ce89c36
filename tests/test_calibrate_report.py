"""Corrected arm file and the plain-text calibration report."""

import dataclasses
import tomllib

import numpy as np
import pytest

from inkreach.arms import default_arm, load_arm, parse_arm
from inkreach.calibrate import (calibration_report, calibration_targets, corrected_arm_toml,
                                fit_arm)


def _fit(name="default", n=16, noise=0.2):
    arm = load_arm(name)
    if arm.kind == "five-bar":
        built = dataclasses.replace(arm, left_upper=arm.left_upper + 0.7,
                                    right_motor=(arm.right_motor[0] - 0.5, 0.3))
    else:
        built = dataclasses.replace(arm, upper=arm.upper + 0.7)
    q = calibration_targets(arm, n=n)
    true_q = q * np.array([1.01, 0.99]) + np.deg2rad([1.5, -2.0])
    xy = built.fk(true_q) + np.random.default_rng(7).normal(0, noise, (n, 2))
    return arm, fit_arm(arm, q, xy)


@pytest.mark.parametrize("name", ["default", "wide", "serial"])
def test_corrected_arm_file_round_trips_through_toml_and_the_arm_parser(name):
    arm, fit = _fit(name)
    text = corrected_arm_toml(fit)
    data = tomllib.loads(text)  # the standard-library TOML parser
    assert data["kind"] == arm.kind
    cal = data["calibration"]
    np.testing.assert_allclose(cal["offset_deg"], fit.offset_deg, atol=1e-6)
    np.testing.assert_allclose(cal["scale"], fit.scale, atol=1e-8)
    again = parse_arm(text)
    assert again.hardware["calibration"]["offset_deg"] == pytest.approx(list(fit.offset_deg),
                                                                      abs=1e-6)
    if arm.kind == "five-bar":
        assert again.left_upper == pytest.approx(fit.params["left_upper"], abs=1e-6)
        assert again.right_motor == pytest.approx(
            (fit.params["right_motor_x"], fit.params["right_motor_y"]), abs=1e-6)
        assert again.pen_extension >= 0.0
    else:
        assert again.upper == pytest.approx(fit.params["upper"], abs=1e-6)
    assert again.limits == arm.limits


def test_report_lists_errors_parameters_with_uncertainty_and_warnings():
    _, fit = _fit()
    text = calibration_report(fit)
    assert f"{fit.rms_before:.3f}" in text and f"{fit.rms_after:.3f}" in text
    assert f"{fit.max_before:.3f}" in text and f"{fit.max_after:.3f}" in text
    for name in fit.params:
        assert name in text
    assert "±" in text
    assert "warnings" in text


def test_report_marks_parameters_that_were_not_fitted():
    arm = default_arm()
    q = calibration_targets(arm, n=8)
    fit = fit_arm(arm, q, arm.fk(q), fit=("offsets",))
    text = calibration_report(fit)
    assert text.count("(fixed)") == len(fit.params) - 2
