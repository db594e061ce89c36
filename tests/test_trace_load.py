import io
import struct
import zlib

import numpy as np
import pytest
from PIL import Image, ImageFile

from inkreach.errors import InkreachError
from inkreach.trace import Picture, load_image


def _png_chunk(kind, data):
    body = kind + data
    return struct.pack(">I", len(data)) + body + struct.pack(">I", zlib.crc32(body) & 0xFFFFFFFF)


def _iec_decode(c):
    """sRGB decoding written out from IEC 61966-2-1:1999 section 5.2."""
    c = np.asarray(c, dtype=float)
    return np.where(c <= 0.04045, c / 12.92, ((c + 0.055) / 1.055) ** 2.4)


# 8-bit grey levels and their decoded values, evaluated from IEC 61966-2-1:1999
# section 5.2 (10 falls on the linear segment, the others on the power law).
_GREY = [(0, 0.0), (10, 0.0030353), (64, 0.0512695), (128, 0.2158605), (188, 0.5028865),
         (255, 1.0)]


def _grey_blocks(levels, dtype=np.uint8):
    return np.repeat(np.repeat(np.array([levels], dtype), 8, axis=0), 8, axis=1)


@pytest.mark.parametrize("how", ["png-L", "array-uint8", "array-float"])
def test_grey_pictures_are_decoded_as_srgb(tmp_path, how):
    levels = [v for v, _ in _GREY]
    want = np.repeat([w for _, w in _GREY], 8)
    a = _grey_blocks(levels)
    if how == "png-L":
        path = tmp_path / "grey.png"
        Image.fromarray(a, mode="L").save(path)
        assert Image.open(path).mode == "L"
        src = path
    elif how == "array-uint8":
        src = a
    else:
        src = a / 255.0
    y = load_image(src).luminance
    np.testing.assert_allclose(y[0], want, atol=2e-6)


def test_sixteen_bit_grey_is_decoded_as_srgb(tmp_path):
    # 30000 / 65535 decodes to 0.1770148 (IEC 61966-2-1 power-law piece)
    a = np.full((16, 16), 30000, np.uint16)
    path = tmp_path / "grey16.png"
    Image.fromarray(a).save(path)
    assert load_image(path).luminance[0, 0] == pytest.approx(0.1770148, abs=2e-6)


def test_load_gives_linear_luminance_with_rec709_weights():
    # Rec. 709 / sRGB: Y = 0.2126 R + 0.7152 G + 0.0722 B of linear values
    # (IEC 61966-2-1 Annex / ITU-R BT.709), decoded by the standard's formula.
    a = np.zeros((10, 10, 3), np.uint8)
    a[..., 0], a[..., 1], a[..., 2] = 200, 100, 50
    y = load_image(a).luminance
    lin = _iec_decode(np.array([200, 100, 50]) / 255.0)
    assert y.dtype == np.float32
    np.testing.assert_allclose(y, 0.2126 * lin[0] + 0.7152 * lin[1] + 0.0722 * lin[2], atol=1e-6)


def test_exif_rotated_jpeg_comes_out_upright(tmp_path):
    # Orientation 6 (EXIF 2.3, tag 0x0112): the stored image must be turned
    # 90 degrees clockwise to show upright.
    a = np.full((40, 80, 3), 255, np.uint8)
    a[:, :20] = 0                       # dark band at the stored left edge
    exif = Image.Exif()
    exif[0x0112] = 6
    path = tmp_path / "turned.jpg"
    Image.fromarray(a).save(path, exif=exif, quality=95)
    pic = load_image(path)
    assert pic.original_size == (40, 80)       # (width, height) upright
    assert pic.luminance.shape == (80, 40)
    assert pic.luminance[:20].mean() < 0.1     # the band is now at the top
    assert pic.luminance[-20:].mean() > 0.9


def test_palette_png_transparency_becomes_white_paper(tmp_path):
    im = Image.new("P", (20, 20), 0)
    im.putpalette([0, 0, 0, 255, 0, 0] + [0] * (254 * 3))
    im.paste(1, (0, 0, 10, 20))
    path = tmp_path / "clear.png"
    im.save(path, transparency=0)
    y = load_image(path).luminance
    np.testing.assert_allclose(y[:, 12:], 1.0)                   # transparent -> white
    assert y[:, :8].mean() == pytest.approx(0.2126, abs=1e-3)   # opaque pure red


