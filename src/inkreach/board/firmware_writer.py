"""``inkreach firmware``: a ready-to-build sketch folder for one arm."""

import os
import shutil
import tempfile
from importlib import resources

from ..errors import InkreachError
from ._build import CORE, firmware_dir
from .firmware_config import board_config, config_header

__all__ = ["write_firmware", "firmware_files"]

_HEADERS = ("ink_core.h", "ink_crc16.h", "ink_cobs.h", "ink_frame.h", "ink_ring.h",
            "ink_output.h", "ink_check.h")
_FRONT = {"servo": "front_servo.ino", "stepper": "front_stepper.ino"}


def _caution():
    return resources.files("inkreach.board").joinpath("firmware", "_caution.txt") \
        .read_text("utf-8")


def firmware_files(arm, drive="servo", period=0.02, pins=None, sketch="inkreach_board"):
    """The sketch folder's files as ``{relative path: text}``.

    Every C file starts with the safety caution (the shipped sources carry it); ``inkreach_config.h`` holds
    the arm's numbers; ``<sketch>.ino`` is the board front-end for the drive.
    """
    cfg = board_config(arm, drive, period, pins)
    caution = _caution()
    out = {"inkreach_config.h": config_header(cfg, caution)}
    for name in CORE + _HEADERS:
        with open(os.path.join(firmware_dir(), name), encoding="utf-8") as fh:
            out[name] = fh.read()
    with open(os.path.join(firmware_dir(), _FRONT[drive]), encoding="utf-8") as fh:
        out[f"{sketch}.ino"] = fh.read()
    with open(os.path.join(firmware_dir(), "README_board.txt"), encoding="utf-8") as fh:
        out["README.txt"] = fh.read().replace("{sketch}", sketch).replace("{drive}", drive)
    out["PROTOCOL.md"] = resources.files("inkreach.board").joinpath("PROTOCOL.md") \
        .read_text("utf-8")
    return out


def write_firmware(arm, out_dir, drive="servo", period=0.02, pins=None):
    """Write the sketch folder ``out_dir/<name>/`` atomically; returns its path.

    The folder's last component names the sketch (Arduino builds
    ``<name>/<name>.ino``). Nothing is left half-written: the files go to a
    temporary folder beside it that is renamed into place; an existing
    non-empty folder is refused.

    Raises
    ------
    InkreachError
        For a bad drive, period, pin, an existing folder or an unwritable place.
    """
    out_dir = os.path.abspath(os.fspath(out_dir))
    sketch = os.path.basename(out_dir.rstrip(os.sep)) or "inkreach_board"
    if not sketch.replace("_", "a").replace("-", "a").isalnum():
        raise InkreachError(f"--out {out_dir}: the folder name {sketch!r} must be letters, "
                            "digits, '_' or '-' (it names the sketch)")
    files = firmware_files(arm, drive, period, pins, sketch)
    if os.path.exists(out_dir) and (not os.path.isdir(out_dir) or os.listdir(out_dir)):
        raise InkreachError(f"--out {out_dir} exists and is not an empty folder; "
                            "give a new folder")
    parent = os.path.dirname(out_dir)
    if not os.path.isdir(parent):
        raise InkreachError(f"--out {out_dir}: folder {parent} does not exist; create it first")
    try:
        tmp = tempfile.mkdtemp(prefix=f".{sketch}-", dir=parent)
    except OSError as exc:
        raise InkreachError(f"cannot write in {parent} ({exc.strerror}); "
                            "check its permissions") from None
    try:
        for name, text in files.items():
            with open(os.path.join(tmp, name), "w", encoding="utf-8", newline="\n") as fh:
                fh.write(text)
        if os.path.isdir(out_dir):
            os.rmdir(out_dir)
        os.rename(tmp, out_dir)
        tmp = None
    except OSError as exc:
        raise InkreachError(f"cannot write {out_dir} ({exc.strerror})") from None
    finally:
        if tmp:
            shutil.rmtree(tmp, ignore_errors=True)
    return out_dir
