"""``inkreach simulate-board``: the board's C core, built for this computer, behind a pty."""

import os

from ..errors import InkreachError
from . import _build
from .firmware_config import board_config, config_header

__all__ = ["build_simulator", "simulate_board"]


def build_simulator(arm, drive="servo", period=0.02):
    """Build (or reuse) the simulated board for an arm; returns the executable's path.

    Raises
    ------
    InkreachError
        Without a C compiler, or when the arm's tables do not fit the board.
    """
    cfg = board_config(arm, drive, period)
    srcs = _build.core_sources() + [os.path.join(_build.firmware_dir(), "sim_main.c")]
    return _build.build("inkreach-sim", srcs, config_header(cfg))


def simulate_board(arm, drive="servo", trace=None, speedup=1.0, period=0.02):
    """Replace this process by the simulated board (does not return).

    The board prints its terminal's path as the first stdout line and serves
    until SIGINT or SIGTERM (exit status 0). SIGUSR1 reboots it.
    """
    if not (speedup > 0 and speedup <= 10_000):
        raise InkreachError(f"--speedup {speedup:g} must be greater than 0 and at most 10000")
    exe = build_simulator(arm, drive, period)
    args = [exe, repr(float(speedup))]
    if trace is not None:
        folder = os.path.dirname(os.path.abspath(trace))
        if not os.path.isdir(folder):
            raise InkreachError(f"--trace {trace}: folder {folder} does not exist; create it first")
        args.append(os.fspath(trace))
    import sys
    sys.stdout.flush()
    os.execv(exe, args)
