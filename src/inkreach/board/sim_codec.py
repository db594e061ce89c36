"""A small Python codec of the line protocol v1, for talking to the simulated board.

The same framing as ``PROTOCOL.md``: ``COBS(payload || CRC-16/IBM-3740) 0x00``,
with ``payload = type, seq, body`` and little-endian integers.
"""

import struct
from dataclasses import dataclass

__all__ = ["crc16", "cobs_encode", "cobs_decode", "encode_frame", "FrameReader",
           "host_frame", "samples_frame", "parse_message", "Status", "Identity", "Fault",
           "Gap", "STATES", "FAULTS", "NONE"]

NONE = 0xFFFFFFFF
STATES = ("idle", "running", "stopping", "stopped", "finished")
FAULTS = ("none", "joint limit", "speed", "acceleration", "starved", "pen value",
          "first sample too far", "step rate")


def crc16(data):
    """CRC-16/IBM-3740 (poly 0x1021, init 0xFFFF, no reflection, no final xor).

    References
    ----------
    .. [1] G. Cook, "Catalogue of parametrised CRC algorithms", CRC-16/IBM-3740
       (check value 0x29B1).

    Examples
    --------
    >>> hex(crc16(b"123456789"))
    '0x29b1'
    """
    crc = 0xFFFF
    for b in data:
        crc ^= b << 8
        for _ in range(8):
            crc = ((crc << 1) ^ 0x1021) & 0xFFFF if crc & 0x8000 else (crc << 1) & 0xFFFF
    return crc


def cobs_encode(data):
    """Consistent Overhead Byte Stuffing (Cheshire & Baker, 1999), no delimiter.

    Examples
    --------
    >>> cobs_encode(b"\\x11\\x22\\x00\\x33").hex()
    '0311220233'
    """
    out = bytearray()
    block = bytearray()
    for i, b in enumerate(data):
        if b == 0:
            out += bytes([len(block) + 1]) + block
            block = bytearray()
        else:
            block.append(b)
            if len(block) == 254:
                out += b"\xff" + block
                block = bytearray()
                if i + 1 == len(data):
                    return bytes(out)
    out += bytes([len(block) + 1]) + block
    return bytes(out)


def cobs_decode(data):
    """Inverse of :func:`cobs_encode`; None when ``data`` is not valid COBS."""
    out = bytearray()
    i = 0
    while i < len(data):
        code = data[i]
        i += 1
        if code == 0 or i + code - 1 > len(data) or 0 in data[i:i + code - 1]:
            return None
        out += data[i:i + code - 1]
        i += code - 1
        if code != 0xFF and i < len(data):
            out.append(0)
    return bytes(out)


def encode_frame(payload):
    """Wire bytes of one frame: COBS of payload and its CRC, then 0x00."""
    crc = crc16(payload)
    return cobs_encode(payload + bytes([crc >> 8, crc & 0xFF])) + b"\x00"


class FrameReader:
    """Collects received bytes and returns the payloads of the valid frames."""

    def __init__(self):
        self._buf = bytearray()

    def feed(self, data):
        """Payloads (``bytes``: type, seq, body) of the frames completed by ``data``."""
        out = []
        for b in data:
            if b:
                self._buf.append(b)
                continue
            raw, self._buf = bytes(self._buf), bytearray()
            dec = cobs_decode(raw) if raw else None
            if dec is None or not 4 <= len(dec) <= 64:
                continue
            if crc16(dec[:-2]) != (dec[-2] << 8 | dec[-1]):
                continue
            out.append(dec[:-2])
        return out


def host_frame(kind, seq, value=None):
    """Wire bytes of an H, G, X or Q frame (no body) or a B or E frame (a u32)."""
    body = b"" if value is None else struct.pack("<I", value)
    return encode_frame(kind.encode("ascii") + bytes([seq & 0xFF]) + body)


def samples_frame(seq, first, rows):
    """Wire bytes of an S frame: ``rows`` are up to 5 (q1, q2, pen), angles in 1e-4 degree."""
    body = struct.pack("<IB", first, len(rows))
    for q1, q2, pen in rows:
        body += struct.pack("<iiB", int(q1), int(q2), int(pen))
    return encode_frame(b"S" + bytes([seq & 0xFF]) + body)


@dataclass(frozen=True)
class Status:
    """An ``A`` message."""
    seq: int
    next: int
    free: int
    done: int
    state: int
    q1: int
    q2: int
    pen: int
    fault: int


@dataclass(frozen=True)
class Identity:
    """An ``I`` message."""
    version: int
    drive: int
    capacity: int
    period_us: int
    arm_hash: int
    name: str


@dataclass(frozen=True)
class Fault:
    """An ``F`` message."""
    code: int
    index: int
    value: int


@dataclass(frozen=True)
class Gap:
    """An ``N`` message."""
    next: int


def parse_message(payload):
    """A board message from a frame's payload, or None for an unknown or malformed one."""
    if len(payload) < 2:
        return None
    kind, body = chr(payload[0]), payload[2:]
    try:
        if kind == "A" and len(body) == 22:
            return Status(*struct.unpack("<BIHIBiiBB", body))
        if kind == "I" and len(body) >= 12:
            v, d, cap, per, h = struct.unpack("<BBHII", body[:12])
            return Identity(v, d, cap, per, h, body[12:].decode("utf-8", "replace"))
        if kind == "F" and len(body) == 9:
            return Fault(*struct.unpack("<BIi", body))
        if kind == "N" and len(body) == 4:
            return Gap(*struct.unpack("<I", body))
    except struct.error:
        return None
    return None