def test_rgba_alpha_is_composited_in_linear_light():
    a = np.zeros((10, 10, 4), np.uint8)
    a[..., 3] = 128
    assert load_image(a).luminance.mean() == pytest.approx(1 - 128 / 255, abs=1e-4)


def test_sixteen_bit_png_keeps_its_levels(tmp_path):
    a = np.tile(np.linspace(0, 65535, 64).astype(np.uint16), (16, 1))
    path = tmp_path / "deep.png"
    Image.fromarray(a).save(path)
    y = load_image(path).luminance
    np.testing.assert_allclose(y[0], _iec_decode(a[0] / 65535.0), atol=1e-5)


def test_cmyk_jpeg_is_read(tmp_path):
    im = Image.new("CMYK", (30, 20), (0, 0, 0, 255))        # full black ink
    im.paste((0, 0, 0, 0), (15, 0, 30, 20))                  # no ink
    path = tmp_path / "print.jpg"
    im.save(path, quality=95)
    y = load_image(path).luminance
    assert y[:, :10].mean() < 0.05 and y[:, 20:].mean() > 0.9


def test_animated_gif_gives_its_first_frame(tmp_path):
    frames = [Image.new("L", (20, 20), 0), Image.new("L", (20, 20), 255)]
    path = tmp_path / "anim.gif"
    frames[0].save(path, save_all=True, append_images=frames[1:], duration=100)
    assert load_image(path).luminance.max() < 0.05


@pytest.mark.parametrize("kind", ["PNG", "WEBP", "TIFF", "BMP"])
def test_common_formats_load(tmp_path, kind):
    path = tmp_path / f"pic.{kind.lower()}"
    Image.new("RGB", (16, 12), (255, 255, 255)).save(path, kind)
    pic = load_image(path)
    assert pic.original_size == (16, 12) and pic.name == path.name


