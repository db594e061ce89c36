"""Who a board is: the arm's name and a hash of everything the board was built from."""

import zlib

from ..arms import arm_to_toml

__all__ = ["arm_hash", "board_name"]

_NAME_BYTES = 40


def arm_hash(arm):
    """CRC-32 of the arm's canonical arm-file TOML, as the board reports it.

    Covers the name, geometry, limits, pen and the servo / stepper
    calibration tables, so a board built for another arm (or the same arm
    re-calibrated) answers with another number.

    References
    ----------
    .. [1] ISO/IEC 13239 (HDLC) frame check sequence, the CRC-32 of
       ``zlib.crc32``; catalogue check value 0xCBF43926 ("Catalogue of
       parametrised CRC algorithms", Greg Cook, CRC-32/ISO-HDLC).

    Examples
    --------
    >>> from inkreach.arms import default_arm
    >>> arm_hash(default_arm()) == arm_hash(default_arm())
    True
    """
    return zlib.crc32(arm_to_toml(arm).encode("utf-8")) & 0xFFFFFFFF


def board_name(arm):
    """The arm's name as the board sends it: UTF-8, at most 40 bytes, whole characters.

    Examples
    --------
    >>> from types import SimpleNamespace
    >>> board_name(SimpleNamespace(name="é" * 30))
    'éééééééééééééééééééé'
    """
    raw = arm.name.encode("utf-8")[:_NAME_BYTES]
    return raw.decode("utf-8", "ignore")
