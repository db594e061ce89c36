"""The host's side of the line protocol v1: frames, messages and angle units.

See ``PROTOCOL.md`` beside this module for the wire format. Everything here
is a pure function of bytes and numbers; the streamer owns the serial port.
"""

import struct
from dataclasses import dataclass

import numpy as np

__all__ = ["PROTOCOL_VERSION", "NONE", "crc16", "cobs_encode", "cobs_decode", "frame",
           "unframe", "FrameReader", "Identity", "Status", "Gap", "Fault", "decode_message",
           "encode_hello", "encode_query", "encode_begin", "encode_go", "encode_end",
           "encode_stop", "encode_samples", "to_units", "from_units", "STATE_NAMES",
           "FAULT_NAMES", "MAX_PER_FRAME"]

PROTOCOL_VERSION = 1
NONE = 0xFFFFFFFF
MAX_PER_FRAME = 5
_MAX_PAYLOAD = 58          # type + seq + 56 body bytes
_MAX_DECODED = 64

STATE_NAMES = {0: "idle", 1: "running", 2: "stopping", 3: "stopped", 4: "finished"}
FAULT_NAMES = {0: "none", 1: "joint limit", 2: "speed limit (change per period)",
               3: "acceleration limit (change of that change)",
               4: "starved (the buffer ran dry while running)", 5: "pen value not 0 or 1",
               6: "first sample too far from the posture the board is at",
               7: "step rate beyond the driver's limit"}


def _crc_table():
    c = np.arange(256, dtype=np.uint32) << 8
    for _ in range(8):
        c = np.where(c & 0x8000, (c << 1) ^ 0x1021, c << 1) & 0xFFFF
    return c.astype(np.uint16).tolist()


_TABLE = _crc_table()


def crc16(data):
    """CRC-16/IBM-3740 (CRC-16/CCITT-FALSE) of ``data``.

    Polynomial 0x1021, initial value 0xFFFF, no reflection, no final xor;
    computed with a 256-entry table.

    References
    ----------
    .. [1] G. Cook, "Catalogue of parametrised CRC algorithms",
       CRC-16/IBM-3740 (check value 0x29B1).
    .. [2] R. N. Williams, "A painless guide to CRC error detection
       algorithms", 1993 (the table-driven method).

    Examples
    --------
    >>> hex(crc16(b"123456789"))
    '0x29b1'
    """
    crc = 0xFFFF
    t = _TABLE
    for b in bytes(data):
        crc = ((crc << 8) & 0xFFFF) ^ t[(crc >> 8) ^ b]
    return crc


def cobs_encode(data):
    """Consistent Overhead Byte Stuffing: ``data`` without any zero byte.

    References
    ----------
    .. [1] S. Cheshire and M. Baker, "Consistent Overhead Byte Stuffing",
       IEEE/ACM Transactions on Networking 7(2), 1999.

    Examples
    --------
    >>> cobs_encode(bytes([0x11, 0x22, 0x00, 0x33])).hex()
    '0311220233'
    """
    data = bytes(data)
    out = bytearray()
    for block in data.split(b"\x00"):
        while len(block) >= 254:
            out.append(255)
            out += block[:254]
            block = block[254:]
        out.append(len(block) + 1)
        out += block
    # A data run of exactly 254 bytes at the very end needs no extra code byte.
    if len(data) and data.split(b"\x00")[-1] and len(data.split(b"\x00")[-1]) % 254 == 0:
        out.pop()
    return bytes(out)


def cobs_decode(data):
    """Undo :func:`cobs_encode`; None when ``data`` is not a valid encoding.

    References
    ----------
    .. [1] S. Cheshire and M. Baker, "Consistent Overhead Byte Stuffing",
       IEEE/ACM Transactions on Networking 7(2), 1999.
    """
    data = bytes(data)
    if 0 in data:
        return None
    out = bytearray()
    i, n = 0, len(data)
    while i < n:
        code = data[i]
        if i + code > n:
            return None
        out += data[i + 1:i + code]
        i += code
        if code < 255 and i < n:
            out.append(0)
    return bytes(out)


def frame(msg_type, seq, body=b""):
    """One frame on the wire: ``COBS(type ‖ seq ‖ body ‖ crc) 0x00``.

    Examples
    --------
    >>> unframe(frame(b"Q", 7)[:-1])
    (b'Q', 7, b'')
    """
    payload = bytes(msg_type) + bytes([seq & 0xFF]) + bytes(body)
    if len(payload) > _MAX_PAYLOAD:
        raise ValueError(f"payload of {len(payload)} bytes is longer than {_MAX_PAYLOAD}")
    crc = crc16(payload)
    return cobs_encode(payload + bytes([crc >> 8, crc & 0xFF])) + b"\x00"