def test_truncated_jpeg_is_refused(tmp_path):
    buf = io.BytesIO()
    rng = np.random.default_rng(0)
    Image.fromarray(rng.integers(0, 255, (200, 200, 3), dtype=np.uint8)).save(buf, "JPEG")
    path = tmp_path / "cut.jpg"
    path.write_bytes(buf.getvalue()[: len(buf.getvalue()) // 2])
    with pytest.raises(InkreachError, match="cut.jpg.*damaged or cut short"):
        load_image(path)


def test_text_named_png_is_refused(tmp_path):
    path = tmp_path / "notes.png"
    path.write_text("this is not a picture\n")
    with pytest.raises(InkreachError, match="notes.png.*not a picture"):
        load_image(path)


def test_empty_file_is_refused(tmp_path):
    path = tmp_path / "empty.png"
    path.write_bytes(b"")
    with pytest.raises(InkreachError, match="empty"):
        load_image(path)


def test_missing_file_and_folder_are_refused(tmp_path):
    with pytest.raises(InkreachError, match="no such file"):
        load_image(tmp_path / "nowhere.png")
    with pytest.raises(InkreachError, match="folder"):
        load_image(tmp_path)


def test_huge_header_png_is_refused_before_decoding(tmp_path, monkeypatch):
    # A PNG (ISO/IEC 15948) whose IHDR claims 60000 x 60000 8-bit grey pixels,
    # followed by a tiny IDAT: decoding it would need 3.6 GB.
    ihdr = struct.pack(">IIBBBBB", 60000, 60000, 8, 0, 0, 0, 0)
    data = (b"\x89PNG\r\n\x1a\n" + _png_chunk(b"IHDR", ihdr)
            + _png_chunk(b"IDAT", zlib.compress(b"\x00" * 100)) + _png_chunk(b"IEND", b""))
    path = tmp_path / "bomb.png"
    path.write_bytes(data)

    def no_decoding(self, *args, **kwargs):
        raise AssertionError("the pixels were decoded")

    # Refused from the header: Pillow's pixel decoding is never reached.
    monkeypatch.setattr(Image.Image, "load", no_decoding)
    monkeypatch.setattr(ImageFile.ImageFile, "load", no_decoding)
    with pytest.raises(InkreachError, match="bomb.png.*(too large|more than)"):
        load_image(path)


def test_too_small_picture_is_refused():
    with pytest.raises(InkreachError, match="too small"):
        load_image(np.zeros((5, 50), np.uint8))


def test_large_picture_is_shrunk_by_area_averaging_in_linear_light():
    # Alternating black and white columns average to linear 0.5, not sRGB 0.5.
    a = np.zeros((400, 2400), np.uint8)
    a[:, ::2] = 255
    pic = load_image(a, max_side=1200)
    assert pic.luminance.shape == (200, 1200)
    assert pic.luminance.mean() == pytest.approx(0.5, abs=1e-3)
    assert pic.scale == pytest.approx(0.5) and pic.original_size == (2400, 400)


def test_to_original_maps_pixel_centres():
    pic = load_image(np.zeros((300, 3000), np.uint8), max_side=1000)
    assert pic.scale_xy == (1000 / 3000, 100 / 300)
    np.testing.assert_allclose(pic.to_original([[0, 0], [999, 99]]),
                               [[1.0, 1.0], [2998.0, 298.0]])
    assert isinstance(pic, Picture)
    np.testing.assert_allclose(pic.ink, 1.0)


def test_float_and_pillow_sources():
    pic = load_image(np.full((10, 10), 0.5))
    assert pic.luminance.mean() == pytest.approx(0.214041, abs=1e-5)  # IEC 61966-2-1
    pic = load_image(Image.new("LA", (12, 12), (0, 0)))
    np.testing.assert_allclose(pic.luminance, 1.0)
    with pytest.raises(InkreachError, match="\\[0, 1\\]"):
        load_image(np.full((10, 10), 2.0))
    with pytest.raises(InkreachError, match="file path"):
        load_image(42)


# --- cases found by mutation testing (tests/MUTATION.md) ---------------------

@pytest.mark.parametrize("a, words", [
    (np.zeros((10, 10, 2), np.uint8), r"array: an array picture must be \(H, W\) or \(H, W, 3 or 4\)"),
    (np.full((10, 10), "x"), r"array: an array picture must be numeric, not <U1"),
    (np.full((10, 10), 300, np.int32), "array: an integer array picture must be uint8 or uint16"),
    (np.full((10, 10), -1, np.int32), "array: an integer array picture must be uint8 or uint16"),
    (np.full((10, 10), np.nan), "array: the array picture has NaN or infinite values"),
    (np.full((10, 10), 1.5), r"array: a float array picture must hold values in \[0, 1\]"),
])
def test_bad_arrays_are_refused_with_their_own_line(a, words):
    with pytest.raises(InkreachError, match=words):
        load_image(a)


def test_arrays_of_every_accepted_kind_decode_alike():
    # IEC 61966-2-1: 8-bit 128 decodes to 0.2158605 (see _GREY above); the
    # same level as int32, as uint16 (128 * 257) and as a float, as (H, W, 1)
    want = 0.2158605
    for a in (np.full((10, 10), 128, np.int32), np.full((10, 10), 0, np.int64) + 128,
              np.full((10, 10, 1), 128, np.uint8), np.full((10, 10), 128 * 257, np.uint16),
              np.full((10, 10), 128 / 255.0), np.full((10, 10), 128 / 255.0, np.float32)):
        assert load_image(a).luminance[0, 0] == pytest.approx(want, abs=2e-6), a.dtype
    # zeros are fine in an integer array (black)
    assert load_image(np.zeros((10, 10), np.int32)).luminance.max() == 0.0


def test_float_colour_arrays_decode_and_composite_on_white():
    # float sRGB (0.5, 0.5, 0.5) decodes to 0.2140411 (IEC 61966-2-1); half
    # transparent over white paper gives 0.5 * 0.2140411 + 0.5 in linear light
    rgb = np.full((10, 10, 3), 0.5)
    assert load_image(rgb).luminance[0, 0] == pytest.approx(0.2140411, abs=2e-6)
    rgba = np.concatenate([rgb, np.full((10, 10, 1), 0.5)], axis=2)
    assert load_image(rgba).luminance[0, 0] == pytest.approx(0.5 * 0.2140411 + 0.5, abs=2e-6)
    opaque = np.concatenate([rgb, np.ones((10, 10, 1))], axis=2)
    assert load_image(opaque).luminance[0, 0] == pytest.approx(0.2140411, abs=2e-6)


def test_pillow_modes_with_alpha_transparency_and_wide_values(tmp_path):
    # grey + alpha ("LA"): grey 0 half transparent over white -> 0.5 in linear light
    la = Image.fromarray(np.dstack([np.zeros((10, 10), np.uint8),
                                    np.full((10, 10), 128, np.uint8)]), mode="LA")
    assert load_image(la).luminance[0, 0] == pytest.approx(1 - 128 / 255, abs=1e-4)
    # RGB with a transparent colour (PNG tRNS): that colour is white paper
    rgb = Image.new("RGB", (10, 10), (0, 0, 0))
    path = tmp_path / "trns.png"
    rgb.save(path, transparency=(0, 0, 0))
    assert load_image(path).luminance.min() == pytest.approx(1.0)
    gray = Image.new("L", (10, 10), 0)
    path = tmp_path / "trns_l.png"
    gray.save(path, transparency=0)
    assert load_image(path).luminance.min() == pytest.approx(1.0)
    # 32-bit float ("F") in [0, 1]: decoded as sRGB like any other grey
    f = Image.fromarray(np.full((10, 10), 0.5, np.float32), mode="F")
    assert load_image(f).luminance[0, 0] == pytest.approx(0.2140411, abs=2e-6)
    # 32-bit integer ("I") above 16 bits: scaled by its own maximum
    i = Image.fromarray(np.array([[100000] * 10, [50000] * 10] * 5, np.int32), mode="I")
    y = load_image(i).luminance
    assert y[0, 0] == pytest.approx(1.0) and y[1, 0] == pytest.approx(0.2140411, abs=2e-6)
    # 16-bit exactly at full scale is white, not rescaled
    i16 = Image.fromarray(np.full((10, 10), 65535, np.int32), mode="I")
    assert load_image(i16).luminance[0, 0] == pytest.approx(1.0)


def test_file_errors_name_the_file_and_say_what_to_do(tmp_path):
    (tmp_path / "pics").mkdir()
    with pytest.raises(InkreachError, match=r"^pics: is a folder, not a picture; give the path"):
        load_image(tmp_path / "pics")
    (tmp_path / "empty.png").write_bytes(b"")
    with pytest.raises(InkreachError, match=r"^empty.png: the file is empty; give a PNG, JPEG, "
                                            r"WebP, TIFF, BMP or GIF picture"):
        load_image(tmp_path / "empty.png")
    (tmp_path / "notes.png").write_text("hello")
    with pytest.raises(InkreachError, match=r"^notes.png: is not a picture that can be read; "
                                            r"give a PNG, JPEG, WebP, TIFF, BMP or GIF file"):
        load_image(tmp_path / "notes.png")


def test_size_limits_are_checked_for_arrays_and_images():
    with pytest.raises(InkreachError, match=r"^array: the picture is 100x100 pixels, more than "
                                            r"5,000 allowed"):
        load_image(np.zeros((100, 100)), max_pixels=5000)
    with pytest.raises(InkreachError, match=r"^picture: the picture is 100x100 pixels, more than"):
        load_image(Image.new("L", (100, 100)), max_pixels=5000)
    assert load_image(np.zeros((20, 20)), max_side=8).luminance.shape == (8, 8)
    with pytest.raises(InkreachError, match="max_side must be at least 8"):
        load_image(np.zeros((20, 20)), max_side=7)
    with pytest.raises(InkreachError, match=r"give a file path, a Pillow image or a numpy array"):
        load_image(3.5)


# Cases found by the second mutation-testing round (tests/MUTATION.md).

def test_a_very_thin_picture_shrinks_to_one_row_or_column_of_box_means():
    # 8 x 80 pixels shrunk to a long side of 8: the short side is 0.8 px and
    # rounds to one row.  OpenCV's INTER_AREA at a whole factor is the box mean
    # (OpenCV documentation, cv::resize, "resampling using pixel area
    # relation"); the mean is taken here by hand in linear light from the
    # IEC 61966-2-1:1999 decoding.
    levels = np.repeat(np.arange(0, 240, 30, dtype=np.uint8), 10)   # 8 blocks of 10 columns
    a = np.repeat(levels[None, :], 8, axis=0)
    pic = load_image(a, max_side=8)
    assert pic.luminance.shape == (1, 8)
    want = _iec_decode(a / 255.0).reshape(1, 8, 8, 10).mean(axis=(1, 3))
    np.testing.assert_allclose(pic.luminance, want, atol=1e-6)
    # and the same picture standing up: one column
    tall = load_image(np.ascontiguousarray(a.T), max_side=8)
    assert tall.luminance.shape == (8, 1)
    np.testing.assert_allclose(tall.luminance, want.T, atol=1e-6)


def test_native_order_sixteen_bit_pillow_image_is_decoded_as_srgb():
    # Pillow's "I;16N" is 16-bit grey in the machine's byte order (Pillow
    # handbook, "Modes"); its levels are v / 65535 sRGB, IEC 61966-2-1:1999 5.2.
    v = np.array([[0, 10000, 32768, 65535]] * 8, np.uint16).repeat(2, axis=1)
    im = Image.frombytes("I;16N", (8, 8), v.tobytes())
    assert im.mode == "I;16N"
    lum = load_image(im).luminance
    np.testing.assert_allclose(lum, _iec_decode(v / 65535.0), atol=1e-6)


def test_decompression_bomb_message_gives_whole_megapixels(tmp_path, monkeypatch):
    # Pillow raises DecompressionBombError above twice Image.MAX_IMAGE_PIXELS
    # (Pillow reference, Image.open); the message names the allowed size in
    # whole megapixels (max_pixels // 10**6).
    monkeypatch.setattr(Image, "MAX_IMAGE_PIXELS", 1000)
    Image.new("L", (100, 100)).save(tmp_path / "big.png")
    with pytest.raises(InkreachError, match=r"^big.png: the picture is far too large; "
                                            r"shrink it below 40 megapixels$"):
        load_image(tmp_path / "big.png")
    with pytest.raises(InkreachError, match=r"shrink it below 2 megapixels$"):
        load_image(tmp_path / "big.png", max_pixels=2_500_000)


def test_a_path_ending_in_a_separator_is_named_in_full(tmp_path):
    # os.path.basename gives "" for a path ending in a separator (Python
    # documentation, os.path.basename), so the message names the whole path.
    (tmp_path / "pics").mkdir()
    where = str(tmp_path / "pics") + "/"
    with pytest.raises(InkreachError) as err:
        load_image(where)
    assert str(err.value) == (f"{where}: is a folder, not a picture; "
                              "give the path of an image file")


def test_an_unreadable_file_names_the_system_error(tmp_path, monkeypatch):
    # Image.open lets OSError through for a file the system will not read
    # (Pillow reference, Image.open, "Raises"); the tests run as root, where
    # file permissions do not stop reading, so the error is raised by hand.
    path = tmp_path / "locked.png"
    Image.new("L", (10, 10)).save(path)

    def refuse(*args, **kwargs):
        raise PermissionError(13, "Permission denied")

    monkeypatch.setattr(Image, "open", refuse)
    with pytest.raises(InkreachError) as err:
        load_image(path)
    assert str(err.value) == ("locked.png: could not be read ([Errno 13] Permission denied); "
                              "check the file")


def test_a_loaded_picture_is_regridded_as_its_original_would_be():
    # Reference: OpenCV's INTER_AREA keeps the mean of linear light (area
    # averaging); the regridded picture must have the shape and scale that
    # loading the original at the same max_side gives, and nearly its pixels
    # (bound ours: two area averages in a row differ from one by a small part
    # of the local contrast; the test picture is a smooth ramp plus a square).
    yy, xx = np.mgrid[0:900, 0:1300]
    a = (40 + 200 * xx / 1300).astype(np.uint8)
    a[300:600, 400:800] = 20
    big = load_image(a, max_side=1200)
    direct = load_image(a, max_side=512)
    again = load_image(big, max_side=512)
    assert again.shape == direct.shape
    assert again.original_size == direct.original_size == (1300, 900)
    np.testing.assert_allclose(again.scale_xy, direct.scale_xy)
    assert again.scale == pytest.approx(direct.scale)
    assert float(again.luminance.mean()) == pytest.approx(float(direct.luminance.mean()), abs=1e-3)
    assert np.percentile(np.abs(again.luminance - direct.luminance), 99) < 0.05
    assert load_image(direct, max_side=1200) is direct        # never enlarged, not copied
    assert load_image(direct, max_side=None) is direct
