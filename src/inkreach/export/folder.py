"""Replacing an output folder as a whole: the complete old one or the complete new one.

The new files are written into a hidden sibling folder, which is then
swapped in by renames while a lock file keeps other writers out and
interrupts are held back. A manifest inside the folder records what the
tool wrote, so a later run can tell its own files from the user's.
"""

import ctypes
import ctypes.util
import errno
import json
import os
import shutil
import signal
import tempfile
import threading
import time

from ..errors import InkreachError
from .files import _as_bytes
from .safety import SAFETY_TEXT

__all__ = ["replace_folder", "check_replaceable", "MANIFEST", "WriteInterrupted", "folder_lock", "held_signals"]

#: Hidden file in every folder :func:`replace_folder` writes: the names it wrote.
MANIFEST = ".inkreach-manifest.json"
#: Names the tool writes into a plan folder, accepted as its own in a folder
#: without a manifest (one written before manifests existed).
_KNOWN = frozenset({"plan.json", "joints.csv", "preview.svg", "preview.png", "order.png",
                    "simulated.png", "SAFETY.txt", "servo.csv", "stepper.csv", "plan.h",
                    MANIFEST})
#: What ``inkreach run`` adds to a plan folder: the record of running that
#: plan. It is the tool's own and leaves with the plan it belongs to.
_RUN_FILES = frozenset({"run-log.txt", "run-state.json"})


class WriteInterrupted(KeyboardInterrupt):
    """Ctrl-C (or SIGTERM) arrived while an output folder was being replaced.

    ``committed`` tells whether the new folder is in place (True) or the old
    one is untouched (False); ``folder`` is the output folder.
    """

    def __init__(self, folder, committed):
        super().__init__(folder, committed)
        self.folder, self.committed = folder, committed


class held_signals:
    """Hold SIGINT and SIGTERM back inside the block; deliver them after it.

    Only the main thread can install signal handlers; elsewhere this does
    nothing (and signals go to the main thread anyway). ``pending`` is the
    first signal number that arrived, or None.
    """

    _SIGNALS = (signal.SIGINT, signal.SIGTERM)

    def __init__(self):
        self.pending = None
        self._old = {}

    def _hold(self, signum, frame):
        if self.pending is None:
            self.pending = signum

    def __enter__(self):
        if threading.current_thread() is threading.main_thread():
            for s in self._SIGNALS:
                try:
                    self._old[s] = signal.signal(s, self._hold)
                except (ValueError, OSError):
                    pass
        return self

    def __exit__(self, *exc):
        for s, h in self._old.items():
            signal.signal(s, h)
        self._old = {}
        return False


class folder_lock:
    """An exclusive lock on a lock file beside ``folder`` (``.NAME.lock``).

    Waits for another writer to finish (up to ``timeout`` seconds), then
    refuses with one line. The lock file is removed on release; a writer
    that locked a file another writer has just removed tries again.
    """

    def __init__(self, folder, timeout=60.0):
        folder = os.path.abspath(os.fspath(folder))
        self.folder = folder
        self.path = os.path.join(os.path.dirname(folder),
                                 "." + os.path.basename(folder) + ".lock")
        self.timeout = timeout
        self.fd = None

    def __enter__(self):
        import fcntl

        deadline = time.monotonic() + self.timeout
        while True:
            try:
                fd = os.open(self.path, os.O_RDWR | os.O_CREAT, 0o644)
            except OSError as exc:
                if exc.errno in (errno.EACCES, errno.EPERM, errno.ENOENT, errno.EROFS):
                    raise InkreachError(f"output folder {self.folder} is not "
                                        f"writable ({exc.strerror}); choose another "
                                        "folder with --out") from None
                raise
            try:
                while True:
                    try:
                        fcntl.flock(fd, fcntl.LOCK_EX | fcntl.LOCK_NB)
                        break
                    except BlockingIOError:
                        if time.monotonic() > deadline:
                            raise InkreachError(f"another inkreach run is writing "
                                                f"{os.path.dirname(self.path)}; wait for it "
                                                "or choose another output folder") from None
                        time.sleep(0.02)
                st = os.fstat(fd)
                try:
                    same = os.stat(self.path).st_ino == st.st_ino
                except FileNotFoundError:
                    same = False
            except BaseException:
                self._drop(fd)
                raise
            if same:
                self.fd = fd
                return self
            os.close(fd)

    def _drop(self, fd):
        """Close ``fd``; remove the lock file if no other writer holds it."""
        import fcntl
        try:
            fcntl.flock(fd, fcntl.LOCK_EX | fcntl.LOCK_NB)
            if os.stat(self.path).st_ino == os.fstat(fd).st_ino:
                os.remove(self.path)
        except OSError:
            pass
        finally:
            os.close(fd)

    def __exit__(self, *exc):
        if self.fd is not None:
            try:
                os.remove(self.path)
            except OSError:
                pass
            os.close(self.fd)
            self.fd = None
        return False


