"""File serving: the page's own files and the downloads of finished plans."""

from importlib import resources

from fastapi.responses import FileResponse, Response

from .errors import ApiError
from .store import content_type

__all__ = ["add_page_routes", "add_download_routes"]

_STATIC = {
    "index.html": "text/html; charset=utf-8",
    "app.js": "text/javascript; charset=utf-8",
    "style.css": "text/css; charset=utf-8",
    "favicon.svg": "image/svg+xml",
}


def add_page_routes(app):
    """The page: ``/``, ``/static/{name}`` (a fixed list of files) and ``/favicon.ico``."""
    static = resources.files("inkreach.web").joinpath("static")

    def _static(name):
        ref = static.joinpath(name)
        try:
            data = ref.read_bytes()
        except (FileNotFoundError, IsADirectoryError, OSError):
            raise ApiError(404, "not found") from None
        return Response(data, media_type=_STATIC[name],
                        headers={"Cache-Control": "no-cache"})

    @app.get("/", include_in_schema=False)
    async def index():
        return _static("index.html")

    @app.get("/static/{name}", include_in_schema=False)
    async def static_file(name: str):
        if name not in _STATIC:
            raise ApiError(404, "not found")
        return _static(name)

    @app.get("/favicon.ico", include_in_schema=False)
    async def favicon():
        return _static("favicon.svg")


def add_download_routes(app, plans):
    """A finished plan's file list and its files, from ``plans`` (a :class:`PlanStore`)."""

    @app.get("/api/plans/{pid}")
    async def get_plan(pid: str):
        p = plans.get(pid)
        if p is None:
            raise ApiError(404, "no such plan; it may have been removed to make room")
        return {"id": p.id,
                "files": {n: f"/api/plans/{p.id}/files/{n}" for n in p.files}}

    @app.get("/api/plans/{pid}/files/{name}")
    async def get_file(pid: str, name: str, inline: int = 0):
        p = plans.get(pid)
        if p is None:
            raise ApiError(404, "no such plan; it may have been removed to make room")
        path = p.files.get(name)
        if path is None:
            raise ApiError(404, f"this plan has no file {name[:60]!r}")
        disp = "inline" if inline else "attachment"
        return FileResponse(path, media_type=content_type(name),
                            headers={"Content-Disposition":
                                     f'{disp}; filename="inkreach-{pid[:6]}-{name}"',
                                     "Cache-Control": "no-store"})
