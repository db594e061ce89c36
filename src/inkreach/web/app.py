"""The JSON API and the page, as a FastAPI application."""

import asyncio
import io
import logging
import re
import threading
from collections import OrderedDict
from concurrent.futures import ThreadPoolExecutor
from contextlib import asynccontextmanager
from importlib import resources

import numpy as np
from fastapi import FastAPI, Request
from fastapi.exceptions import RequestValidationError
from fastapi.responses import FileResponse, JSONResponse, Response
from starlette.datastructures import UploadFile
from starlette.exceptions import HTTPException as StarletteHTTPException
from starlette.requests import ClientDisconnect

from ..errors import InkreachError
from ..vector import looks_like_svg
from .forms import parse_options
from .preview import preview_data
from .store import PlanStore, content_type

__all__ = ["create_app"]

_log = logging.getLogger("inkreach.web")

_STATIC = {
    "index.html": "text/html; charset=utf-8",
    "app.js": "text/javascript; charset=utf-8",
    "style.css": "text/css; charset=utf-8",
    "favicon.svg": "image/svg+xml",
}
_CSP = ("default-src 'self'; img-src 'self' data: blob:; style-src 'self'; "
        "script-src 'self'; connect-src 'self'; object-src 'none'; base-uri 'none'; "
        "frame-ancestors 'none'; form-action 'self'")
_PROGRESS_ID = re.compile(r"^[A-Za-z0-9_-]{8,64}$")
_MAX_ARM_BYTES = 200_000


class _ApiError(Exception):
    def __init__(self, status, message, headers=None):
        super().__init__(message)
        self.status, self.message, self.headers = status, message, headers


def _one_line(text, limit=300):
    s = " ".join(str(text).split())
    return s[:limit] or "something went wrong"


def _error(status, message, headers=None):
    return JSONResponse({"error": _one_line(message)}, status_code=status, headers=headers)


def _jsonable(v):
    if isinstance(v, dict):
        return {str(k): _jsonable(x) for k, x in v.items()}
    if isinstance(v, (list, tuple)):
        return [_jsonable(x) for x in v]
    if isinstance(v, np.ndarray):
        return _jsonable(v.tolist())
    if isinstance(v, np.generic):
        v = v.item()
    if isinstance(v, float) and not np.isfinite(v):
        return None
    return v


def _default_planner(image, arm=None, style="outline", progress=None, **options):
    from ..plan import plan
    return plan(image, arm=arm, style=style, progress=progress, **options)


def _style_table():
    """Styles, what they render, and their options with labels and units (the arm
    sets the pen width, so it is left out)."""
    from ..trace import style_catalogue

    return _jsonable(style_catalogue())


_COMMON = [
    ("size", "length of the drawing's longer side in mm, 1 to 5000 (empty: as large as fits)"),
    ("paper", "paper rectangle in arm mm: x, y, width, height (empty: no paper, the whole "
              "usable region)"),
    ("margin", "keep this many mm clear inside the paper's edge, 0 to 1000 (needs paper)"),
    ("prefer", "'largest' drawing, or 'isotropic' for the best-conditioned spot"),
    ("tip_speed", "pen speed while drawing, mm/s, 0.01 to 10000 (empty: as fast as the motors "
                  "allow)"),
    ("chord_tol", "largest gap between the drawn chord and the true line, mm, 0.005 to 10 "
                  "(finer no motor follows)"),
    ("tilt", "'true' also tries tilted drawings, which may draw larger; then lay the "
             "paper turned as the figures say"),
    ("signals", "motor signals to make: auto (from the arm file), servo, stepper, both or "
                "none"),
]


def _common_options():
    from ..plan import MOTION_OPTIONS, PLACE_OPTIONS

    from ..trace import option_label

    defaults = {**PLACE_OPTIONS, **MOTION_OPTIONS, "signals": "auto"}
    return [{"name": k, "label": option_label(k)[0], "unit": option_label(k)[1],
             "default": _jsonable(defaults.get(k)), "help": h} for k, h in _COMMON]