def _exchange(a, b):
    """Swap two paths in one step (Linux ``renameat2(RENAME_EXCHANGE)``); False if unsupported."""
    try:
        libc = ctypes.CDLL(ctypes.util.find_library("c") or None, use_errno=True)
        fn = libc.renameat2
    except (OSError, AttributeError):
        return False
    AT_FDCWD, RENAME_EXCHANGE = -100, 2
    r = fn(AT_FDCWD, os.fsencode(a), AT_FDCWD, os.fsencode(b), RENAME_EXCHANGE)
    if r == 0:
        return True
    e = ctypes.get_errno()
    if e in (errno.ENOSYS, errno.EINVAL, errno.ENOTSUP):
        return False
    raise OSError(e, os.strerror(e), b)


def _own_names(folder):
    """Names the tool wrote into ``folder``, from its manifest (None without one)."""
    try:
        with open(os.path.join(folder, MANIFEST), encoding="utf-8") as fh:
            data = json.load(fh)
        return set(data["files"]) | {MANIFEST}
    except FileNotFoundError:
        return None
    except (OSError, ValueError, KeyError, TypeError):
        return set()


def _foreign(folder, new_names):
    """Entries of ``folder`` the tool did not write."""
    own = _own_names(folder)
    allowed = (own or set(_KNOWN)) | set(new_names) | {MANIFEST} | _RUN_FILES
    return sorted(n for n in os.listdir(folder) if n not in allowed)


def check_replaceable(folder, names=()):
    """Refuse at once a folder :func:`replace_folder` would refuse after the work.

    Raises
    ------
    InkreachError
        If ``folder`` is a file, the current folder, or holds files the tool
        did not write.
    """
    folder = os.path.abspath(os.fspath(folder))
    if os.path.exists(folder) and not os.path.isdir(folder):
        raise InkreachError(f"output folder {folder} is a file; give a folder path")
    if not os.path.isdir(folder):
        return
    if os.path.samefile(folder, os.getcwd()):
        raise InkreachError(f"output folder {folder} is the current folder; "
                            "give a folder of its own with --out")
    foreign = _foreign(folder, names)
    if foreign:
        shown = ", ".join(foreign[:3]) + (" ..." if len(foreign) > 3 else "")
        raise InkreachError(f"output folder {folder} holds files inkreach did "
                            f"not write ({shown}); move them away or choose "
                            "another folder with --out")


def _sweep(parent, base):
    """Remove what an earlier, killed run left beside the folder; restore a lost one."""
    target = os.path.join(parent, base)
    for n in os.listdir(parent):
        if n.startswith(f".{base}.new-"):
            shutil.rmtree(os.path.join(parent, n), ignore_errors=True)
    for n in sorted(os.listdir(parent)):
        if n.startswith(f".{base}.old-"):
            p = os.path.join(parent, n)
            if not os.path.lexists(target):
                os.rename(p, target)
            else:
                shutil.rmtree(p, ignore_errors=True)


def _write_all(tmp, blobs):
    for name, data in blobs.items():
        with open(os.path.join(tmp, name), "wb") as fh:
            fh.write(data)
            fh.flush()
            os.fsync(fh.fileno())
    manifest = json.dumps({"written_by": "inkreach", "files": sorted(blobs)}, indent=1)
    with open(os.path.join(tmp, MANIFEST), "w", encoding="utf-8") as fh:
        fh.write(manifest + "\n")
        fh.flush()
        os.fsync(fh.fileno())


def _fsync_dir(path):
    try:
        fd = os.open(path, os.O_RDONLY)
    except OSError:
        return
    try:
        os.fsync(fd)
    except OSError:
        pass
    finally:
        os.close(fd)


