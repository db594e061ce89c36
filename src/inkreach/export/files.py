"""Writing output files so that a failure never leaves a half-written folder."""

import io
import os
import tempfile

from ..errors import InkreachError
from .safety import SAFETY_TEXT

__all__ = ["atomic_write", "write_files", "png_bytes"]


def _as_bytes(data):
    if isinstance(data, str):
        return data.encode("utf-8")
    if isinstance(data, (bytes, bytearray, memoryview)):
        return bytes(data)
    raise TypeError(f"file contents must be bytes or str, not {type(data).__name__}")


def _write_temp(folder, name, data):
    """Write ``data`` to a new hidden temporary file in ``folder``; return its path."""
    fd, tmp = tempfile.mkstemp(dir=folder, prefix=f".{name}.", suffix=".tmp")
    try:
        with os.fdopen(fd, "wb") as fh:
            fh.write(data)
            fh.flush()
            os.fsync(fh.fileno())
        os.chmod(tmp, 0o644)
    except BaseException:
        _remove_quietly(tmp)
        raise
    return tmp


def _remove_quietly(path):
    try:
        os.remove(path)
    except OSError:
        pass


def atomic_write(path, data):
    """Write a file atomically: a temporary file in the same folder, then a rename.

    Readers see either the old file or the complete new one, never a part.

    Parameters
    ----------
    path : str or os.PathLike
    data : bytes or str
        Text is written as UTF-8.

    References
    ----------
    .. [1] The Open Group, POSIX.1-2017, ``rename()``: the replacement of the
       target is atomic.

    Examples
    --------
    >>> import os, tempfile
    >>> d = tempfile.mkdtemp()
    >>> atomic_write(os.path.join(d, "a.txt"), "hello")
    >>> open(os.path.join(d, "a.txt")).read(), sorted(os.listdir(d))
    ('hello', ['a.txt'])
    """
    path = os.fspath(path)
    folder = os.path.dirname(os.path.abspath(path))
    tmp = _write_temp(folder, os.path.basename(path), _as_bytes(data))
    try:
        os.replace(tmp, path)
    except BaseException:
        _remove_quietly(tmp)
        raise


def _prepare_folder(folder):
    """Make sure ``folder`` is a writable folder; return True if this call created it."""
    if os.path.exists(folder) and not os.path.isdir(folder):
        raise InkreachError(f"output folder {folder} is a file; give a folder path")
    created = False
    if not os.path.exists(folder):
        try:
            os.makedirs(folder)
        except OSError as exc:
            raise InkreachError(f"output folder {folder} cannot be created "
                                f"({exc.strerror}); choose another folder") from None
        created = True
    if not os.access(folder, os.W_OK | os.X_OK):
        raise InkreachError(f"output folder {folder} is not writable; choose another folder")
    return created


def write_files(folder, files, safety=True):
    """Write a set of files into a folder, all or nothing.

    Every file is first written in full to a hidden temporary name in the
    folder; only then are they renamed into place one by one. A file that
    already exists under a target name is kept as a hard-linked backup until
    the last rename succeeds. If anything fails, the files this call put in
    place are removed (and any file they replaced is put back), the
    temporary files are deleted, and a folder this call created is removed,
    so the folder is left exactly as before. Files that are not named in
    ``files`` are never touched.

    Parameters
    ----------
    folder : str or os.PathLike
        Created if missing.
    files : dict
        File name (no folder part) -> bytes or str.
    safety : bool
        Add ``SAFETY.txt`` (the caution text) unless ``files`` holds it.

    Returns
    -------
    list of str
        Full paths written, in the order of ``files``.

    Raises
    ------
    InkreachError
        If the folder is a file, cannot be created or is not writable, or a
        name is not a plain file name.
    OSError
        If writing fails for another reason (after undoing the partial work).

    Examples
    --------
    >>> import os, tempfile
    >>> d = os.path.join(tempfile.mkdtemp(), "out")
    >>> _ = write_files(d, {"a.txt": "A", "b.bin": b"B"}, safety=False)
    >>> sorted(os.listdir(d))
    ['a.txt', 'b.bin']
    """
    folder = os.fspath(folder)
    files = dict(files)
    if safety and "SAFETY.txt" not in files:
        files["SAFETY.txt"] = SAFETY_TEXT + "\n"
    for name in files:
        if not name or os.path.basename(name) != name or name in (".", ".."):
            raise InkreachError(f"output file name {name!r} must be a plain file name")
    blobs = {name: _as_bytes(data) for name, data in files.items()}
    created = _prepare_folder(folder)
    temps, backups, placed = {}, {}, []
    try:
        for name, data in blobs.items():
            temps[name] = _write_temp(folder, name, data)
        for name in blobs:
            target = os.path.join(folder, name)
            if os.path.lexists(target):
                if os.path.isdir(target):
                    raise InkreachError(f"output {target} is a folder; move it away or "
                                        "choose another output folder")
                backups[name] = _backup(folder, name, target)
            os.replace(temps[name], target)
            del temps[name]
            placed.append(name)
    except BaseException:
        for name in reversed(placed):
            target = os.path.join(folder, name)
            if name in backups:
                try:
                    os.replace(backups.pop(name), target)
                except OSError:
                    pass
            else:
                _remove_quietly(target)
        for tmp in list(temps.values()) + list(backups.values()):
            _remove_quietly(tmp)
        if created:
            try:
                os.rmdir(folder)
            except OSError:
                pass
        raise
    for b in backups.values():
        _remove_quietly(b)
    return [os.path.join(folder, name) for name in blobs]


def _backup(folder, name, target):
    """Keep the current ``target`` under a hidden name (a hard link, else a copy)."""
    fd, bak = tempfile.mkstemp(dir=folder, prefix=f".{name}.", suffix=".bak")
    os.close(fd)
    os.remove(bak)
    try:
        os.link(target, bak)
    except OSError:
        with open(target, "rb") as src:
            data = src.read()
        with open(bak, "wb") as dst:
            dst.write(data)
    return bak


def png_bytes(image, compress_level=1):
    """PNG bytes of a Pillow image (no timestamps, so the same picture gives the same bytes).

    ``compress_level`` 1 is the fastest zlib level: previews are mostly flat
    colour, so it costs little in size and saves most of the encoding time.
    A resolution in ``image.info["dpi"]`` is written as the ``pHYs`` chunk.
    """
    buf = io.BytesIO()
    extra = {"dpi": image.info["dpi"]} if "dpi" in image.info else {}
    image.save(buf, format="PNG", optimize=False, compress_level=compress_level, **extra)
    return buf.getvalue()
