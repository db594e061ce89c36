"""One-line messages for failures of the computer rather than of the input."""

import errno
import os

__all__ = ["environment_message"]


def _where(exc):
    name = getattr(exc, "filename", None)
    return f" ({os.fspath(name)})" if name else ""


def environment_message(exc, args=None):
    """Say in one line what went wrong around the program and what to do.

    Parameters
    ----------
    exc : OSError or MemoryError
    args : argparse.Namespace, optional
        The command line, to name the option to change (``--out``,
        ``--port``).

    Examples
    --------
    >>> import errno
    >>> environment_message(OSError(errno.ENOSPC, "No space left on device"))
    'the disk is full; free some space or write to another disk with --out'
    """
    if isinstance(exc, MemoryError):
        return ("the computer ran out of memory for this plan; use a smaller max_side, "
                "fewer dots or a lower --budget, or close other programs")
    code = getattr(exc, "errno", None)
    out = getattr(args, "out", None)
    port = getattr(args, "port", None)
    if code == errno.ENOSPC or code == errno.EDQUOT:
        return "the disk is full; free some space or write to another disk with --out"
    if code == errno.EFBIG:
        return ("a file grew past the size limit for files (see 'ulimit -f'); raise the "
                "limit or make a smaller plan")
    if code == errno.EADDRINUSE:
        return (f"port {port} is already in use by another program; stop it or choose "
                "another with --port")
    if code == errno.EADDRNOTAVAIL:
        return "that address is not one of this computer's; choose another with --host"
    if code in (errno.EACCES, errno.EPERM):
        if port is not None and getattr(exc, "filename", None) is None:
            return (f"this user may not listen on port {port}; choose a port above 1023 "
                    "with --port")
        return f"permission denied{_where(exc)}; choose a folder you may write with --out" \
            if out else f"permission denied{_where(exc)}"
    if code == errno.EROFS:
        return f"the disk is read-only{_where(exc)}; write somewhere else with --out"
    if code == errno.EMFILE or code == errno.ENFILE:
        return "too many files are open; close other programs and try again"
    if code == errno.ENOENT:
        return f"a file or folder vanished while it was used{_where(exc)}; try again"
    why = getattr(exc, "strerror", None) or type(exc).__name__
    return f"the system refused: {why}{_where(exc)}; check the disk and try again"