def replace_folder(folder, files, safety=True, lock_timeout=60.0):
    """Replace ``folder`` as a whole by a folder holding exactly ``files``.

    The files are written into a hidden sibling folder (``.NAME.new-*``),
    then, with SIGINT/SIGTERM held back and a lock file (``.NAME.lock``)
    keeping other writers out, swapped in: in one step where the system can
    exchange two names, else by two renames (a run killed between them is
    repaired by the next). An interrupt at any instant leaves the complete
    old folder or the complete new one and no temporary files: during the
    writing it stops the work and the old folder stays; during the swap it is
    delivered once the swap is done. A file of an earlier output that the
    new one lacks (``stepper.csv`` of an earlier arm, say) is gone with the
    old folder. A folder that holds files the tool did not write is refused,
    so the user's own files are never removed.

    Parameters
    ----------
    folder : str or os.PathLike
    files : dict
        File name -> bytes or str.
    safety : bool
        Add ``SAFETY.txt`` unless ``files`` holds it.
    lock_timeout : float
        Seconds to wait for another writer of the same folder.

    Returns
    -------
    list of str
        Full paths written, in the order of ``files``.

    Raises
    ------
    InkreachError
        For a folder that is a file or holds files the tool did not write, a
        bad file name, or a folder that cannot be written.
    WriteInterrupted
        On SIGINT or SIGTERM, saying whether the new folder is in place.
    OSError
        For other failures (after removing the temporary folder).

    References
    ----------
    .. [1] The Open Group, POSIX.1-2017, ``rename()`` (atomic replacement) and
       Linux ``rename(2)``, ``RENAME_EXCHANGE``.

    Examples
    --------
    >>> import os, tempfile
    >>> d = os.path.join(tempfile.mkdtemp(), "out")
    >>> _ = replace_folder(d, {"a.txt": "A", "b.txt": "B"}, safety=False)
    >>> _ = replace_folder(d, {"a.txt": "A2"}, safety=False)
    >>> sorted(os.listdir(d)), open(os.path.join(d, "a.txt")).read()
    (['.inkreach-manifest.json', 'a.txt'], 'A2')
    """
    folder = os.path.abspath(os.fspath(folder))
    files = dict(files)
    if safety and "SAFETY.txt" not in files:
        files["SAFETY.txt"] = SAFETY_TEXT + "\n"
    for name in files:
        if not name or os.path.basename(name) != name or name in (".", "..", MANIFEST):
            raise InkreachError(f"output file name {name!r} must be a plain file name")
    blobs = {name: _as_bytes(data) for name, data in files.items()}
    parent, base = os.path.split(folder)
    if not base:
        raise InkreachError(f"output folder {folder} cannot be replaced; give a folder of "
                            "its own with --out")
    if os.path.exists(folder) and not os.path.isdir(folder):
        raise InkreachError(f"output folder {folder} is a file; give a folder path")
    made = []
    probe = parent
    while not os.path.exists(probe):
        made.append(probe)
        probe = os.path.dirname(probe)
    try:
        os.makedirs(parent, exist_ok=True)
    except OSError as exc:
        raise InkreachError(f"output folder {folder} cannot be created "
                            f"({exc.strerror}); choose another folder") from None
    if not os.access(parent, os.W_OK | os.X_OK):
        _remove_made(made)
        raise InkreachError(f"output folder {folder} is not writable (its parent folder is "
                            "read-only); choose another folder")
    tmp = None
    try:
        with folder_lock(folder, timeout=lock_timeout):
            _sweep(parent, base)
            check_replaceable(folder, blobs)
            tmp = tempfile.mkdtemp(dir=parent, prefix=f".{base}.new-")
            try:
                _write_all(tmp, blobs)
                mode = os.stat(folder).st_mode & 0o7777 if os.path.isdir(folder) else None
                if mode is None:
                    um = os.umask(0)
                    os.umask(um)
                    mode = 0o777 & ~um
                os.chmod(tmp, mode)
            except KeyboardInterrupt:
                with held_signals():
                    shutil.rmtree(tmp, ignore_errors=True)
                    tmp = None
                    _remove_made(made)
                raise WriteInterrupted(folder, False) from None
            with held_signals() as held:
                try:
                    _swap(tmp, folder, parent, base)
                    tmp = None
                finally:
                    _fsync_dir(parent)
            if held.pending is not None:
                raise WriteInterrupted(folder, True)
    except BaseException:
        with held_signals():
            if tmp is not None:
                shutil.rmtree(tmp, ignore_errors=True)
            if not os.path.exists(folder):
                _remove_made(made)
        raise
    return [os.path.join(folder, name) for name in blobs]


def _swap(tmp, folder, parent, base):
    """Put ``tmp`` in place of ``folder`` and remove the old folder."""
    if not os.path.isdir(folder):
        os.rename(tmp, folder)
        return
    if _exchange(tmp, folder):
        shutil.rmtree(tmp, ignore_errors=True)
        return
    old = tempfile.mkdtemp(dir=parent, prefix=f".{base}.old-")
    os.rmdir(old)
    os.rename(folder, old)
    try:
        os.rename(tmp, folder)
    except BaseException:
        os.rename(old, folder)
        raise
    shutil.rmtree(old, ignore_errors=True)


def _remove_made(made):
    for p in made:
        try:
            os.rmdir(p)
        except OSError:
            break
