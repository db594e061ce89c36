"""Single key presses from the terminal during ``inkreach run``: pause and continue.

Only when standard input is a terminal and this process is in its foreground:
the terminal goes to cbreak mode (keys arrive one by one, no echo; Ctrl-C still
interrupts) and is put back exactly as it was on every way out of the ``with``
block, and before the process ends on SIGTERM or SIGHUP. Anywhere else (a pipe,
a file, a background job) nothing changes and no key is ever reported.
"""

import os
import select
import sys

__all__ = ["PAUSE_KEYS", "CONTINUE_KEYS", "QUIT_KEYS", "KeyReader"]

PAUSE_KEYS = b"p "
CONTINUE_KEYS = b"c"
QUIT_KEYS = b"q"


def _foreground_tty(fd):
    try:
        if not os.isatty(fd):
            return False
    except (OSError, ValueError):
        return False
    try:
        return os.tcgetpgrp(fd) == os.getpgrp()
    except OSError:
        return True     # a terminal that is not our controlling one: no job control to upset


class KeyReader:
    """Context manager reading single keys from ``stream`` (standard input by default).

    Examples
    --------
    >>> import io
    >>> with KeyReader(io.StringIO("p")) as keys:   # not a terminal: inactive
    ...     keys.active, keys.read()
    (False, b'')
    """

    def __init__(self, stream=None):
        self._stream = sys.stdin if stream is None else stream
        self._fd = None
        self._saved = None
        self.active = False

    def __enter__(self):
        try:
            fd = self._stream.fileno()
        except (AttributeError, OSError, ValueError):
            return self
        if not _foreground_tty(fd):
            return self
        try:
            import termios
            import tty
        except ImportError:      # not a POSIX system: no single keys
            return self
        self._fd = fd
        try:
            self._saved = termios.tcgetattr(fd)
            tty.setcbreak(fd, termios.TCSANOW)
        except (OSError, termios.error):
            self.restore()       # undo whatever part of cbreak mode took
            return self
        self.active = True
        self._catch_ending_signals()
        return self

    def _catch_ending_signals(self):
        """On SIGTERM or SIGHUP, restore the terminal first, then end as before."""
        import signal
        self._old_handlers = {}
        try:
            for sig in (signal.SIGTERM, signal.SIGHUP):
                if signal.getsignal(sig) == signal.SIG_DFL:
                    self._old_handlers[sig] = signal.signal(sig, self._on_ending_signal)
        except (ValueError, AttributeError):   # not the main thread, or no such signal
            pass

    def _on_ending_signal(self, sig, _frame):
        import signal
        self.restore()
        signal.signal(sig, signal.SIG_DFL)
        os.kill(os.getpid(), sig)

    def __exit__(self, *exc):
        self.restore()
        return False

    def restore(self):
        """Put the terminal back as it was (safe to call more than once)."""
        if getattr(self, "_old_handlers", None):
            import signal
            for sig, old in self._old_handlers.items():
                try:
                    if signal.getsignal(sig) == self._on_ending_signal:
                        signal.signal(sig, old)
                except ValueError:
                    pass
            self._old_handlers = {}
        if self._saved is not None:
            import termios
            try:
                termios.tcsetattr(self._fd, termios.TCSADRAIN, self._saved)
            except (OSError, termios.error):   # a terminal gone: nothing to put back
                pass
            self._saved = None
        self.active = False

    def read(self, wait=0.0):
        """The keys pressed so far (waiting up to ``wait`` seconds for one), or b''."""
        if not self.active:
            return b""
        try:
            ready, _, _ = select.select([self._fd], [], [], wait)
            if not ready:
                return b""
            got = os.read(self._fd, 64)
        except (OSError, ValueError):
            got = b""
        if not got:            # end of input or a terminal gone: no more keys
            self.restore()
        return got

    def pressed(self, keys, wait=0.0):
        """True when one of ``keys`` (bytes) was among the keys read now."""
        got = self.read(wait).lower()
        return any(k in got for k in keys)
