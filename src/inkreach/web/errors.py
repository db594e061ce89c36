"""The API's answers when something is wrong, and values made fit for JSON."""

import numpy as np
from fastapi.responses import JSONResponse

__all__ = ["ApiError", "Abandoned", "one_line", "error_response", "jsonable"]


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
