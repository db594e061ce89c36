"""Finished plans kept on disk in a private temporary folder, oldest evicted first."""

import atexit
import os
import re
import secrets
import shutil
import tempfile
import threading
from collections import OrderedDict
from dataclasses import dataclass

__all__ = ["PlanStore", "StoredPlan", "content_type"]

_TYPES = {
    ".csv": "text/csv; charset=utf-8",
    ".json": "application/json",
    ".svg": "image/svg+xml",
    ".png": "image/png",
    ".h": "text/x-c; charset=utf-8",
    ".txt": "text/plain; charset=utf-8",
    ".toml": "application/toml; charset=utf-8",
}
_ID = re.compile(r"^[0-9a-f]{16}$")
_NAME = re.compile(r"^[A-Za-z0-9][A-Za-z0-9_.-]{0,63}$")


def content_type(name):
    """The media type of an output file, from its extension.

    Examples
    --------
    >>> content_type("joints.csv")
    'text/csv; charset=utf-8'
    >>> content_type("mystery.bin")
    'application/octet-stream'
    """
    return _TYPES.get(os.path.splitext(name)[1].lower(), "application/octet-stream")


@dataclass(frozen=True)
class StoredPlan:
    """One stored plan: its id, folder and files (name -> absolute path)."""

    id: str
    folder: str
    files: dict


class PlanStore:
    """Plans written into folders under a private temporary root.

    The root is made with :func:`tempfile.mkdtemp` (mode 0700) inside
    ``parent`` (the system temp folder when None). File names come from the
    planner's own file dictionary and are checked against a strict pattern;
    nothing from a request is ever joined to a path. At most ``keep`` plans are
    kept, the oldest removed first. :meth:`close` removes the root; it is also
    registered with :mod:`atexit`.

    Parameters
    ----------
    parent : str, optional
        Where to make the private root.
    keep : int
        Most plans kept at once.
    """

    def __init__(self, parent=None, keep=20):
        if parent is not None:
            os.makedirs(parent, exist_ok=True)
        self.root = tempfile.mkdtemp(prefix="inkreach-web-", dir=parent)
        self.keep = max(1, int(keep))
        self._plans = OrderedDict()
        self._lock = threading.Lock()
        self._closed = False
        atexit.register(self.close)

    def add(self, files):
        """Write a plan's files (name -> bytes or str); return its :class:`StoredPlan`."""
        if self._closed:
            raise RuntimeError("the plan store is closed")
        pid = secrets.token_hex(8)
        folder = tempfile.mkdtemp(prefix=pid + "-", dir=self.root)
        paths = {}
        for name, data in files.items():
            if not _NAME.match(name) or ".." in name:
                continue  # never trust a name that could be a path
            path = os.path.join(folder, name)
            if isinstance(data, str):
                data = data.encode("utf-8")
            with open(path, "wb") as fh:
                fh.write(data)
            paths[name] = path
        stored = StoredPlan(pid, folder, paths)
        with self._lock:
            self._plans[pid] = stored
            old = []
            while len(self._plans) > self.keep:
                old.append(self._plans.popitem(last=False)[1])
        for o in old:
            shutil.rmtree(o.folder, ignore_errors=True)
        return stored

    def get(self, pid):
        """The stored plan with this id, or None."""
        if not isinstance(pid, str) or not _ID.match(pid):
            return None
        with self._lock:
            return self._plans.get(pid)

    def file(self, pid, name):
        """Absolute path of a plan's file, or None if there is no such plan or file."""
        p = self.get(pid)
        if p is None:
            return None
        return p.files.get(name)

    def __len__(self):
        with self._lock:
            return len(self._plans)

    def close(self):
        """Remove every stored plan and the private root."""
        self._closed = True
        with self._lock:
            self._plans.clear()
        shutil.rmtree(self.root, ignore_errors=True)
        try:
            atexit.unregister(self.close)
        except Exception:  # pragma: no cover - interpreter shutting down
            pass
