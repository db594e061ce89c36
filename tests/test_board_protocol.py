"""The host codec of the line protocol: CRC, COBS, frames, messages, angle units."""

import struct

import numpy as np
import pytest
from hypothesis import given, settings, strategies as st

from inkreach.board.protocol import (
    FrameReader, Gap, Identity, Status, cobs_decode, cobs_encode, crc16, decode_message,
    encode_samples, frame, from_units, to_units, unframe)


def test_crc16_matches_the_catalogue_check_value():
    # G. Cook, "Catalogue of parametrised CRC algorithms", CRC-16/IBM-3740:
    # check = 0x29B1 for the ASCII bytes "123456789".
    assert crc16(b"123456789") == 0x29B1
    # Same catalogue: the CRC of no bytes is the initial value (no final xor).
    assert crc16(b"") == 0xFFFF


def _crc16_bitwise(data):
    # The catalogue's definition bit by bit (poly 0x1021, init 0xFFFF, no
    # reflection, no xorout), independent of the table in the module.
    crc = 0xFFFF
    for b in data:
        crc ^= b << 8
        for _ in range(8):
            crc = ((crc << 1) ^ 0x1021) if crc & 0x8000 else (crc << 1)
            crc &= 0xFFFF
    return crc


@settings(max_examples=200)
@given(st.binary(max_size=80))
def test_crc16_table_equals_the_bitwise_definition(data):
    assert crc16(data) == _crc16_bitwise(data)


# Worked examples of COBS, Cheshire & Baker, "Consistent Overhead Byte
# Stuffing", IEEE/ACM Trans. Networking 7(2), 1999 (the encoding rules; the
# byte-level examples are the ones tabulated in the Wikipedia article on
# COBS, quoted from memory).
_COBS = [
    ("00", "0101"),
    ("0000", "010101"),
    ("001100", "01021101"),
    ("11220033", "0311220233"),
    ("11223344", "0511223344"),
    ("11000000", "0211010101"),
    (bytes(range(1, 255)).hex(), "ff" + bytes(range(1, 255)).hex()),
    (bytes(range(0, 255)).hex(), "01ff" + bytes(range(1, 255)).hex()),
    (bytes(range(1, 256)).hex(), "ff" + bytes(range(1, 255)).hex() + "02ff"),
]


@pytest.mark.parametrize("raw, enc", _COBS)
def test_cobs_worked_examples(raw, enc):
    assert cobs_encode(bytes.fromhex(raw)).hex() == enc
    assert cobs_decode(bytes.fromhex(enc)).hex() == raw


@settings(max_examples=200)
@given(st.binary(max_size=600))
def test_cobs_round_trip_has_no_zero(data):
    enc = cobs_encode(data)
    assert 0 not in enc
    # Overhead bound of the paper: at most one byte in 254, rounded up, plus one.
    assert len(enc) <= len(data) + len(data) // 254 + 1
    assert cobs_decode(enc) == data


def test_cobs_decode_refuses_a_zero_or_a_short_block():
    assert cobs_decode(b"\x03\x11") is None
    assert cobs_decode(b"\x02\x00") is None


def test_frame_round_trip_and_corruption_is_dropped():
    f = frame(b"E", 9, struct.pack("<I", 1234))
    assert f.endswith(b"\x00") and 0 not in f[:-1]
    assert unframe(f[:-1]) == (b"E", 9, struct.pack("<I", 1234))
    for k in range(len(f) - 1):
        for bit in range(8):
            bad = bytearray(f[:-1])
            bad[k] ^= 1 << bit
            # CRC-16 detects every single-bit error (common practice: any CRC
            # whose polynomial has more than one term does).
            got = unframe(bytes(bad)) if 0 not in bad else None
            assert got is None


def test_reader_resynchronises_after_garbage():
    a, b = frame(b"Q", 1), frame(b"H", 2)
    r = FrameReader()
    got = r.feed(b"\x17\x99garbage" + a[:3]) + r.feed(b"\x00" + b[:2]) + r.feed(b[2:])
    assert got == [(b"H", 2, b"")]


def test_decode_board_messages():
    body = struct.pack("<BBHII", 1, 0, 64, 20000, 0xDEADBEEF) + "desk".encode()
    assert decode_message(b"I", body) == Identity(1, 0, 64, 20000, 0xDEADBEEF, "desk")
    a = struct.pack("<BIHIBiiBB", 3, 10, 54, 0xFFFFFFFF, 1, -5, 6, 1, 0)
    assert decode_message(b"A", a) == Status(3, 10, 54, 0xFFFFFFFF, 1, -5, 6, 1, 0)
    assert decode_message(b"A", a[:-1]) is None
    assert decode_message(b"N", struct.pack("<I", 77)) == Gap(77)
    assert decode_message(b"Z", b"") is None


def test_samples_frame_layout_and_link_budget():
    units = np.array([[1200000, 600000], [-1, 2], [3, -4], [5, 6], [7, 8]])
    f = encode_samples(200, 1000, units, [0, 1, 1, 0, 1])
    # PROTOCOL.md link budget: a full S frame is 56 bytes on the wire.
    assert len(f) == 56
    t, seq, body = unframe(f[:-1])
    assert (t, seq) == (b"S", 200)
    first, n = struct.unpack_from("<IB", body)
    rec = [struct.unpack_from("<iiB", body, 5 + 9 * j) for j in range(n)]
    assert first == 1000 and n == 5
    assert rec[0] == (1200000, 600000, 0) and rec[1] == (-1, 2, 1)
    with pytest.raises(ValueError):
        encode_samples(0, 0, np.zeros((6, 2), int), np.zeros(6))


def test_angle_units_round_to_a_ten_thousandth_of_a_degree():
    deg = np.array([120.274327, -59.72497649, 0.00005, 179.99999])
    u = to_units(deg)
    assert np.all(np.abs(from_units(u) - deg) <= 0.5e-4 + 1e-12)
    assert u.tolist() == [1202743, -597250, 1, 1800000]
