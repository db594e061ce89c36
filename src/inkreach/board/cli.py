"""The ``firmware`` and ``simulate-board`` commands (registered by ``inkreach.cli``)."""

import argparse

from ..errors import InkreachError
from .firmware_config import DEFAULT_PINS, DRIVES

__all__ = ["add_board_commands"]

_PERIOD_HELP = "sample period in seconds; must equal the plan's (default 0.02)"

_SIM_EPILOG = """\
The first line on stdout is the path of the board's serial port (a pseudo-terminal);
open it with pyserial (any baud rate). The board serves until Ctrl-C / SIGTERM (exit 0).

Board time advances one sample period per tick; --speedup N makes the wall clock
run N times faster (for tests). --trace FILE writes one CSV row per executed sample
(stream samples and controlled-stop samples): t_s,theta1_deg,theta2_deg,pen, angles
read back from the pulses (1/16 us) or steps the board output, t_s in board time.

A simulated reset: `kill -USR1 PID` reboots the C core. The buffer, the stream and
the state are lost, the motors stay where they are, the pen lifts (one trace row);
the board then reports state idle with that posture (see PROTOCOL.md, After a reset).

example:
  inkreach simulate-board --arm default --speedup 20 --trace trace.csv
"""


def _pin_options(p):
    names = sorted({k for pins in DEFAULT_PINS.values() for k in pins})
    for k in names:
        defaults = ", ".join(f"{d} {pins[k]}" for d, pins in DEFAULT_PINS.items() if k in pins)
        p.add_argument(f"--pin-{k}", type=int, default=None, metavar="N",
                       help=f"pin number of {k} (default: {defaults})")


def add_board_commands(sub):
    """Add ``firmware`` and ``simulate-board`` to a subparsers object.

    Returns
    -------
    dict
        Command name -> function taking the parsed arguments, returning the exit status.
    """
    f = sub.add_parser(
        "firmware", help="write a ready-to-build firmware folder for an arm",
        description="Write an Arduino-style sketch folder for the arm: the portable C99\n"
                    "board core, a front-end for hobby servos or step/dir drivers, and\n"
                    "inkreach_config.h with the arm's limits, calibration and identity.\n"
                    "A reference to review, not a certified controller: rehearse with the\n"
                    "pen lifted, keep a power switch within reach, check pins and pulse\n"
                    "ranges against your motors' and drivers' documentation.",
        epilog="example:\n  inkreach firmware my_arm.toml --out my_board --drive servo\n"
               "  then build my_board/my_board.ino",
        formatter_class=argparse.RawDescriptionHelpFormatter)
    f.add_argument("arm", help="arm file or built-in arm name")
    f.add_argument("--out", "-o", required=True, metavar="DIR",
                   help="new folder to write; its name names the sketch")
    f.add_argument("--drive", choices=DRIVES, default="servo",
                   help="hobby servos or step/dir stepper drivers (default servo)")
    f.add_argument("--period", type=float, default=0.02, help=_PERIOD_HELP)
    _pin_options(f)

    s = sub.add_parser(
        "simulate-board", help="run the board's C core on this computer behind a serial port",
        description="Build the same C core as `inkreach firmware` with this computer's C\n"
                    "compiler and run it behind a pseudo-terminal, as a board to stream to.",
        epilog=_SIM_EPILOG, formatter_class=argparse.RawDescriptionHelpFormatter)
    s.add_argument("--arm", default="default", help="arm file or built-in arm name "
                                                   "(default: the built-in desk five-bar)")
    s.add_argument("--drive", choices=DRIVES, default="servo",
                   help="simulate servo or stepper outputs (default servo)")
    s.add_argument("--trace", default=None, metavar="FILE",
                   help="write each executed sample to this CSV file")
    s.add_argument("--speedup", type=float, default=1.0, metavar="N",
                   help="run the board clock N times faster than real time (default 1)")
    s.add_argument("--period", type=float, default=0.02, help=_PERIOD_HELP)
    return {"firmware": _cmd_firmware, "simulate-board": _cmd_simulate}


def _pins(args):
    return {k[4:]: v for k, v in vars(args).items() if k.startswith("pin_") and v is not None}


def _cmd_firmware(args):
    from ..arms import load_arm
    from .firmware_writer import write_firmware
    arm = load_arm(args.arm)
    out = write_firmware(arm, args.out, args.drive, args.period, _pins(args))
    print(f"wrote {out} ({args.drive} drive for {arm.name!r}); review it, then build "
          f"{out}/{out.rstrip('/').split('/')[-1]}.ino")
    return 0


def _cmd_simulate(args):
    from ..arms import load_arm
    from .sim import simulate_board
    if not args.speedup > 0:
        raise InkreachError(f"--speedup {args.speedup:g} must be greater than zero")
    simulate_board(load_arm(args.arm), args.drive, args.trace, args.speedup, args.period)
    return 0  # pragma: no cover - simulate_board replaces the process
