"""Ctrl-C while the command starts: stop at once, quietly, with status 130."""

import os
import signal

__all__ = ["quiet_interrupts", "normal_interrupts"]


def _stop(signum, frame):  # nothing is written while the libraries load
    os._exit(130)


def quiet_interrupts():
    """Make SIGINT end the process quietly (status 130) until :func:`normal_interrupts`."""
    try:
        signal.signal(signal.SIGINT, _stop)
    except (ValueError, OSError):  # not the main thread
        pass


def normal_interrupts():
    """SIGINT raises KeyboardInterrupt again (Python's default)."""
    try:
        if signal.getsignal(signal.SIGINT) is _stop:
            signal.signal(signal.SIGINT, signal.default_int_handler)
    except (ValueError, OSError):
        pass
