"""The JSON API and the page, as a FastAPI application."""

import asyncio
import logging
import threading
from concurrent.futures import ThreadPoolExecutor
from contextlib import asynccontextmanager

from fastapi import FastAPI, Request
from fastapi.responses import JSONResponse
from starlette.datastructures import UploadFile

from ..vector import looks_like_svg
from .catalogue import common_options, style_table
from .errors import Abandoned, ApiError, add_error_handlers, error_response, jsonable
from .files import add_download_routes, add_page_routes
from .forms import parse_options
from .jobs import PROGRESS_ID, Progress, default_planner, resolve_upload_arm, unless_abandoned
from .preview import preview_data
from .store import PlanStore
from .uploads import MAX_ARM_BYTES, field_text, parse_form, read_body, sniff_picture

__all__ = ["create_app"]

_log = logging.getLogger("inkreach.web")

_CSP = ("default-src 'self'; img-src 'self' data: blob:; style-src 'self'; "
        "script-src 'self'; connect-src 'self'; object-src 'none'; base-uri 'none'; "
        "frame-ancestors 'none'; form-action 'self'")


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
    progress = Progress()
    run_plan = planner or default_planner

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
            response = error_response(500, f"internal error: {type(exc).__name__}; "
                                           "the server is still running, try again")
        response.headers.setdefault("X-Content-Type-Options", "nosniff")
        response.headers.setdefault("Content-Security-Policy", _CSP)
        response.headers.setdefault("Referrer-Policy", "no-referrer")
        return response

    add_error_handlers(app, _log)

    # ---- the page -------------------------------------------------------------
    add_page_routes(app)

    # ---- the API --------------------------------------------------------------
    @app.get("/api/arms")
    async def arms():
        from ..arms import example_arms
        from ..arms.armfile import builtin_arm_text
        return {"arms": [{"name": n, "toml": builtin_arm_text(n)} for n in example_arms()],
                "default": example_arms()[0]}

    @app.get("/api/styles")
    async def styles():
        table = await asyncio.get_running_loop().run_in_executor(None, style_table)
        return {"styles": table, "common": common_options()}

    @app.get("/api/progress/{token}")
    async def get_progress(token: str):
        if not PROGRESS_ID.match(token):
            raise ApiError(404, "not found")
        p = progress.get(token)
        if p is None:
            return {"stage": "waiting", "done": 0, "total": 1}
        return p

    @app.post("/api/plans")
    async def post_plan(request: Request):
        ctype = request.headers.get("content-type", "")
        if not ctype.lower().startswith("multipart/form-data"):
            raise ApiError(415, "send the picture as multipart/form-data with a field "
                                "named image")
        ptoken = request.headers.get("x-progress-id")
        if ptoken is not None and not PROGRESS_ID.match(ptoken):
            ptoken = None
        try:
            await asyncio.wait_for(uploads.acquire(), timeout=body_timeout)
        except TimeoutError:
            raise ApiError(503, "the server is busy receiving other uploads; try again in a "
                                "few seconds", headers={"Retry-After": "5"}) from None
        try:
            body = await read_body(request, max_upload_bytes, body_timeout)
        finally:
            uploads.release()
        form = await parse_form(request, body)
        del body
        try:
            image = form.get("image")
            lines = {k: form.get(k) for k in ("text", "caption", "font", "align")
                     if isinstance(form.get(k), str) and form.get(k).strip()}
            if image is None and "text" in lines:
                data = None
            elif not isinstance(image, UploadFile):
                raise ApiError(400, "no picture: send the file in a form field named image, "
                                    "or text in a field named text")
            else:
                data = await image.read()  # the file name is never used
                if (image.content_type or "").lower().startswith("text/") and \
                        not looks_like_svg(data):
                    raise ApiError(415, "the upload is text, not a picture; "
                                        "send a PNG, JPEG, GIF, BMP, TIFF, WebP or SVG file")
            style = form.get("style") or "outline"
            if not isinstance(style, str):
                raise ApiError(400, "style must be a word such as outline or hatch")
            arm_text = await field_text(form.get("arm"), "arm file", MAX_ARM_BYTES)
            fields = []
            for k, v in form.multi_items():
                if k in ("image", "style", "arm", "text", "caption", "font", "align"):
                    continue
                if not isinstance(v, str):
                    raise ApiError(400, f"field {k[:40]} should be text, not a file")
                fields.append((k, v))
        finally:
            await form.close()
        options = {**parse_options(fields), **lines}
        if not slots.acquire(blocking=False):
            raise ApiError(503, "the server is busy with other plans; try again in a "
                                "few seconds", headers={"Retry-After": "5"})
        cancel = threading.Event()
        try:
            progress.set(ptoken, "queued")
            loop = asyncio.get_running_loop()
            fut = loop.run_in_executor(
                executor, _compute, data, arm_text, style.strip(), options, ptoken, cancel)
            del data
            result = await unless_abandoned(request, fut, cancel)
        finally:
            slots.release()
        return JSONResponse(result)

    def _compute(data, arm_text, style, options, token, cancel):
        if cancel.is_set():
            raise Abandoned()
        im = data if data is None or looks_like_svg(data) else sniff_picture(data, max_pixels)
        arm = resolve_upload_arm(arm_text)

        def report(stage, done=0, total=1):
            if cancel.is_set():
                raise Abandoned()
            progress.set(token, stage, done, total)

        p = run_plan(im, arm=arm, style=style, progress=report, **options)
        report("files")
        files = p.files()
        stored = plans.add(files)
        stats = jsonable(dict(p.stats))
        out = {
            "id": stored.id,
            "stats": stats,
            "files": {name: f"/api/plans/{stored.id}/files/{name}" for name in stored.files},
        }
        out.update(preview_data(p, max_points=preview_points))
        report("done", 1, 1)
        return out

    add_download_routes(app, plans)

    return app
