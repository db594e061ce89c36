"""simulated.png: true ink coverage, sRGB-encoded, with its resolution, checked against
outside references (plane geometry, IEC 61966-2-1, CIE 1976 L*, the PNG specification)."""

import io
import struct

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from PIL import Image

from inkreach.export import encode_srgb8, png_bytes, simulated_png, stroke_coverage


def _srgb_decode(code):
    # IEC 61966-2-1:1999, section 5.2 (sRGB to linear), written out here on purpose.
    c = np.asarray(code, float) / 255.0
    return np.where(c <= 0.04045, c / 12.92, ((c + 0.055) / 1.055) ** 2.4)


def _cie_lstar(Y):
    # CIE 15:2004 (CIE 1976 L*), white Y_n = 1, written out here on purpose.
    Y = np.asarray(Y, float)
    e = (6 / 29) ** 3
    f = np.where(Y > e, np.cbrt(Y), Y / (3 * (6 / 29) ** 2) + 4 / 29)
    return 116 * f - 16


def test_the_references_of_this_file_match_worked_values():
    # Worked values computed by hand from the published formulas: L*(0.18) = 116 *
    # 0.18^(1/3) - 16 = 49.496; L* at the knee Y = (6/29)^3 = 0.008856 is 8.0;
    # L*(1) = 100. sRGB code 188 decodes to ((188/255 + 0.055)/1.055)^2.4 = 0.5029.
    np.testing.assert_allclose(_cie_lstar([0.18, (6 / 29) ** 3, 1.0]), [49.496, 8.0, 100.0],
                               atol=1e-3)
    np.testing.assert_allclose(_srgb_decode([0, 188, 255]), [0.0, 0.5029, 1.0], atol=1e-4)


def test_linear_light_is_encoded_with_the_iec_61966_2_1_transfer_function():
    # IEC 61966-2-1 encoding, values worked by hand: 0.5 -> 1.055 * 0.5^(1/2.4) - 0.055
    # = 0.73536 -> code 187.5 -> 188; 0.18 -> 0.46137 -> 117.65 -> 118; 0.002 is on the
    # linear part: 12.92 * 0.002 = 0.02584 -> 6.59 -> 7; 0.05 -> 0.24784 -> 63.2 -> 63.
    assert encode_srgb8([0.0, 0.002, 0.05, 0.18, 0.5, 1.0]).tolist() == [0, 7, 63, 118, 188, 255]


@settings(max_examples=25, deadline=None)
@given(x=st.floats(5, 15), y=st.floats(5, 15), angle=st.floats(0.02, np.pi - 0.02),
       length=st.floats(0, 40), pen=st.floats(1.0, 8.0))
def test_coverage_of_a_line_is_the_area_of_a_rectangle_with_round_ends(x, y, angle, length,
                                                                        pen):
    # Plane geometry: the points within r of a segment of length L form a stadium of
    # area 2 r L + pi r^2 (a dot: pi r^2). The bound 0.5 % is our own: the coverage is
    # exact along each sampled line and at least 16 lines are sampled per pixel; the
    # 0.05 px^2 more is for the tiniest shapes, where a flat edge between two lines
    # (up to 1/32 px off along its length) is most of the error.
    u = np.array([np.cos(angle), np.sin(angle)])
    a = np.array([x, y]) + 30 - length / 2 * u      # inside the 80 x 80 picture
    b = a + length * u
    cov = stroke_coverage([np.array([a, b])], (80, 80), pen)
    r = pen / 2
    assert cov.sum() == pytest.approx(2 * r * length + np.pi * r * r, rel=5e-3, abs=0.05)
    assert cov.max() <= 1.0


@pytest.mark.parametrize("y", [20.0, 20.37, 20.5, 20.81])
@pytest.mark.parametrize("pen", [1.75, 3.0, 4.3])
def test_flat_edges_are_off_by_at_most_half_a_sampled_line(y, pen):
    # A horizontal stroke has two flat edges, each placed to within half the spacing
    # of the sampled lines (at least 16 per pixel): at most 2 * (L + pen) / 32 px^2
    # (the caps' share is smaller). A vertical one is exact along each line.
    L, r = 20.0, pen / 2
    area = 2 * r * L + np.pi * r * r
    h = stroke_coverage([np.array([[10.0, y], [10.0 + L, y]])], (40, 40), pen)
    assert abs(h.sum() - area) <= 2 * (L + pen) / 32
    v = stroke_coverage([np.array([[y, 10.0], [y, 10.0 + L]])], (40, 40), pen)
    assert v.sum() == pytest.approx(area, abs=2 * np.pi * r / 32)


def test_a_pixel_aligned_band_covers_whole_and_half_pixels_exactly():
    # Plane geometry: a band 3 px wide centred on a pixel centre covers that pixel and
    # its two neighbours whole; centred on a pixel edge, 1 + 1 whole and 2 halves.
    cov = stroke_coverage([np.array([[-5.0, 10.0], [40.0, 10.0]])], (20, 30), 3.0)
    np.testing.assert_allclose(cov[8:13, 15], [0, 1, 1, 1, 0], atol=1e-6)
    cov = stroke_coverage([np.array([[-5.0, 10.5], [40.0, 10.5]])], (20, 30), 3.0)
    np.testing.assert_allclose(cov[8:14, 15], [0, 0.5, 1, 1, 0.5, 0], atol=1e-6)


