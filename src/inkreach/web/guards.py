"""Who may drive the page: its own origin only, and with a token when it is on a network."""

import hmac
import json
from http.cookies import SimpleCookie

__all__ = ["GuardMiddleware", "TOKEN_COOKIE", "TOKEN_HEADER"]

#: Cookie the page sets once the user has typed the access token.
TOKEN_COOKIE = "inkreach_token"
#: Header a script may send the token in instead.
TOKEN_HEADER = "x-access-token"
_UNSAFE = frozenset({"POST", "PUT", "PATCH", "DELETE"})


def _headers(scope):
    return {k.decode("latin-1").lower(): v.decode("latin-1") for k, v in scope["headers"]}


def _cookie(headers, name):
    raw = headers.get("cookie")
    if not raw:
        return None
    c = SimpleCookie()
    try:
        c.load(raw)
    except Exception:  # a malformed cookie header is no token
        return None
    m = c.get(name)
    return m.value if m is not None else None


class GuardMiddleware:
    """ASGI middleware refusing requests the page's user did not make.

    * A POST (or other state-changing request) whose ``Origin`` (or, without
      one, ``Sec-Fetch-Site: cross-site``) is not the page's own gets 403: a
      web site open in another tab cannot make this computer plan (the
      browser sends ``Origin`` on every cross-origin POST; Fetch standard,
      WHATWG, section 3.1 "Origin header").
    * With a ``token``, every ``/api/`` request needs it, in the
      ``inkreach_token`` cookie (the page sets it when the user types the
      token) or the ``X-Access-Token`` header; others get 401. The token is
      compared in constant time.

    Parameters
    ----------
    app : ASGI application
    token : str, optional
    """

    def __init__(self, app, token=None):
        self.app, self.token = app, token

    async def __call__(self, scope, receive, send):
        if scope["type"] != "http":
            return await self.app(scope, receive, send)
        h = _headers(scope)
        if scope["method"] in _UNSAFE:
            origin = h.get("origin")
            own = {f"http://{h.get('host', '')}", f"https://{h.get('host', '')}"}
            if origin is not None and origin not in own:
                return await _refuse(send, 403, "this page only takes requests from itself; "
                                                "open it at its own address")
            if origin is None and h.get("sec-fetch-site") == "cross-site":
                return await _refuse(send, 403, "this page only takes requests from itself; "
                                                "open it at its own address")
        if self.token is not None and scope["path"].startswith("/api/"):
            given = h.get(TOKEN_HEADER) or _cookie(h, TOKEN_COOKIE) or ""
            if not hmac.compare_digest(given.encode("utf-8", "replace"),
                                       self.token.encode("utf-8")):
                return await _refuse(send, 401, "this page needs its access token: type the "
                                                "one printed where 'inkreach serve' started")
        if scope["method"] != "POST":
            return await self.app(scope, receive, send)
        return await _watching(self.app, scope, receive, send)


async def _watching(app, scope, receive, send):
    """Run ``app``; once it has read the whole body, note when the client goes away.

    ``scope["inkreach.gone"]`` is an :class:`asyncio.Event` set when the
    connection closes, so long work can be stopped for a client that left.
    """
    import asyncio

    gone = asyncio.Event()
    scope["inkreach.gone"] = gone
    watcher = None

    async def watch():
        while True:
            msg = await receive()
            if msg["type"] == "http.disconnect":
                gone.set()
                return

    async def wrapped():
        nonlocal watcher
        msg = await receive()
        if msg["type"] == "http.disconnect":
            gone.set()
        elif not msg.get("more_body", False) and watcher is None:
            watcher = asyncio.ensure_future(watch())
        return msg

    try:
        return await app(scope, wrapped, send)
    finally:
        if watcher is not None:
            watcher.cancel()


async def _refuse(send, status, message):
    body = json.dumps({"error": message}).encode()
    await send({"type": "http.response.start", "status": status,
                "headers": [(b"content-type", b"application/json"),
                            (b"content-length", str(len(body)).encode()),
                            (b"x-content-type-options", b"nosniff"),
                            (b"cache-control", b"no-store")]})
    await send({"type": "http.response.body", "body": body})
