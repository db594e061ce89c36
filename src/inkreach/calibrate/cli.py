"""``inkreach calibrate sheet`` and ``inkreach calibrate fit``."""

import os

from ..errors import InkreachError

__all__ = ["run_calibrate"]


def run_calibrate(args):
    """Run one calibration step from parsed command-line arguments."""
    from .. import calibrate as cal
    from ..arms import arm_to_toml
    from ..export import SAFETY_TEXT, firmware_header, joints_csv, write_files
    from ..plan import resolve_arm

    arm = resolve_arm(args.arm)
    if args.step == "sheet":
        n = args.dots if args.dots is not None else (24 if arm.kind == "five-bar" else 12)
        if n < 4:
            raise InkreachError("--dots must be at least 4; 24 is usual for a five-bar")
        targets = cal.calibration_targets(arm, n=n)
        svg, stream = cal.calibration_sheet(arm, targets)
        files = {"sheet.svg": svg, "sheet_joints.csv": joints_csv(stream),
                 "sheet_plan.h": firmware_header(stream, name="inkreach_calibration"),
                 "measurements.csv": cal.measurement_template(targets),
                 "arm.toml": arm_to_toml(arm), "SAFETY.txt": SAFETY_TEXT + "\n"}
        write_files(args.out, files)
        print(f"calibration sheet with {n} dots written to {args.out}/\n"
              "  1. print sheet.svg at 100 % scale (it is in mm) and fix it under the arm with its "
              "axes on the arm frame;\n"
              "  2. run sheet_joints.csv (rehearse it with the pen lifted first);\n"
              "  3. measure each dot's x, y in mm on the printed grid into measurements.csv;\n"
              f"  4. inkreach calibrate fit {os.path.join(args.out, 'measurements.csv')} "
              f"--arm {args.arm or 'default'} --out {args.out}")
        return 0

    if not args.measurements:
        raise InkreachError("calibrate fit needs the filled-in measurements CSV: "
                            "inkreach calibrate fit measurements.csv --arm ARM.toml")
    q, xy = cal.read_measurements(args.measurements)
    groups = ["lengths", "motors", "offsets", "scales"]
    if getattr(arm, "pen_extension", 0.0) > 0:
        groups.append("pen_extension")
    fit = cal.fit_arm(arm, q, xy, fit=tuple(groups))
    report = cal.calibration_report(fit)
    write_files(args.out, {"arm_calibrated.toml": cal.corrected_arm_toml(fit),
                           "calibration_report.txt": report + "\n"})
    print(report)
    print(f"corrected arm file: {os.path.join(args.out, 'arm_calibrated.toml')}")
    return 0