def test_overlapping_strokes_ink_their_union_once():
    # Plane geometry: two perpendicular bands of width 2r crossing at their middles
    # share exactly a 2r x 2r square; the same stroke twice inks what it inks once.
    r, L = 1.5, 30.0
    h = np.array([[10.0, 25.0], [10.0 + L, 25.0]])
    v = np.array([[25.0, 10.0], [25.0, 10.0 + L]])
    one = stroke_coverage([h], (50, 50), 2 * r)
    both = stroke_coverage([h, v], (50, 50), 2 * r)
    stadium = 2 * r * L + np.pi * r * r
    assert both.sum() == pytest.approx(2 * stadium - (2 * r) ** 2, rel=2e-3)
    assert both.max() <= 1.0
    np.testing.assert_allclose(stroke_coverage([h, h[::-1]], (50, 50), 2 * r), one, atol=1e-6)


def test_hatched_patch_has_the_mean_lightness_of_its_coverage():
    # Murray-Davies: black lines covering a share a of white paper reflect 1 - a of the
    # light. A pen of 0.5 mm every 2 mm covers a = 0.25, so Y = 0.75 and, by the CIE
    # 1976 formula, L* = 116 * 0.75^(1/3) - 16 = 89.39. The PNG is decoded with the IEC
    # formula; 0.3 L* (our bound) allows for the rounding to 8-bit codes.
    lines = [np.array([[0.0, y], [40.0, y]]) for y in np.arange(0.0, 40.0, 2.0)]
    img = simulated_png(lines, 0.5, px_per_mm=7.3, bounds=(-2.0, 42.0, -2.0, 42.0))
    a = np.asarray(img)
    patch = a[int(8 * 7.3):int(34 * 7.3), int(8 * 7.3):int(34 * 7.3)]  # whole periods
    Y = _srgb_decode(patch).mean()
    assert Y == pytest.approx(0.75, abs=0.01)
    assert _cie_lstar(Y) == pytest.approx(89.39, abs=0.3)


def test_resolution_is_stated_in_the_png_phys_chunk():
    # PNG specification (W3C, 2003) 11.3.5.3: pHYs holds pixels per unit x, y (4-byte
    # big-endian each) and a unit byte, 1 = metre. Read back with Pillow as dots per inch.
    img = simulated_png([np.array([[0.0, 0.0], [30.0, 10.0]])], 0.5, px_per_mm=6.0)
    data = png_bytes(img)
    back = Image.open(io.BytesIO(data))
    assert back.info["dpi"][0] == pytest.approx(6.0 * 25.4, abs=0.03)
    i = data.index(b"pHYs")
    x, y, unit = struct.unpack(">IIB", data[i + 4:i + 13])
    assert (x, y, unit) == (6000, 6000, 1)


def test_picture_is_the_ink_box_with_equal_margins_on_every_side():
    pen, ppm, margin = 0.5, 10.0, 2.0
    img = simulated_png([np.array([[0.0, 0.0], [30.0, 12.0]])], pen, px_per_mm=ppm)
    a = np.asarray(img)
    rows = np.flatnonzero(a.min(axis=1) < 255)
    cols = np.flatnonzero(a.min(axis=0) < 255)
    gaps = [rows[0], a.shape[0] - 1 - rows[-1], cols[0], a.shape[1] - 1 - cols[-1]]
    assert max(gaps) - min(gaps) <= 1                        # equal on every side ...
    assert min(gaps) == pytest.approx(margin * ppm, abs=1.5)  # ... and 2 mm wide
    assert img.size == (int(np.ceil((30 + pen + 2 * margin) * ppm)),
                        int(np.ceil((12 + pen + 2 * margin) * ppm)))


def test_pen_up_rows_leave_no_ink_on_the_paper():
    # Pen down along y = 0, up through a detour at y = 20, down again along y = 0.
    xy = np.array([[0, 0], [10, 0], [10, 10], [10, 20], [20, 20], [30, 20], [30, 10],
                   [30, 0], [40, 0]], float)
    pen = np.array([1, 1, 0, 0, 0, 0, 0, 1, 1])
    img = simulated_png(xy, pen, 0.5, px_per_mm=5.0, bounds=(-5.0, 45.0, -5.0, 25.0))
    a = np.asarray(img)
    assert a[:int(20 * 5)].min() == 255          # nothing above y = 5 mm: the detour is dry
    assert a[int(24 * 5):].min() < 60            # the two pen-down pieces are inked
    assert a[int(24 * 5):, int(20 * 5):int(25 * 5)].min() == 255   # and not joined


@settings(max_examples=20, deadline=None)
@given(pts=st.lists(st.tuples(st.floats(0, 30), st.floats(0, 30)), min_size=2, max_size=12),
       cut=st.integers(1, 11), pen=st.floats(0.8, 5.0))
def test_more_ink_never_lightens_a_pixel_and_coverage_stays_within_0_and_1(pts, cut, pen):
    # Invariant of a union: adding strokes can only ink more of every pixel.
    p = np.array(pts, float)
    a, b = p[:min(cut, len(p) - 1) + 1], p[min(cut, len(p) - 1):]
    one = stroke_coverage([a], (32, 32), pen)
    both = stroke_coverage([a, b], (32, 32), pen)
    assert one.min() >= 0 and both.max() <= 1
    assert (both >= one - 1e-6).all()
