"""The API's answers when something is wrong, and values made fit for JSON."""

import numpy as np
from fastapi.exceptions import RequestValidationError
from fastapi.responses import JSONResponse
from starlette.exceptions import HTTPException as StarletteHTTPException

from ..errors import InkreachError

__all__ = ["ApiError", "Abandoned", "one_line", "error_response", "jsonable", "add_error_handlers"]


class ApiError(Exception):
    def __init__(self, status, message, headers=None):
        super().__init__(message)
        self.status, self.message, self.headers = status, message, headers


class Abandoned(Exception):
    """The client went away; the plan stops at its next stage."""


def one_line(text, limit=300):
    s = " ".join(str(text).split())
    return s[:limit] or "something went wrong"


def error_response(status, message, headers=None):
    return JSONResponse({"error": one_line(message)}, status_code=status, headers=headers)


def jsonable(v):
    if isinstance(v, dict):
        return {str(k): jsonable(x) for k, x in v.items()}
    if isinstance(v, (list, tuple)):
        return [jsonable(x) for x in v]
    if isinstance(v, np.ndarray):
        return jsonable(v.tolist())
    if isinstance(v, np.generic):
        v = v.item()
    if isinstance(v, float) and not np.isfinite(v):
        return None
    return v


def add_error_handlers(app, log):
    """Answer every error as one JSON line ``{"error": ...}`` with its status."""

    @app.exception_handler(ApiError)
    async def _api_error(request, exc):
        return error_response(exc.status, exc.message, exc.headers)

    @app.exception_handler(InkreachError)
    async def _user_error(request, exc):
        return error_response(400, exc)

    @app.exception_handler(StarletteHTTPException)
    async def _http_error(request, exc):
        msg = {404: "not found", 405: "method not allowed"}.get(exc.status_code, exc.detail)
        return error_response(exc.status_code, msg)

    @app.exception_handler(RequestValidationError)
    async def _validation_error(request, exc):
        return error_response(400, "the request is not valid; check its fields")

    @app.exception_handler(OSError)
    async def _environment(request, exc):
        from ..cli.messages import environment_message
        log.warning("environment error: %s", exc)
        return error_response(503, environment_message(exc))

    @app.exception_handler(MemoryError)
    async def _memory(request, exc):
        from ..cli.messages import environment_message
        return error_response(503, environment_message(exc))

    @app.exception_handler(Abandoned)
    async def _abandoned(request, exc):
        return error_response(400, "the request was abandoned")

    @app.exception_handler(Exception)
    async def _unexpected(request, exc):
        log.exception("unexpected error")
        return error_response(500, f"internal error: {type(exc).__name__}; "
                                   "the server is still running, try again")
