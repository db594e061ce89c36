"""Reading an upload: the body within its size and time, the form, the picture."""

import asyncio
import io
import threading

from starlette.datastructures import UploadFile
from starlette.requests import ClientDisconnect

from .errors import ApiError, one_line

__all__ = ["MAX_ARM_BYTES", "sniff_picture", "read_body", "parse_form", "field_text"]


MAX_ARM_BYTES = 200_000


def sniff_picture(data, max_pixels):
    """Open an upload as a picture (lazily), checking its header size first."""
    from PIL import Image, UnidentifiedImageError

    if not data:
        raise ApiError(400, "the picture is empty; choose a PNG or JPEG file")
    try:
        with _pil_limit(max_pixels):
            im = Image.open(io.BytesIO(data))
    except Image.DecompressionBombError:
        raise ApiError(413, f"the picture is far too large; shrink it below "
                            f"{max_pixels // 1_000_000} megapixels") from None
    except (UnidentifiedImageError, Image.DecompressionBombError, OSError, ValueError,
            SyntaxError):
        raise ApiError(415, "the upload is not a picture this page can read; "
                            "send a PNG, JPEG, GIF, BMP, TIFF or WebP file") from None
    w, h = im.size
    if w * h > max_pixels:
        raise ApiError(413, f"the picture is far too large ({w}x{h} pixels); shrink it "
                            f"below {max_pixels // 1_000_000} megapixels")
    try:
        im.load()
    except (OSError, ValueError, SyntaxError):
        raise ApiError(415, "the picture file is damaged or cut off; "
                            "save it again and send the whole file") from None
    return im


class _pil_limit:
    """Let Pillow refuse pictures larger than ``max_pixels`` while the upload is opened."""

    _lock = threading.Lock()

    def __init__(self, max_pixels):
        self.max_pixels = max_pixels

    def __enter__(self):
        from PIL import Image
        self._lock.acquire()
        self._old = Image.MAX_IMAGE_PIXELS
        Image.MAX_IMAGE_PIXELS = max(self._old or 0, self.max_pixels)

    def __exit__(self, *exc):
        from PIL import Image
        Image.MAX_IMAGE_PIXELS = self._old
        self._lock.release()


async def read_body(request, limit, timeout=None):
    """The whole request body, refusing more than ``limit`` bytes as it arrives.

    A body not complete within ``timeout`` seconds gets 408 (a stalled or
    very slow upload must not hold its memory for ever).
    """
    if timeout is None:
        return await _read_body_now(request, limit)
    try:
        async with asyncio.timeout(timeout):
            return await _read_body_now(request, limit)
    except TimeoutError:
        raise ApiError(408, f"the upload took longer than {timeout:g} s; send it again "
                            "over a faster connection", headers={"Connection": "close"}) \
            from None


async def _read_body_now(request, limit):
    declared = request.headers.get("content-length")
    n_declared = None
    if declared is not None:
        try:
            n_declared = int(declared)
        except ValueError:
            raise ApiError(400, "the Content-Length header is not a number") from None
        if n_declared > limit:
            raise ApiError(413, f"the upload is larger than {limit // 1_000_000} MB; "
                                "send a smaller picture")
    chunks, size = [], 0
    try:
        async for chunk in request.stream():
            size += len(chunk)
            if size > limit:
                raise ApiError(413, f"the upload is larger than {limit // 1_000_000} MB; "
                                    "send a smaller picture")
            chunks.append(chunk)
    except ClientDisconnect:
        raise ApiError(400, "the upload was cut off; send the picture again") from None
    if n_declared is not None and size != n_declared:
        raise ApiError(400, "the upload was cut off; send the picture again")
    return b"".join(chunks)


async def parse_form(request, body):
    """Parse a buffered multipart body, keeping every part in memory (never on disk)."""
    from starlette.formparsers import MultiPartException, MultiPartParser

    async def stream():
        yield body

    parser = MultiPartParser(request.headers, stream(), max_files=4, max_fields=64,
                             max_part_size=1_000_000)
    parser.spool_max_size = len(body) + 1  # uploads stay in memory
    try:
        return await parser.parse()
    except MultiPartException as exc:
        raise ApiError(400, f"the form could not be read ({one_line(exc.message, 120)}); "
                            "the upload may have been cut off") from None
    except Exception as exc:
        raise ApiError(400, f"the form could not be read ({one_line(exc, 120)}); "
                            "the upload may have been cut off") from None


async def field_text(value, what, limit):
    if isinstance(value, UploadFile):
        data = await value.read(limit + 1)
        if len(data) > limit:
            raise ApiError(413, f"the {what} is larger than {limit // 1000} kB")
        try:
            return data.decode("utf-8-sig")
        except UnicodeDecodeError:
            raise ApiError(400, f"the {what} is not UTF-8 text; save it as plain text") from None
    return value
