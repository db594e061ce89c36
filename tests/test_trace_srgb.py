import numpy as np
import pytest

from inkreach.trace import linear_to_srgb, srgb_to_linear


# Worked values of the sRGB transfer function, IEC 61966-2-1:1999 section 5.2:
# decode(0.5) = ((0.5 + 0.055) / 1.055) ** 2.4 = 0.214041...
@pytest.mark.parametrize("encoded, linear", [
    (0.0, 0.0),
    (0.5, 0.214041),
    (1.0, 1.0),
    (0.04045, 0.04045 / 12.92),            # the breakpoint, linear segment
    (0.2, 0.033105),                        # ((0.2 + 0.055) / 1.055) ** 2.4
    (128 / 255, 0.215861),                  # the usual 8-bit mid grey
])
def test_srgb_decoding_matches_iec_61966_2_1_worked_values(encoded, linear):
    assert float(srgb_to_linear(encoded)) == pytest.approx(linear, abs=2e-6)


def test_srgb_decoding_is_continuous_at_the_0_04045_breakpoint():
    # IEC 61966-2-1: both pieces meet at 0.04045 (to within 1e-7 by design);
    # just above it the code must follow the power-law piece of the standard.
    below = 0.04045 / 12.92
    above = ((0.04045 + 0.055) / 1.055) ** 2.4
    assert above == pytest.approx(below, abs=1e-7)
    up = np.nextafter(0.04045, 1.0)
    assert float(srgb_to_linear(up)) == pytest.approx(((up + 0.055) / 1.055) ** 2.4, abs=1e-15)
    e = np.array([0.04045 - 1e-9, 0.04045, 0.04045 + 1e-9])
    assert np.ptp(srgb_to_linear(e)) < 1e-8


def test_srgb_encoding_inverts_decoding_on_all_8_bit_levels():
    c = np.arange(256) / 255.0
    np.testing.assert_allclose(linear_to_srgb(srgb_to_linear(c)), c, atol=1e-9)


def test_srgb_decoding_keeps_float32():
    assert srgb_to_linear(np.zeros(3, np.float32)).dtype == np.float32
