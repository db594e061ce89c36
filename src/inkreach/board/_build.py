"""Compiling the board's C core with the host computer's C compiler, cached."""

import hashlib
import os
import shutil
import subprocess
import tempfile
from importlib import resources

from ..errors import InkreachError

__all__ = ["find_compiler", "core_sources", "firmware_dir", "build"]

CFLAGS = ("-std=c99", "-Wall", "-Wextra", "-Werror", "-O2")
CORE = ("ink_crc16.c", "ink_cobs.c", "ink_frame.c", "ink_ring.c", "ink_output.c",
        "ink_check.c", "ink_core.c")


def firmware_dir():
    """The folder of the shipped C sources."""
    return str(resources.files("inkreach.board").joinpath("firmware"))


def core_sources():
    """Paths of the C core's ``.c`` files."""
    return [os.path.join(firmware_dir(), n) for n in CORE]


def find_compiler():
    """The host C compiler: ``$CC``, else ``cc``, ``gcc`` or ``clang`` on the PATH.

    Raises
    ------
    InkreachError
        When there is none, saying how to install one.
    """
    for cand in (os.environ.get("CC"), "cc", "gcc", "clang"):
        if cand and shutil.which(cand):
            return shutil.which(cand)
    raise InkreachError("no C compiler found (cc, gcc or clang); install one, e.g. "
                        "`apt-get install gcc`, or set CC")


def _cache_root():
    return os.path.join(tempfile.gettempdir(), f"inkreach-board-{os.getuid()}")


def build(name, sources, config_text, extra_dirs=(), flags=()):
    """Compile ``sources`` against a config header into a cached executable.

    The cache key is the hash of the compiler, flags, config header and every
    source and header, so a changed file builds again and an unchanged one is
    reused. Building writes into a fresh folder renamed into place.

    Parameters
    ----------
    name : str
        Executable name.
    sources : list of str
        ``.c`` files.
    config_text : str
        Contents of ``inkreach_config.h``.
    extra_dirs : sequence of str
        More include folders.

    Returns
    -------
    str
        Path of the executable.
    """
    cc = find_compiler()
    inc = [firmware_dir(), *extra_dirs]
    h = hashlib.sha256()
    for part in (cc, *CFLAGS, *flags, config_text):
        h.update(part.encode() + b"\0")
    files = sorted(set(sources) | {os.path.join(d, f) for d in inc for f in os.listdir(d)
                                   if f.endswith(".h")})
    for f in files:
        h.update(f.encode() + b"\0")
        with open(f, "rb") as fh:
            h.update(fh.read())
    root = _cache_root()
    final = os.path.join(root, f"{name}-{h.hexdigest()[:16]}")
    exe = os.path.join(final, name)
    if os.path.exists(exe):
        return exe
    os.makedirs(root, exist_ok=True)
    work = tempfile.mkdtemp(prefix=".build-", dir=root)
    try:
        # The core is compiled from copies beside this arm's config header: the
        # shipped inkreach_config.h (the built-in arm's, so the core compiles as
        # shipped) would otherwise win the quoted include from its own folder.
        fw = firmware_dir()
        for f in os.listdir(fw):
            if f.endswith((".c", ".h")):
                shutil.copyfile(os.path.join(fw, f), os.path.join(work, f))
        with open(os.path.join(work, "inkreach_config.h"), "w", encoding="utf-8") as fh:
            fh.write(config_text)
        srcs = [os.path.join(work, os.path.basename(f))
                if os.path.dirname(os.path.abspath(f)) == os.path.abspath(fw) else f
                for f in sources]
        cmd = [cc, *CFLAGS, *flags, "-I", work, *(a for d in inc[1:] for a in ("-I", d)),
               "-o", os.path.join(work, name), *srcs]
        res = subprocess.run(cmd, capture_output=True, text=True)
        if res.returncode != 0:
            lines = res.stderr.strip().splitlines() or ["(no message)"]
            first = next((ln for ln in lines if "error" in ln), lines[0])
            raise InkreachError(f"the C compiler failed on the board sources: {first}")
        try:
            os.rename(work, final)
        except OSError:  # built at the same time elsewhere: use that one
            shutil.rmtree(work, ignore_errors=True)
        work = None
        return exe
    finally:
        if work:
            shutil.rmtree(work, ignore_errors=True)