def _resolve_arm(value):
    """An Arm from a built-in name or arm-file text; never from a server path."""
    from ..arms import example_arms, load_arm, parse_arm

    if value is None:
        return None
    text = value.strip()
    if not text:
        return None
    if text in example_arms():
        return load_arm(text)
    if "=" not in text and "\n" not in text:
        raise InkreachError(f"arm {text[:40]!r} is not a built-in arm; use one of "
                            f"{', '.join(example_arms())}, or send the arm file's TOML text")
    return parse_arm(text, source="the uploaded arm file")


def _sniff_picture(data, max_pixels):
    """Open an upload as a picture (lazily), checking its header size first."""
    from PIL import Image, UnidentifiedImageError

    if not data:
        raise _ApiError(400, "the picture is empty; choose a PNG or JPEG file")
    try:
        with _pil_limit(max_pixels):
            im = Image.open(io.BytesIO(data))
    except Image.DecompressionBombError:
        raise _ApiError(413, f"the picture is far too large; shrink it below "
                             f"{max_pixels // 1_000_000} megapixels") from None
    except (UnidentifiedImageError, Image.DecompressionBombError, OSError, ValueError,
            SyntaxError):
        raise _ApiError(415, "the upload is not a picture this page can read; "
                             "send a PNG, JPEG, GIF, BMP, TIFF or WebP file") from None
    w, h = im.size
    if w * h > max_pixels:
        raise _ApiError(413, f"the picture is far too large ({w}x{h} pixels); shrink it "
                             f"below {max_pixels // 1_000_000} megapixels")
    try:
        im.load()
    except (OSError, ValueError, SyntaxError):
        raise _ApiError(415, "the picture file is damaged or cut off; "
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


class _Progress:
    """Latest stage of each running plan, by the id the page chose."""

    def __init__(self, keep=64):
        self._d = OrderedDict()
        self._lock = threading.Lock()
        self.keep = keep

    def set(self, token, stage, done=0, total=1):
        if token is None:
            return
        with self._lock:
            self._d[token] = {"stage": str(stage), "done": _jsonable(done),
                              "total": _jsonable(total)}
            self._d.move_to_end(token)
            while len(self._d) > self.keep:
                self._d.popitem(last=False)

    def get(self, token):
        with self._lock:
            return self._d.get(token)


async def _read_body(request, limit, timeout=None):
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
        raise _ApiError(408, f"the upload took longer than {timeout:g} s; send it again "
                             "over a faster connection", headers={"Connection": "close"}) \
            from None


async def _read_body_now(request, limit):
    declared = request.headers.get("content-length")
    n_declared = None
    if declared is not None:
        try:
            n_declared = int(declared)
        except ValueError:
            raise _ApiError(400, "the Content-Length header is not a number") from None
        if n_declared > limit:
            raise _ApiError(413, f"the upload is larger than {limit // 1_000_000} MB; "
                                 "send a smaller picture")
    chunks, size = [], 0
    try:
        async for chunk in request.stream():
            size += len(chunk)
            if size > limit:
                raise _ApiError(413, f"the upload is larger than {limit // 1_000_000} MB; "
                                     "send a smaller picture")
            chunks.append(chunk)
    except ClientDisconnect:
        raise _ApiError(400, "the upload was cut off; send the picture again") from None
    if n_declared is not None and size != n_declared:
        raise _ApiError(400, "the upload was cut off; send the picture again")
    return b"".join(chunks)


async def _parse_form(request, body):
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
        raise _ApiError(400, f"the form could not be read ({_one_line(exc.message, 120)}); "
                             "the upload may have been cut off") from None
    except Exception as exc:
        raise _ApiError(400, f"the form could not be read ({_one_line(exc, 120)}); "
                             "the upload may have been cut off") from None


async def _field_text(value, what, limit):
    if isinstance(value, UploadFile):
        data = await value.read(limit + 1)
        if len(data) > limit:
            raise _ApiError(413, f"the {what} is larger than {limit // 1000} kB")
        try:
            return data.decode("utf-8-sig")
        except UnicodeDecodeError:
            raise _ApiError(400, f"the {what} is not UTF-8 text; save it as plain text") from None
    return value


class _Abandoned(Exception):
    """The client went away; the plan stops at its next stage."""


async def _unless_abandoned(request, fut, cancel, poll=0.25):
    """Wait for ``fut``; if the client disconnects first, tell the work to stop."""
    while True:
        done, _ = await asyncio.wait({fut}, timeout=poll)
        if done:
            return fut.result()
        gone = request.scope.get("inkreach.gone")
        if (gone is not None and gone.is_set()) or await request.is_disconnected():
            cancel.set()
            try:
                return await fut
            except _Abandoned:
                raise
            except Exception:
                raise _Abandoned() from None


def create_app(tmp_root=None, max_upload_bytes=25_000_000, max_pixels=40_000_000, *,
               planner=None, workers=2, queue_limit=4, keep=20, preview_points=8000,
               allowed_hosts=None, token=None, body_timeout=60.0, max_uploads=4):
    """Build the web application: the page and its JSON API.

    Parameters
    ----------
    tmp_root : str, optional
        Folder in which the private results folder is made (the system temp
        folder when None).
    max_upload_bytes : int
        Largest request body accepted; larger ones get 413.
    max_pixels : int
        Largest picture (width x height) accepted.
    planner : callable, optional
        ``planner(image, arm=None, style=..., progress=None, **options) ->
        Plan``; :func:`inkreach.plan.plan` when None.
    workers : int
        Plans computed at once (a thread pool of this size).
    queue_limit : int
        Plans allowed to wait for a worker; more get 503.
    keep : int
        Finished plans kept for download; the oldest is removed first.
    preview_points : int
        Budget of stroke points in the JSON answer.
    allowed_hosts : sequence of str, optional
        Host names the server answers to (others get 400), a guard against
        DNS rebinding; no check when None.
    token : str, optional
        Access token every API request must carry (cookie or header); see
        :class:`inkreach.web.guards.GuardMiddleware`. POSTs from another
        origin are refused (403) either way.
    body_timeout : float
        Seconds allowed to read one request body; slower uploads get 408.
    max_uploads : int
        Request bodies read at once; more wait (up to ``body_timeout``), then
        get 503. With ``max_upload_bytes`` this bounds the memory uploads hold.

    Returns
    -------
    fastapi.FastAPI
    """
    plans = PlanStore(tmp_root, keep=keep)
    executor = ThreadPoolExecutor(max_workers=max(1, int(workers)),
                                  thread_name_prefix="inkreach-plan")
    slots = threading.BoundedSemaphore(max(1, int(workers)) + max(0, int(queue_limit)))
    progress = _Progress()
    run_plan = planner or _default_planner

    def shutdown():
        executor.shutdown(wait=False, cancel_futures=True)
        plans.close()

    @asynccontextmanager
    async def lifespan(app):
        yield
        shutdown()

    app = FastAPI(title="inkreach", lifespan=lifespan, docs_url=None, redoc_url=None,
                  openapi_url=None)
    app.state.store = plans
    app.state.shutdown = shutdown

    from .guards import GuardMiddleware
    app.add_middleware(GuardMiddleware, token=token)
    uploads = asyncio.Semaphore(max(1, int(max_uploads)))

    if allowed_hosts is not None:
        from starlette.middleware.trustedhost import TrustedHostMiddleware
        app.add_middleware(TrustedHostMiddleware, allowed_hosts=list(allowed_hosts))

    @app.middleware("http")
    async def _headers(request, call_next):
        try:
            response = await call_next(request)
        except Exception as exc:  # anything that slipped past the handlers
            _log.exception("unexpected error")
            response = _error(500, f"internal error: {type(exc).__name__}; "
                                   "the server is still running, try again")
        response.headers.setdefault("X-Content-Type-Options", "nosniff")
        response.headers.setdefault("Content-Security-Policy", _CSP)
        response.headers.setdefault("Referrer-Policy", "no-referrer")
        return response

    @app.exception_handler(_ApiError)
    async def _api_error(request, exc):
        return _error(exc.status, exc.message, exc.headers)

    @app.exception_handler(InkreachError)
    async def _user_error(request, exc):
        return _error(400, exc)

    @app.exception_handler(StarletteHTTPException)
    async def _http_error(request, exc):
        msg = {404: "not found", 405: "method not allowed"}.get(exc.status_code, exc.detail)
        return _error(exc.status_code, msg)

    @app.exception_handler(RequestValidationError)
    async def _validation_error(request, exc):
        return _error(400, "the request is not valid; check its fields")

    @app.exception_handler(OSError)
    async def _environment(request, exc):
        from ..cli_errors import environment_message
        _log.warning("environment error: %s", exc)
        return _error(503, environment_message(exc))

    @app.exception_handler(MemoryError)
    async def _memory(request, exc):
        from ..cli_errors import environment_message
        return _error(503, environment_message(exc))

    @app.exception_handler(_Abandoned)
    async def _abandoned(request, exc):
        return _error(400, "the request was abandoned")

    @app.exception_handler(Exception)
    async def _unexpected(request, exc):
        _log.exception("unexpected error")
        return _error(500, f"internal error: {type(exc).__name__}; "
                           "the server is still running, try again")

    # ---- the page -------------------------------------------------------------
    static = resources.files("inkreach.web").joinpath("static")

    def _static(name):
        ref = static.joinpath(name)
        try:
            data = ref.read_bytes()
        except (FileNotFoundError, IsADirectoryError, OSError):
            raise _ApiError(404, "not found") from None
        return Response(data, media_type=_STATIC[name],
                        headers={"Cache-Control": "no-cache"})

    @app.get("/", include_in_schema=False)
    async def index():
        return _static("index.html")

    @app.get("/static/{name}", include_in_schema=False)
    async def static_file(name: str):
        if name not in _STATIC:
            raise _ApiError(404, "not found")
        return _static(name)

    @app.get("/favicon.ico", include_in_schema=False)
    async def favicon():
        return _static("favicon.svg")

    # ---- the API --------------------------------------------------------------
    @app.get("/api/arms")
    async def arms():
        from ..arms import example_arms
        from ..arms.armfile import builtin_arm_text
        return {"arms": [{"name": n, "toml": builtin_arm_text(n)} for n in example_arms()],
                "default": example_arms()[0]}

    @app.get("/api/styles")
    async def styles():
        table = await asyncio.get_running_loop().run_in_executor(None, _style_table)
        return {"styles": table, "common": _common_options()}

    @app.get("/api/progress/{token}")
    async def get_progress(token: str):
        if not _PROGRESS_ID.match(token):
            raise _ApiError(404, "not found")
        p = progress.get(token)
        if p is None:
            return {"stage": "waiting", "done": 0, "total": 1}
        return p

    @app.post("/api/plans")
    async def post_plan(request: Request):
        ctype = request.headers.get("content-type", "")
        if not ctype.lower().startswith("multipart/form-data"):
            raise _ApiError(415, "send the picture as multipart/form-data with a field "
                                 "named image")
        ptoken = request.headers.get("x-progress-id")
        if ptoken is not None and not _PROGRESS_ID.match(ptoken):
            ptoken = None
        try:
            await asyncio.wait_for(uploads.acquire(), timeout=body_timeout)
        except TimeoutError:
            raise _ApiError(503, "the server is busy receiving other uploads; try again in a "
                                 "few seconds", headers={"Retry-After": "5"}) from None
        try:
            body = await _read_body(request, max_upload_bytes, body_timeout)
        finally:
            uploads.release()
        form = await _parse_form(request, body)
        del body
        try:
            image = form.get("image")
            lines = {k: form.get(k) for k in ("text", "caption", "font", "align")
                     if isinstance(form.get(k), str) and form.get(k).strip()}
            if image is None and "text" in lines:
                data = None
            elif not isinstance(image, UploadFile):
                raise _ApiError(400, "no picture: send the file in a form field named image, "
                                     "or text in a field named text")
            else:
                data = await image.read()  # the file name is never used
                if (image.content_type or "").lower().startswith("text/") and \
                        not looks_like_svg(data):
                    raise _ApiError(415, "the upload is text, not a picture; "
                                         "send a PNG, JPEG, GIF, BMP, TIFF, WebP or SVG file")
            style = form.get("style") or "outline"
            if not isinstance(style, str):
                raise _ApiError(400, "style must be a word such as outline or hatch")
            arm_text = await _field_text(form.get("arm"), "arm file", _MAX_ARM_BYTES)
            fields = []
            for k, v in form.multi_items():
                if k in ("image", "style", "arm", "text", "caption", "font", "align"):
                    continue
                if not isinstance(v, str):
                    raise _ApiError(400, f"field {k[:40]} should be text, not a file")
                fields.append((k, v))
        finally:
            await form.close()
        options = {**parse_options(fields), **lines}
        if not slots.acquire(blocking=False):
            raise _ApiError(503, "the server is busy with other plans; try again in a "
                                 "few seconds", headers={"Retry-After": "5"})
        cancel = threading.Event()
        try:
            progress.set(ptoken, "queued")
            loop = asyncio.get_running_loop()
            fut = loop.run_in_executor(
                executor, _compute, data, arm_text, style.strip(), options, ptoken, cancel)
            del data
            result = await _unless_abandoned(request, fut, cancel)
        finally:
            slots.release()
        return JSONResponse(result)

    def _compute(data, arm_text, style, options, token, cancel):
        if cancel.is_set():
            raise _Abandoned()
        im = data if data is None or looks_like_svg(data) else _sniff_picture(data, max_pixels)
        arm = _resolve_arm(arm_text)

        def report(stage, done=0, total=1):
            if cancel.is_set():
                raise _Abandoned()
            progress.set(token, stage, done, total)

        p = run_plan(im, arm=arm, style=style, progress=report, **options)
        report("files")
        files = p.files()
        stored = plans.add(files)
        stats = _jsonable(dict(p.stats))
        out = {
            "id": stored.id,
            "stats": stats,
            "files": {name: f"/api/plans/{stored.id}/files/{name}" for name in stored.files},
        }
        out.update(preview_data(p, max_points=preview_points))
        report("done", 1, 1)
        return out

    @app.get("/api/plans/{pid}")
    async def get_plan(pid: str):
        p = plans.get(pid)
        if p is None:
            raise _ApiError(404, "no such plan; it may have been removed to make room")
        return {"id": p.id,
                "files": {n: f"/api/plans/{p.id}/files/{n}" for n in p.files}}

    @app.get("/api/plans/{pid}/files/{name}")
    async def get_file(pid: str, name: str, inline: int = 0):
        p = plans.get(pid)
        if p is None:
            raise _ApiError(404, "no such plan; it may have been removed to make room")
        path = p.files.get(name)
        if path is None:
            raise _ApiError(404, f"this plan has no file {name[:60]!r}")
        disp = "inline" if inline else "attachment"
        return FileResponse(path, media_type=content_type(name),
                            headers={"Content-Disposition":
                                     f'{disp}; filename="inkreach-{pid[:6]}-{name}"',
                                     "Cache-Control": "no-store"})

    return app