def unframe(encoded):
    """``(type, seq, body)`` of one encoded frame (without its 0x00), or None.

    None when the bytes do not decode, are shorter than 4 or longer than 64
    decoded bytes, or fail the CRC: such a frame is dropped silently.
    """
    raw = cobs_decode(encoded)
    if raw is None or not 4 <= len(raw) <= _MAX_DECODED:
        return None
    payload, crc = raw[:-2], (raw[-2] << 8) | raw[-1]
    if crc16(payload) != crc:
        return None
    return payload[:1], payload[1], payload[2:]


class FrameReader:
    """Collect bytes into frames; garbage costs at most the frame it hit."""

    def __init__(self):
        self._buf = bytearray()

    def feed(self, data):
        """Add received bytes; return the list of valid ``(type, seq, body)``."""
        self._buf += data
        out = []
        while True:
            k = self._buf.find(0)
            if k < 0:
                if len(self._buf) > 4 * _MAX_DECODED:   # no delimiter for too long
                    del self._buf[:-_MAX_DECODED]
                return out
            chunk = bytes(self._buf[:k])
            del self._buf[:k + 1]
            if chunk:
                f = unframe(chunk)
                if f is not None:
                    out.append(f)


@dataclass(frozen=True)
class Identity:
    """The board's ``I`` message."""

    version: int
    drive: int
    capacity: int
    period_us: int
    arm_hash: int
    name: str


@dataclass(frozen=True)
class Status:
    """The board's ``A`` message; angles in angle units (1e-4 degree)."""

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
class Gap:
    """The board's ``N`` message: resend from ``next``."""

    next: int


@dataclass(frozen=True)
class Fault:
    """The board's ``F`` message."""

    code: int
    index: int
    value: int


def decode_message(msg_type, body):
    """A board message as a value, or None when its type or length is wrong.

    Examples
    --------
    >>> decode_message(b"N", bytes([5, 0, 0, 0]))
    Gap(next=5)
    """
    try:
        if msg_type == b"I" and len(body) >= 12:
            v, d, cap, per, h = struct.unpack_from("<BBHII", body)
            return Identity(v, d, cap, per, h, body[12:].decode("utf-8", "replace"))
        if msg_type == b"A" and len(body) == 22:
            return Status(*struct.unpack("<BIHIBiiBB", body))
        if msg_type == b"N" and len(body) == 4:
            return Gap(*struct.unpack("<I", body))
        if msg_type == b"F" and len(body) == 9:
            return Fault(*struct.unpack("<BIi", body))
    except struct.error:  # pragma: no cover - lengths are checked above
        return None
    return None


def encode_hello(seq):
    """``H``: who are you?"""
    return frame(b"H", seq)


def encode_query(seq):
    """``Q``: answer with a status now."""
    return frame(b"Q", seq)


def encode_begin(seq, first):
    """``B``: a new stream whose first sample carries index ``first``."""
    return frame(b"B", seq, struct.pack("<I", first))


def encode_go(seq):
    """``G``: start executing the buffer."""
    return frame(b"G", seq)


def encode_end(seq, last):
    """``E``: no sample after ``last`` will come."""
    return frame(b"E", seq, struct.pack("<I", last))


def encode_stop(seq):
    """``X``: controlled stop now."""
    return frame(b"X", seq)


_SAMPLE = np.dtype([("q1", "<i4"), ("q2", "<i4"), ("pen", "u1")])


def encode_samples(seq, first, units, pen):
    """``S`` frame carrying samples ``first ... first + n - 1`` (n = 1 to 5).

    Parameters
    ----------
    units : array_like of int, shape (n, 2)
        Joint angles in angle units (see :func:`to_units`).
    pen : array_like of int, shape (n,)

    Examples
    --------
    >>> f = encode_samples(0, 10, [[1, -2]], [1])
    >>> t, s, body = unframe(f[:-1])
    >>> t, len(body)
    (b'S', 14)
    """
    units = np.asarray(units).reshape(-1, 2)
    n = len(units)
    if not 1 <= n <= MAX_PER_FRAME:
        raise ValueError(f"a samples frame holds 1 to {MAX_PER_FRAME} samples, got {n}")
    rec = np.empty(n, _SAMPLE)
    rec["q1"], rec["q2"], rec["pen"] = units[:, 0], units[:, 1], np.asarray(pen).reshape(n)
    return frame(b"S", seq, struct.pack("<IB", first, n) + rec.tobytes())


def to_units(deg):
    """Degrees to angle units (signed 32-bit counts of 1e-4 degree), rounded.

    Halves go away from zero, as the board's own conversion
    (:func:`inkreach.board.angle_units`, which this calls).

    Examples
    --------
    >>> to_units([120.0, -0.00006, 0.00005]).tolist()
    [1200000, -1, 1]
    """
    from .firmware_signals import angle_units
    return angle_units(deg)


def from_units(units):
    """Angle units back to degrees.

    Examples
    --------
    >>> float(from_units(1200000))
    120.0
    """
    return np.asarray(units, dtype=np.int64) / 1e4
